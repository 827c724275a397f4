"""Load test: gunicorn (2 workers) on loopback, driven by wrk; throughput, p50/p99, errors, RSS.

Run: .venv/bin/python bench/load.py [--duration 30] [--connections 32] [--profile]
(prints its figures; not a timed test). Needs Debian's ``wrk`` (apt-get install wrk); this
script installs nothing. Every request goes to 127.0.0.1 on a free port; each scenario is
bounded by --duration, and the server is stopped (SIGTERM, then SIGKILL of its process
group) whatever happens.

Scenarios: GET /healthz (the ceiling), POST /v1/effectiveness closed form (sphere, first
order), the same with a second-order power law (numerical engine), and a 1,000-row batch.
Targets: closed-form POST throughput >= 0.5 x /healthz; zero errors; worker RSS growth < 10 %
from after the warm-up to the end.

--profile also times the closed-form POST in-process, layer by layer, and prints cProfile's
top functions, to show where the time between /healthz and the POST goes.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import os
import resource
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
VENV_BIN = Path(sys.executable).parent
STARTUP_TIMEOUT = 30.0  # [s]

# Demo scenario (invented): the Kestrel Ridge pilot plant, catalyst KR-7 spheres.
CLOSED_FORM_CASE = {
    "pellet": {"shape": "sphere", "radius": "1.5 mm"},
    "kinetics": {"model": "power_law", "order": 1, "rate_constant": "12 1/s"},
    "transport": {"effective_diffusivity": "1.2e-6 m^2/s"},
    "surface": {"concentration": "40 mol/m^3"},
}
NUMERICAL_CASE = {
    "pellet": {"shape": "sphere", "radius": "1.5 mm"},
    "kinetics": {"model": "power_law", "order": 2, "rate_constant": "0.3 m^3/(mol*s)"},
    "transport": {"effective_diffusivity": "1.2e-6 m^2/s"},
    "surface": {"concentration": "40 mol/m^3"},
}

_OPENER = urllib.request.build_opener(urllib.request.ProxyHandler({}))


def batch_body(rows: int) -> dict:
    """``rows`` closed-form cases with radii from 0.5 to 5 mm."""
    cases = []
    for i in range(rows):
        case = json.loads(json.dumps(CLOSED_FORM_CASE))
        case["pellet"]["radius"] = f"{0.5 + 4.5 * i / max(rows - 1, 1):.4f} mm"
        cases.append(case)
    return {"cases": cases}


@dataclass
class Scenario:
    name: str
    method: str
    path: str
    body: dict | None = None


def scenarios(batch_rows: int) -> list[Scenario]:
    return [
        Scenario("GET /healthz", "GET", "/healthz"),
        Scenario("POST /v1/effectiveness closed form", "POST", "/v1/effectiveness", CLOSED_FORM_CASE),
        Scenario("POST /v1/effectiveness numerical (order 2)", "POST", "/v1/effectiveness",
                 NUMERICAL_CASE),
        Scenario(f"POST /v1/effectiveness/batch {batch_rows} rows", "POST",
                 "/v1/effectiveness/batch", batch_body(batch_rows)),
    ]


# ----------------------------------------------------------------------------- the server


def free_loopback_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def http(base_url: str, method: str, path: str, body=None, timeout=30.0) -> tuple[int, bytes]:
    data = None if body is None else json.dumps(body).encode()
    headers = {"Content-Type": "application/json"} if data is not None else {}
    req = urllib.request.Request(base_url + path, data=data, method=method, headers=headers)
    try:
        with _OPENER.open(req, timeout=timeout) as resp:
            return resp.status, resp.read()
    except urllib.error.HTTPError as err:
        with err:
            return err.code, err.read()


@dataclass
class Gunicorn:
    process: subprocess.Popen
    port: int
    base_url: str
    log_dir: Path

    def worker_pids(self) -> list[int]:
        path = Path(f"/proc/{self.process.pid}/task/{self.process.pid}/children")
        try:
            return sorted(int(p) for p in path.read_text().split())
        except OSError:
            return []

    def stop(self) -> None:
        stop_process_group(self.process)


def stop_process_group(process: subprocess.Popen, grace: float = 15.0) -> None:
    """SIGTERM the leader, then SIGKILL its whole process group."""
    if process.poll() is None:
        process.send_signal(signal.SIGTERM)
        try:
            process.wait(timeout=grace)
        except subprocess.TimeoutExpired:
            pass
    with contextlib.suppress(ProcessLookupError, PermissionError):
        os.killpg(process.pid, signal.SIGKILL)
    with contextlib.suppress(subprocess.TimeoutExpired):
        process.wait(timeout=5)


def start_gunicorn(log_dir: Path, workers: int = 2, port: int | None = None,
                   extra_env: dict | None = None) -> Gunicorn:
    """The project's gunicorn command on 127.0.0.1 (own process group); waits for /healthz."""
    port = port or free_loopback_port()
    env = {k: v for k, v in os.environ.items()
           if not k.startswith("PELLET_") and k != "PROMETHEUS_MULTIPROC_DIR"}
    # Metric files inside log_dir: removed with it even when the instance is killed.
    env.update(PELLET_HOST="127.0.0.1", PELLET_PORT=str(port), PELLET_WORKERS=str(workers),
               PROMETHEUS_MULTIPROC_DIR=str(log_dir / "metrics"),
               PATH=os.pathsep.join([str(VENV_BIN), env.get("PATH", "")]))
    env.update(extra_env or {})
    log_dir.mkdir(parents=True, exist_ok=True)
    with open(log_dir / "access.log", "wb") as out, open(log_dir / "error.log", "wb") as err:
        process = subprocess.Popen(
            [str(VENV_BIN / "gunicorn"), "-c", "gunicorn.conf.py", "service.wsgi:app"],
            cwd=ROOT, env=env, stdin=subprocess.DEVNULL, stdout=out, stderr=err,
            start_new_session=True,
        )
    server = Gunicorn(process, port, f"http://127.0.0.1:{port}", log_dir)
    deadline = time.monotonic() + STARTUP_TIMEOUT
    while True:
        if process.poll() is not None:
            raise RuntimeError(f"gunicorn exited ({process.returncode}): "
                               f"{(log_dir / 'error.log').read_text()[-2000:]}")
        with contextlib.suppress(OSError):
            if http(server.base_url, "GET", "/healthz", timeout=1.0)[0] == 200 and \
                    len(server.worker_pids()) >= workers:
                return server
        if time.monotonic() > deadline:
            stop_process_group(process)
            raise RuntimeError(f"gunicorn not healthy within {STARTUP_TIMEOUT} s")
        time.sleep(0.1)


