"""gunicorn settings, read from PELLET_* environment variables (see the README table)."""

import json
import os
import sys
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


class _JsonStringAtoms(SafeAtoms):
    """gunicorn's atoms, every text value escaped for use inside a JSON string."""

    def __init__(self, atoms):
        dict.__init__(self)
        for key, value in atoms.items():
            self[key] = json.dumps(value)[1:-1] if isinstance(value, str) else value


class JsonAccessLogger(Logger):
    """gunicorn's logger with JSON-safe access-log atoms and an ISO 8601 UTC time."""

    atoms_wrapper_class = _JsonStringAtoms

    def now(self):
        return datetime.now(timezone.utc).isoformat(timespec="milliseconds")


logger_class = JsonAccessLogger
