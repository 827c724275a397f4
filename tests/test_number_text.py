"""The column-wise ``.4g`` writer against Python's own float formatting (the reference:
CPython's ``format(x, ".4g")``, correctly rounded by its dtoa)."""

import numpy as np
import pytest

from service.schemas.number_text import format_4g


def _ties():
    """Values at, just below and just above the half-way points between four-digit
    mantissas, where a rounding error would show first."""
    out = []
    for mantissa in range(1000, 10000, 37):
        for exponent in range(-6, 6):
            tie = (mantissa + 0.5) * 10.0 ** (exponent - 3)
            out += [tie, np.nextafter(tie, 0.0), np.nextafter(tie, np.inf),
                    float(f"{mantissa}5e{exponent - 4}")]
    return np.array(out)


EDGES = np.array([
    0.0, -0.0, -1.5, 1e-4, 9.9995e-5, 0.00009999, 0.000099995, 9999.5, 9999.4999, 1e4,
    5e-324, 1e-320, 1.7976931348623157e308, np.nan, np.inf, -np.inf, 0.12345, 1.0005,
    9.9995, 99995.0, 1.0, 10.0, 1000.0, 0.3, 3.0, 1 / 3,
])


@pytest.mark.parametrize("values", [
    10.0 ** np.random.default_rng(1).uniform(-9, 9, 100_000),
    np.random.default_rng(2).uniform(0.0, 1.0, 100_000),
    np.random.default_rng(3).uniform(0.3, 3000.0, 100_000),
    _ties(),
    EDGES,
], ids=["magnitudes", "unit-interval", "moduli", "ties", "edges"])
def test_format_4g_is_pythons_format(values):
    got = format_4g(values)
    want = [format(v, ".4g") for v in values.tolist()]
    assert got == want


def test_format_4g_of_nothing():
    assert format_4g(np.array([])) == []
