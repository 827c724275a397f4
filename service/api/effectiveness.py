"""/v1/effectiveness: one pellet case (POST JSON, or GET with dotted query parameters)."""

from __future__ import annotations

from flask import Blueprint, current_app, request

from ..errors import ApiProblem, validation_problem
from ..formats import csv_response, json_response, read_json_body, text_response
from ..metrics import timed_evaluate
from ..physics.effectiveness import evaluate
from ..schemas.case import CASE_SCHEMA
from ..schemas.query import query_to_body
from ..schemas.responses import OUTPUT_UNITS, SCALAR_FIELDS, effectiveness_payload, scalar_row

bp = Blueprint("effectiveness", __name__, url_prefix="/v1")

FORMATS = ("json", "csv", "value")


def compute(case, budget: float | None = None):
    """Evaluate a case within the solver budget [s] (default: the configured one),
    recording solver metrics."""
    if budget is None:
        budget = current_app.config["SOLVER_TIME_BUDGET"]
    return timed_evaluate(lambda c: evaluate(c, budget), case)


def require_object(body, what: str) -> dict:
    """422 unless the decoded body is a JSON object."""
    if not isinstance(body, dict):
        raise ApiProblem(
            "validation-error",
            f"The request body must be a JSON object describing {what}.",
            [{"field": "(body)", "message": f"expected an object, got {type(body).__name__}"}],
        )
    return body


def load_case(body):
    """Validate a decoded JSON body into a Case (422 via the error handlers)."""
    return CASE_SCHEMA.load(require_object(body, "one case"))


@bp.post("/effectiveness")
def effectiveness_post():
    case = load_case(read_json_body())
    return json_response(effectiveness_payload(case, compute(case)))


def _output_choice() -> tuple[str, str | None]:
    errors = []
    for key in ("format", "field"):
        if len(request.args.getlist(key)) > 1:
            errors.append({"field": key, "message": "given more than once; give it once"})
    fmt = request.args.get("format", "json")
    field = request.args.get("field")
    if fmt not in FORMATS:
        errors.append({"field": "format", "message": f"must be one of {', '.join(FORMATS)}"})
    if field is not None and field not in SCALAR_FIELDS:
        errors.append({"field": "field", "message": f"must be one of {', '.join(SCALAR_FIELDS)}"})
    if field is not None and fmt == "json":
        errors.append({"field": "field", "message": "applies to format=value or format=csv only"})
    if errors:
        raise validation_problem(errors)
    return fmt, field


@bp.get("/effectiveness")
def effectiveness_get():
    fmt, field = _output_choice()
    body, errors = query_to_body(request.args, reserved=("format", "field"))
    if errors:
        raise validation_problem(errors)
    case = load_case(body)
    result = compute(case)
    if fmt == "json":
        return json_response(effectiveness_payload(case, result))
    row = scalar_row(result)
    if fmt == "value":
        return text_response(row[field or "effectiveness_factor"])
    columns = [field] if field else list(row)
    return csv_response([[_header(c) for c in columns], [row[c] for c in columns]])


def _header(column: str) -> str:
    unit = OUTPUT_UNITS.get(column)
    return f"{column} [{unit}]" if unit else column
