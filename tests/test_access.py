"""Access control (service/access.py): API keys, the opt-in query key, CORS, log redaction.

The rules checked here are those of RFC 9110 (HTTP semantics: 401 carries WWW-Authenticate,
section 15.5.2; 403 for credentials that are understood but refused, section 15.5.4), RFC 6750
(Bearer tokens in the Authorization header, section 2.1) and the W3C/WHATWG Fetch standard
(CORS: Access-Control-Allow-Origin, preflight OPTIONS with Access-Control-Request-Method).
"""

from __future__ import annotations

import hmac
import os
import runpy
from pathlib import Path

import pytest

from service import access, create_app

ROOT = Path(__file__).resolve().parents[1]
KEY = "kestrel-ridge-7f3a9c"  # invented
OTHER_KEY = "kr7-pilot-2b8e41"
SPREADSHEET_QUERY = (
    "pellet.shape=sphere&pellet.radius=1.5mm&kinetics.model=power_law&kinetics.order=1"
    "&kinetics.rate_constant=12/s&transport.effective_diffusivity=1.2e-6"
    "&surface.concentration=40&format=value"
)


def keyed_client(**config):
    settings = {"TESTING": True, "API_KEYS": f"{KEY}, {OTHER_KEY}"}
    settings.update(config)
    return create_app(settings).test_client()


def assert_problem(response, status: int, kind: str):
    assert response.status_code == status, response.get_data(as_text=True)
    assert response.mimetype == "application/problem+json"
    body = response.get_json()
    assert body["status"] == status
    assert body["type"] == f"urn:pellet-effectiveness:problem:{kind}"
    return body


# ----------------------------------------------------------------------------- keys off


def test_no_keys_configured_means_open(client, sphere_case):
    assert client.post("/v1/effectiveness", json=sphere_case).status_code == 200
    assert client.get("/metrics").status_code == 200


# ----------------------------------------------------------------------------- keys on


def test_missing_key_is_401_problem_with_www_authenticate(sphere_case):
    response = keyed_client().post("/v1/effectiveness", json=sphere_case)
    body = assert_problem(response, 401, "unauthorized")
    assert "X-API-Key" in body["detail"]
    # RFC 9110 section 15.5.2: a 401 response carries a WWW-Authenticate challenge.
    assert response.headers["WWW-Authenticate"].startswith("Bearer")
    assert response.headers["X-Request-ID"]  # the request id is still echoed


def test_wrong_key_is_403_problem(sphere_case):
    response = keyed_client().post("/v1/effectiveness", json=sphere_case,
                                   headers={"X-API-Key": KEY + "x"})
    assert_problem(response, 403, "forbidden")
    assert "WWW-Authenticate" not in response.headers


@pytest.mark.parametrize("key", [KEY, OTHER_KEY])
def test_each_configured_key_is_accepted(key, sphere_case):
    response = keyed_client().post("/v1/effectiveness", json=sphere_case,
                                   headers={"X-API-Key": key})
    assert response.status_code == 200


def test_bearer_token_is_accepted(sphere_case):
    # RFC 6750 section 2.1: "Authorization: Bearer <token>" (what Prometheus can send).
    client = keyed_client()
    ok = client.post("/v1/effectiveness", json=sphere_case,
                     headers={"Authorization": f"Bearer {KEY}"})
    assert ok.status_code == 200
    wrong = client.post("/v1/effectiveness", json=sphere_case,
                        headers={"Authorization": "Bearer nope"})
    assert_problem(wrong, 403, "forbidden")


@pytest.mark.parametrize("path", ["/healthz", "/readyz"])
def test_probes_stay_open(path):
    assert keyed_client().get(path).status_code == 200


@pytest.mark.parametrize("path", ["/version", "/v1/models", "/openapi.json"])
def test_other_reads_need_a_key(path):
    client = keyed_client()
    assert_problem(client.get(path), 401, "unauthorized")
    assert client.get(path, headers={"X-API-Key": KEY}).status_code == 200


def test_unknown_path_with_a_key_is_still_404():
    response = keyed_client().get("/v1/nothing-here", headers={"X-API-Key": KEY})
    assert_problem(response, 404, "not-found")


