"""Live checks: real HTTP calls (urllib) against the container's gunicorn command on 127.0.0.1.

The server comes from the session fixture ``live_server`` (tests/live/conftest.py): the
Dockerfile's CMD and ENV, bound to 127.0.0.1 on a free port, stopped with SIGTERM at the end.
"""

from __future__ import annotations

import json
import math
import os
import re
import subprocess
import time
import uuid
from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest

from tests.live.dockerfile import healthcheck, read

pytestmark = pytest.mark.slow

# What request_ids accepts from a caller, and what a generated id must satisfy too.
SANE_REQUEST_ID = re.compile(r"^[A-Za-z0-9._:-]{1,128}$")
ACCESS_LOG_KEYS = {
    "time", "remote_addr", "method", "path", "query", "status", "duration_s", "request_id",
    "user_agent",
}


def _unique_id(tag: str) -> str:
    return f"kestrel-{tag}-{uuid.uuid4().hex[:12]}"


def test_runs_exactly_the_container_command(live_server):
    # The master's own command line ends with the Dockerfile CMD (the kernel puts the
    # script's interpreter first when it runs the `gunicorn` console script).
    cmdline_file = Path(f"/proc/{live_server.process.pid}/cmdline")
    if not cmdline_file.exists():
        pytest.skip("no /proc on this system")
    cmdline = cmdline_file.read_bytes().rstrip(b"\0").decode().split("\0")
    argv = live_server.argv
    assert cmdline[-(len(argv) - 1):] == argv[1:]
    assert os.path.basename(cmdline[-len(argv)]) == argv[0]
    errors = live_server.error_log.read_text()
    assert f"Listening at: http://127.0.0.1:{live_server.port} " in errors


def test_healthz(live_server):
    reply = live_server.request("GET", "/healthz")
    assert reply.status == 200
    assert reply.headers["content-type"].startswith("application/json")
    assert reply.json() == {"status": "ok"}


def test_effectiveness_sphere_case(live_server, sphere_case):
    reply = live_server.request("POST", "/v1/effectiveness", body=sphere_case)
    assert reply.status == 200, reply.body
    assert reply.headers["content-type"].startswith("application/json")
    answer = reply.json()
    # Thiele modulus on the radius, phi = R sqrt(k/De), and the first-order sphere result
    # eta = (3/phi^2)(phi coth(phi) - 1): E. W. Thiele, "Relation between catalytic activity
    # and size of particle", Ind. Eng. Chem. 31 (1939) 916-920; H. S. Fogler, Elements of
    # Chemical Reaction Engineering, internal effectiveness factor of a sphere.
    radius, k, de, cs = 1.5e-3, 12.0, 1.2e-6, 40.0  # SPHERE_CASE in SI
    phi = radius * math.sqrt(k / de)
    eta = 3.0 / phi**2 * (phi / math.tanh(phi) - 1.0)
    assert answer["thiele_modulus"] == pytest.approx(phi, rel=1e-12)
    assert answer["effectiveness_factor"] == pytest.approx(eta, rel=1e-12)
    # Observed rate = eta k c_s (definition of the effectiveness factor), mol/(m^3*s).
    assert answer["observed_rate"]["value"] == pytest.approx(eta * k * cs, rel=1e-12)
    assert answer["observed_rate"]["unit"] == "mol/(m^3*s)"


def test_bad_request_is_problem_json_422(live_server, sphere_case):
    sphere_case["pellet"]["radius"] = "1.5 kg"  # a mass where a length belongs
    reply = live_server.request("POST", "/v1/effectiveness", body=sphere_case)
    assert reply.status == 422
    # RFC 9457: problem details as application/problem+json, status repeated in the body.
    assert reply.headers["content-type"].startswith("application/problem+json")
    problem = reply.json()
    assert problem["status"] == 422
    assert {"type", "title"} <= problem.keys()
    assert "pellet.radius" in [e["field"] for e in problem["errors"]]
    assert "Traceback" not in reply.body.decode()


def test_sent_request_id_is_echoed(live_server):
    sent = _unique_id("echo")
    reply = live_server.request("GET", "/healthz", headers={"X-Request-ID": sent})
    assert reply.headers["x-request-id"] == sent


