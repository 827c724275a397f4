"""Failover: two gunicorn instances behind nginx on loopback; one is killed mid-run.

Run: .venv/bin/python bench/failover.py [--duration 10] [--clients 8]
(prints its counts; not a timed test). Needs Debian's nginx (apt-get install nginx-light or
nginx); this script installs nothing. nginx runs in the foreground with a configuration
generated into a temporary directory, listening on 127.0.0.1 only, with the retry policy of
deploy/nginx/nginx.conf: ``proxy_next_upstream error timeout http_502 http_503
non_idempotent`` (every operation here is a pure computation, so a POST may be sent again).

A bounded closed loop (--clients threads, each with its own keep-alive connection to nginx,
for --duration seconds) sends closed-form POSTs and, every tenth request, a 200-row batch.
Halfway through, instance B's whole process group (master and workers) gets SIGKILL, as in a
crash or an OOM kill. Expected: zero failed requests; the requests in flight on B are retried
on A by nginx. Every process started here is stopped at the end, whatever happens.
"""

from __future__ import annotations

import argparse
import collections
import contextlib
import http.client
import json
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from load import (  # noqa: E402  (bench/ is a folder of scripts, not a package)
    CLOSED_FORM_CASE, batch_body, free_loopback_port, start_gunicorn, stop_process_group,
)

NGINX_CONF = """\
worker_processes 1;
pid {tmp}/nginx.pid;
error_log {tmp}/nginx-error.log warn;
{user_line}
events {{
    worker_connections 512;
}}

http {{
    access_log off;
    client_max_body_size 64m;
    client_body_buffer_size 1m;
    client_body_temp_path {tmp}/client_body;
    proxy_temp_path {tmp}/proxy;
    fastcgi_temp_path {tmp}/fastcgi;
    uwsgi_temp_path {tmp}/uwsgi;
    scgi_temp_path {tmp}/scgi;

    upstream pellet {{
        server 127.0.0.1:{port_a} max_fails=1 fail_timeout=5s;
        server 127.0.0.1:{port_b} max_fails=1 fail_timeout=5s;
    }}

    server {{
        listen 127.0.0.1:{port};
        keepalive_requests 100000;

        location / {{
            proxy_pass http://pellet;
            proxy_http_version 1.1;
            proxy_set_header Host $host;
            proxy_next_upstream {next_upstream};
            proxy_next_upstream_tries 2;
            proxy_next_upstream_timeout 15s;
            proxy_connect_timeout 2s;
            proxy_send_timeout 35s;
            proxy_read_timeout 35s;
            add_header X-Upstream $upstream_addr always;
        }}
    }}
}}
"""


RETRY_POLICY = "error timeout http_502 http_503 non_idempotent"


def nginx_config(tmp: Path, port: int, port_a: int, port_b: int, retry: bool = True) -> str:
    # As root, nginx's workers switch to an unprivileged user: they must reach tmp.
    user_line = "user nobody nogroup;" if os.geteuid() == 0 else ""
    return NGINX_CONF.format(tmp=tmp, port=port, port_a=port_a, port_b=port_b,
                             user_line=user_line,
                             next_upstream=RETRY_POLICY if retry else "off")


def start_nginx(tmp: Path, port: int, port_a: int, port_b: int,
                retry: bool = True) -> subprocess.Popen:
    conf = tmp / "nginx.conf"
    conf.write_text(nginx_config(tmp, port, port_a, port_b, retry))
    tmp.chmod(0o755)
    nginx = shutil.which("nginx") or "/usr/sbin/nginx"
    check = subprocess.run([nginx, "-t", "-q", "-p", str(tmp), "-e", str(tmp / "nginx-error.log"),
                            "-c", str(conf)], capture_output=True, text=True, timeout=30)
    if check.returncode != 0:
        raise RuntimeError(f"nginx -t rejected the configuration:\n{check.stderr}")
    process = subprocess.Popen(
        [nginx, "-p", str(tmp), "-e", str(tmp / "nginx-error.log"), "-c", str(conf),
         "-g", "daemon off;"],
        stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
        start_new_session=True,
    )
    deadline = time.monotonic() + 10
    while True:
        with contextlib.suppress(OSError):
            conn = http.client.HTTPConnection("127.0.0.1", port, timeout=2)
            conn.request("GET", "/healthz")
            if conn.getresponse().status == 200:
                conn.close()
                return process
        if process.poll() is not None or time.monotonic() > deadline:
            stop_process_group(process, grace=5)
            raise RuntimeError("nginx did not start; see " + str(tmp / "nginx-error.log"))
        time.sleep(0.05)


