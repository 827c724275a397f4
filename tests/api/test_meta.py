"""Meta operations."""

from service.physics.diagnostics import WARNING_CODES
from service.physics.geometry import SHAPES


def test_health_and_ready(client):
    assert client.get("/healthz").get_json() == {"status": "ok"}
    assert client.get("/readyz").status_code == 200


def test_version(client):
    body = client.get("/version").get_json()
    assert body["api"] == "v1" and body["version"]


def test_models_lists_every_shape_and_code(client):
    body = client.get("/v1/models").get_json()
    assert {s["shape"] for s in body["shapes"]} == set(SHAPES)
    sphere = next(s for s in body["shapes"] if s["shape"] == "sphere")
    assert sphere["fields"][0]["unit"] == "m"
    assert {w["code"] for w in body["warning_codes"]} == set(WARNING_CODES)
