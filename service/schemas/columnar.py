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
from operator import itemgetter

import msgspec
import numpy as np

from .. import units
from ..physics.geometry import SHAPES
from .rules import FIELD_RULES


# A field the row does not give (JSON: absent; CSV: an empty cell). It is msgspec's
# marker of an absent field, so that typed decoding (``batch_decode``) yields
# columns without a pass to translate markers.
MISSING = msgspec.UNSET
_Missing = type(MISSING)

# The fields a fast-path row may give; anything else sends the row to the schema.
FAST_FIELDS = {
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
    if MISSING not in column:  # the common case, one C-level scan
        return np.ones(n, dtype=bool)
    return np.array([v is not MISSING for v in column], dtype=bool)


def _all_among(column: list, types: set, allowed: set) -> bool:
    """True when every value is MISSING or one of ``allowed``, of one of ``types``
    (whole-column set operations; the per-row checks below give the same answer)."""
    kinds = set(map(type, column))
    kinds.discard(_Missing)
    if not kinds <= types:
        return False
    values = set(column)  # hashable: every type in ``types`` is a scalar
    values.discard(MISSING)
    return values <= allowed


def _equals(column: list | None, n: int, allowed: tuple) -> np.ndarray:
    """Rows whose value is MISSING or equal (same JSON type) to one of ``allowed``."""
    if column is None or _all_among(column, {type(a) for a in allowed}, set(allowed)):
        return np.ones(n, dtype=bool)
    pairs = {(type(a), a) for a in allowed}
    return np.array([(v is MISSING) or (type(v) in _SCALARS and (type(v), v) in pairs)
                     for v in column], dtype=bool)


def _first_order(column: list | None, n: int) -> np.ndarray:
    if column is None or _all_among(column, {int, float}, {1}):
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
                      column_units: dict | None = None,
                      complete: set[str] = frozenset()) -> tuple[list[FastGroup], list[int]]:
    """Split rows into fast-path groups (validated, SI) and the rest (row indices).

    ``column_units``: a header unit per column (CSV or column-layout JSON), applied to
    plain numbers and to strings without a unit of their own. ``complete``: names of
    columns known to have a value in every row (saves a scan).
    """
    column_units = column_units or {}
    eligible = np.ones(n, dtype=bool) if odd is None else ~odd
    present = {key: np.ones(n, dtype=bool) if key in complete else _present(column, n)
               for key, column in columns.items()}
    absent = np.zeros(n, dtype=bool)

    def given(key):
        return present.get(key, absent)

    for key in columns:
        if key not in FAST_FIELDS:
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
    if set(map(type, shape_column)) == {str}:
        shapes = np.array(shape_column, dtype=object)
    else:
        shapes = np.array([v if type(v) is str else "" for v in shape_column], dtype=object)
    masks = {}
    for shape in _FAST_SHAPES:
        spec = SHAPES[shape]
        mask = eligible & (shapes == shape)
        for other in FAST_FIELDS:
            if other.startswith("pellet.") and other not in ("pellet.shape",):
                name = other.split(".", 1)[1]
                if name in spec.dimensions:
                    mask &= given(other)
                elif name not in spec.optional or spec.optional[name] is None:
                    mask &= ~given(other)
        if mask.any():
            masks[shape] = mask
    if not masks:
        return [], list(range(n))
    # each quantity column is read once, at the rows of every shape that uses it
    candidates = np.logical_or.reduce(list(masks.values()))
    si: dict[str, np.ndarray] = {}
    bad = np.zeros(n, dtype=bool)
    needed = {key: candidates for key in _KINETIC_QUANTITIES}
    for shape, mask in masks.items():
        for name in SHAPES[shape].dimensions:
            key = f"pellet.{name}"
            needed[key] = needed[key] | mask if key in needed else mask
    for key, rows in needed.items():
        si[key], failed = _quantity(columns, key, rows, column_units, _KINETIC_QUANTITIES.get(key))
        bad |= failed
    groups: list[FastGroup] = []
    for shape, mask in masks.items():
        group = _group(shape, mask & ~bad, columns, si)
        if group is not None:
            groups.append(group)
    accepted = np.zeros(n, dtype=bool)
    for group in groups:
        accepted[group.rows] = True
    return groups, np.flatnonzero(~accepted).tolist()


# the quantities every fast row gives, and the SI unit they are read in when the
# field table's unit depends on other fields (a first-order rate constant: 1/s)
_KINETIC_QUANTITIES = {"kinetics.rate_constant": "1/s", "transport.effective_diffusivity": None,
                       "surface.concentration": None}


def _take(column: list, rows: list[int]) -> list:
    if len(rows) == len(column):  # rows are distinct indices: every row, in order
        return column
    if len(rows) == 1:
        return [column[rows[0]]]
    return list(itemgetter(*rows)(column))


def _quantity(columns, key, mask, column_units, si_unit=None):
    """(SI values, failed) over all rows for the rows of ``mask`` (NaN and False elsewhere)."""
    rule = FIELD_RULES[key]
    rows = np.flatnonzero(mask)
    parsed, failed = units.parse_quantities(_take(columns[key], rows.tolist()),
                                            si_unit or rule.unit, column_units.get(key))
    failed |= _range_violation(parsed, rule)
    if len(rows) == len(mask):
        return parsed, failed
    values = np.full(len(mask), np.nan)
    values[rows] = parsed
    bad = np.zeros(len(mask), dtype=bool)
    bad[rows] = failed
    return values, bad


def _range_violation(values: np.ndarray, rule) -> np.ndarray:
    bad = np.zeros(values.shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        if rule.minimum is not None:
            bad |= (values <= rule.minimum) if rule.exclusive_minimum else (values < rule.minimum)
        if rule.maximum is not None:
            bad |= (values >= rule.maximum) if rule.exclusive_maximum else (values > rule.maximum)
    return bad | np.isnan(values)


def _group(shape: str, mask: np.ndarray, columns: dict[str, list],
           si: dict[str, np.ndarray]) -> FastGroup | None:
    """The fast group of one shape at the rows of ``mask`` (whose quantities are valid),
    after the shape's optional choice fields (a slab's exposed faces)."""
    spec = SHAPES[shape]
    rows = np.flatnonzero(mask)
    good = np.ones(len(rows), dtype=bool)
    choices = {}
    for name, default in spec.optional.items():
        if default is None:
            continue
        key = f"pellet.{name}"
        if key in columns:
            values = [default if v is MISSING else v for v in _take(columns[key], rows.tolist())]
            allowed = {(type(c), c) for c in FIELD_RULES[key].choices}
            good &= np.array([type(v) in _SCALARS and (type(v), v) in allowed for v in values],
                             dtype=bool)
            choices[name] = np.array([v if type(v) is int else 0 for v in values])
        else:
            choices[name] = np.full(len(rows), default)
    if not good.any():
        return None
    picked = rows[good]
    dimensions = {name: si[f"pellet.{name}"][picked] for name in spec.dimensions}
    dimensions.update({name: values[good] for name, values in choices.items()})
    return FastGroup(
        shape=shape,
        rows=picked,
        dimensions=dimensions,
        rate_constant=si["kinetics.rate_constant"][picked],
        effective_diffusivity=si["transport.effective_diffusivity"][picked],
        surface_concentration=si["surface.concentration"][picked],
    )


def fast_path(cases: list) -> tuple[list[FastGroup], list[int]]:
    """Fast-path groups and the remaining row indices of a JSON list of cases."""
    columns, odd = flatten_cases(cases)
    return fast_path_columns(columns, len(cases), odd)
