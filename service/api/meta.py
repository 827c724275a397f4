"""Meta operations: health, readiness, version, and the catalogue of shapes and models."""

from __future__ import annotations

import platform

from flask import Blueprint, current_app

from ..formats import json_response
from ..physics.diagnostics import WARNING_CODES
from ..physics.geometry import SHAPES
from ..physics.regime import DIFFUSION_LIMIT, KINETIC_LIMIT
from ..schemas.case import KINETICS_SCHEMAS
from ..schemas.rules import FIELD_RULES

bp = Blueprint("meta", __name__)


@bp.get("/healthz")
def healthz():
    return json_response({"status": "ok"})


@bp.get("/readyz")
def readyz():
    return json_response({"status": "ready"})


@bp.get("/version")
def version():
    return json_response(
        {
            "service": "pellet-effectiveness",
            "version": current_app.config["SERVICE_VERSION"],
            "api": "v1",
            "python": platform.python_version(),
        }
    )


def _field_doc(name: str) -> dict:
    rule = FIELD_RULES[name]
    doc: dict = {"name": name, "description": rule.description, "kind": rule.kind}
    if rule.unit is not None:
        doc["unit"] = rule.unit
    for key in ("minimum", "maximum", "default"):
        value = getattr(rule, key)
        if value is not None:
            doc[key] = value
    if rule.minimum is not None:
        doc["exclusive_minimum"] = rule.exclusive_minimum
    if rule.maximum is not None:
        doc["exclusive_maximum"] = rule.exclusive_maximum
    if rule.choices:
        doc["choices"] = list(rule.choices)
    return doc


def models_catalogue() -> dict:
    shapes = []
    for spec in SHAPES.values():
        names = [f"pellet.{d}" for d in spec.dimensions] + [f"pellet.{o}" for o in spec.optional]
        shapes.append(
            {
                "shape": spec.name,
                "description": spec.description,
                "shape_exponent": spec.shape_exponent,
                "required": [f"pellet.{d}" for d in spec.dimensions],
                "fields": [_field_doc(n) for n in names],
            }
        )
    models = []
    for name, schema in KINETICS_SCHEMAS.items():
        names = [f"kinetics.{f}" for f in schema.fields if f != "model"]
        models.append({"model": name, "fields": [_field_doc(n) for n in names]})
    common = [
        "transport.effective_diffusivity",
        "surface.concentration",
        "options.profile_points",
    ]
    return {
        "shapes": shapes,
        "kinetics_models": models,
        "common_fields": [_field_doc(n) for n in common],
        "regimes": {
            "kinetic": f"generalized modulus < {KINETIC_LIMIT:g}",
            "transition": f"{KINETIC_LIMIT:g} <= generalized modulus <= {DIFFUSION_LIMIT:g}",
            "diffusion": f"generalized modulus > {DIFFUSION_LIMIT:g}",
        },
        "warning_codes": [
            {"code": code, "severity": severity, "meaning": meaning}
            for code, (severity, meaning) in WARNING_CODES.items()
        ],
        "limits": {
            "max_body_bytes": current_app.config["MAX_CONTENT_LENGTH"],
            "max_batch_rows": current_app.config["MAX_BATCH_ROWS"],
            "solver_time_budget_s": current_app.config["SOLVER_TIME_BUDGET"],
        },
    }


@bp.get("/v1/models")
def models():
    return json_response(models_catalogue())