def cpu_seconds(pid: int) -> float:
    """User + system CPU time of a process [s] (/proc/<pid>/stat fields 14 and 15)."""
    try:
        fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    except OSError:
        return 0.0
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def rss_kib(pid: int) -> int:
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith("VmRSS:"):
            return int(line.split()[1])
    return 0


# ----------------------------------------------------------------------------- wrk

_LUA = """
wrk.method = {method}
wrk.headers["Content-Type"] = "application/json"
{body_line}
done = function(summary, latency, requests)
  local e = summary.errors
  io.write(string.format(
    'RESULT {{"requests":%d,"duration_us":%d,"connect":%d,"read":%d,"write":%d,"status":%d,'
    .. '"timeout":%d,"p50_us":%d,"p99_us":%d,"max_us":%d}}\\n',
    summary.requests, summary.duration, e.connect, e.read, e.write, e.status, e.timeout,
    latency:percentile(50), latency:percentile(99), latency.max))
end
"""


def _lua_string(text: str) -> str:
    return "[==[" + text + "]==]"


def run_wrk(base_url: str, scenario: Scenario, duration: float, connections: int,
            threads: int, work: Path) -> dict:
    body_file = work / "body.json"
    body_line = ""
    if scenario.body is not None:
        body_file.write_text(json.dumps(scenario.body))
        body_line = f'local f = io.open({_lua_string(str(body_file))}, "rb")\n' \
                    f'wrk.body = f:read("*a")\nf:close()'
    script = work / "scenario.lua"
    script.write_text(_LUA.format(method=_lua_string(scenario.method), body_line=body_line))
    argv = ["wrk", f"-t{threads}", f"-c{connections}", f"-d{max(int(round(duration)), 1)}s",
            "--timeout", "10s", "-s", str(script), base_url + scenario.path]
    client_before = resource.getrusage(resource.RUSAGE_CHILDREN)
    done = subprocess.run(argv, capture_output=True, text=True, timeout=duration + 60)
    client_after = resource.getrusage(resource.RUSAGE_CHILDREN)
    client_cpu = (client_after.ru_utime + client_after.ru_stime
                  - client_before.ru_utime - client_before.ru_stime)
    for line in done.stdout.splitlines():
        if line.startswith("RESULT "):
            result = json.loads(line[len("RESULT "):])
            result["rps"] = result["requests"] / (result["duration_us"] / 1e6)
            result["client_cpu_s"] = client_cpu
            result["errors"] = sum(result[k] for k in ("connect", "read", "write", "status",
                                                       "timeout"))
            return result
    raise RuntimeError(f"wrk printed no result: {done.stdout}\n{done.stderr}")


