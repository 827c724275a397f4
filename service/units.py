"""The one place that parses and converts quantities (pint registry, built once).

A dimensional field accepts
- a number, taken in the field's SI unit;
- a string with a unit: ``"1.5 mm"``, ``"12 1/s"``, ``"12/s"``, ``"1.2e-6 m^2/s"``;
- an object ``{"value": 1.5, "unit": "mm"}``.

pint's parser costs about 0.2 ms a string, so the conversion of each distinct
unit string to SI (scale, offset, dimensionality) is computed once and cached;
after the first use a unit costs a dictionary look-up.
"""

from __future__ import annotations

import math
import re
from functools import lru_cache

import numpy as np
import pint

_REGISTRY = pint.UnitRegistry()

_NUMBER = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")
NUMBER_PATTERN = _NUMBER  # "number unit": group 1 the number, group 2 the unit (may be empty)
MAX_UNIT_LENGTH = 64


class QuantityError(ValueError):
    """A value cannot be read as a quantity of the expected dimension."""


@lru_cache(maxsize=1024)
def _conversion(unit: str, si_unit: str) -> tuple[float, float, float]:
    """(multiplier, divisor, offset) with value_SI = value * multiplier / divisor + offset.

    Decimal prefixes make the scale a power of ten that is not exact in binary
    (0.001 for mm); dividing by the exact integer 1000 instead gives the correctly
    rounded result (1.5 mm -> 0.0015 exactly as typed in SI), so a scale whose
    inverse is an integer becomes a divisor, and a near-integer scale an integer.
    """
    try:
        source = _REGISTRY.Unit(unit) if unit else _REGISTRY.dimensionless
    except Exception as exc:  # pint raises several unrelated types for bad strings
        raise QuantityError(f"unknown unit {unit!r}") from exc
    target = _REGISTRY.Unit(si_unit) if si_unit else _REGISTRY.dimensionless
    if source.dimensionality != target.dimensionality:
        raise QuantityError(
            f"unit {unit!r} has dimension {_dimension_text(source)}, expected "
            f"{_dimension_text(target)} (e.g. {si_unit or 'a plain number'})"
        )
    try:
        zero = _REGISTRY.Quantity(0.0, source).to(target).magnitude
        one = _REGISTRY.Quantity(1.0, source).to(target).magnitude
    except Exception as exc:
        raise QuantityError(f"unit {unit!r} cannot be converted to {si_unit}") from exc
    scale, offset = float(one - zero), float(zero)
    if scale == 0.0 or not math.isfinite(scale):
        raise QuantityError(f"unit {unit!r} cannot be converted to {si_unit}")
    inverse = 1.0 / scale
    if abs(scale) < 1.0 and abs(inverse - round(inverse)) <= 1e-9 * abs(inverse):
        return 1.0, float(round(inverse)), offset
    if abs(scale - round(scale)) <= 1e-9 * abs(scale):
        return float(round(scale)), 1.0, offset
    return scale, 1.0, offset


def _dimension_text(unit) -> str:
    text = str(unit.dimensionality)
    return text if text != "dimensionless" else "none (a plain number)"


_BARE_EXPONENT = re.compile(r"(?<=[A-Za-z])(-?\d+)(?![\d.])")


def _normalise_unit(unit: str) -> str:
    """Tidy a unit string: unicode superscripts and dots, spreadsheet-style bare
    exponents (``m2/s`` -> ``m^2/s``, ``s-1`` -> ``s^-1``), a leading ``/``."""
    unit = unit.strip().replace("\u00b7", "*").replace("\u00b2", "^2").replace("\u00b3", "^3")
    unit = unit.replace("\u00b5", "u").replace("\u03bc", "u")
    if unit.startswith("/"):
        unit = "1" + unit
    return _BARE_EXPONENT.sub(r"^\1", unit)


@lru_cache(maxsize=4096)
def conversion(unit: str, si_unit: str) -> tuple[float, float, float]:
    """(multiplier, divisor, offset): value_SI = value * multiplier / divisor + offset
    (cached per unit string; see ``_conversion``)."""
    unit = _normalise_unit(unit)
    if len(unit) > MAX_UNIT_LENGTH:
        raise QuantityError(f"unit string longer than {MAX_UNIT_LENGTH} characters")
    return _conversion(unit, si_unit)


