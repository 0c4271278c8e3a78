"""Benchmark: the HTTP service under gunicorn, validation against the /healthz floor.

Run with ``.venv/bin/python tests/perf/bench_http.py`` (or ``make bench``). A script, not a
test: nothing here asserts a timing. It starts ``python -m gunicorn -c deploy/gunicorn.conf.py
service.wsgi:app`` with two workers on 127.0.0.1 (request logs and metrics on, as deployed;
authentication off), waits for ``GET /healthz``, and then
runs a bounded client loop with ``http.client``: a fixed number of rounds, each one
``GET /healthz`` and one ``POST /v1/validations`` with the demo plan, so that both are
measured side by side under the same conditions. The connection is kept alive where the
server allows it (gunicorn's default sync workers close it after every response, and
``http.client`` then reconnects, so each request pays for its TCP connection; that is the
same for both). Printed: median and 99th-percentile latency and requests per second of one
client (requests over the time spent in them), and the ratio of the medians. gunicorn is
stopped at the end, whatever happens.

The service is measured twice: as deployed, with every installed check (execution-dispersion
included, at the default profile's sample count), and with ``BURNPROOF_PLUGINS_DENY`` set to
execution-dispersion, the set ``bench_validate.py`` times in process.

Target (issue 8): validation median within 3 times the floor's (the /healthz median).
"""

from __future__ import annotations

import argparse
import http.client
import json
import os
import signal
import socket
import subprocess
import sys
import time

from _bench import DISPERSION_CHECK, ROOT, demo_plan_json, machine, percentile_ms, verdict

HOST = "127.0.0.1"
CONF = ROOT / "deploy" / "gunicorn.conf.py"


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind((HOST, 0))
        return sock.getsockname()[1]


def start_gunicorn(port: int, extra_env: dict[str, str]) -> subprocess.Popen:
    """gunicorn as deployed (deploy/gunicorn.conf.py), two workers, on 127.0.0.1:port.

    The app's JSON request log lines (one per request, part of what is measured) go to
    ``os.devnull`` so they do not drown the table.
    """
    env = {
        **os.environ,
        "BURNPROOF_BIND": f"{HOST}:{port}",
        "BURNPROOF_WORKERS": "2",
        **extra_env,
    }
    env.pop("PROMETHEUS_MULTIPROC_DIR", None)  # per-process metrics: no shared files to clean
    command = [sys.executable, "-m", "gunicorn", "-c", str(CONF), "service.wsgi:app"]
    return subprocess.Popen(
        command, cwd=ROOT, env=env, start_new_session=True, stderr=subprocess.DEVNULL
    )


def stop(server: subprocess.Popen) -> None:
    if server.poll() is None:
        server.send_signal(signal.SIGTERM)  # gunicorn's graceful stop; it stops its workers
        try:
            server.wait(timeout=15)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait(timeout=5)


def wait_ready(port: int, server: subprocess.Popen, timeout_s: float = 60.0) -> None:
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if server.poll() is not None:
            raise SystemExit(f"gunicorn exited with status {server.returncode}")
        try:
            connection = http.client.HTTPConnection(HOST, port, timeout=2)
            connection.request("GET", "/healthz")
            if connection.getresponse().status == 200:
                connection.close()
                return
        except OSError:
            time.sleep(0.2)
    raise SystemExit("gunicorn did not answer /healthz in time")


class Client:
    """One keep-alive connection that reconnects when the server closes it."""

    def __init__(self, port: int) -> None:
        self.connection = http.client.HTTPConnection(HOST, port, timeout=60)

    def call(self, method: str, path: str, body: bytes | None = None) -> tuple[int, bytes, float]:
        headers = {"Content-Type": "application/json"} if body is not None else {}
        start = time.perf_counter()
        self.connection.request(method, path, body=body, headers=headers)
        response = self.connection.getresponse()
        data = response.read()
        elapsed = time.perf_counter() - start
        if response.will_close:
            self.connection.close()
        return response.status, data, elapsed


def measure(port: int, rounds: int, warm_up: int) -> dict[str, list[float]]:
    client = Client(port)
    body = json.dumps(demo_plan_json()).encode()
    times: dict[str, list[float]] = {"healthz": [], "validation": []}
    for index in range(warm_up + rounds):
        status, _, floor_s = client.call("GET", "/healthz")
        if status != 200:
            raise SystemExit(f"GET /healthz answered {status}")
        status, data, validation_s = client.call("POST", "/v1/validations", body)
        if status != 200 or "verdict" not in json.loads(data):
            raise SystemExit(f"POST /v1/validations answered {status}: {data[:300]!r}")
        if index >= warm_up:
            times["healthz"].append(floor_s)
            times["validation"].append(validation_s)
    return times


def run(label: str, extra_env: dict[str, str], rounds: int, warm_up: int) -> bool:
    port = free_port()
    server = start_gunicorn(port, extra_env)
    try:
        wait_ready(port, server)
        times = measure(port, rounds, warm_up)
    finally:
        stop(server)
    floor_ms = percentile_ms(times["healthz"], 50.0)
    validation_ms = percentile_ms(times["validation"], 50.0)
    ratio = validation_ms / floor_ms
    print(f"{label} (port {port}, {rounds:,} rounds after {warm_up} warm-up rounds)")
    print(f"  {'request':<28}{'median ms':>11}{'p99 ms':>10}{'req/s':>10}")
    for name, key in (("GET /healthz (floor)", "healthz"), ("POST /v1/validations", "validation")):
        values = times[key]
        print(
            f"  {name:<28}{percentile_ms(values, 50.0):>11.2f}{percentile_ms(values, 99.0):>10.2f}"
            f"{len(values) / sum(values):>10.0f}"
        )
    print(f"  ratio of medians (validation / floor): {ratio:.1f}")
    met = ratio <= 3.0
    print(f"  target: validation median within 3x the floor: {verdict(met)} ({ratio:.1f}x)")
    return met


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=500)
    parser.add_argument("--warm-up", type=int, default=20)
    args = parser.parse_args()
    print("bench_http: gunicorn -c deploy/gunicorn.conf.py, 2 workers, 127.0.0.1, one client")
    print(machine())
    run("every installed check (as deployed)", {}, args.rounds, args.warm_up)
    run(
        f"without {DISPERSION_CHECK} (BURNPROOF_PLUGINS_DENY)",
        {"BURNPROOF_PLUGINS_DENY": DISPERSION_CHECK},
        args.rounds,
        args.warm_up,
    )


if __name__ == "__main__":
    main()