def test_metrics_needs_a_key_unless_open():
    assert_problem(keyed_client().get("/metrics"), 401, "unauthorized")
    assert keyed_client().get("/metrics", headers={"X-API-Key": KEY}).status_code == 200
    assert keyed_client(METRICS_OPEN=True).get("/metrics").status_code == 200


def test_key_comparison_uses_hmac_compare_digest(monkeypatch):
    # Constant-time comparison (Python docs, hmac.compare_digest): every configured key is
    # compared, even after a match, so the timing does not tell which key matched.
    calls = []
    real = hmac.compare_digest

    def spy(a, b):
        calls.append((len(a), len(b)))
        return real(a, b)

    monkeypatch.setattr(access.hmac, "compare_digest", spy)
    ring = access.KeyRing(f"{KEY},{OTHER_KEY}")
    assert ring.accepts(KEY)
    assert not ring.accepts("short")
    assert len(calls) == 4  # two keys, two calls: no early exit on the first match
    assert all(a == b == 32 for a, b in calls)  # SHA-256 digests: equal lengths always


def test_keys_file_with_comments_and_reload(tmp_path, monkeypatch, sphere_case):
    keys_file = tmp_path / "keys"
    keys_file.write_text(f"# pilot plant\n{KEY}  # lab bench\n\n")
    client = create_app({"TESTING": True, "API_KEYS_FILE": str(keys_file)}).test_client()
    assert client.post("/v1/effectiveness", json=sphere_case,
                       headers={"X-API-Key": KEY}).status_code == 200
    assert client.post("/v1/effectiveness", json=sphere_case,
                       headers={"X-API-Key": OTHER_KEY}).status_code == 403
    # Rotation: a new file content is picked up after RELOAD_INTERVAL (no restart).
    keys_file.write_text(f"{OTHER_KEY}\n")
    os.utime(keys_file, ns=(1, 1))  # a different mtime even on a coarse-clock filesystem
    monkeypatch.setattr(access, "RELOAD_INTERVAL", 0.0)
    assert client.post("/v1/effectiveness", json=sphere_case,
                       headers={"X-API-Key": OTHER_KEY}).status_code == 200
    assert client.post("/v1/effectiveness", json=sphere_case,
                       headers={"X-API-Key": KEY}).status_code == 403


def test_unreadable_keys_file_stops_the_app(tmp_path):
    with pytest.raises(RuntimeError, match="PELLET_API_KEYS_FILE"):
        create_app({"TESTING": True, "API_KEYS_FILE": str(tmp_path / "missing")})


def test_keys_from_the_environment(monkeypatch, sphere_case):
    monkeypatch.setenv("PELLET_API_KEYS", KEY)
    client = create_app({"TESTING": True}).test_client()
    assert client.post("/v1/effectiveness", json=sphere_case).status_code == 401
    assert client.post("/v1/effectiveness", json=sphere_case,
                       headers={"X-API-Key": KEY}).status_code == 200


# ----------------------------------------------------------------------------- query key


def test_query_key_is_off_by_default():
    response = keyed_client().get(f"/v1/effectiveness?{SPREADSHEET_QUERY}&api_key={KEY}")
    body = assert_problem(response, 401, "unauthorized")
    assert "switched off" in body["detail"]


def test_query_key_on_get_when_allowed():
    client = keyed_client(ALLOW_QUERY_KEY=True)
    response = client.get(f"/v1/effectiveness?{SPREADSHEET_QUERY}&api_key={KEY}")
    assert response.status_code == 200, response.get_data(as_text=True)
    assert float(response.get_data(as_text=True)) > 0
    wrong = client.get(f"/v1/effectiveness?api_key=nope&{SPREADSHEET_QUERY}")
    assert_problem(wrong, 403, "forbidden")


def test_query_key_never_on_post(sphere_case):
    client = keyed_client(ALLOW_QUERY_KEY=True)
    response = client.post(f"/v1/effectiveness?api_key={KEY}", json=sphere_case)
    body = assert_problem(response, 401, "unauthorized")
    assert "GET requests only" in body["detail"]


def test_query_key_is_taken_out_of_the_query_string():
    seen = {}

    def app(environ, start_response):
        seen.update(environ)
        start_response("200 OK", [])
        return [b""]

    middleware = access.StripQueryKey(app)
    middleware({"REQUEST_METHOD": "GET", "QUERY_STRING": f"a=1&api%5Fkey={KEY}&b=%26"},
               lambda *a: None)
    assert seen["QUERY_STRING"] == "a=1&b=%26"
    assert seen[access.QUERY_KEY_ENVIRON] == KEY