# ----------------------------------------------------------------------------- profiling


def profile_closed_form_post(repeats: int = 3000) -> None:
    """Layer-by-layer medians of the closed-form POST, in-process, then cProfile's top."""
    import cProfile
    import pstats
    import statistics

    import orjson

    sys.path.insert(0, str(ROOT))
    from service import create_app
    from service.formats import JSON_OPTIONS
    from service.physics.effectiveness import evaluate
    from service.schemas.case import CASE_SCHEMA
    from service.schemas.responses import effectiveness_payload

    raw = json.dumps(CLOSED_FORM_CASE).encode()
    client = create_app({"TESTING": True}).test_client()
    case = CASE_SCHEMA.load(orjson.loads(raw))
    result = evaluate(case)
    payload = effectiveness_payload(case, result)

    def median_us(fn) -> float:
        for _ in range(200):
            fn()
        samples = []
        for _ in range(repeats):
            start = time.perf_counter()
            fn()
            samples.append(time.perf_counter() - start)
        return statistics.median(samples) * 1e6

    rows = [
        ("Flask test client GET /healthz (whole app)", lambda: client.get("/healthz")),
        ("Flask test client POST closed form (whole app)",
         lambda: client.post("/v1/effectiveness", data=raw, content_type="application/json")),
        ("  orjson.loads(body)", lambda: orjson.loads(raw)),
        ("  CASE_SCHEMA.load (marshmallow + units)", lambda: CASE_SCHEMA.load(orjson.loads(raw))),
        ("  evaluate(case) (physics + diagnostics)", lambda: evaluate(case)),
        ("  effectiveness_payload(case, result)", lambda: effectiveness_payload(case, result)),
        ("  orjson.dumps(payload)", lambda: orjson.dumps(payload, option=JSON_OPTIONS)),
    ]
    print("\nIn-process medians of the closed-form POST path (microseconds per call):")
    for label, fn in rows:
        print(f"  {label:<52} {median_us(fn):8.1f}")
    profiler = cProfile.Profile()
    profiler.enable()
    for _ in range(repeats):
        client.post("/v1/effectiveness", data=raw, content_type="application/json")
    profiler.disable()
    print(f"\ncProfile, {repeats} closed-form POSTs through the test client, top 15 by own time:")
    pstats.Stats(profiler, stream=sys.stdout).sort_stats("tottime").print_stats(15)


# ----------------------------------------------------------------------------- main


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--duration", type=float, default=30.0, help="seconds per scenario")
    parser.add_argument("--connections", type=int, default=32)
    parser.add_argument("--threads", type=int, default=2, help="wrk threads")
    parser.add_argument("--workers", type=int, default=2, help="gunicorn workers")
    parser.add_argument("--batch-rows", type=int, default=1000)
    parser.add_argument("--only", action="append", default=[],
                        help="run only scenarios whose name contains this text (repeatable)")
    parser.add_argument("--profile", action="store_true",
                        help="also profile the closed-form POST in-process")
    args = parser.parse_args(argv)
    if not 1 <= args.duration <= 600 or not 1 <= args.connections <= 256:
        parser.error("duration must be 1..600 s and connections 1..256")
    if shutil.which("wrk") is None:
        print("wrk is not installed: apt-get install wrk (Debian's package); nothing was run.")
        return 2

    chosen = [s for s in scenarios(args.batch_rows)
              if not args.only or any(o.lower() in s.name.lower() for o in args.only)]
    with tempfile.TemporaryDirectory(prefix="pellet-load-") as tmp:
        work = Path(tmp)
        server = start_gunicorn(work / "gunicorn", workers=args.workers)
        try:
            results = run_all(server, chosen, args, work)
        finally:
            server.stop()
    if args.profile:
        profile_closed_form_post()
    return 0 if results else 1


