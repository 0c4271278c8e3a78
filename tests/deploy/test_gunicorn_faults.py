"""Faults under gunicorn with deploy/gunicorn.conf.py: a killed worker, SIGTERM, a hanging check.

Each test runs a real gunicorn master with two sync workers on 127.0.0.1 (see
``gunicorn_process``) and asserts what clients see: statuses, complete JSON bodies,
findings. Timings are bounds that only catch a hang, never measurements.
"""

from __future__ import annotations

import datetime as dt
import os
import signal
import threading
import time
from pathlib import Path

import pytest

from tests.deploy import gunicorn_process as gp

pytestmark = pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs Linux /proc")

GRACEFUL_TIMEOUT_S = 25  # deploy/gunicorn.conf.py; tests/deploy/test_gunicorn_conf.py reads it


def heavy_plan(maneuvers: int = 40, samples: int = 100_000) -> dict:
    """kestrel-2 (schemas/examples) with many small trims and a large Monte Carlo.

    execution-dispersion samples every arc for every sample (samples x arcs orbits), so
    40 trims at 100 000 samples takes seconds of CPU where the demo plan takes
    milliseconds: a real, slow request, not a sleep.
    """
    plan = gp.example_plans()["kestrel-2-raise"]
    plan["plan_id"] = f"kestrel-2-trims-{maneuvers}"
    plan["spacecraft"]["propellant_kg"] = 60.0
    first = dt.datetime(2031, 9, 14, 7, 0, tzinfo=dt.UTC)
    plan["maneuvers"] = [
        {
            "id": f"trim-{index}",
            "ignition": (first + dt.timedelta(minutes=40 * index)).strftime("%Y-%m-%dT%H:%M:%SZ"),
            "engine": "main",
            "frame": "TNW",
            "delta_v_m_s": [0.1 if index % 2 == 0 else -0.1, 0.0, 0.0],
        }
        for index in range(maneuvers)
    ]
    plan["rules"] = {"execution-dispersion": {"samples": samples}}
    return plan


def assert_report(reply: gp.Reply, plan: dict) -> dict:
    assert reply.status == 200, reply.body[:500]
    assert reply.media_type == "application/json"
    assert reply.content_length == len(reply.body)
    report = reply.json()
    assert report["plan_id"] == plan["plan_id"]
    assert report["verdict"] in ("pass", "warn", "fail")
    return report


def test_a_killed_worker_is_replaced_and_the_service_keeps_answering(tmp_path):
    plan = gp.example_plans()["kestrel-2-raise"]
    stale = tmp_path / "metrics" / "counter_99999.db"  # a previous run's file, not a valid one
    stale.parent.mkdir()
    stale.write_bytes(b"left over from a previous run")
    with gp.running(tmp_path) as server:
        assert not stale.exists()  # on_starting wiped it before any worker could read it
        before = gp.wait_for_workers(server, 2)
        assert_report(gp.post_json(server.port, plan), plan)

        victim = before[0]
        os.kill(victim, signal.SIGKILL)
        after = gp.wait_for_workers(server, 2, not_in=frozenset({victim}))
        assert before[1] in after  # the other worker was left alone
        assert server.process.poll() is None  # the master is still up

        for _ in range(6):  # both workers answer, the new one included
            assert_report(gp.post_json(server.port, plan), plan)
        assert gp.request(server.port, "GET", "/readyz").status == 200
    assert f"pid:{victim}" in server.log.read_text()  # the master saw the worker die


def test_sigterm_lets_the_request_in_flight_finish_and_the_master_exits_0(tmp_path):
    plan = heavy_plan()
    server = gp.start(tmp_path)
    try:
        gp.wait_healthy(server)
        replies: list[tuple[gp.Reply | BaseException, float]] = []

        def client() -> None:
            try:
                replies.append((gp.post_json(server.port, plan, timeout_s=60), time.monotonic()))
            except BaseException as error:  # handed to the test thread below
                replies.append((error, time.monotonic()))

        baseline = {pid: _cpu_ticks(pid) for pid in gp.wait_for_workers(server, 2)}
        thread = threading.Thread(target=client)
        thread.start()
        _wait_until_busy(server, baseline)
        signalled = time.monotonic()
        server.process.send_signal(signal.SIGTERM)
        returncode = server.process.wait(timeout=GRACEFUL_TIMEOUT_S + 10)
        exited_after_s = time.monotonic() - signalled
        thread.join(timeout=10)

        assert returncode == 0, server.log_tail()
        assert exited_after_s < GRACEFUL_TIMEOUT_S + 5  # a bound that catches a hang only
        [(reply, answered)] = replies
        assert not isinstance(reply, BaseException), repr(reply)
        assert answered > signalled  # it was still in flight when the master got SIGTERM
        report = assert_report(reply, plan)
        assert len(report["maneuvers"]) == 40
        dispersion = [f for f in report["findings"] if f["check"] == "execution-dispersion"]
        assert dispersion, "the heavy check ran"
        print(f"master exited {exited_after_s:.2f} s after SIGTERM, the slow request done")
        # the listening socket closed with the master: new clients are refused, not queued
        with pytest.raises(OSError):
            gp.request(server.port, "GET", "/healthz", timeout_s=2)
    finally:
        gp.stop(server)


