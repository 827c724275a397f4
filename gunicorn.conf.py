"""gunicorn settings, read from PELLET_* environment variables (see the README table)."""

import json
import os
import re
import shutil
import sys
import tempfile
from datetime import datetime, timezone

from gunicorn.glogging import Logger, SafeAtoms

_env = os.environ.get

bind = f"{_env('PELLET_HOST', '127.0.0.1')}:{int(_env('PELLET_PORT', '8080'))}"
workers = int(_env("PELLET_WORKERS", "2"))
threads = int(_env("PELLET_THREADS", "1"))
# Hard limit per request [s]; the solver budget (PELLET_SOLVER_TIME_BUDGET, default 5 s)
# stays well under it so gunicorn never has to kill a worker.
timeout = int(_env("PELLET_TIMEOUT", "30"))
graceful_timeout = int(_env("PELLET_GRACEFUL_TIMEOUT", "20"))
keepalive = int(_env("PELLET_KEEPALIVE", "5"))
# Worker heartbeat files; the container points this at tmpfs (/dev/shm, which container runtimes
# mount writable). Unset, or not a writable directory (e.g. /dev/shm under `--ipc=none` or a
# plain chroot): the system temp dir, as gunicorn's workers cannot boot without one.
worker_tmp_dir = _env("PELLET_WORKER_TMP_DIR") or None
if worker_tmp_dir and not (os.path.isdir(worker_tmp_dir) and os.access(worker_tmp_dir, os.W_OK)):
    print(f"PELLET_WORKER_TMP_DIR={worker_tmp_dir} is not a writable directory; using the "
          "system temp dir", file=sys.stderr)
    worker_tmp_dir = None
# The control socket (gunicorn >= 25.1) lives in $XDG_RUNTIME_DIR or $HOME by default; a service
# account or a container user often has no writable home, and nothing here uses the socket: off
# unless asked.
control_socket_disable = _env("PELLET_CONTROL_SOCKET", "") == ""
if not control_socket_disable:
    control_socket = _env("PELLET_CONTROL_SOCKET")
# Prometheus multiprocess mode (service/metrics.py): every worker writes its samples to files in
# PROMETHEUS_MULTIPROC_DIR and a scrape sums them. Set up here, before the app is preloaded
# (the client picks its mode at import and the master opens its files then; no server hook
# runs that early). Given: created if missing. Unset: a fresh directory in worker_tmp_dir or
# the system temp dir, removed when the master exits. Emptied at master start either way.
# Only when gunicorn reads this file (as module "__config__"): a test that reads its settings
# must not change its own process's environment.
_OWNED_MARK = "PELLET_METRICS_DIR_OWNED"  # set when this file created the directory
if __name__ == "__config__":
    if _env("PROMETHEUS_MULTIPROC_DIR"):
        os.makedirs(os.environ["PROMETHEUS_MULTIPROC_DIR"], exist_ok=True)
    else:
        os.environ["PROMETHEUS_MULTIPROC_DIR"] = tempfile.mkdtemp(prefix="pellet-metrics-",
                                                                  dir=worker_tmp_dir)
        os.environ[_OWNED_MARK] = "1"


def on_starting(server):
    """Master start: empty the metrics directory (samples of an earlier run would add up)."""
    directory = os.environ["PROMETHEUS_MULTIPROC_DIR"]
    for name in os.listdir(directory):
        if name.endswith(".db"):
            os.unlink(os.path.join(directory, name))


def child_exit(server, worker):
    """A worker exited: drop its live-gauge files (its counters stay in the sums)."""
    from prometheus_client import multiprocess

    multiprocess.mark_process_dead(worker.pid)


def on_exit(server):
    if os.environ.get(_OWNED_MARK):
        shutil.rmtree(os.environ["PROMETHEUS_MULTIPROC_DIR"], ignore_errors=True)


accesslog = _env("PELLET_ACCESS_LOG", "-")
errorlog = "-"
loglevel = _env("PELLET_LOG_LEVEL", "info")
preload_app = True


# Access log: one JSON object per line. Each value is escaped for a JSON string by the logger
# below (gunicorn's own escaping covers only '"', and a path such as /a%5C%0A decodes to a
# backslash and a newline). time: ISO 8601 UTC; duration_s: seconds with microseconds;
# request_id: the X-Request-ID response header the app sets ("-" if a response lacks it).
access_log_format = (
    '{"time": "%(t)s", "remote_addr": "%(h)s", "method": "%(m)s", "path": "%(U)s", '
    '"query": "%(q)s", "status": %(s)s, "duration_s": %(L)s, '
    '"request_id": "%({x-request-id}o)s", "user_agent": "%(a)s"}'
)


# API keys never reach the log: an api_key query parameter (PELLET_ALLOW_QUERY_KEY) in any
# value (query, request line, referer) and the key-bearing headers, should a format name them.
_QUERY_KEY = re.compile(r"(?i)((?:^|[?&;])api(?:_|%5f)key=)[^&;\s]*")
_SECRET_ATOMS = frozenset({"{x-api-key}i", "{authorization}i", "{http_x_api_key}e",
                           "{http_authorization}e", "{pellet.query_api_key}e"})
_REDACTED = "[REDACTED]"


def redact(value: str) -> str:
    """``value`` with every api_key=... query value replaced by [REDACTED]."""
    if "key" not in value.lower():
        return value
    return _QUERY_KEY.sub(lambda m: m.group(1) + _REDACTED, value)


def _json_string_body(value: str) -> str:
    """``value`` escaped for use inside a JSON string (printable ASCII is already safe)."""
    if value.isascii() and value.isprintable() and '"' not in value and "\\" not in value:
        return value
    return json.dumps(value)[1:-1]


class _JsonStringAtoms(SafeAtoms):
    """gunicorn's atoms, secrets redacted, text values escaped for a JSON string.

    Only the atoms that the format names are escaped, when the format reads them: gunicorn
    offers ~50 (every header and environ entry), and escaping all of them cost ~60 us a request.
    """

    def __init__(self, atoms):
        dict.__init__(self, atoms)

    def __getitem__(self, key):
        value = super().__getitem__(key)
        if isinstance(value, str):
            secret = key.lower() in _SECRET_ATOMS and value != "-"
            value = _json_string_body(_REDACTED if secret else redact(value))
        return value


class JsonAccessLogger(Logger):
    """gunicorn's logger with JSON-safe access-log atoms and an ISO 8601 UTC time."""

    atoms_wrapper_class = _JsonStringAtoms

    def now(self):
        return datetime.now(timezone.utc).isoformat(timespec="milliseconds")


logger_class = JsonAccessLogger
