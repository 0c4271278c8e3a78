"""The service as a real process on 127.0.0.1: `burnproof serve` and the README's `make run`."""

from __future__ import annotations

import contextlib
import http.client
import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def _get(url: str, timeout: float = 2.0) -> tuple[int, bytes]:
    try:
        with urllib.request.urlopen(url, timeout=timeout) as response:
            return response.status, response.read()
    except urllib.error.HTTPError as error:
        return error.code, error.read()


def _wait_for_health(base: str, process: subprocess.Popen, log: Path, timeout_s: float) -> None:
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if process.poll() is not None:
            pytest.fail(f"server exited with {process.returncode}:\n{log.read_text()[-4000:]}")
        try:
            status, body = _get(base + "/healthz", timeout=1.0)
            if status == 200:
                assert json.loads(body) == {"status": "ok"}
                return
        except (OSError, urllib.error.URLError):
            pass
        time.sleep(0.2)
    pytest.fail(f"no /healthz within {timeout_s} s:\n{log.read_text()[-4000:]}")


def _post_json(
    url: str, body: bytes, content_type: str = "application/json"
) -> tuple[int, str, bytes]:
    request = urllib.request.Request(
        url, data=body, method="POST", headers={"Content-Type": content_type}
    )
    try:
        with urllib.request.urlopen(request, timeout=60) as response:
            return response.status, response.headers.get_content_type(), response.read()
    except urllib.error.HTTPError as error:
        return error.code, error.headers.get_content_type(), error.read()


def _stop(process: subprocess.Popen, *, group: bool) -> None:
    if process.poll() is None:
        if group:
            os.killpg(process.pid, signal.SIGTERM)
        else:
            process.terminate()
        try:
            process.wait(timeout=15)
        except subprocess.TimeoutExpired:
            if group:
                os.killpg(process.pid, signal.SIGKILL)
            else:
                process.kill()
            process.wait(timeout=15)


def _exercise(base: str, plan: dict) -> None:
    status, media, raw = _post_json(base + "/v1/validations", json.dumps(plan).encode())
    assert status == 200, raw[:500]
    assert media == "application/json"
    report = json.loads(raw)
    assert report["plan_id"] == plan["plan_id"]
    assert report["provenance"]["plan_digest"].startswith("sha256:")

    status, media, raw = _post_json(base + "/v1/validations", b'{"plan_id": ')
    assert (status, media) == (400, "application/problem+json")

    status, media, raw = _post_json(base + "/v1/validations", b"{}", "text/plain")
    assert (status, media) == (415, "application/problem+json")

    status, raw = _get(base + "/readyz")
    assert status == 200 and json.loads(raw) == {"ready": True}


def _post_chunked(port: int, pieces) -> tuple[int, str, bytes]:
    """POST with Transfer-Encoding: chunked (no Content-Length); a reset counts as refused."""
    connection = http.client.HTTPConnection("127.0.0.1", port, timeout=60)
    try:
        connection.request(
            "POST",
            "/v1/validations",
            body=pieces,
            headers={"Content-Type": "application/json"},
            encode_chunked=True,
        )
        response = connection.getresponse()
        return response.status, response.headers.get_content_type(), response.read()
    except (BrokenPipeError, ConnectionResetError):
        # the server answered 413 and closed before the client finished sending
        return 413, "application/problem+json", b""
    finally:
        connection.close()


def _exercise_chunked(port: int, plan: dict) -> None:
    raw = json.dumps(plan).encode()
    status, media, body = _post_chunked(port, iter([raw[:100], raw[100:]]))
    assert (status, media) == (200, "application/json"), body[:500]
    assert json.loads(body)["plan_id"] == plan["plan_id"]
    status, media, _ = _post_chunked(port, (b" " * 65536 for _ in range(40)))  # 2.5 MiB
    assert (status, media) == (413, "application/problem+json")


def _serve_and_exercise(command: list[str], plan: dict, port: int) -> None:
    """Start ``command`` serving on 127.0.0.1:port, drive it, and always stop it."""
    base = f"http://127.0.0.1:{port}"
    with tempfile.TemporaryDirectory() as tmp:
        log = Path(tmp) / "server.log"
        with log.open("wb") as out:
            process = subprocess.Popen(
                command, cwd=REPO, stdout=out, stderr=subprocess.STDOUT, stdin=subprocess.DEVNULL
            )
        try:
            _wait_for_health(base, process, log, timeout_s=60)
            _exercise(base, plan)
            _exercise_chunked(port, plan)
        finally:
            _stop(process, group=False)


def test_cli_serve_answers_on_127_0_0_1(plan):
    port = _free_port()
    serve = [sys.executable, "-m", "service.cli", "serve", "--host", "127.0.0.1"]
    _serve_and_exercise([*serve, "--port", str(port)], plan, port)


def test_gunicorn_serves_the_wsgi_object(plan):
    port = _free_port()
    gunicorn = [sys.executable, "-m", "gunicorn", "--bind", f"127.0.0.1:{port}", "--workers", "1"]
    _serve_and_exercise([*gunicorn, "service.wsgi:app"], plan, port)


@pytest.mark.skipif(shutil.which("make") is None, reason="make is not installed")
def test_make_run_as_the_readme_says(plan):
    port = _free_port()
    base = f"http://127.0.0.1:{port}"
    with tempfile.TemporaryDirectory() as tmp:
        log = Path(tmp) / "make-run.log"
        with log.open("wb") as out:
            # its own session, so the whole group (make, the venv's python, workers) is stopped
            process = subprocess.Popen(
                ["make", "run", f"PORT={port}"],
                cwd=REPO,
                stdout=out,
                stderr=subprocess.STDOUT,
                stdin=subprocess.DEVNULL,
                start_new_session=True,
            )
        try:
            # make may first (re)build .venv from pyproject.toml: allow it time
            _wait_for_health(base, process, log, timeout_s=300)
            _exercise(base, plan)
        finally:
            _stop(process, group=True)
        # make exits first; the server it started unwinds on its own SIGTERM a moment later
        closed = _port_closes(port, timeout_s=15)
        if not closed:
            with contextlib.suppress(ProcessLookupError):
                os.killpg(process.pid, signal.SIGKILL)  # never leave a server behind
        assert closed, "the server outlived `make run`"


def _port_closes(port: int, timeout_s: float) -> bool:
    """True once nothing accepts connections on 127.0.0.1:port (polled up to timeout_s)."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        try:
            socket.create_connection(("127.0.0.1", port), timeout=1).close()
        except OSError:
            return True
        time.sleep(0.1)
    return False