def to_si(value: float, unit: str, si_unit: str) -> float:
    """Convert ``value`` in ``unit`` to ``si_unit``; QuantityError on a bad unit or dimension."""
    multiplier, divisor, offset = conversion(unit, si_unit)
    return value * multiplier / divisor + offset


def split_quantity(raw) -> tuple[float, str | None]:
    """Read a raw request value into (magnitude, unit or None for 'SI')."""
    if isinstance(raw, bool):
        raise QuantityError("expected a number, a string with a unit, or {value, unit}")
    if isinstance(raw, (int, float)):
        return _finite(float(raw)), None
    if isinstance(raw, str):
        if len(raw) > MAX_UNIT_LENGTH + 40:
            raise QuantityError("quantity string too long")
        match = _NUMBER.match(raw)
        if not match:
            raise QuantityError(f"cannot read {raw!r} as a number with a unit")
        magnitude = _finite(float(match.group(1)))
        return magnitude, match.group(2) or None
    if isinstance(raw, dict):
        extra = set(raw) - {"value", "unit"}
        if extra or "value" not in raw:
            raise QuantityError('a quantity object has exactly the keys "value" and "unit"')
        value = raw["value"]
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise QuantityError('"value" must be a number')
        unit = raw.get("unit")
        if unit is not None and not isinstance(unit, str):
            raise QuantityError('"unit" must be a string')
        return _finite(float(value)), (unit or None)
    raise QuantityError("expected a number, a string with a unit, or {value, unit}")


def _finite(value: float) -> float:
    if not math.isfinite(value):
        raise QuantityError("must be a finite number (NaN and Infinity are not accepted)")
    return value


def parse_quantity(raw, si_unit: str) -> float:
    """A raw request value -> float in ``si_unit``."""
    magnitude, unit = split_quantity(raw)
    if unit is None:
        return magnitude
    return _finite(to_si(magnitude, unit, si_unit))


def is_valid_unit(unit: str) -> bool:
    """True when pint knows ``unit`` (used by tests of the unit table)."""
    try:
        _REGISTRY.Unit(_normalise_unit(unit))
    except Exception:
        return False
    return True


