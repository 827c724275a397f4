"""Configuration defaults; overridden by PELLET_* environment variables, then a test mapping."""

from __future__ import annotations

import os

ENV_PREFIX = "PELLET_"

DEFAULTS: dict[str, object] = {
    # Largest accepted request body [bytes] (413 beyond it).
    "MAX_CONTENT_LENGTH": 64 * 1024 * 1024,
    # Largest accepted batch [rows] (413 beyond it).
    "MAX_BATCH_ROWS": 100_000,
    # Wall-clock budget of one numerical solve [s]; 503 beyond it. Well under gunicorn's timeout.
    "SOLVER_TIME_BUDGET": 5.0,
    # Wall-clock budget of a whole batch's numerical rows [s]; rows past it answer 503 each.
    # Keep it under gunicorn's timeout (PELLET_TIMEOUT, default 30 s) with room to serialize.
    "BATCH_TIME_BUDGET": 20.0,
    # Version string reported by /version.
    "SERVICE_VERSION": "0.1.0",
    # Access control (service/access.py): comma-separated API keys and/or a file of keys, one
    # a line; empty: no key needed. Probes (/healthz, /readyz) are always open.
    "API_KEYS": "",
    "API_KEYS_FILE": "",
    # Accept api_key=<key> in the query string of GET requests (spreadsheet cells). Off: keys
    # in URLs end up in browser history, files and proxy logs.
    "ALLOW_QUERY_KEY": False,
    # Serve /metrics without a key even when keys are configured.
    "METRICS_OPEN": False,
    # CORS: comma-separated allowed origins, or "*"; empty: no CORS headers.
    "CORS_ORIGINS": "",
}


def _coerce(raw: str, like: object):
    if isinstance(like, bool):
        return raw.strip().lower() in ("1", "true", "yes", "on")
    if isinstance(like, int):
        return int(raw)
    if isinstance(like, float):
        return float(raw)
    return raw


def load_config(test_config: dict | None = None, environ=None) -> dict:
    """Defaults, then ``PELLET_<NAME>`` environment variables, then ``test_config``."""
    environ = os.environ if environ is None else environ
    config = dict(DEFAULTS)
    for name, default in DEFAULTS.items():
        raw = environ.get(ENV_PREFIX + name)
        if raw is not None:
            try:
                config[name] = _coerce(raw, default)
            except ValueError as exc:
                raise ValueError(f"{ENV_PREFIX}{name}={raw!r}: {exc}") from None
    if test_config:
        config.update(test_config)
    return config
