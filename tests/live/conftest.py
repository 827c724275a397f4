"""A real gunicorn for the live tests: the Dockerfile's CMD, run the way the container runs it.

The argv is the Dockerfile's exec-form CMD, unchanged (read by ``tests/live/dockerfile.py``);
the environment is the Dockerfile's ENV, except that the server binds 127.0.0.1 on a free
port; ``gunicorn`` resolves through PATH to this virtual environment's script, as it resolves
to the image's in the container. Inherited PELLET_* variables are dropped so that a
developer's shell cannot change what is tested.

The server runs in its own process group (session). Teardown sends SIGTERM to the master,
requires exit status 0 within STOP_TIMEOUT and an empty process group afterwards; whatever
happens (a failing test, a server that never became healthy, an interrupted run) the group is
killed, so no gunicorn outlives the test session.
"""

from __future__ import annotations

import atexit
import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from dataclasses import dataclass, field
from pathlib import Path

import pytest

from tests.live.dockerfile import ROOT, container_command, container_environment

STARTUP_TIMEOUT = 20.0  # [s] from spawn to a 200 on /healthz
STOP_TIMEOUT = 15.0  # [s] from SIGTERM to the master's exit
VENV_BIN = Path(sys.executable).parent  # the interpreter running pytest: the project's venv

# Never route loopback calls through an HTTP_PROXY from the environment.
_OPENER = urllib.request.build_opener(urllib.request.ProxyHandler({}))


@dataclass
class Reply:
    status: int
    headers: dict[str, str]  # header names in lower case
    body: bytes

    def json(self):
        return json.loads(self.body)


@dataclass
class LiveServer:
    base_url: str
    port: int
    argv: list[str]
    env: dict[str, str]
    process: subprocess.Popen
    access_log: Path  # gunicorn's stdout (accesslog "-")
    error_log: Path  # gunicorn's stderr (errorlog "-")
    _lines_seen: int = field(default=0, repr=False)

    def request(self, method: str, path: str, body=None, headers=None, timeout=10.0) -> Reply:
        """One HTTP call with urllib; 4xx/5xx are returned, not raised. ``body``: dict -> JSON."""
        headers = dict(headers or {})
        data = body
        if isinstance(body, (dict, list)):
            data = json.dumps(body).encode()
            headers.setdefault("Content-Type", "application/json")
        req = urllib.request.Request(self.base_url + path, data=data, method=method, headers=headers)
        try:
            with _OPENER.open(req, timeout=timeout) as resp:
                return Reply(resp.status, _lower(resp.headers), resp.read())
        except urllib.error.HTTPError as err:
            with err:
                return Reply(err.code, _lower(err.headers), err.read())

    def access_log_lines(self) -> list[str]:
        return self.access_log.read_text(encoding="utf-8").splitlines()

    def wait_for_access_entry(self, request_id: str, timeout: float = 5.0) -> dict:
        """The JSON access-log entry whose request_id matches (gunicorn logs after replying)."""
        deadline = time.monotonic() + timeout
        while True:
            for line in self.access_log_lines():
                if request_id in line:
                    entry = json.loads(line)
                    if entry.get("request_id") == request_id:
                        return entry
            if time.monotonic() > deadline:
                raise AssertionError(
                    f"no access-log line with request_id {request_id!r} within {timeout} s; "
                    f"log tail: {self.access_log_lines()[-5:]}"
                )
            time.sleep(0.02)

    def error_log_tail(self, lines: int = 30) -> str:
        return "\n".join(self.error_log.read_text(encoding="utf-8", errors="replace").splitlines()[-lines:])


def _lower(headers) -> dict[str, str]:
    return {k.lower(): v for k, v in headers.items()}


