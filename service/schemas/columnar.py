"""Columnar validation of batch rows, for the first-order closed-form fast path.

A per-row marshmallow load costs ~0.1 ms, too slow for 100k-row batches, so rows
of the simple, common form (ideal shape, first-order power law on a pellet-volume
basis) are validated and converted column by column with numpy. The rules come
from the same table as the schemas (``rules.FIELD_RULES``) and the same unit
conversion (``units``). Any row the fast path does not fully accept (other rate
laws, a bad value, a missing field, a range violation...) is handed to the case
schema, which is the authority on errors: the two paths cannot disagree about a
row that fails, and a test feeds the same rows through both to show they agree
on the rows that pass.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .. import units
from ..physics.geometry import SHAPES
from .rules import FIELD_RULES

SECTIONS = ("pellet", "kinetics", "transport", "surface")
_TRANSPORT_KEYS = ("effective_diffusivity",)
_SURFACE_KEYS = ("concentration",)
_KINETICS_OPTIONAL = {"order", "rate_basis"}


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


def _signature(case) -> tuple | None:
    """A hashable description of a row's structure, or None if it is not fast-path shaped."""
    if type(case) is not dict:
        return None
    try:
        pellet, kinetics = case["pellet"], case["kinetics"]
        transport, surface = case["transport"], case["surface"]
        options = case.get("options")
    except (KeyError, TypeError):
        return None
    if len(case) != 4 + ("options" in case):
        return None
    if type(pellet) is not dict or type(kinetics) is not dict:
        return None
    if type(transport) is not dict or type(surface) is not dict:
        return None
    if options is not None and (type(options) is not dict or set(options) - {"profile_points"}):
        return None
    shape = pellet.get("shape")
    if type(shape) is not str or shape not in SHAPES or SHAPES[shape].shape_exponent is None:
        return None
    if kinetics.get("model") != "power_law":
        return None
    return (shape, tuple(pellet), tuple(kinetics), tuple(transport), tuple(surface),
            None if options is None else tuple(options))


def _structure_ok(signature: tuple) -> bool:
    shape, pellet_keys, kinetics_keys, transport_keys, surface_keys, _options = signature
    spec = SHAPES[shape]
    required = set(spec.dimensions) | {"shape"}
    # optional fields without a default (a length) turn a 1-D shape into a 2-D one
    allowed = required | {name for name, default in spec.optional.items() if default is not None}
    pk = set(pellet_keys)
    kk = set(kinetics_keys)
    return (
        required <= pk <= allowed
        and {"model", "rate_constant"} <= kk <= {"model", "rate_constant"} | _KINETICS_OPTIONAL
        and tuple(transport_keys) == _TRANSPORT_KEYS
        and tuple(surface_keys) == _SURFACE_KEYS
    )


def _quantity_column(values: list, rule_name: str) -> tuple[np.ndarray, np.ndarray]:
    """SI values and a mask of rows that failed (to be re-read by the schema)."""
    rule = FIELD_RULES[rule_name]
    out, bad = units.parse_quantities(values, rule.unit)
    return out, bad | _range_violation(out, rule)


def _range_violation(values: np.ndarray, rule) -> np.ndarray:
    bad = np.zeros(values.shape, dtype=bool)
    with np.errstate(invalid="ignore"):
        if rule.minimum is not None:
            bad |= (values <= rule.minimum) if rule.exclusive_minimum else (values < rule.minimum)
        if rule.maximum is not None:
            bad |= (values >= rule.maximum) if rule.exclusive_maximum else (values > rule.maximum)
    return bad | np.isnan(values)


def _choice_ok(values: list, rule_name: str) -> np.ndarray:
    rule = FIELD_RULES[rule_name]
    allowed = {(type(c), c) for c in rule.choices}
    return np.array([(type(v), v) in allowed for v in values], dtype=bool)


def fast_path(cases: list) -> tuple[list[FastGroup], list[int]]:
    """Split batch rows into fast-path groups (validated, SI) and the rest (row indices)."""
    groups: dict[tuple, list[int]] = {}
    rest: list[int] = []
    for index, case in enumerate(cases):
        signature = _signature(case)
        if signature is None:
            rest.append(index)
        else:
            groups.setdefault(signature, []).append(index)
    fast: list[FastGroup] = []
    for signature, indices in groups.items():
        if not _structure_ok(signature):
            rest.extend(indices)
            continue
        group = _validate_group(signature, [cases[i] for i in indices], np.array(indices))
        if group is None:
            rest.extend(indices)
            continue
        accepted, rejected = group
        rest.extend(rejected)
        if accepted is not None:
            fast.append(accepted)
    rest.sort()
    return fast, rest


def _validate_group(signature, rows: list, indices: np.ndarray):
    shape, pellet_keys, kinetics_keys, _t, _s, options_keys = signature
    spec = SHAPES[shape]
    bad = np.zeros(len(rows), dtype=bool)
    dimensions = {}
    for name in spec.dimensions:
        column, failed = _quantity_column([r["pellet"][name] for r in rows], f"pellet.{name}")
        dimensions[name] = column
        bad |= failed
    for name, default in spec.optional.items():
        if default is None:
            continue  # excluded from the fast path by _structure_ok
        if name in pellet_keys:
            values = [r["pellet"][name] for r in rows]
            bad |= ~_choice_ok(values, f"pellet.{name}")
            dimensions[name] = np.array([v if type(v) is int else 0 for v in values])
        else:
            dimensions[name] = np.full(len(rows), default)
    kinetics = [r["kinetics"] for r in rows]
    if "order" in kinetics_keys:
        orders = [k["order"] for k in kinetics]
        bad |= ~np.array([type(o) in (int, float) and o == 1 for o in orders], dtype=bool)
    if "rate_basis" in kinetics_keys:
        bad |= ~np.array([k["rate_basis"] == "pellet_volume" for k in kinetics], dtype=bool)
    rate_constant, k_bad = units.parse_quantities([k["rate_constant"] for k in kinetics], "1/s")
    bad |= k_bad | _range_violation(rate_constant, FIELD_RULES["kinetics.rate_constant"])
    diffusivity, failed = _quantity_column(
        [r["transport"]["effective_diffusivity"] for r in rows], "transport.effective_diffusivity"
    )
    bad |= failed
    concentration, failed = _quantity_column(
        [r["surface"]["concentration"] for r in rows], "surface.concentration"
    )
    bad |= failed
    if options_keys:
        points_rule = FIELD_RULES["options.profile_points"]
        points = [r["options"]["profile_points"] for r in rows]
        bad |= ~np.array(
            [type(p) in (int, float) and not isinstance(p, bool) and math.isfinite(p)
             and p == int(p) and points_rule.range_error(p) is None for p in points],
            dtype=bool,
        )
    good = ~bad
    rejected = indices[bad].tolist()
    if not good.any():
        return None, rejected
    return (
        FastGroup(
            shape=shape,
            rows=indices[good],
            dimensions={name: values[good] for name, values in dimensions.items()},
            rate_constant=rate_constant[good],
            effective_diffusivity=diffusivity[good],
            surface_concentration=concentration[good],
        ),
        rejected,
    )
