"""The Dockerfile, read: the one parser that the static checks and the live server share.

The container's command is written once, in the Dockerfile's CMD. ``tests/live/conftest.py``
runs exactly that argv (with the Dockerfile's ENV, bound to 127.0.0.1 on a free port) and
``tests/test_dockerfile.py`` checks it; neither keeps a copy of its own.

Supported syntax: what the project's Dockerfile uses (comments, backslash continuations,
exec-form JSON arrays, ``ENV key=value ...``). Anything else raises ValueError rather than
being guessed at.

>>> [i.keyword for i in instructions('FROM x\\n# note\\nRUN a \\\\\\n    && b\\nCMD ["c"]\\n')]
['FROM', 'RUN', 'CMD']
>>> exec_form('["gunicorn", "-c", "gunicorn.conf.py"]')
['gunicorn', '-c', 'gunicorn.conf.py']
>>> environment(instructions('ENV A=1 \\\\\\n    B="two words"\\n'))
{'A': '1', 'B': 'two words'}
"""

from __future__ import annotations

import json
import re
import shlex
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DOCKERFILE = ROOT / "Dockerfile"


@dataclass(frozen=True)
class Instruction:
    keyword: str  # upper case, e.g. "CMD"
    arguments: str  # the rest, continuation lines joined
    line: int  # 1-based line where the instruction starts


def instructions(text: str) -> list[Instruction]:
    """Instructions in order; comment lines (also inside a continuation) are dropped."""
    result: list[Instruction] = []
    pending: list[str] = []
    start = 0
    for number, raw in enumerate(text.splitlines(), start=1):
        stripped = raw.strip()
        if stripped.startswith("#") or (not stripped and not pending):
            continue
        if not pending:
            start = number
        if stripped.endswith("\\"):
            pending.append(stripped[:-1])
            continue
        pending.append(stripped)
        joined = " ".join(part for part in pending if part)
        pending = []
        keyword, _, arguments = joined.partition(" ")
        result.append(Instruction(keyword.upper(), arguments.strip(), start))
    if pending:
        raise ValueError(f"line {start}: continuation runs past the end of the file")
    return result


def read(path: Path = DOCKERFILE) -> list[Instruction]:
    return instructions(path.read_text(encoding="utf-8"))


def exec_form(arguments: str) -> list[str]:
    """The argv of an exec-form (JSON array) CMD/ENTRYPOINT/HEALTHCHECK CMD; ValueError otherwise."""
    try:
        argv = json.loads(arguments)
    except json.JSONDecodeError:
        raise ValueError(f"not exec form (a JSON array of strings): {arguments!r}") from None
    if not (isinstance(argv, list) and argv and all(isinstance(a, str) for a in argv)):
        raise ValueError(f"not exec form (a JSON array of strings): {arguments!r}")
    return argv


def environment(instrs: list[Instruction]) -> dict[str, str]:
    """Every ENV, in order (later wins). ``$`` substitution is not supported: ValueError."""
    env: dict[str, str] = {}
    for instr in instrs:
        if instr.keyword != "ENV":
            continue
        if "$" in instr.arguments:
            raise ValueError(f"line {instr.line}: ENV with $-substitution is not supported")
        words = shlex.split(instr.arguments)
        if words and "=" not in words[0]:  # legacy form: ENV KEY value with spaces
            env[words[0]] = " ".join(words[1:])
            continue
        for word in words:
            key, sep, value = word.partition("=")
            if not sep:
                raise ValueError(f"line {instr.line}: ENV word {word!r} is not KEY=value")
            env[key] = value
    return env


def only(instrs: list[Instruction], keyword: str) -> Instruction:
    """The single instruction of that keyword; ValueError if absent or repeated."""
    found = [i for i in instrs if i.keyword == keyword]
    if len(found) != 1:
        raise ValueError(f"expected exactly one {keyword}, found {len(found)}")
    return found[0]


_HEALTHCHECK = re.compile(r"^((?:--[a-z-]+=\S+\s+)*)CMD\s+(.+)$", re.DOTALL)


def healthcheck(instrs: list[Instruction]) -> tuple[dict[str, str], list[str]]:
    """(options such as {'interval': '30s'}, argv) of the single exec-form HEALTHCHECK CMD."""
    instr = only(instrs, "HEALTHCHECK")
    match = _HEALTHCHECK.match(instr.arguments)
    if not match:
        raise ValueError(f"line {instr.line}: HEALTHCHECK is not '[--option=value ...] CMD [...]'")
    options = dict(opt[2:].split("=", 1) for opt in match.group(1).split())
    return options, exec_form(match.group(2))


def container_command(path: Path = DOCKERFILE) -> list[str]:
    """The argv the container runs: the Dockerfile's single exec-form CMD (no ENTRYPOINT)."""
    instrs = read(path)
    if any(i.keyword == "ENTRYPOINT" for i in instrs):
        raise ValueError("an ENTRYPOINT would wrap the CMD; this parser expects CMD alone")
    return exec_form(only(instrs, "CMD").arguments)


def container_environment(path: Path = DOCKERFILE) -> dict[str, str]:
    """The environment variables the Dockerfile sets."""
    return environment(read(path))
