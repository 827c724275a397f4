"""POST /v1/diagnose: the lab-data check (observed rate -> intrinsic k, eta, criteria)."""

from __future__ import annotations

from flask import Blueprint, current_app

from ..errors import validation_problem
from ..formats import json_response, read_json_body
from ..physics.inversion import lab_data_check
from ..schemas.diagnose import diagnose_payload, load_diagnose, unreachable_message
from .effectiveness import require_object

bp = Blueprint("diagnose", __name__, url_prefix="/v1")


@bp.post("/diagnose")
def diagnose_post():
    request = load_diagnose(require_object(read_json_body(), "a case and its observed rate"))
    check = lab_data_check(request.case, request.observed_rate, request.external,
                           request.heat, request.heat_effects,
                           time_budget=current_app.config["SOLVER_TIME_BUDGET"])
    if not check.inversion.success:
        raise validation_problem([{"field": "observed_rate",
                                   "message": unreachable_message(request.observed_rate, check)}])
    return json_response(diagnose_payload(request, check))
