"""Prometheus metrics: request counts and latencies per route, batch sizes, solver outcomes.

GET /metrics answers the Prometheus text exposition format. Two modes, chosen by
prometheus_client when it is first imported:

- multiprocess (``PROMETHEUS_MULTIPROC_DIR`` set): every gunicorn worker writes its samples to
  memory-mapped files in that directory and a scrape, answered by whichever worker, sums the
  files of all workers, dead ones included, so counters never go backwards when a worker
  restarts. gunicorn.conf.py creates and empties the directory at master start and calls
  ``mark_process_dead`` when a worker exits.
- single process (the variable unset, e.g. tests and ``flask run``): the default registry.

Labels are bounded: ``route`` is the URL rule (``/v1/effectiveness``), never the raw path;
unmatched paths share one label, ``(unmatched)``.

Colleagues record a solve with ``observe_solve(method, status, seconds)`` or let
``timed_evaluate(evaluate, case)`` do it.

/metrics is served by a before_request hook, not a URL rule: it is an operations endpoint, not
part of the published API contract (openapi/openapi.yaml lists exactly the URL rules). The hook
runs after the access check (service/access.py), so /metrics needs an API key whenever keys are
configured, unless PELLET_METRICS_OPEN is true.
"""

from __future__ import annotations

import os
import time

from flask import Flask, Response, g, request
from prometheus_client import (
    CONTENT_TYPE_LATEST,
    REGISTRY,
    CollectorRegistry,
    Counter,
    Histogram,
    generate_latest,
    multiprocess,
    values,
)

from .physics.errors import PhysicsInputError, SolverBudgetExceeded

METRICS_PATH = "/metrics"
UNMATCHED = "(unmatched)"
# A caller may send any method token: others share one label, so labels stay bounded.
_METHODS = frozenset({"GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"})

# Latency buckets [s]: a probe answers in ~0.5 ms, a closed-form POST in ~1-2 ms, a numerical
# solve up to the solver budget (5 s by default), a 100k-row batch in seconds.
LATENCY_BUCKETS = (0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0, 30.0)
SOLVE_BUCKETS = (0.0001, 0.00025, 0.0005, 0.001, 0.0025, 0.01, 0.05, 0.25, 1.0, 2.5, 5.0, 10.0)
BATCH_ROW_BUCKETS = (1, 10, 100, 1_000, 10_000, 100_000)

REQUESTS = Counter(
    "pellet_http_requests_total", "HTTP requests answered, by route (URL rule), method and status.",
    ("route", "method", "status"),
)
LATENCY = Histogram(
    "pellet_http_request_duration_seconds",
    "Time from the first request hook to the response [s], by route, method and status.",
    ("route", "method", "status"), buckets=LATENCY_BUCKETS,
)
BATCH_ROWS = Histogram(
    "pellet_batch_rows", "Rows per POST /v1/effectiveness/batch request.",
    buckets=BATCH_ROW_BUCKETS,
)
SOLVES = Histogram(
    "pellet_solve_duration_seconds",
    "Time of one effectiveness evaluation [s], by method (closed_form, numerical, asymptotic; "
    "'none' when it failed before choosing one) and status (ok, invalid_input, "
    "budget_exceeded, error); _count counts the outcomes.",
    ("method", "status"), buckets=SOLVE_BUCKETS,
)


# The mode prometheus_client chose when it was imported (its value class); a variable set
# later in this process (e.g. by a test reading gunicorn.conf.py) does not change it.
_MULTIPROCESS_DIR = (os.environ.get("PROMETHEUS_MULTIPROC_DIR")
                     if values.ValueClass is not values.MutexValue else None)


def multiprocess_dir() -> str | None:
    """The directory of the multiprocess mode, or None in single-process mode."""
    return _MULTIPROCESS_DIR


def observe_solve(method: str, status: str, seconds: float) -> None:
    """Record one evaluation: ``method`` as in the response, ``status`` ok/invalid_input/..."""
    child = _SOLVE_CHILDREN.get((method, status))
    if child is None:  # bounded: a few methods x four statuses
        child = _SOLVE_CHILDREN[(method, status)] = SOLVES.labels(method, status)
    child.observe(seconds)


def observe_batch(rows: int) -> None:
    """Record the size of one batch request [rows]."""
    BATCH_ROWS.observe(rows)


def timed_evaluate(evaluate, case):
    """``evaluate(case)``, its outcome and time recorded with observe_solve; errors re-raised."""
    start = time.perf_counter()
    try:
        result = evaluate(case)
    except PhysicsInputError:
        observe_solve("none", "invalid_input", time.perf_counter() - start)
        raise
    except SolverBudgetExceeded:
        observe_solve("none", "budget_exceeded", time.perf_counter() - start)
        raise
    except Exception:
        observe_solve("none", "error", time.perf_counter() - start)
        raise
    observe_solve(result.method, "ok", time.perf_counter() - start)
    return result


def exposition() -> bytes:
    """The text exposition of every metric (all workers' in multiprocess mode)."""
    if multiprocess_dir():
        registry = CollectorRegistry()
        multiprocess.MultiProcessCollector(registry)
        return generate_latest(registry)
    return generate_latest(REGISTRY)


def _route() -> str:
    rule = request.url_rule
    if rule is not None:
        return rule.rule
    return METRICS_PATH if request.path == METRICS_PATH else UNMATCHED


def init_app(app: Flask) -> None:
    """Time every request and serve GET /metrics.

    Call after ``access.init_app``: the timer is put first among the before_request hooks
    (so refused requests are timed too), the /metrics hook last (so it is keyed like the rest).
    """

    def _start():
        g.metrics_start = time.perf_counter()

    app.before_request_funcs.setdefault(None, []).insert(0, _start)

    @app.before_request
    def _serve_metrics():
        if request.path == METRICS_PATH and request.method in ("GET", "HEAD"):
            return Response(exposition(), headers={"Content-Type": CONTENT_TYPE_LATEST})
        return None

    @app.after_request
    def _record(response):
        method = request.method if request.method in _METHODS else "other"
        labels = (_route(), method, response.status_code)
        children = _CHILDREN.get(labels)
        if children is None:  # bounded: routes x methods x statuses
            names = (labels[0], labels[1], str(labels[2]))
            children = _CHILDREN[labels] = (REQUESTS.labels(*names), LATENCY.labels(*names))
        children[0].inc()
        start = g.get("metrics_start")
        if start is not None:
            children[1].observe(time.perf_counter() - start)
        return response


# Label values -> metric children, so that a request skips labels() (its lock and checks).
_CHILDREN: dict[tuple, tuple] = {}
_SOLVE_CHILDREN: dict[tuple, Histogram] = {}
