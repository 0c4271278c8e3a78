"""gunicorn with deploy/gunicorn.conf.py as a real process on 127.0.0.1, for tests and benchmarks.

Not a test module: ``tests/deploy/test_*.py`` and ``tests/perf/bench_load.py`` import it.
Every server binds 127.0.0.1 on a free port, runs in its own session (so a stop reaches
every process it started), and is always stopped by ``running``, whatever happens inside.
"""

from __future__ import annotations

import contextlib
import http.client
import json
import os
import runpy
import signal
import socket
import subprocess
import sys
import time
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
CONF = REPO / "deploy" / "gunicorn.conf.py"
EXAMPLES = REPO / "schemas" / "examples"
HOST = "127.0.0.1"


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind((HOST, 0))
        return sock.getsockname()[1]


@dataclass
class Server:
    process: subprocess.Popen
    port: int
    log: Path

    @property
    def master_pid(self) -> int:
        return self.process.pid

    def log_tail(self, size: int = 4000) -> str:
        try:
            return self.log.read_text(errors="replace")[-size:]
        except OSError:
            return ""


@dataclass
class Reply:
    """One HTTP exchange: status, media type, body, and the declared Content-Length."""

    status: int
    media_type: str
    body: bytes
    content_length: int | None

    def json(self) -> object:
        return json.loads(self.body)


def server_environment(tmp: Path, port: int, workers: int, extra: Mapping[str, str]) -> dict:
    """The process environment: this one without any BURNPROOF_* setting, plus the test's."""
    env = {
        key: value
        for key, value in os.environ.items()
        if not key.startswith("BURNPROOF_") and key != "PROMETHEUS_MULTIPROC_DIR"
    }
    env.update(
        {
            "BURNPROOF_BIND": f"{HOST}:{port}",
            "BURNPROOF_WORKERS": str(workers),
            "BURNPROOF_AUTH": "off",
            "PROMETHEUS_MULTIPROC_DIR": str(tmp / "metrics"),
            "PYTHONUNBUFFERED": "1",
        }
    )
    env.update(extra)
    return env


def start(tmp: Path, *, workers: int = 2, extra_env: Mapping[str, str] | None = None) -> Server:
    """Start ``gunicorn -c deploy/gunicorn.conf.py service.wsgi:app``; its log is in ``tmp``."""
    port = free_port()
    log = tmp / f"gunicorn-{port}.log"
    env = server_environment(tmp, port, workers, extra_env or {})
    command = [sys.executable, "-m", "gunicorn", "-c", str(CONF), "service.wsgi:app"]
    with log.open("wb") as out:
        process = subprocess.Popen(
            command,
            cwd=REPO,
            env=env,
            stdout=out,
            stderr=subprocess.STDOUT,
            stdin=subprocess.DEVNULL,
            start_new_session=True,
        )
    return Server(process, port, log)


def request(
    port: int,
    method: str,
    path: str,
    body: bytes | None = None,
    headers: Mapping[str, str] | None = None,
    timeout_s: float = 60.0,
) -> Reply:
    """One request on a fresh connection; the body is read in full (short reads raise)."""
    connection = http.client.HTTPConnection(HOST, port, timeout=timeout_s)
    try:
        connection.request(method, path, body=body, headers=dict(headers or {}))
        response = connection.getresponse()
        data = response.read()
        declared = response.getheader("Content-Length")
        media = (response.getheader("Content-Type") or "").split(";")[0].strip()
        return Reply(response.status, media, data, None if declared is None else int(declared))
    finally:
        connection.close()


def post_json(port: int, document: object, timeout_s: float = 60.0, query: str = "") -> Reply:
    body = json.dumps(document).encode()
    headers = {"Content-Type": "application/json"}
    return request(port, "POST", "/v1/validations" + query, body, headers, timeout_s)


def wait_healthy(server: Server, timeout_s: float = 60.0) -> None:
    """Return once ``GET /healthz`` answers 200; raise if the server died or never answered."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if server.process.poll() is not None:
            raise RuntimeError(
                f"gunicorn exited with {server.process.returncode}:\n{server.log_tail()}"
            )
        with contextlib.suppress(OSError, http.client.HTTPException):
            if request(server.port, "GET", "/healthz", timeout_s=2.0).status == 200:
                return
        time.sleep(0.1)
    raise RuntimeError(f"no /healthz within {timeout_s} s:\n{server.log_tail()}")


def stop(server: Server) -> int | None:
    """SIGTERM to the master (gunicorn's graceful stop), then SIGKILL to the whole session."""
    process = server.process
    if process.poll() is None:
        with contextlib.suppress(ProcessLookupError):
            process.send_signal(signal.SIGTERM)
        try:
            process.wait(timeout=30)
        except subprocess.TimeoutExpired:
            pass
    with contextlib.suppress(ProcessLookupError, PermissionError):
        os.killpg(process.pid, signal.SIGKILL)  # workers or check threads left behind, if any
    with contextlib.suppress(subprocess.TimeoutExpired):
        process.wait(timeout=10)
    return process.returncode


@contextlib.contextmanager
def running(
    tmp: Path, *, workers: int = 2, extra_env: Mapping[str, str] | None = None
) -> Iterator[Server]:
    """A healthy server for the ``with`` block, stopped afterwards whatever happened."""
    server = start(tmp, workers=workers, extra_env=extra_env)
    try:
        wait_healthy(server)
        yield server
    finally:
        stop(server)


def children(pid: int) -> list[int]:
    """The live child processes of ``pid``, read from /proc/<child>/stat (field 4 is the ppid)."""
    found = []
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            stat = (entry / "stat").read_text()
        except OSError:
            continue  # gone while we looked
        # The command name (field 2) is in parentheses and may hold spaces: split after it.
        fields = stat[stat.rindex(")") + 2 :].split()
        state, parent = fields[0], int(fields[1])
        if parent == pid and state != "Z":
            found.append(int(entry.name))
    return sorted(found)


def wait_for_workers(
    server: Server, count: int, *, not_in: frozenset[int] = frozenset(), timeout_s: float = 30.0
) -> list[int]:
    """Wait until the master has ``count`` workers, none of them in ``not_in``; their pids."""
    deadline = time.monotonic() + timeout_s
    pids: list[int] = []
    while time.monotonic() < deadline:
        pids = children(server.master_pid)
        if len(pids) == count and not set(pids) & not_in:
            return pids
        time.sleep(0.1)
    raise AssertionError(f"workers {pids}, wanted {count} not in {sorted(not_in)}")


def load_conf() -> dict:
    """deploy/gunicorn.conf.py executed as gunicorn executes it; its namespace.

    The file pins the BLAS/OpenMP thread variables in ``os.environ``; they are put back
    afterwards, so loading it in a test leaves the test process as it was.
    """
    names = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "NUMEXPR_NUM_THREADS")
    saved = {name: os.environ.get(name) for name in names}
    try:
        return runpy.run_path(str(CONF))
    finally:
        for name, value in saved.items():
            if value is None:
                os.environ.pop(name, None)
            else:
                os.environ[name] = value


def example_plans() -> dict[str, dict]:
    """The demo plans in schemas/examples/, by file stem."""
    return {
        path.stem: json.loads(path.read_text("utf-8")) for path in sorted(EXAMPLES.glob("*.json"))
    }
