"""``burnproof checks`` and ``burnproof serve``, and the module run as ``python -m service.cli``."""

from __future__ import annotations

import json
import os
import select
import signal
import socket
import subprocess
import sys
import urllib.request
from pathlib import Path

import pytest

from service.cli import main
from service.engine import build_engine
from tests.cli.helpers import GATE_LIMIT_M_S, gate_engine

ROOT = Path(__file__).resolve().parents[2]


def test_checks_json_is_the_catalogue(capsys):
    assert main(["checks", "--format", "json"], engine=gate_engine) == 0
    out = capsys.readouterr().out
    document = json.loads(out)
    assert document == {"checks": gate_engine().checks_catalogue()}
    (entry,) = document["checks"]
    assert entry["id"] == "cli-delta-v-gate" and entry["version"] == "7"
    assert entry["summary"] and entry["source"]
    (parameter,) = entry["parameters"]
    assert parameter["name"] == "max_delta_v_m_s"
    assert parameter["default"] == GATE_LIMIT_M_S and parameter["unit"] == "m/s"


def test_checks_text_lists_ids_parameters_defaults_and_units(capsys):
    assert main(["checks"], engine=gate_engine) == 0
    out = capsys.readouterr().out
    assert "cli-delta-v-gate  version 7" in out
    assert "each burn's delta-v against a test limit" in out
    assert "max_delta_v_m_s  100 m/s" in out


def test_checks_exits_2_when_the_engine_is_not_ready(capsys):
    assert main(["checks"], engine=lambda: build_engine(entry_points=False)) == 2
    out, err = capsys.readouterr()
    assert "(no checks registered)" in out
    assert "burnproof: not ready" in err


def _module(*args: str, stdin: bytes | None = None) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "service.cli", *args],
        cwd=ROOT,
        input=stdin,
        capture_output=True,
        timeout=120,
        check=False,
    )


def test_python_m_service_cli_checks_works():
    result = _module("checks", "--format", "json")
    assert b"Traceback" not in result.stderr
    checks = json.loads(result.stdout)["checks"]
    expected = 0 if build_engine().ready else 2
    assert result.returncode == expected
    assert [c["id"] for c in checks] == sorted(c["id"] for c in checks)


def test_python_m_service_cli_refuses_an_invalid_plan_from_stdin():
    result = _module("validate", "-", stdin=b'{"plan_id": 3}')
    assert result.returncode == 2
    assert result.stdout == b""
    assert b"Traceback" not in result.stderr
    assert any(line.startswith(b"plan_id: ") for line in result.stderr.splitlines())


def _first_line(stream, timeout_s: float = 60.0) -> str:
    ready, _, _ = select.select([stream], [], [], timeout_s)
    assert ready, "the server printed nothing"
    return stream.readline()


@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGINT])
def test_serve_prints_its_url_answers_and_stops_on_a_signal(signum):
    process = subprocess.Popen(
        [sys.executable, "-m", "service.cli", "serve", "--host", "127.0.0.1", "--port", "0"],
        cwd=ROOT,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env={**os.environ, "PYTHONUNBUFFERED": "1"},
    )
    try:
        line = _first_line(process.stdout)
        assert line.startswith("burnproof ") and " serving on http://127.0.0.1:" in line
        url = line.split(" serving on ")[1].strip()
        with urllib.request.urlopen(url + "healthz", timeout=10) as response:
            assert response.status == 200
            assert json.loads(response.read()) == {"status": "ok"}
        process.send_signal(signum)
        assert process.wait(timeout=20) == 0
        stderr = process.stderr.read()
        assert "Traceback" not in stderr
        assert "burnproof: stopped" in stderr
    finally:
        if process.poll() is None:
            process.kill()
            process.wait()
        process.stdout.close()
        process.stderr.close()


def test_serve_on_a_taken_port_exits_2(capsys):
    with socket.socket() as taken:
        taken.bind(("127.0.0.1", 0))
        taken.listen()
        port = taken.getsockname()[1]
        code = main(["serve", "--host", "127.0.0.1", "--port", str(port)], engine=gate_engine)
    assert code == 2
    assert f"burnproof: cannot listen on 127.0.0.1:{port}" in capsys.readouterr().err
