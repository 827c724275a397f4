"""Prometheus metrics (service/metrics.py): in-process checks, then a live 2-worker gunicorn.

Reference for the format: Prometheus "Exposition formats" (text format 0.0.4), read back with
prometheus_client's own parser; the multiprocess rules are those of the prometheus_client
documentation ("Multiprocess Mode (E.g. Gunicorn)": one directory shared by the workers,
emptied at start, mark_process_dead when a worker exits).
"""

from __future__ import annotations

import concurrent.futures
import os
import runpy
import signal
import time
from pathlib import Path

import pytest
from prometheus_client.parser import text_string_to_metric_families

from service import metrics
from service.physics.errors import PhysicsInputError, SolverBudgetExceeded


def samples(text: str, name: str, **labels) -> float:
    """Sum of the samples called ``name`` whose labels include ``labels``."""
    total = 0.0
    for family in text_string_to_metric_families(text):
        for sample in family.samples:
            if sample.name == name and all(sample.labels.get(k) == v for k, v in labels.items()):
                total += sample.value
    return total


def scrape(client) -> str:
    response = client.get("/metrics")
    assert response.status_code == 200
    return response.get_data(as_text=True)


# ----------------------------------------------------------------------------- in-process


def test_exposition_format(client):
    response = client.get("/metrics")
    assert response.status_code == 200
    # Prometheus text format: Content-Type text/plain with its format version.
    assert response.headers["Content-Type"].startswith("text/plain; version=")
    names = {f.name for f in text_string_to_metric_families(response.get_data(as_text=True))}
    assert {"pellet_http_requests", "pellet_http_request_duration_seconds",
            "pellet_batch_rows", "pellet_solve_duration_seconds"} <= names


def test_requests_are_labelled_by_url_rule_not_raw_path(client, sphere_case):
    before = scrape(client)
    client.post("/v1/effectiveness", json=sphere_case)
    client.get("/v1/effectiveness?pellet.shape=sphere&pellet.radius=1mm")  # 422
    client.get("/v1/effectiveness?pellet.shape=slab&pellet.thickness=2mm")  # 422
    client.get("/no/such/path/1")
    client.get("/no/such/path/2")
    client.open("/healthz", method="BREW")  # any method token: one shared label
    after = scrape(client)

    def delta(name, **labels):
        return samples(after, name, **labels) - samples(before, name, **labels)

    assert delta("pellet_http_requests_total", route="/v1/effectiveness", method="POST",
                 status="200") == 1
    assert delta("pellet_http_requests_total", route="/v1/effectiveness", method="GET",
                 status="422") == 2
    assert delta("pellet_http_requests_total", route=metrics.UNMATCHED, status="404") == 2
    assert delta("pellet_http_request_duration_seconds_count", route="/v1/effectiveness",
                 method="POST", status="200") == 1
    assert delta("pellet_http_requests_total", route=metrics.UNMATCHED, method="other",
                 status="405") == 1
    assert "/no/such/path" not in after
    assert "BREW" not in after
    assert "pellet.radius" not in after


def test_batch_rows_histogram(client, sphere_case):
    before = scrape(client)
    response = client.post("/v1/effectiveness/batch", json={"cases": [sphere_case] * 3})
    assert response.status_code == 200
    after = scrape(client)
    assert samples(after, "pellet_batch_rows_count") - samples(before, "pellet_batch_rows_count") == 1
    assert samples(after, "pellet_batch_rows_sum") - samples(before, "pellet_batch_rows_sum") == 3
    assert samples(after, "pellet_batch_rows_bucket", le="10.0") - \
        samples(before, "pellet_batch_rows_bucket", le="10.0") == 1


def test_a_post_records_its_solve(client, sphere_case):
    before = scrape(client)
    assert client.post("/v1/effectiveness", json=sphere_case).status_code == 200
    after = scrape(client)
    name = "pellet_solve_duration_seconds_count"
    assert samples(after, name, method="closed_form", status="ok") - \
        samples(before, name, method="closed_form", status="ok") == 1


class _Result:
    method = "numerical"


@pytest.mark.parametrize("raised, status", [
    (None, "ok"),
    (PhysicsInputError("kinetics.order", -1, "must be >= 0"), "invalid_input"),
    (SolverBudgetExceeded(5.0, "numerical solve"), "budget_exceeded"),
    (ZeroDivisionError("bug"), "error"),
])
def test_timed_evaluate_records_outcome_and_reraises(client, raised, status):
    def evaluate(case):
        if raised is not None:
            raise raised
        return _Result()

    method = "numerical" if raised is None else "none"
    before = scrape(client)
    if raised is None:
        assert isinstance(metrics.timed_evaluate(evaluate, object()), _Result)
    else:
        with pytest.raises(type(raised)):
            metrics.timed_evaluate(evaluate, object())
    after = scrape(client)
    name = "pellet_solve_duration_seconds_count"
    assert samples(after, name, method=method, status=status) - \
        samples(before, name, method=method, status=status) == 1


def test_observe_solve_api(client):
    before = scrape(client)
    metrics.observe_solve("asymptotic", "ok", 0.002)
    after = scrape(client)
    name = "pellet_solve_duration_seconds_sum"
    assert samples(after, name, method="asymptotic", status="ok") - \
        samples(before, name, method="asymptotic", status="ok") == pytest.approx(0.002, rel=1e-9)


# ----------------------------------------------------------------------------- gunicorn.conf.py

ROOT = Path(__file__).resolve().parents[1]


