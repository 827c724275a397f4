"""GET /openapi.yaml and /openapi.json: the hand-written contract, served as written."""

from __future__ import annotations

import os
from functools import lru_cache
from pathlib import Path

import orjson
import yaml
from flask import Blueprint, Response

bp = Blueprint("contract", __name__)


def spec_path() -> Path:
    """PELLET_OPENAPI_PATH, else openapi/openapi.yaml beside the service package."""
    configured = os.environ.get("PELLET_OPENAPI_PATH")
    if configured:
        return Path(configured)
    return Path(__file__).resolve().parents[2] / "openapi" / "openapi.yaml"


@lru_cache(maxsize=1)
def _spec() -> tuple[bytes, bytes]:
    text = spec_path().read_bytes()
    return text, orjson.dumps(yaml.safe_load(text))


@bp.get("/openapi.yaml")
def openapi_yaml():
    return Response(_spec()[0], mimetype="application/yaml")


@bp.get("/openapi.json")
def openapi_json():
    return Response(_spec()[1], mimetype="application/json")