def test_request_id_generated_when_absent(live_server):
    first = live_server.request("GET", "/healthz").headers.get("x-request-id")
    second = live_server.request("GET", "/healthz").headers.get("x-request-id")
    assert first and SANE_REQUEST_ID.match(first)
    assert second and SANE_REQUEST_ID.match(second)
    assert first != second


def test_request_id_that_is_not_sane_is_replaced(live_server):
    # A caller's id goes into every log line: quotes, spaces or 200 characters are not taken.
    for sent in ('two words "quoted"', "x" * 200):
        got = live_server.request("GET", "/healthz", headers={"X-Request-ID": sent}).headers
        assert got["x-request-id"] != sent
        assert SANE_REQUEST_ID.match(got["x-request-id"])


def test_request_id_on_error_responses(live_server):
    sent = _unique_id("err")
    reply = live_server.request("GET", "/v1/no-such-resource", headers={"X-Request-ID": sent})
    assert reply.status == 404
    assert reply.headers["x-request-id"] == sent


def test_access_log_line_is_json_with_request_id(live_server, sphere_case):
    sent = _unique_id("log")
    before = datetime.now(timezone.utc)
    reply = live_server.request(
        "POST", "/v1/effectiveness?trace=1", body=sphere_case, headers={"X-Request-ID": sent}
    )
    assert reply.status == 200
    entry = live_server.wait_for_access_entry(sent)
    assert entry.keys() == ACCESS_LOG_KEYS
    assert entry["method"] == "POST"
    assert entry["path"] == "/v1/effectiveness"
    assert entry["query"] == "trace=1"
    assert entry["status"] == 200
    assert entry["remote_addr"] == "127.0.0.1"
    assert entry["user_agent"].startswith("Python-urllib/")
    assert isinstance(entry["duration_s"], float) and 0.0 <= entry["duration_s"] < 10.0
    logged = datetime.fromisoformat(entry["time"])
    assert logged.utcoffset() == timedelta(0)
    assert before - timedelta(seconds=1) <= logged <= datetime.now(timezone.utc) + timedelta(seconds=1)


def test_access_log_stays_json_for_hostile_paths(live_server):
    # %22 = '"', %5C = '\', %0A = newline: gunicorn decodes them into PATH_INFO.
    sent = _unique_id("path")
    reply = live_server.request(
        "GET", "/no%22such%5Cpath%0Aline", headers={"X-Request-ID": sent}
    )
    assert reply.status == 404
    entry = live_server.wait_for_access_entry(sent)
    assert entry["path"] == '/no"such\\path\nline'
    assert entry["status"] == 404


def test_every_access_log_line_is_one_json_object(live_server):
    sent = _unique_id("all")
    live_server.request("GET", "/healthz", headers={"X-Request-ID": sent})
    live_server.wait_for_access_entry(sent)
    lines = live_server.access_log_lines()
    assert len(lines) >= 2  # the readiness polls and this call at least
    for line in lines:
        entry = json.loads(line)
        assert isinstance(entry, dict) and entry.keys() == ACCESS_LOG_KEYS, line


def test_openapi_contract_is_served(live_server):
    # The image copies openapi/ beside service/; this is the layout the app reads it from.
    reply = live_server.request("GET", "/openapi.yaml")
    assert reply.status == 200
    assert b"openapi:" in reply.body


def test_no_home_directory_needed(live_server):
    # The image's user has no home; gunicorn's control socket would go there if enabled.
    assert not Path(live_server.env["HOME"]).exists()


def test_dockerfile_healthcheck_command_against_the_server(live_server):
    _, argv = healthcheck(read())
    env = dict(live_server.env)
    started = time.monotonic()
    ok = subprocess.run(argv, env=env, capture_output=True, timeout=10)
    assert ok.returncode == 0, ok.stderr.decode()
    assert time.monotonic() - started < 4.0  # inside the HEALTHCHECK --timeout of 5 s
    # And it can fail: the same command pointed at a loopback port where nothing listens.
    import socket

    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))  # bound, never listening: connections are refused
        env["PELLET_PORT"] = str(sock.getsockname()[1])
        bad = subprocess.run(argv, env=env, capture_output=True, timeout=10)
    assert bad.returncode != 0