def parse_quantities(values: list, si_unit: str,
                     default_unit: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """A column of raw request values -> (SI floats, mask of values that failed).

    The column form of ``parse_quantity``: the same number pattern, the same cached
    conversion and the same arithmetic (value * multiplier / divisor + offset,
    elementwise IEEE double operations), so a value gives the identical float. Failed
    entries are NaN in the result. ``default_unit`` (a CSV or column header's unit)
    applies to plain numbers and to strings without a unit of their own, exactly as
    if each value had been written ``{"value": v, "unit": default_unit}``.
    """
    kinds = set(map(type, values))
    if kinds <= {float, int}:
        out = np.array(values, dtype=float)
        if default_unit:
            try:
                multiplier, divisor, offset = conversion(default_unit, si_unit)
            except QuantityError:
                return np.full(len(values), np.nan), np.ones(len(values), dtype=bool)
            out = out * multiplier / divisor + offset
        bad = ~np.isfinite(out)
        out[bad] = np.nan
        return out, bad
    if kinds == {str} and max(map(len, values)) <= MAX_UNIT_LENGTH + 40:
        first = _NUMBER.match(values[0])
        if first is not None and not first.group(2):
            plain = _plain_numbers(values)
            if plain is not None:  # "1.5" cells of a CSV column: numbers in the default unit
                return parse_quantities(plain, si_unit, default_unit)
        elif first is not None:
            shared = _shared_unit_numbers(values, first)
            if shared is not None:  # "1.5 mm", "2 mm", ...: one unit written the same way
                return parse_quantities(shared, si_unit, first.group(2))
        matches = list(map(_NUMBER.match, values))
        if None not in matches:
            return _convert_matches(matches, si_unit, default_unit)
    return _parse_one_by_one(values, si_unit, default_unit)


# Characters of a plain decimal number with its surrounding blanks. Within them,
# ``float`` reads exactly what the number pattern accepts (sign, digits, one point,
# exponent), to the same value; what it reads beyond the pattern (underscores,
# nan/inf, non-ASCII digits and blanks) contains other characters.
_PLAIN_CHARACTERS = re.compile(r"[0-9.eE+\- \t]*")


def _plain_numbers(values: list[str]) -> list[float] | None:
    """The floats of strings that are bare numbers, or None if any is not."""
    if _PLAIN_CHARACTERS.fullmatch("".join(values)) is None:
        return None
    try:
        return list(map(float, values))
    except ValueError:
        return None


def _shared_unit_numbers(values: list[str], first: re.Match) -> list[float] | None:
    """The numbers when every string is a plain number followed by the same unit text
    as the first one (``"1.5 mm"``, ``"0.2 mm"``; ``first`` is its pattern match),
    else None.

    The unit text is cut where the number pattern ends the first value's number; it
    must not begin with a character that could continue a number, so the number
    pattern splits every other value at the same place. The column is handled as one
    string (values joined by NUL, which no value may contain): the unit text must
    end every value, and what is left of each must be a plain number.
    """
    suffix = values[0][first.end(1):]
    if suffix[0] in "0123456789.+-eE":
        return None
    joined = "\x00".join(values) + "\x00"
    ending = suffix + "\x00"
    if joined.count("\x00") != len(values) or joined.count(ending) != len(values):
        return None
    heads = joined.replace(ending, "\x00")[:-1]
    if _PLAIN_OR_NUL.fullmatch(heads) is None:
        return None
    try:
        return list(map(float, heads.split("\x00")))
    except ValueError:
        return None


_PLAIN_OR_NUL = re.compile(r"[0-9.eE+\- \t\x00]*")


def _convert_matches(matches: list, si_unit: str,
                     default_unit: str | None) -> tuple[np.ndarray, np.ndarray]:
    numbers = np.array([float(m[1]) for m in matches])
    unit_texts = [m[2] or default_unit or "" for m in matches]
    factors: dict[str, tuple[float, float, float] | None] = {}
    for unit in set(unit_texts):
        try:
            factors[unit] = conversion(unit, si_unit) if unit else (1.0, 1.0, 0.0)
        except QuantityError:
            factors[unit] = None
    if len(factors) == 1:
        (only,) = factors.values()
        if only is None:
            return np.full(len(matches), np.nan), np.ones(len(matches), dtype=bool)
        multiplier, divisor, offset = only
        out = numbers if not unit_texts[0] else numbers * multiplier / divisor + offset
    else:
        triples = [factors[u] or (np.nan, 1.0, np.nan) for u in unit_texts]
        multiplier = np.array([t[0] for t in triples])
        divisor = np.array([t[1] for t in triples])
        offset = np.array([t[2] for t in triples])
        out = np.where(np.array(unit_texts, dtype=bool),
                       numbers * multiplier / divisor + offset, numbers)
    bad = ~np.isfinite(out) | ~np.isfinite(numbers)
    out[bad] = np.nan
    return out, bad


def with_default_unit(raw, default_unit: str | None):
    """A raw value as the schema should read it under a header unit: a number becomes
    {"value": v, "unit": u}, a string without a unit of its own gets ``u`` appended."""
    if not default_unit:
        return raw
    if type(raw) in (int, float):
        return {"value": raw, "unit": default_unit}
    if type(raw) is str:
        match = _NUMBER.match(raw)
        if match is not None and not match.group(2):
            return f"{raw.strip()} {default_unit}"
    return raw


def _parse_one_by_one(values: list, si_unit: str,
                      default_unit: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    out = np.empty(len(values))
    bad = np.zeros(len(values), dtype=bool)
    for i, raw in enumerate(values):
        try:
            out[i] = parse_quantity(with_default_unit(raw, default_unit), si_unit)
        except QuantityError:
            bad[i] = True
            out[i] = np.nan
    return out, bad
