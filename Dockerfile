# Pellet effectiveness service: gunicorn serving service.wsgi:app on port 8080.
#
#   docker build -t pellet-effectiveness .
#   docker run --rm -p 8080:8080 --stop-timeout 25 pellet-effectiveness
#
# The CI machines run no container engine: tests/test_dockerfile.py lints this file with hadolint
# and checks it statically, and tests/live/ starts this file's CMD (with its ENV, on 127.0.0.1 and
# a free port) as a real gunicorn. Builds without a registry: scripts/podman-build.sh.
FROM python:3.11-slim-bookworm

# PELLET_HOST: listen on every interface of the container (the service's default is 127.0.0.1).
# PELLET_WORKER_TMP_DIR: worker heartbeat files on the tmpfs that runtimes mount at /dev/shm, not
# on the overlay filesystem (gunicorn.conf.py falls back to /tmp where /dev/shm is not writable).
# PYTHONDONTWRITEBYTECODE: /app is read-only for the service user; its bytecode is compiled below.
# Other PELLET_* settings (workers, threads, timeouts, limits) are passed with `docker run -e`.
ENV PYTHONDONTWRITEBYTECODE=1 \
    PYTHONUNBUFFERED=1 \
    PIP_DISABLE_PIP_VERSION_CHECK=1 \
    PELLET_HOST=0.0.0.0 \
    PELLET_PORT=8080 \
    PELLET_WORKER_TMP_DIR=/dev/shm

# The service account has no home directory. gunicorn (>= 25.1) opens a control socket under
# $HOME by default; gunicorn.conf.py turns it off unless PELLET_CONTROL_SOCKET names a path
# (which must then be writable by this user, e.g. under /tmp).
RUN groupadd --system --gid 10001 pellet \
    && useradd --system --uid 10001 --gid pellet --no-create-home \
       --home-dir /nonexistent --shell /usr/sbin/nologin pellet

WORKDIR /app

# Dependencies and the package from the project's own metadata; no pip cache in the image.
# gunicorn runs from /app (its working directory comes first on sys.path), so the code that
# serves is /app/service, and /app/openapi/openapi.yaml is the contract it reads.
COPY pyproject.toml README.md ./
COPY service/ ./service/
RUN pip install --no-cache-dir --root-user-action=ignore . \
    && rm -rf build ./*.egg-info \
    && python -m compileall -q service
COPY openapi/ ./openapi/
COPY gunicorn.conf.py ./

# Code and configuration stay owned by root; the service user only reads them.
USER 10001:10001

EXPOSE 8080

# No curl in the slim image: python's http.client (which, unlike urllib, never goes through an
# HTTP_PROXY set in the environment). Exit 0 on 200; 1 on any other status or a refused connection.
HEALTHCHECK --interval=30s --timeout=5s --start-period=20s --retries=3 \
    CMD ["python", "-c", "import http.client, os; c = http.client.HTTPConnection('127.0.0.1', int(os.environ.get('PELLET_PORT', '8080')), timeout=4); c.request('GET', '/healthz'); raise SystemExit(c.getresponse().status != 200)"]

# gunicorn is PID 1 and stops gracefully on SIGTERM (the default stop signal). Its graceful
# timeout is 20 s (PELLET_GRACEFUL_TIMEOUT): give `docker stop` / Kubernetes longer than that.
CMD ["gunicorn", "-c", "gunicorn.conf.py", "service.wsgi:app"]
