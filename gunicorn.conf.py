"""gunicorn settings, read from PELLET_* environment variables (see the README table)."""

import os

_env = os.environ.get

bind = f"{_env('PELLET_HOST', '127.0.0.1')}:{int(_env('PELLET_PORT', '8080'))}"
workers = int(_env("PELLET_WORKERS", "2"))
threads = int(_env("PELLET_THREADS", "1"))
# Hard limit per request [s]; the solver budget (PELLET_SOLVER_TIME_BUDGET, default 5 s)
# stays well under it so gunicorn never has to kill a worker.
timeout = int(_env("PELLET_TIMEOUT", "30"))
graceful_timeout = int(_env("PELLET_GRACEFUL_TIMEOUT", "20"))
keepalive = int(_env("PELLET_KEEPALIVE", "5"))
# The control socket (gunicorn >= 24) lives in $HOME by default; a service account or a
# container user often has no writable home, and nothing here uses the socket: off unless asked.
control_socket_disable = _env("PELLET_CONTROL_SOCKET", "") == ""
if not control_socket_disable:
    control_socket = _env("PELLET_CONTROL_SOCKET")
accesslog = _env("PELLET_ACCESS_LOG", "-")
errorlog = "-"
loglevel = _env("PELLET_LOG_LEVEL", "info")
preload_app = True
