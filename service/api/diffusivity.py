"""POST /v1/diffusivity: effective diffusivity from the pore structure."""

from __future__ import annotations

from flask import Blueprint

from ..formats import json_response, read_json_body
from ..physics.transport import resolve_pore
from ..schemas.pore import PORE_SCHEMA
from ..schemas.responses import diffusivity_fields, echo_pore, warning_dicts
from .effectiveness import require_object

bp = Blueprint("diffusivity", __name__, url_prefix="/v1")


@bp.post("/diffusivity")
def diffusivity_post():
    pore = PORE_SCHEMA.load(require_object(read_json_body(), "a pore structure"))
    result = resolve_pore(pore)
    body = diffusivity_fields(result)
    body["warnings"] = warning_dicts(result.diagnostics)
    body["inputs"] = echo_pore(pore)
    return json_response(body)
