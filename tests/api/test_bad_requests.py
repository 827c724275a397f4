"""A table of bad requests: each is a 4xx problem+json naming the problem; none is a 5xx."""

import copy

import pytest

from tests.conftest import SPHERE_CASE


def _with(path, value):
    case = copy.deepcopy(SPHERE_CASE)
    node = case
    keys = path.split(".")
    for key in keys[:-1]:
        node = node[key]
    if value is _DELETE:
        del node[keys[-1]]
    else:
        node[keys[-1]] = value
    return case


_DELETE = object()

BAD_CASES = [
    ("negative radius", _with("pellet.radius", -1.5), "pellet.radius"),
    ("zero radius", _with("pellet.radius", "0 mm"), "pellet.radius"),
    ("radius in kg", _with("pellet.radius", "1.5 kg"), "pellet.radius"),
    ("radius unknown unit", _with("pellet.radius", "1.5 blorps"), "pellet.radius"),
    ("radius not a number", _with("pellet.radius", "abc"), "pellet.radius"),
    ("radius boolean", _with("pellet.radius", True), "pellet.radius"),
    ("radius null", _with("pellet.radius", None), "pellet.radius"),
    ("radius list", _with("pellet.radius", [1.5]), "pellet.radius"),
    ("radius object without value", _with("pellet.radius", {"unit": "mm"}), "pellet.radius"),
    ("radius object extra key", _with("pellet.radius", {"value": 1, "unit": "mm", "x": 1}), "pellet.radius"),
    ("radius huge exponent", _with("pellet.radius", "1e400 m"), "pellet.radius"),
    ("missing radius", _with("pellet.radius", _DELETE), "pellet.radius"),
    ("unknown shape", _with("pellet.shape", "cube"), "pellet.shape"),
    ("shape not a string", _with("pellet.shape", 3), "pellet.shape"),
    ("missing shape", _with("pellet.shape", _DELETE), "pellet.shape"),
    ("unknown pellet field", _with("pellet.diameter", "3 mm"), "pellet.diameter"),
    ("slab field on sphere", _with("pellet.thickness", "3 mm"), "pellet.thickness"),
    ("negative rate constant", _with("kinetics.rate_constant", -1), "kinetics.rate_constant"),
    ("rate constant wrong unit", _with("kinetics.rate_constant", "12 m/s"), "kinetics.rate_constant"),
    ("unknown model", _with("kinetics.model", "magic"), "kinetics.model"),
    ("negative order", _with("kinetics.order", -1), "kinetics.order"),
    ("order as string", _with("kinetics.order", "1"), "kinetics.order"),
    ("mass basis without density", _with("kinetics.rate_basis", "catalyst_mass"), "kinetics.pellet_density"),
    ("unknown basis", _with("kinetics.rate_basis", "per_litre"), "kinetics.rate_basis"),
    ("zero diffusivity", _with("transport.effective_diffusivity", 0), "transport.effective_diffusivity"),
    ("diffusivity as length", _with("transport.effective_diffusivity", "1 m"), "transport.effective_diffusivity"),
    ("missing transport", _with("transport", _DELETE), "transport"),
    ("negative concentration", _with("surface.concentration", "-4 mol/m^3"), "surface.concentration"),
    ("concentration in pressure", _with("surface.concentration", "1 bar"), "surface.concentration"),
    ("unknown top-level field", _with("reactor", {}), "reactor"),
    ("profile points too many", _with("options", {"profile_points": 10**6}), "options.profile_points"),
    ("profile points fractional", _with("options", {"profile_points": 2.5}), "options.profile_points"),
    ("pellet not an object", _with("pellet", "sphere"), "pellet"),
    ("exposed faces as string", _with("pellet", {"shape": "slab", "thickness": 1e-3, "exposed_faces": "2"}), "pellet.exposed_faces"),
    ("exposed faces 3", _with("pellet", {"shape": "slab", "thickness": 1e-3, "exposed_faces": 3}), "pellet.exposed_faces"),
]


@pytest.mark.parametrize("name, body, field", BAD_CASES, ids=[c[0] for c in BAD_CASES])
def test_invalid_case_is_422_naming_the_field(client, name, body, field):
    response = client.post("/v1/effectiveness", json=body)
    assert response.status_code == 422, response.get_data(as_text=True)
    assert response.mimetype == "application/problem+json"
    problem = response.get_json()
    assert problem["status"] == 422
    assert field in [e["field"] for e in problem["errors"]]
    assert all(e["message"] for e in problem["errors"])


RAW_CASES = [
    ("malformed json", b'{"pellet": ', "application/json", 400),
    ("empty body", b"", "application/json", 400),
    ("text content type", b"{}", "text/plain", 415),
    ("form content type", b"a=1", "application/x-www-form-urlencoded", 415),
    ("no content type", b"{}", None, 415),
    ("NaN literal", b'{"pellet": {"shape": "sphere", "radius": NaN}}', "application/json", 422),
    ("Infinity literal", b'{"pellet": {"shape": "sphere", "radius": Infinity}}', "application/json", 422),
    ("1e400 literal", b'{"pellet": {"shape": "sphere", "radius": 1e400}}', "application/json", 422),
    ("top-level array", b"[1, 2, 3]", "application/json", 422),
    ("top-level string", b'"sphere"', "application/json", 422),
    ("deeply nested", b"[" * 100000 + b"]" * 100000, "application/json", 400),
    ("invalid utf-8", b'{"pellet": "\xff\xfe"}', "application/json", 400),
]


@pytest.mark.parametrize("name, data, ctype, status", RAW_CASES, ids=[c[0] for c in RAW_CASES])
def test_raw_bad_bodies(client, name, data, ctype, status):
    headers = {"Content-Type": ctype} if ctype else {}
    response = client.post("/v1/effectiveness", data=data, headers=headers)
    assert response.status_code == status, response.get_data(as_text=True)
    assert response.mimetype == "application/problem+json"
    assert response.get_json()["detail"]


def test_body_too_large_is_413(app):
    app.config["MAX_CONTENT_LENGTH"] = 1000
    client = app.test_client()
    response = client.post("/v1/effectiveness", data=b"{" + b" " * 2000 + b"}",
                           headers={"Content-Type": "application/json"})
    assert response.status_code == 413
    assert response.mimetype == "application/problem+json"


@pytest.mark.parametrize("method, path, status", [
    ("GET", "/v1/nothing", 404), ("PUT", "/v1/effectiveness", 405),
    ("DELETE", "/healthz", 405),
])
def test_unknown_routes_and_methods(client, method, path, status):
    response = client.open(path, method=method)
    assert response.status_code == status
    assert response.mimetype == "application/problem+json"