def _cpu_ticks(pid: int) -> int:
    """User CPU time of ``pid`` in clock ticks (/proc/<pid>/stat field 14), 0 if it is gone."""
    try:
        stat = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return 0
    return int(stat[stat.rindex(")") + 2 :].split()[11])


def _wait_until_busy(server: gp.Server, baseline: dict[int, int], timeout_s: float = 20.0) -> None:
    """Wait until a worker has used 0.2 s more CPU than at ``baseline``: the slow request runs."""
    ticks_per_s = os.sysconf("SC_CLK_TCK")
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        for pid, before in baseline.items():
            if _cpu_ticks(pid) > before + 0.2 * ticks_per_s:
                return
        time.sleep(0.05)
    raise AssertionError(f"no worker got busy within {timeout_s} s:\n{server.log_tail()}")


HANGING_PLUGIN = '''\
"""A check that never returns: stands in for a plugin stuck on a lock or a network call."""

import threading

from service.plugin_api import Check, hookimpl


class HangsForever(Check):
    id = "hangs-forever"
    version = "1"
    summary = "waits on an event nobody sets"
    parameters = {}

    def evaluate(self, context, params):
        threading.Event().wait()
        return []


@hookimpl
def register_checks():
    return [HangsForever()]
'''

QUICK_PROFILE = """\
name = "quick-budget"
description = "every installed check, each allowed one second"
check_time_budget_s = 1.0
request_time_budget_s = 20.0
"""


def _install_hanging_plugin(site: Path) -> None:
    """The plugin as an installed distribution: its module and a dist-info with the entry point.

    importlib.metadata finds a ``*.dist-info`` on ``sys.path`` exactly as pip leaves it, so
    putting ``site`` on the server's PYTHONPATH installs it for that process only.
    """
    (site / "hanging_rules.py").write_text(HANGING_PLUGIN, "utf-8")
    info = site / "hanging_rules-1.0.dist-info"
    info.mkdir()
    (info / "METADATA").write_text(
        "Metadata-Version: 2.1\nName: hanging-rules\nVersion: 1.0\n", "utf-8"
    )
    (info / "entry_points.txt").write_text("[burnproof]\nhangs-forever = hanging_rules\n", "utf-8")


def test_a_hanging_check_hits_its_budget_and_the_request_still_answers(tmp_path):
    site, profiles = tmp_path / "site", tmp_path / "profiles"
    site.mkdir()
    profiles.mkdir()
    _install_hanging_plugin(site)
    (profiles / "quick-budget.toml").write_text(QUICK_PROFILE, "utf-8")
    path = os.pathsep.join(filter(None, [str(site), os.environ.get("PYTHONPATH", "")]))
    settings = {"PYTHONPATH": path, "BURNPROOF_PROFILE_DIR": str(profiles)}
    plan = gp.example_plans()["kestrel-2-raise"]
    with gp.running(tmp_path, extra_env=settings) as server:
        checks = gp.request(server.port, "GET", "/v1/checks").json()["checks"]
        assert "hangs-forever" in {entry["id"] for entry in checks}
        workers = gp.children(server.master_pid)
        for _ in range(3):  # again and again: a hung thread never wedges a worker
            reply = gp.post_json(server.port, plan, timeout_s=30, query="?profile=quick-budget")
            report = assert_report(reply, plan)
            [hung] = [f for f in report["findings"] if f["check"] == "hangs-forever"]
            assert hung["status"] == "error"
            assert hung["message"] == "check did not finish within its 1 s time budget"
            assert report["verdict"] == "fail"  # fail-closed: an error is never a pass
            assert report["summary"]["error"] == 1
            others = [f for f in report["findings"] if f["check"] != "hangs-forever"]
            assert others and all(f["status"] != "error" for f in others)
        assert gp.children(server.master_pid) == workers  # no worker was killed for it
        assert gp.request(server.port, "GET", "/readyz").status == 200
    assert "WORKER TIMEOUT" not in server.log.read_text()
