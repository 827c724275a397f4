"""Request and response of POST /v1/sweep: one case, one field varied over a range.

Request::

    {"case": <a case, as for /v1/effectiveness>,
     "parameter": "pellet.radius",           # a numeric field of the case (dotted name)
     "start": "0.5 mm", "stop": "5 mm",      # quantities, read like the field itself
     "points": 25,                           # 2..200 (default 25)
     "spacing": "linear"}                    # "linear" (default) or "log"

Every point is the case with the parameter replaced by a number in the field's SI unit
and loaded by the very ``CASE_SCHEMA`` of /v1/effectiveness: one set of rules. ``start``
and ``stop`` are checked the same way (each is substituted into the case and loaded), so
a sweep that starts or stops outside the field's range is a 422 naming ``start`` or
``stop``; a point between them that the case cannot take (a cross-field rule, a physics
limit, the time budget) is a row with its own status and errors, never a failed sweep.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass

import numpy as np
from marshmallow import ValidationError, fields, validates_schema

from .. import units
from ..physics.case import Case
from .case import CASE_SCHEMA, StrictSchema, _mass_basis_unit, flatten_errors
from .fields import Choice, Integer, RawQuantity
from .rules import FIELD_RULES, FieldRule

# The case blocks whose numeric fields can be swept.
CASE_BLOCKS = ("pellet", "kinetics", "transport", "surface", "bulk", "film", "thermal")
SWEEPABLE = tuple(
    name for name, rule in FIELD_RULES.items()
    if name.split(".")[0] in CASE_BLOCKS and rule.kind in ("quantity", "number")
)

# Rules of the sweep's own fields (same FieldRule form as the case fields' table).
SWEEP_RULES = {
    "points": FieldRule(None, "Number of points of the sweep, start and stop included.",
                        minimum=2, maximum=200, kind="integer", default=25),
    "spacing": FieldRule(None, "Points evenly spaced in the value (linear) or in its "
                         "logarithm (log; start and stop > 0).", kind="choice",
                         default="linear", choices=("linear", "log")),
}

# Columns of a sweep row (besides index, status and the parameter value).
RESULT_COLUMNS = ("effectiveness_factor", "thiele_modulus", "generalized_modulus",
                  "observed_rate", "regime", "method")
RATE_UNIT = "mol/(m^3*s)"


class _SweepInteger(Integer):
    """``Integer`` reading a rule of ``SWEEP_RULES`` instead of the case field table."""

    def __init__(self, rule: FieldRule, **kwargs):
        self.rule = rule
        kwargs.setdefault("load_default", rule.default)
        fields.Field.__init__(self, **kwargs)


class _SweepChoice(Choice):
    def __init__(self, rule: FieldRule, **kwargs):
        self.rule = rule
        self.choices = rule.choices
        kwargs.setdefault("load_default", rule.default)
        fields.Field.__init__(self, **kwargs)


class SweepSchema(StrictSchema):
    case = fields.Dict(required=True)
    parameter = fields.String(required=True)
    start = RawQuantity(required=True)
    stop = RawQuantity(required=True)
    points = _SweepInteger(SWEEP_RULES["points"])
    spacing = _SweepChoice(SWEEP_RULES["spacing"])

    @validates_schema
    def _parameter_known(self, data, **kwargs):
        name = data.get("parameter")
        if name is not None and name not in SWEEPABLE:
            raise ValidationError(
                f"must be a numeric field of the case, one of {', '.join(SWEEPABLE)}",
                field_name="parameter")


SWEEP_SCHEMA = SweepSchema()


@dataclass(frozen=True)
class SweepRequest:
    """A validated sweep: the case as sent, the parameter, its SI unit and the SI values."""

    case_body: dict
    base_case: Case  # the case at the start value
    parameter: str
    unit: str  # SI unit the values are in ("" for dimensionless)
    values: list[float]
    spacing: str


def with_value(case_body: dict, parameter: str, value) -> dict:
    """A copy of the case body with the dotted ``parameter`` set to ``value``."""
    body = copy.deepcopy(case_body)
    node = body
    parts = parameter.split(".")
    for part in parts[:-1]:
        child = node.get(part)
        if not isinstance(child, dict):
            child = node[part] = {}
        node = child
    node[parts[-1]] = value
    return body


def _at(messages: dict, parameter: str):
    """The messages marshmallow reported at the dotted ``parameter`` (or None)."""
    node = messages
    for part in parameter.split("."):
        if not isinstance(node, dict) or part not in node:
            return None
        node = node[part]
    return node


def _load_end(case_body: dict, parameter: str, raw, end: str, strict_case: bool):
    """Load the case with the parameter at one end of the range: (Case or None, errors)."""
    try:
        return CASE_SCHEMA.load(with_value(case_body, parameter, raw)), []
    except ValidationError as exc:
        messages = exc.messages
    errors = []
    here = _at(messages, parameter)
    for item in flatten_errors(here) if here is not None else []:
        if item["message"].startswith("unknown field"):
            errors.append({"field": "parameter", "message": (
                f"{parameter} is not a field of this case (for its shape, rate law or "
                f"blocks)")})
        else:
            errors.append({"field": end, "message": item["message"]})
    if strict_case:
        errors += [{"field": f"case.{e['field']}", "message": e["message"]}
                   for e in flatten_errors(messages) if e["field"] != parameter
                   and not e["field"].startswith(parameter + ".")]
    return None, errors


def si_unit_of(parameter: str, case: Case) -> str:
    """The SI unit a bare number of ``parameter`` is read in, for this case."""
    rule = FIELD_RULES[parameter]
    if rule.unit is not None:
        return rule.unit
    # kinetics.rate_constant: its unit follows the order and the rate basis
    volume_unit = case.extras["rate_constant_unit"]
    if case.extras.get("rate_basis") == "catalyst_mass":
        return _mass_basis_unit(volume_unit)
    return volume_unit


def _to_unit(raw, unit: str, end: str) -> tuple[float | None, list[dict]]:
    try:
        magnitude, given = units.split_quantity(raw)
        value = magnitude if given is None else units.to_si(magnitude, given, unit)
    except units.QuantityError as exc:
        return None, [{"field": end, "message": str(exc)}]
    if not np.isfinite(value):
        return None, [{"field": end, "message": "must be a finite number"}]
    return float(value), []


def load_sweep(body: dict) -> SweepRequest:
    """Validate a sweep body: ValidationError (the 422 of the error handlers) listing every
    bad field; ``case.``-prefixed names for fields of the case."""
    data = SWEEP_SCHEMA.load(body)
    case_body, parameter = data["case"], data["parameter"]
    base, errors = _load_end(case_body, parameter, body["start"], "start", strict_case=True)
    end, stop_errors = _load_end(case_body, parameter, body["stop"], "stop", strict_case=False)
    errors += [e for e in stop_errors if e not in errors]
    if errors:
        raise ValidationError({e["field"]: [e["message"]] for e in errors})
    unit = si_unit_of(parameter, base)
    start, errors = _to_unit(body["start"], unit, "start")
    stop, stop_errors = _to_unit(body["stop"], unit, "stop")
    errors += stop_errors
    if not errors and start == stop:
        errors.append({"field": "stop", "message": "must differ from start"})
    if not errors and data["spacing"] == "log" and (start <= 0 or stop <= 0):
        errors.append({"field": "start" if start <= 0 else "stop",
                       "message": "must be > 0 with spacing log"})
    if errors:
        raise ValidationError({e["field"]: [e["message"]] for e in errors})
    if data["spacing"] == "log":
        values = np.geomspace(start, stop, data["points"])
    else:
        values = np.linspace(start, stop, data["points"])
    values[0], values[-1] = start, stop  # exactly as given
    return SweepRequest(case_body, base, parameter, unit, values.tolist(), data["spacing"])


def ok_row(index: int, value: float, unit: str, result, warnings: list[str]) -> dict:
    """A computed sweep row (JSON-ready: SI numbers, quantities as {value, unit})."""
    return {
        "index": index,
        "status": 200,
        "parameter_value": {"value": value, "unit": unit},
        "effectiveness_factor": float(result.effectiveness_factor),
        "thiele_modulus": float(result.thiele_modulus),
        "generalized_modulus": float(result.generalized_modulus),
        "observed_rate": {"value": float(result.observed_rate), "unit": RATE_UNIT},
        "regime": result.regime,
        "method": result.method,
        "warnings": warnings,
    }


def failed_row(index: int, value: float, unit: str, status: int, errors: list[dict]) -> dict:
    return {"index": index, "status": status,
            "parameter_value": {"value": value, "unit": unit}, "errors": errors}


def sweep_payload(request: SweepRequest, rows: list[dict]) -> dict:
    """The JSON body of /v1/sweep."""
    failed = sum(1 for r in rows if r["status"] != 200)
    return {
        "parameter": request.parameter,
        "unit": request.unit,
        "spacing": request.spacing,
        "points": len(rows),
        "succeeded": len(rows) - failed,
        "failed": failed,
        "rows": rows,
    }


def sweep_csv_rows(request: SweepRequest, rows: list[dict]) -> list[list]:
    """The sweep as CSV rows: units in the header, SI numbers, empty cells for failed rows."""
    unit = f" [{request.unit}]" if request.unit else ""
    header = ["index", "status", f"{request.parameter}{unit}", "effectiveness_factor",
              "thiele_modulus", "generalized_modulus", f"observed_rate [{RATE_UNIT}]",
              "regime", "method", "warnings", "errors"]
    table = [header]
    for r in rows:
        value = r["parameter_value"]["value"]
        if r["status"] == 200:
            cells = [r["effectiveness_factor"], r["thiele_modulus"], r["generalized_modulus"],
                     r["observed_rate"]["value"], r["regime"], r["method"],
                     ";".join(r["warnings"]), ""]
        else:
            errors = "; ".join(f"{e['field']}: {e['message']}" for e in r["errors"])
            cells = ["", "", "", "", "", "", "", errors]
        table.append([r["index"], r["status"], value, *cells])
    return table