def _free_loopback_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def server_environment(port: int, home: Path) -> dict[str, str]:
    """The container's environment, bound to 127.0.0.1:port, with this venv first on PATH.

    ``home`` should not exist: like the image's service user (home /nonexistent), the server
    must start and serve without writing there (gunicorn's control socket stays off).
    """
    env = {k: v for k, v in os.environ.items() if not k.startswith("PELLET_")}
    env.pop("XDG_RUNTIME_DIR", None)
    env["HOME"] = str(home)
    env.update(container_environment())
    env["PELLET_HOST"] = "127.0.0.1"
    env["PELLET_PORT"] = str(port)
    env["PATH"] = os.pathsep.join([str(VENV_BIN), env.get("PATH", "")])
    return env


def _group_alive(pgid: int) -> bool:
    try:
        os.killpg(pgid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # a process exists that we may not signal
        return True
    return True


def _kill_group(process: subprocess.Popen) -> None:
    """SIGKILL the whole process group (master and workers) and reap the master."""
    try:
        os.killpg(process.pid, signal.SIGKILL)
    except ProcessLookupError:
        pass
    try:
        process.wait(timeout=5)
    except subprocess.TimeoutExpired:
        pass


def _stop(process: subprocess.Popen) -> tuple[int | None, bool]:
    """SIGTERM the master; (its exit status or None on timeout, whether any process was left)."""
    status = process.poll()
    if status is None:
        process.send_signal(signal.SIGTERM)
        try:
            status = process.wait(timeout=STOP_TIMEOUT)
        except subprocess.TimeoutExpired:
            status = None
    deadline = time.monotonic() + 2.0  # orphaned workers, if any, need a moment to be reaped
    while _group_alive(process.pid) and time.monotonic() < deadline:
        time.sleep(0.05)
    leftovers = _group_alive(process.pid)
    if status is None or leftovers:
        _kill_group(process)
    return status, leftovers


def _wait_healthy(server: LiveServer) -> None:
    deadline = time.monotonic() + STARTUP_TIMEOUT
    while True:
        if server.process.poll() is not None:
            raise RuntimeError(
                f"gunicorn exited with status {server.process.returncode} before answering "
                f"/healthz; stderr:\n{server.error_log_tail()}"
            )
        try:
            if server.request("GET", "/healthz", timeout=1.0).status == 200:
                return
        except OSError:  # refused / reset while booting
            pass
        if time.monotonic() > deadline:
            raise RuntimeError(
                f"gunicorn not healthy within {STARTUP_TIMEOUT} s; stderr:\n{server.error_log_tail()}"
            )
        time.sleep(0.05)


@pytest.fixture(scope="session")
def live_server(tmp_path_factory) -> LiveServer:
    argv = container_command()
    port = _free_loopback_port()
    logs = tmp_path_factory.mktemp("gunicorn")
    env = server_environment(port, home=logs / "home-never-created")
    executable = shutil.which(argv[0], path=env["PATH"])
    if executable is None or Path(executable).parent != VENV_BIN:
        pytest.fail(f"{argv[0]!r} does not resolve to {VENV_BIN} (found {executable!r})")
    access_log, error_log = logs / "stdout.log", logs / "stderr.log"
    with open(access_log, "wb") as out, open(error_log, "wb") as err:
        process = subprocess.Popen(
            argv,
            cwd=ROOT,
            env=env,
            stdin=subprocess.DEVNULL,
            stdout=out,
            stderr=err,
            start_new_session=True,  # its own process group: teardown can reach the workers
        )
    # Last resort if the session dies without running fixture teardown (e.g. a second Ctrl-C).
    atexit.register(lambda: process.poll() is None and _kill_group(process))
    server = LiveServer(f"http://127.0.0.1:{port}", port, argv, env, process, access_log, error_log)
    try:
        _wait_healthy(server)
    except BaseException:
        _kill_group(process)
        raise
    try:
        yield server
    finally:
        status, leftovers = _stop(process)
    assert status == 0, (
        f"gunicorn master exit status {status} after SIGTERM (None: not within {STOP_TIMEOUT} s; "
        f"killed); stderr:\n{server.error_log_tail()}"
    )
    assert not leftovers, "processes of gunicorn's group outlived the master (killed)"
