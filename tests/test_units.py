"""Quantity parsing and conversion (pint at the edge, cached)."""

import pytest

from service import units


@pytest.mark.parametrize(
    "raw, si_unit, expected",
    [
        ("1.5 mm", "m", 1.5e-3),
        ("1.5mm", "m", 1.5e-3),
        ({"value": 1.5, "unit": "mm"}, "m", 1.5e-3),
        (1.5e-3, "m", 1.5e-3),
        ("12 1/s", "1/s", 12.0),
        ("12/s", "1/s", 12.0),
        ("1.2e-6 m^2/s", "m^2/s", 1.2e-6),
        ("1.2 cm^2/s", "m^2/s", 1.2e-4),
        ("40 mol/m^3", "mol/m^3", 40.0),
        ("350 degC", "K", 623.15),  # offset unit
        ("2 mm\u00b2/s", "m^2/s", 2e-6),
        ("1.2e-6 m2/s", "m^2/s", 1.2e-6),  # spreadsheet-style exponents
        ("40 mol/m3", "mol/m^3", 40.0),
        ("12 s-1", "1/s", 12.0),
        ("0.04 mol/dm3", "mol/m^3", 40.0),
    ],
)
def test_parse_quantity(raw, si_unit, expected):
    assert units.parse_quantity(raw, si_unit) == pytest.approx(expected, rel=1e-14)


@pytest.mark.parametrize("raw", ["1.5 kg", "1 degC", "abc", "1.5 no_such_unit", True, None, [1]])
def test_bad_quantities(raw):
    with pytest.raises(units.QuantityError):
        units.parse_quantity(raw, "m")


def test_unit_conversion_is_cached():
    units.conversion.cache_clear()
    units._conversion.cache_clear()
    units.parse_quantity("3 mm", "m")
    units.parse_quantity("4 mm", "m")
    units.parse_quantities(["5 mm", "6 mm"], "m")
    # pint is asked once for "mm"; every later use is a dictionary look-up
    assert units._conversion.cache_info().misses == 1
    assert units.conversion.cache_info().misses == 1


@pytest.mark.parametrize(
    "raw",
    ["1.5 mm", "1.5mm", "2 cm", "350 degC", "1e400 m", "abc", "1.5 kg", 1.5, 2, True, None,
     {"value": 3, "unit": "mm"}, {"value": 3}, "-0.5 m", "1.5", "nan mm", "1_000 m"],
)
def test_column_parser_agrees_with_single_parser(raw):
    si_unit = "K" if raw == "350 degC" else "m"
    values, bad = units.parse_quantities([raw], si_unit)
    try:
        expected = units.parse_quantity(raw, si_unit)
    except units.QuantityError:
        assert bad[0]
    else:
        assert not bad[0] and values[0] == expected


@pytest.mark.parametrize("column", [
    ["1.5 mm", "2 mm", "1e-3 mm", "-.5 mm", "+3. mm", " 4 mm", "5  mm"],
    ["1.5 mm", "2mm", "3 mm"],  # a value written differently: the per-value path
    ["1.5mm", "2 mm", "2.5mm"],
    ["1.5 mm", "1_0 mm", "nan mm", "inf mm"],
    ["1.5 mm", "\u0661 mm"],  # a non-ASCII digit: read by both paths alike
    ["1.5.5mm", "2.5mm"],  # the first unit text is no unit
    ["12 1/s", "3 1/s", "21/s"],
    ["21/s", "2 1/s", "4/s"],
    ["350 degC", "20 degC"],
    ["1.5 eV", "2 eV"],
    ["1.5 m", "2 cm", "3 mm"],
])
def test_column_of_one_written_unit_agrees_with_single_parser(column):
    """The shortcut for a column whose strings all end in the same unit text gives,
    value by value, what the one-value parser gives (or fails where it fails)."""
    si_unit = "K" if "degC" in column[0] else "1/s" if "/s" in column[0] else "m"
    values, bad = units.parse_quantities(column, si_unit)
    for raw, value, failed in zip(column, values.tolist(), bad.tolist()):
        try:
            expected = units.parse_quantity(raw, si_unit)
        except units.QuantityError:
            assert failed, raw
        else:
            assert not failed and value == expected, raw
