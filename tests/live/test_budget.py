"""Bounded work under real gunicorn: deliberately pathological cases answer 503 (or 200) well
inside gunicorn's worker timeout, a long batch reports budget exhaustion per row, and no worker
is ever killed or restarted."""

import subprocess
import time

import pytest

from tests.live.conftest import (
    ROOT, LiveServer, _free_loopback_port, _kill_group, _stop, _wait_healthy,
    container_command, server_environment,
)

GUNICORN_TIMEOUT = 8  # [s] gunicorn's own hard limit in this test
SOLVER_BUDGET = 0.3  # [s]
BATCH_BUDGET = 2.0  # [s]


@pytest.fixture(scope="module")
def tight_server(tmp_path_factory):
    port = _free_loopback_port()
    logs = tmp_path_factory.mktemp("gunicorn-budget")
    env = server_environment(port, home=logs / "no-home")
    env.update({"PELLET_TIMEOUT": str(GUNICORN_TIMEOUT),
                "PELLET_SOLVER_TIME_BUDGET": str(SOLVER_BUDGET),
                "PELLET_BATCH_TIME_BUDGET": str(BATCH_BUDGET)})
    access_log, error_log = logs / "stdout.log", logs / "stderr.log"
    with open(access_log, "wb") as out, open(error_log, "wb") as err:
        process = subprocess.Popen(container_command(), cwd=ROOT, env=env,
                                   stdin=subprocess.DEVNULL, stdout=out, stderr=err,
                                   start_new_session=True)
    server = LiveServer(f"http://127.0.0.1:{port}", port, container_command(), env, process,
                        access_log, error_log)
    try:
        _wait_healthy(server)
        yield server
    finally:
        status, _ = _stop(process) if process.poll() is None else (process.returncode, False)
        if process.poll() is None:
            _kill_group(process)


def _sphere(kinetics, **extra):
    case = {"pellet": {"shape": "sphere", "radius": "3 mm"}, "kinetics": kinetics,
            "transport": {"effective_diffusivity": 1e-6}, "surface": {"concentration": 40}}
    case.update(extra)
    return case


PATHOLOGICAL = {
    # strong heat effects with unequal mass and heat Biot numbers: the slowest search there is
    "hot film, Bi_m != Bi_h": {
        "pellet": {"shape": "sphere", "radius": "3 mm"},
        "kinetics": {"model": "power_law", "order": 1, "rate_constant": 2.0},
        "transport": {"effective_diffusivity": 1e-6},
        "bulk": {"concentration": 40, "temperature": 600},
        "film": {"mass_transfer_coefficient": 0.002, "heat_transfer_coefficient": 5.0},
        "thermal": {"heat_of_reaction": -4e5, "activation_energy": 1.5e5,
                    "effective_thermal_conductivity": 0.1},
    },
    "tiny order, enormous modulus": _sphere({"model": "power_law", "order": 0.05, "rate_constant": 1e9}),
    "steep Langmuir-Hinshelwood": _sphere({"model": "langmuir_hinshelwood", "rate_constant": 1e7,
                                           "adsorption_constant": 1e3, "exponent": 2}),
    "extreme Arrhenius number": _sphere({"model": "power_law", "order": 2, "rate_constant": 1e3},
                                        thermal={"prater_number": 2.0, "arrhenius_number": 150}),
}


@pytest.mark.slow
@pytest.mark.parametrize("name", list(PATHOLOGICAL))
def test_pathological_case_answers_inside_the_budget(tight_server, name):
    start = time.monotonic()
    reply = tight_server.request("POST", "/v1/effectiveness", PATHOLOGICAL[name],
                                 timeout=GUNICORN_TIMEOUT + 5)
    elapsed = time.monotonic() - start
    assert reply.status in (200, 422, 503), reply.body[:300]
    if reply.status == 503:
        assert "time budget" in reply.json()["detail"]
    assert elapsed < GUNICORN_TIMEOUT / 2


@pytest.mark.slow
def test_long_batch_reports_exhaustion_per_row(tight_server):
    rows = [_sphere({"model": "power_law", "order": 1, "rate_constant": 0.4 + 0.001 * i},
                    thermal={"prater_number": 0.3, "arrhenius_number": 20}) for i in range(400)]
    rows.insert(0, _sphere({"model": "power_law", "order": 1, "rate_constant": 12.0}))
    start = time.monotonic()
    reply = tight_server.request("POST", "/v1/effectiveness/batch", {"cases": rows},
                                 timeout=GUNICORN_TIMEOUT + 5)
    elapsed = time.monotonic() - start
    assert reply.status == 200
    statuses = [r["status"] for r in reply.json()["results"]]
    assert statuses[0] == 200 and statuses[1] == 200
    assert 503 in statuses  # 400 searches do not fit in the 2 s batch budget
    assert set(statuses) <= {200, 503}
    assert elapsed < GUNICORN_TIMEOUT - 2


@pytest.mark.slow
def test_no_worker_was_killed_or_restarted(tight_server):
    # runs after the pathological requests above (same module, same server)
    assert tight_server.request("GET", "/healthz").status == 200
    log = tight_server.error_log.read_text()
    assert "WORKER TIMEOUT" not in log
    assert log.count("Booting worker") == 2, log[-2000:]
