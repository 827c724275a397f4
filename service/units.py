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
MAX_UNIT_LENGTH = 64


class QuantityError(ValueError):
    """A value cannot be read as a quantity of the expected dimension."""


@lru_cache(maxsize=1024)
def _conversion(unit: str, si_unit: str) -> tuple[float, float]:
    """(scale, offset) with value_SI = offset + scale * value for ``unit`` -> ``si_unit``."""
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
    return float(one - zero), float(zero)


def _dimension_text(unit) -> str:
    text = str(unit.dimensionality)
    return text if text != "dimensionless" else "none (a plain number)"


def _normalise_unit(unit: str) -> str:
    unit = unit.strip().replace("\u00b7", "*").replace("\u00b2", "^2").replace("\u00b3", "^3")
    unit = unit.replace("\u00b5", "u").replace("\u03bc", "u")
    if unit.startswith("/"):
        unit = "1" + unit
    return unit


@lru_cache(maxsize=4096)
def conversion(unit: str, si_unit: str) -> tuple[float, float]:
    """(scale, offset) such that value_SI = offset + scale * value (cached per unit string)."""
    unit = _normalise_unit(unit)
    if len(unit) > MAX_UNIT_LENGTH:
        raise QuantityError(f"unit string longer than {MAX_UNIT_LENGTH} characters")
    return _conversion(unit, si_unit)


def to_si(value: float, unit: str, si_unit: str) -> float:
    """Convert ``value`` in ``unit`` to ``si_unit``; QuantityError on a bad unit or dimension."""
    scale, offset = conversion(unit, si_unit)
    return offset + scale * value


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


def parse_quantities(values: list, si_unit: str) -> tuple[np.ndarray, np.ndarray]:
    """A column of raw request values -> (SI floats, mask of values that failed).

    The column form of ``parse_quantity``: the same number pattern, the same cached
    conversion and the same arithmetic (offset + scale * value), so a value gives
    the identical float either way. Failed entries are NaN in the result.
    """
    n = len(values)
    kinds = set(map(type, values))
    if kinds <= {float, int}:
        out = np.array(values, dtype=float)
        return out, ~np.isfinite(out)
    out = np.empty(n)
    bad = np.zeros(n, dtype=bool)
    local: dict[str, tuple[float, float] | None] = {}
    match = _NUMBER.match
    for i, raw in enumerate(values):
        kind = type(raw)
        if kind is str and len(raw) <= MAX_UNIT_LENGTH + 40:
            m = match(raw)
            if m is None:
                bad[i] = True
                continue
            unit = m.group(2)
            number = float(m.group(1))
            if not unit:
                out[i] = number
                continue
            factors = local.get(unit, False)
            if factors is False:
                try:
                    factors = conversion(unit, si_unit)
                except QuantityError:
                    factors = None
                local[unit] = factors
            if factors is None:
                bad[i] = True
                continue
            out[i] = factors[1] + factors[0] * number
        elif kind is float or kind is int:
            out[i] = raw
        else:
            try:
                out[i] = parse_quantity(raw, si_unit)
            except QuantityError:
                bad[i] = True
    bad |= ~np.isfinite(out) & ~bad
    out[bad] = np.nan
    return out, bad