# ----------------------------------------------------------------------------- CORS


def test_cors_is_off_by_default(client):
    response = client.get("/healthz", headers={"Origin": "https://sheets.example"})
    assert "Access-Control-Allow-Origin" not in response.headers


def test_cors_for_listed_origins_only():
    client = keyed_client(CORS_ORIGINS="https://sheets.example, https://lab.example/")
    listed = client.get("/healthz", headers={"Origin": "https://lab.example"})
    assert listed.headers["Access-Control-Allow-Origin"] == "https://lab.example"
    assert "Origin" in listed.headers["Vary"]
    assert "X-Request-ID" in listed.headers["Access-Control-Expose-Headers"]
    other = client.get("/healthz", headers={"Origin": "https://evil.example"})
    assert "Access-Control-Allow-Origin" not in other.headers
    # Error answers carry the header too, so the page can read the problem.
    refused = client.get("/version", headers={"Origin": "https://sheets.example"})
    assert refused.status_code == 401
    assert refused.headers["Access-Control-Allow-Origin"] == "https://sheets.example"


def test_cors_preflight_needs_no_key():
    client = keyed_client(CORS_ORIGINS="https://sheets.example")
    response = client.options("/v1/effectiveness", headers={
        "Origin": "https://sheets.example",
        "Access-Control-Request-Method": "POST",
        "Access-Control-Request-Headers": "content-type, x-api-key",
    })
    assert response.status_code == 204
    assert response.headers["Access-Control-Allow-Origin"] == "https://sheets.example"
    assert "POST" in response.headers["Access-Control-Allow-Methods"]
    allowed = response.headers["Access-Control-Allow-Headers"].lower()
    assert "x-api-key" in allowed and "content-type" in allowed
    refused = client.options("/v1/effectiveness", headers={
        "Origin": "https://evil.example", "Access-Control-Request-Method": "POST"})
    assert "Access-Control-Allow-Origin" not in refused.headers


def test_cors_wildcard():
    client = keyed_client(CORS_ORIGINS="*")
    response = client.get("/healthz", headers={"Origin": "https://any.example"})
    assert response.headers["Access-Control-Allow-Origin"] == "*"


# ----------------------------------------------------------------------------- access log


@pytest.fixture
def gunicorn_conf(monkeypatch, tmp_path):
    """gunicorn.conf.py's namespace; its metrics directory pointed at tmp_path."""
    monkeypatch.setenv("PROMETHEUS_MULTIPROC_DIR", str(tmp_path))
    return runpy.run_path(str(ROOT / "gunicorn.conf.py"))


@pytest.mark.parametrize("raw, logged", [
    (f"api_key={KEY}&format=value", "api_key=[REDACTED]&format=value"),
    (f"a=1&API_KEY={KEY}", "a=1&API_KEY=[REDACTED]"),
    (f"a=1&api%5Fkey={KEY}&b=2", "a=1&api%5Fkey=[REDACTED]&b=2"),
    (f"GET /v1/effectiveness?x=1&api_key={KEY} HTTP/1.1",
     "GET /v1/effectiveness?x=1&api_key=[REDACTED] HTTP/1.1"),
    ("pellet.radius=1.5mm", "pellet.radius=1.5mm"),
])
def test_access_log_redacts_query_keys(gunicorn_conf, raw, logged):
    atoms = gunicorn_conf["_JsonStringAtoms"]({"q": raw, "r": raw})
    assert atoms["q"] == logged
    assert atoms["r"] == logged


def test_access_log_redacts_key_headers_and_still_escapes(gunicorn_conf):
    atoms = gunicorn_conf["_JsonStringAtoms"]({
        "{x-api-key}i": KEY, "{authorization}i": f"Bearer {KEY}", "U": '/a"\\\n',
    })
    assert atoms["{X-API-Key}i"] == "[REDACTED]"
    assert atoms["{authorization}i"] == "[REDACTED]"
    assert atoms["U"] == '/a\\"\\\\\\n'  # JSON string escapes (RFC 8259 section 7)
    assert atoms["{absent}i"] == "-"
