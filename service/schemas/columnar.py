"""Column-wise validation of batch rows, for the first-order closed-form fast path.

A per-row marshmallow load costs ~0.1 ms, too slow for 100k-row batches, so rows
of the simple, common form (ideal shape, first-order power law on a pellet-volume
basis, isothermal, no film) are validated and converted column by column with numpy.
The rules come from the same table as the schemas (``rules.FIELD_RULES``) and the
same unit conversion (``units``). Any row the fast path does not fully accept (other
rate laws, a bad value, a missing field, a range violation...) is handed to the case
schema, which is the authority on errors: the two paths cannot disagree about a row
that fails, and a test feeds the same rows through both to show they agree on the
rows that pass.

Both batch inputs arrive here as columns: a JSON list of cases is flattened to
dotted columns (``pellet.radius``: [...]), a CSV table already is one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import units
from ..physics.geometry import SHAPES
from .rules import FIELD_RULES


class _Missing:
    """A field the row does not give (JSON: absent; CSV: an empty cell)."""

    def __repr__(self):
        return "MISSING"


MISSING = _Missing()

# The fields a fast-path row may give; anything else sends the row to the schema.
_FAST_FIELDS = {
    "pellet.shape", "pellet.exposed_faces", "kinetics.model", "kinetics.order",
    "kinetics.rate_constant", "kinetics.rate_basis", "transport.effective_diffusivity",
    "surface.concentration", "options.profile_points",
} | {f"pellet.{d}" for spec in SHAPES.values() if spec.shape_exponent is not None
     for d in spec.dimensions}
_SCALARS = (str, int, float, bool)  # hashable JSON scalars (lists and objects are not)
_FAST_SHAPES = tuple(name for name, spec in SHAPES.items() if spec.shape_exponent is not None)


@dataclass
class FastGroup:
    """Rows of one shape that passed the fast path, with SI columns."""

    shape: str
    rows: np.ndarray  # indices into the batch
    dimensions: dict[str, np.ndarray]
    rate_constant: np.ndarray
    effective_diffusivity: np.ndarray
    surface_concentration: np.ndarray

    def subset(self, mask: np.ndarray) -> "FastGroup":
        """The rows where ``mask`` is true."""
        return FastGroup(self.shape, self.rows[mask],
                         {name: values[mask] for name, values in self.dimensions.items()},
                         self.rate_constant[mask], self.effective_diffusivity[mask],
                         self.surface_concentration[mask])


def flatten_cases(cases: list) -> tuple[dict[str, list], np.ndarray]:
    """A JSON list of cases -> (dotted columns, mask of rows that cannot be flattened).

    A row is flattened only when it is an object of objects; values stay as sent
    (strings, numbers, {value, unit} objects). Other rows go to the schema whole.
    The blocks are gathered per section first, then each field is one list
    comprehension: a few Python steps per row instead of one per value.
    """
    n = len(cases)
    odd = np.zeros(n, dtype=bool)
    sections: dict[str, list] = {}
    for i, case in enumerate(cases):
        if type(case) is not dict:
            odd[i] = True
            continue
        for section, block in case.items():
            if type(block) is not dict:
                odd[i] = True
                break
            blocks = sections.get(section)
            if blocks is None:
                blocks = sections[section] = [None] * n
            blocks[i] = block
    columns: dict[str, list] = {}
    for section, blocks in sections.items():
        names = set().union(*[b for b in blocks if b is not None])
        for name in names:
            columns[f"{section}.{name}"] = [
                MISSING if b is None else b.get(name, MISSING) for b in blocks]
    return columns, odd


def row_case(columns: dict[str, list], index: int, column_units: dict | None = None) -> dict:
    """The nested case of one row, rebuilt from the columns (for the schema path); a
    column's header unit is attached to the row's value as the schema reads units."""
    case: dict = {}
    column_units = column_units or {}
    for key, column in columns.items():
        value = column[index]
        if value is MISSING:
            continue
        value = units.with_default_unit(value, column_units.get(key))
        node = case
        *sections, name = key.split(".")
        for section in sections:
            node = node.setdefault(section, {})
        node[name] = value
    return case


def _present(column: list | None, n: int) -> np.ndarray:
    if column is None:
        return np.zeros(n, dtype=bool)
    return np.array([v is not MISSING for v in column], dtype=bool)


def _equals(column: list | None, n: int, allowed: tuple) -> np.ndarray:
    """Rows whose value is MISSING or equal (same JSON type) to one of ``allowed``."""
    if column is None:
        return np.ones(n, dtype=bool)
    pairs = {(type(a), a) for a in allowed}
    return np.array([(v is MISSING) or (type(v) in _SCALARS and (type(v), v) in pairs)
                     for v in column], dtype=bool)


def _first_order(column: list | None, n: int) -> np.ndarray:
    if column is None:
        return np.ones(n, dtype=bool)
    return np.array([(v is MISSING) or (type(v) in (int, float) and v == 1) for v in column],
                    dtype=bool)


def _profile_points_ok(column: list | None, n: int) -> np.ndarray:
    if column is None:
        return np.ones(n, dtype=bool)
    rule = FIELD_RULES["options.profile_points"]
    return np.fromiter(
        ((v is MISSING) or (type(v) in (int, float) and math.isfinite(v) and v == int(v)
                            and rule.range_error(v) is None) for v in column),
        dtype=bool, count=n)


def fast_path_columns(columns: dict[str, list], n: int, odd: np.ndarray | None = None,
                      column_units: dict | None = None) -> tuple[list[FastGroup], list[int]]:
    """Split rows into fast-path groups (validated, SI) and the rest (row indices).

    ``column_units``: a header unit per column (CSV or column-layout JSON), applied to
    plain numbers and to strings without a unit of their own.
    """
    column_units = column_units or {}
    eligible = np.ones(n, dtype=bool) if odd is None else ~odd
    present = {key: _present(column, n) for key, column in columns.items()}
    absent = np.zeros(n, dtype=bool)

    def given(key):
        return present.get(key, absent)

    for key in columns:
        if key not in _FAST_FIELDS:
            eligible &= ~given(key)
    shape_column = columns.get("pellet.shape")
    if shape_column is None:
        return [], list(range(n))
    eligible &= _equals(columns.get("kinetics.model"), n, ("power_law",)) & given("kinetics.model")
    eligible &= _first_order(columns.get("kinetics.order"), n)
    eligible &= _equals(columns.get("kinetics.rate_basis"), n, ("pellet_volume",))
    eligible &= _profile_points_ok(columns.get("options.profile_points"), n)
    for key in ("kinetics.rate_constant", "transport.effective_diffusivity", "surface.concentration"):
        eligible &= given(key)
    shapes = np.array([v if type(v) is str else "" for v in shape_column], dtype=object)
    eligible &= np.isin(shapes, _FAST_SHAPES)
    groups: list[FastGroup] = []
    for shape in _FAST_SHAPES:
        spec = SHAPES[shape]
        mask = eligible & (shapes == shape)
        for other in _FAST_FIELDS:
            if other.startswith("pellet.") and other not in ("pellet.shape",):
                name = other.split(".", 1)[1]
                if name in spec.dimensions:
                    mask &= given(other)
                elif name not in spec.optional or spec.optional[name] is None:
                    mask &= ~given(other)
        rows = np.flatnonzero(mask)
        if len(rows):
            group = _convert_group(shape, rows, columns, column_units)
            if group is not None:
                groups.append(group)
    accepted = np.zeros(n, dtype=bool)
    for group in groups:
        accepted[group.rows] = True
    return groups, np.flatnonzero(~accepted).tolist()


def _take(columns: dict[str, list], key: str, rows: list[int]) -> list:
    column = columns[key]
    return [column[i] for i in rows]


def _quantity(columns, key, rows, column_units, si_unit=None):
    rule = FIELD_RULES[key]
    values, bad = units.parse_quantities(_take(columns, key, rows), si_unit or rule.unit,
                                         column_units.get(key))
    return values, bad | _range_violation(values, rule)


def _range_violation(values: np.ndarray, rule) -> np.ndarray:
    bad = np.zeros(values.shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        if rule.minimum is not None:
            bad |= (values <= rule.minimum) if rule.exclusive_minimum else (values < rule.minimum)
        if rule.maximum is not None:
            bad |= (values >= rule.maximum) if rule.exclusive_maximum else (values > rule.maximum)
    return bad | np.isnan(values)


def _convert_group(shape: str, rows: np.ndarray, columns: dict[str, list],
                   column_units: dict) -> FastGroup | None:
    spec = SHAPES[shape]
    index = rows.tolist()
    bad = np.zeros(len(index), dtype=bool)
    dimensions = {}
    for name in spec.dimensions:
        dimensions[name], failed = _quantity(columns, f"pellet.{name}", index, column_units)
        bad |= failed
    for name, default in spec.optional.items():
        if default is None:
            continue
        key = f"pellet.{name}"
        if key in columns:
            values = [default if v is MISSING else v for v in _take(columns, key, index)]
            allowed = {(type(c), c) for c in FIELD_RULES[key].choices}
            bad |= ~np.array([type(v) in _SCALARS and (type(v), v) in allowed for v in values],
                             dtype=bool)
            dimensions[name] = np.array([v if type(v) is int else 0 for v in values])
        else:
            dimensions[name] = np.full(len(index), default)
    # first order on a pellet-volume basis: k in 1/s
    rate_constant, failed = _quantity(columns, "kinetics.rate_constant", index, column_units,
                                      "1/s")
    bad |= failed
    diffusivity, failed = _quantity(columns, "transport.effective_diffusivity", index,
                                    column_units)
    bad |= failed
    concentration, failed = _quantity(columns, "surface.concentration", index, column_units)
    bad |= failed
    good = ~bad
    if not good.any():
        return None
    return FastGroup(
        shape=shape,
        rows=rows[good],
        dimensions={name: values[good] for name, values in dimensions.items()},
        rate_constant=rate_constant[good],
        effective_diffusivity=diffusivity[good],
        surface_concentration=concentration[good],
    )


def fast_path(cases: list) -> tuple[list[FastGroup], list[int]]:
    """Fast-path groups and the remaining row indices of a JSON list of cases."""
    columns, odd = flatten_cases(cases)
    return fast_path_columns(columns, len(cases), odd)