class Tally:
    def __init__(self):
        self.lock = threading.Lock()
        self.counts = collections.Counter()
        self.upstreams = collections.Counter()
        self.failures: list[str] = []

    def add(self, phase: str, status: int | None, upstream: str, error: str = ""):
        with self.lock:
            self.counts[f"{phase} sent"] += 1
            if status == 200:
                self.counts[f"{phase} ok"] += 1
            else:
                self.counts[f"{phase} failed"] += 1
                if len(self.failures) < 10:
                    self.failures.append(f"{phase}: status {status} {error}".strip())
            if "," in upstream:
                self.counts[f"{phase} retried by nginx"] += 1
            self.upstreams[(phase, upstream.split(",")[-1].strip() or "-")] += 1


def client_loop(port: int, stop_at: float, killed: threading.Event, tally: Tally, seed: int):
    single = json.dumps(CLOSED_FORM_CASE).encode()
    batch = json.dumps(batch_body(200)).encode()
    headers = {"Content-Type": "application/json"}
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=40)
    sent = seed
    while time.monotonic() < stop_at:
        sent += 1
        path, body = ("/v1/effectiveness/batch", batch) if sent % 10 == 0 else \
            ("/v1/effectiveness", single)
        phase = "after kill" if killed.is_set() else "before kill"
        try:
            conn.request("POST", path, body=body, headers=headers)
            response = conn.getresponse()
            response.read()
            tally.add(phase, response.status, response.getheader("X-Upstream", ""))
        except (OSError, http.client.HTTPException) as exc:
            tally.add(phase, None, "", f"{type(exc).__name__}: {exc}")
            conn.close()
            conn = http.client.HTTPConnection("127.0.0.1", port, timeout=40)
    conn.close()


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--duration", type=float, default=10.0, help="seconds of load")
    parser.add_argument("--clients", type=int, default=8, help="concurrent connections")
    parser.add_argument("--no-retry", action="store_true",
                        help="control run: proxy_next_upstream off (failures then expected)")
    args = parser.parse_args(argv)
    if not 2 <= args.duration <= 300 or not 1 <= args.clients <= 64:
        parser.error("duration must be 2..300 s and clients 1..64")
    if shutil.which("nginx") is None and not Path("/usr/sbin/nginx").exists():
        print("nginx is not installed: apt-get install nginx-light (or nginx), Debian's "
              "packages; nothing was run.")
        return 2

    with tempfile.TemporaryDirectory(prefix="pellet-failover-") as tmp_name:
        tmp = Path(tmp_name)
        started = []
        try:
            a = start_gunicorn(tmp / "a", workers=2)
            started.append(a.process)
            b = start_gunicorn(tmp / "b", workers=2)
            started.append(b.process)
            port = free_loopback_port()
            (tmp / "nginx").mkdir()
            started.append(start_nginx(tmp / "nginx", port, a.port, b.port,
                                       retry=not args.no_retry))
            print(f"instance A :{a.port}, instance B :{b.port}, nginx :{port}; {args.clients} "
                  f"clients for {args.duration:g} s; B gets SIGKILL at {args.duration / 2:g} s; "
                  f"proxy_next_upstream {'off' if args.no_retry else RETRY_POLICY}")
            tally = Tally()
            killed = threading.Event()
            start = time.monotonic()
            stop_at = start + args.duration
            threads = [threading.Thread(target=client_loop,
                                        args=(port, stop_at, killed, tally, i * 3))
                       for i in range(args.clients)]
            for thread in threads:
                thread.start()
            time.sleep(args.duration / 2)
            os.killpg(b.process.pid, signal.SIGKILL)
            killed.set()
            kill_time = time.monotonic() - start
            for thread in threads:
                thread.join(timeout=args.duration + 60)
            b.process.wait(timeout=5)
        finally:
            for process in reversed(started):
                stop_process_group(process, grace=10)

    print(f"B killed at {kill_time:.2f} s (exit status {b.process.returncode}). A request "
          f"counts in the phase in which it was sent: those in flight on B when it died are "
          f"'before kill' and were retried on A.\n")
    for phase in ("before kill", "after kill"):
        print(f"sent {phase:<12}: sent {tally.counts[f'{phase} sent']:6d}, "
              f"ok {tally.counts[f'{phase} ok']:6d}, failed {tally.counts[f'{phase} failed']:3d}, "
              f"retried by nginx {tally.counts[f'{phase} retried by nginx']:3d}")
        for (p, upstream), count in sorted(tally.upstreams.items()):
            if p == phase:
                name = {f"127.0.0.1:{a.port}": "A", f"127.0.0.1:{b.port}": "B"}.get(upstream, upstream)
                print(f"    answered by {name}: {count}")
    failed = tally.counts["before kill failed"] + tally.counts["after kill failed"]
    total = tally.counts["before kill sent"] + tally.counts["after kill sent"]
    print(f"\ntotal {total}, failed {failed} (expected "
          f"{'some: retries are off' if args.no_retry else 0})")
    for line in tally.failures:
        print("  " + line)
    return 0 if failed == 0 or args.no_retry else 1


if __name__ == "__main__":
    raise SystemExit(main())
