"""POST /v1/size: the largest pellet for a target effectiveness, and the size trade-off."""

from __future__ import annotations

from flask import Blueprint, current_app, request

from ..errors import ApiProblem, validation_problem
from ..formats import csv_response, json_response, read_json_body
from ..physics.inversion import largest_pellet, table_scales
from ..schemas.size import load_size, size_csv_rows, size_payload
from .effectiveness import require_object

bp = Blueprint("size", __name__, url_prefix="/v1")

MEDIA_TYPES = ["application/json", "text/csv"]


@bp.post("/size")
def size_post():
    accept = request.accept_mimetypes
    if accept and not accept.best_match(MEDIA_TYPES):
        raise ApiProblem("not-acceptable", "This operation answers application/json or text/csv.")
    wants = accept.best_match(MEDIA_TYPES, default="application/json")
    sizing = load_size(require_object(read_json_body(), "a pellet case and a target"))
    table = sizing.table
    scales = table_scales(table["min_scale"], table["max_scale"], table["points"],
                          table["spacing"])
    answer = largest_pellet(sizing.case, sizing.target, sizing.bed, scales,
                            time_budget=current_app.config["SOLVER_TIME_BUDGET"])
    if answer.largest is None:
        raise validation_problem([{"field": "target_effectiveness", "message": (
            f"{answer.message}: no pellet between {answer.search_scales[0]:g} and "
            f"{answer.search_scales[1]:g} times the given size keeps the effectiveness factor "
            f"at or above {sizing.target:g}")}])
    if wants == "text/csv":
        return csv_response(size_csv_rows(sizing, answer))
    return json_response(size_payload(sizing, answer))