def run_all(server: Gunicorn, chosen: list[Scenario], args, work: Path) -> bool:
    print(f"gunicorn: {args.workers} workers on {server.base_url}; wrk {args.threads} threads, "
          f"{args.connections} connections, {args.duration:g} s per scenario; "
          f"{os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.2f}")
    runnable = []
    for scenario in chosen:  # warm-up: every scenario answers 200 before it is loaded
        status, body = 0, b""
        for _ in range(20):
            status, body = http(server.base_url, scenario.method, scenario.path, scenario.body)
        if status == 200:
            runnable.append(scenario)
        else:
            print(f"  SKIPPED {scenario.name}: warm-up answered {status}: {body[:300]!r}")
    pids = server.worker_pids()
    before = {pid: rss_kib(pid) for pid in pids}
    print("worker RSS after warm-up [MiB]: "
          + ", ".join(f"{pid}: {kib / 1024:.1f}" for pid, kib in before.items()))
    print("\nworker ms: CPU time of the gunicorn workers per request (less sensitive to other "
          "load on the machine than req/s);\nwrk ms: the load generator's CPU per request.")
    print(f"\n{'scenario':<48} {'req/s':>9} {'p50 ms':>8} {'p99 ms':>8} {'requests':>9} "
          f"{'errors':>7} {'worker ms':>10} {'wrk ms':>7}")
    measured = {}
    for scenario in runnable:
        cpu_before = sum(cpu_seconds(pid) for pid in pids)
        r = run_wrk(server.base_url, scenario, args.duration, args.connections, args.threads, work)
        r["worker_cpu_ms"] = (sum(cpu_seconds(pid) for pid in pids) - cpu_before) \
            / max(r["requests"], 1) * 1e3
        measured[scenario.name] = r
        print(f"{scenario.name:<48} {r['rps']:9.1f} {r['p50_us'] / 1e3:8.2f} "
              f"{r['p99_us'] / 1e3:8.2f} {r['requests']:9d} {r['errors']:7d} "
              f"{r['worker_cpu_ms']:10.3f} {r['client_cpu_s'] / max(r['requests'], 1) * 1e3:7.3f}"
              + (f"  (connect {r['connect']}, read {r['read']}, write {r['write']}, "
                 f"non-2xx {r['status']}, timeout {r['timeout']})" if r["errors"] else ""))
    after = {pid: rss_kib(pid) for pid in server.worker_pids()}
    print("\nworker RSS after the scenarios [MiB]: "
          + ", ".join(f"{pid}: {kib / 1024:.1f}" for pid, kib in after.items()))
    same = [pid for pid in before if pid in after]
    growth = max(((after[p] - before[p]) / before[p] for p in same), default=float("nan"))
    if len(same) != len(before):
        print("  a worker was replaced during the run (restart): growth compares the survivors")
    errors = sum(r["errors"] for r in measured.values())
    print("\nTargets:")
    health = measured.get("GET /healthz")
    closed = measured.get("POST /v1/effectiveness closed form")
    if health and closed:
        ratio = closed["rps"] / health["rps"]
        print(f"  closed-form POST / healthz throughput = {ratio:.2f} (target >= 0.5): "
              f"{'met' if ratio >= 0.5 else 'NOT met'}")
        cpu_ratio = health["worker_cpu_ms"] / closed["worker_cpu_ms"]
        print(f"  the same from worker CPU per request = {cpu_ratio:.2f} "
              f"({health['worker_cpu_ms']:.3f} / {closed['worker_cpu_ms']:.3f} ms)")
    print(f"  errors = {errors} (target 0): {'met' if errors == 0 else 'NOT met'}")
    print(f"  largest worker RSS growth = {growth * 100:.1f} % (target < 10 %): "
          f"{'met' if growth < 0.10 else 'NOT met'}")
    return True


if __name__ == "__main__":
    raise SystemExit(main())
