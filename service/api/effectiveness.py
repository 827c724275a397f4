"""POST /v1/effectiveness: one pellet case."""

from __future__ import annotations

from flask import Blueprint

from ..errors import ApiProblem
from ..formats import json_response, read_json_body
from ..physics.effectiveness import evaluate
from ..schemas.case import CASE_SCHEMA
from ..schemas.responses import effectiveness_payload

bp = Blueprint("effectiveness", __name__, url_prefix="/v1")


def load_case(body):
    """Validate a decoded JSON body into a Case (422 via the error handlers)."""
    if not isinstance(body, dict):
        raise ApiProblem(
            "validation-error",
            "The request body must be a JSON object describing one case.",
            [{"field": "(body)", "message": f"expected an object, got {type(body).__name__}"}],
        )
    return CASE_SCHEMA.load(body)


@bp.post("/effectiveness")
def effectiveness_post():
    case = load_case(read_json_body())
    return json_response(effectiveness_payload(case, evaluate(case)))