def test_gunicorn_conf_creates_a_given_metrics_dir(monkeypatch, tmp_path):
    # Kubernetes mounts an emptyDir at /tmp: PROMETHEUS_MULTIPROC_DIR=/tmp/prometheus does not
    # exist yet when the master preloads the app (and opens its first metric file).
    wanted = tmp_path / "run" / "prometheus"
    monkeypatch.setenv("PROMETHEUS_MULTIPROC_DIR", str(wanted))
    conf = runpy.run_path(str(ROOT / "gunicorn.conf.py"), run_name="__config__")
    assert wanted.is_dir()
    (wanted / "counter_4242.db").write_bytes(b"an earlier run")
    (wanted / "keep.txt").write_text("not a metric file")
    conf["on_starting"](None)
    assert sorted(p.name for p in wanted.iterdir()) == ["keep.txt"]


def test_reading_gunicorn_conf_elsewhere_leaves_the_environment_alone(monkeypatch):
    monkeypatch.delenv("PROMETHEUS_MULTIPROC_DIR", raising=False)
    runpy.run_path(str(ROOT / "gunicorn.conf.py"))
    assert "PROMETHEUS_MULTIPROC_DIR" not in os.environ


# ----------------------------------------------------------------------------- live, 2 workers

live = pytest.mark.slow


def _worker_pids(master: int) -> set[int]:
    path = Path(f"/proc/{master}/task/{master}/children")
    return {int(p) for p in path.read_text().split()} if path.exists() else set()


@pytest.fixture
def two_worker_server(tmp_path):
    """The container command on a free loopback port, 2 workers, metrics dir in tmp_path."""
    import shutil
    import subprocess

    from tests.live.conftest import (
        VENV_BIN, LiveServer, _free_loopback_port, _kill_group, _stop, _wait_healthy,
        container_command, server_environment,
    )

    if not Path("/proc/self/task").exists():
        pytest.skip("needs /proc to find gunicorn's workers")
    port = _free_loopback_port()
    env = server_environment(port, home=tmp_path / "home-never-created")
    env["PELLET_WORKERS"] = "2"
    env["PROMETHEUS_MULTIPROC_DIR"] = str(tmp_path / "metrics")
    (tmp_path / "metrics").mkdir()
    (tmp_path / "metrics" / "counter_1.db").write_bytes(b"stale")  # an earlier run's file
    argv = container_command()
    assert shutil.which(argv[0], path=env["PATH"]).startswith(str(VENV_BIN))
    out, err = tmp_path / "stdout.log", tmp_path / "stderr.log"
    with open(out, "wb") as out_file, open(err, "wb") as err_file:
        process = subprocess.Popen(argv, cwd=Path(__file__).resolve().parents[1], env=env,
                                   stdin=subprocess.DEVNULL, stdout=out_file, stderr=err_file,
                                   start_new_session=True)
    server = LiveServer(f"http://127.0.0.1:{port}", port, argv, env, process, out, err)
    try:
        _wait_healthy(server)
        deadline = time.monotonic() + 20
        while len(_worker_pids(process.pid)) < 2 and time.monotonic() < deadline:
            time.sleep(0.05)
        yield server
    finally:
        status, leftovers = _stop(process)
        if status is None:
            _kill_group(process)
    assert status == 0, server.error_log_tail()
    assert not leftovers


def _healthz_total(server) -> float:
    reply = server.request("GET", "/metrics")
    assert reply.status == 200
    return samples(reply.body.decode(), "pellet_http_requests_total", route="/healthz")


@live
def test_multiprocess_counters_sum_over_workers(two_worker_server, sphere_case):
    server = two_worker_server
    directory = Path(server.env["PROMETHEUS_MULTIPROC_DIR"])
    assert not (directory / "counter_1.db").exists()  # emptied at master start
    before = _healthz_total(server)  # the readiness polls of the fixture
    workers = _worker_pids(server.process.pid)
    assert len(workers) == 2
    n_get, n_post, statuses = 0, 20, []
    with concurrent.futures.ThreadPoolExecutor(max_workers=8) as pool:
        statuses += list(pool.map(
            lambda _: server.request("POST", "/v1/effectiveness", body=sphere_case).status,
            range(n_post)))
        # Concurrent GETs until both workers have written samples (bounded: 10 rounds); on a
        # starved machine one worker could otherwise take every connection.
        for _ in range(10):
            statuses += list(pool.map(lambda _: server.request("GET", "/healthz").status,
                                      range(40)))
            n_get += 40
            writers = {int(f.stem.rsplit("_", 1)[1]) for f in directory.glob("counter_*.db")}
            if writers == workers:
                break
    assert statuses == [200] * (n_get + n_post)
    assert writers == workers, "both workers served requests and wrote their own files"

    # Whichever worker answers a scrape, it sums both workers' files.
    for _ in range(8):
        assert _healthz_total(server) == before + n_get
    reply = server.request("GET", "/metrics")
    assert samples(reply.body.decode(), "pellet_solve_duration_seconds_count",
                   method="closed_form", status="ok") == n_post

    # A worker dies: gunicorn replaces it (child_exit -> mark_process_dead); its counts stay.
    victim = min(workers)
    os.kill(victim, signal.SIGKILL)
    deadline = time.monotonic() + 20
    while True:
        current = _worker_pids(server.process.pid)
        if len(current) == 2 and victim not in current:
            break
        assert time.monotonic() < deadline, "gunicorn did not replace the killed worker"
        time.sleep(0.05)
    for _ in range(4):
        assert _healthz_total(server) == before + n_get
