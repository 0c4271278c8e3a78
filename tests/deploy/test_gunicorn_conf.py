"""deploy/gunicorn.conf.py: worker sizing from cgroup files, settings, and its server hooks.

The file is loaded as gunicorn loads it (executed as a module); the environment it reads
and writes is set with monkeypatch so nothing leaks into other tests.
"""

from __future__ import annotations

import os
import runpy
import signal
from pathlib import Path
from types import SimpleNamespace

import pytest

from service.http import draining
from tests.deploy.gunicorn_process import CONF

THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


@pytest.fixture
def load_conf(monkeypatch):
    """Execute the conf file under a given environment; returns its module namespace."""

    def load(**environ: str) -> dict:
        for name in ("BURNPROOF_BIND", "BURNPROOF_WORKERS", "PROMETHEUS_MULTIPROC_DIR"):
            monkeypatch.delenv(name, raising=False)
        for name in (*THREAD_VARIABLES, "NUMEXPR_NUM_THREADS"):
            monkeypatch.setenv(name, "8")  # restored after the test, whatever the conf sets
        for name, value in environ.items():
            monkeypatch.setenv(name, value)
        return runpy.run_path(str(CONF))

    return load


@pytest.fixture
def conf(load_conf) -> dict:
    return load_conf()


# --- cgroup parsing --------------------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "cpus"),
    [
        ("max 100000\n", None),  # no quota (kernel docs, "Control Group v2", cpu.max)
        ("200000 100000\n", 2.0),
        ("150000 100000\n", 1.5),
        ("50000 100000\n", 0.5),
        ("100000", 1.0),  # period omitted: the kernel's default 100000 us
    ],
)
def test_parse_cpu_max(conf, text, cpus):
    assert conf["parse_cpu_max"](text) == cpus


@pytest.mark.parametrize(
    ("quota", "period", "cpus"),
    [("-1\n", "100000\n", None), ("300000\n", "100000\n", 3.0), ("25000", "50000", 0.5)],
)
def test_parse_cfs_quota(conf, quota, period, cpus):
    assert conf["parse_cfs_quota"](quota, period) == cpus


def _write(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, "ascii")


def test_cgroup_v2_quota_at_the_mount_root(conf, tmp_path):
    root, proc = tmp_path / "cgroup", tmp_path / "proc-self-cgroup"
    _write(root / "cpu.max", "150000 100000\n")
    _write(proc, "0::/\n")
    assert conf["cgroup_cpu_limit"](root, proc) == 1.5


def test_cgroup_v2_quota_under_the_process_path(conf, tmp_path):
    root, proc = tmp_path / "cgroup", tmp_path / "proc-self-cgroup"
    _write(root / "cpu.max", "max 100000\n")  # the host's root: no limit
    _write(root / "kubepods" / "pod-a" / "cpu.max", "200000 100000\n")
    _write(proc, "0::/kubepods/pod-a\n")
    assert conf["cgroup_cpu_limit"](root, proc) == 2.0


def test_cgroup_v1_quota_and_the_tightest_wins(conf, tmp_path):
    root, proc = tmp_path / "cgroup", tmp_path / "proc-self-cgroup"
    _write(root / "cpu,cpuacct" / "docker" / "c1" / "cpu.cfs_quota_us", "400000\n")
    _write(root / "cpu,cpuacct" / "docker" / "c1" / "cpu.cfs_period_us", "100000\n")
    _write(root / "unified" / "cpu.max", "300000 100000\n")  # a hybrid host's v2 mount
    _write(proc, "4:cpu,cpuacct:/docker/c1\n0::/\n")
    assert conf["cgroup_cpu_limit"](root, proc) == 3.0


def test_no_cgroup_files_or_garbage_means_no_limit(conf, tmp_path):
    root, proc = tmp_path / "cgroup", tmp_path / "proc-self-cgroup"
    assert conf["cgroup_cpu_limit"](root, proc) is None
    _write(root / "cpu.max", "lots of cpu\n")
    _write(root / "cpu" / "cpu.cfs_quota_us", "-1\n")
    _write(root / "cpu" / "cpu.cfs_period_us", "100000\n")
    _write(proc, "not a cgroup line\n")
    assert conf["cgroup_cpu_limit"](root, proc) is None


@pytest.mark.parametrize(
    ("affinity", "quota", "cpus"),
    [(2, None, 2), (64, 2.0, 2), (64, 1.5, 2), (64, 0.25, 1), (4, 8.0, 4), (0, None, 1)],
)
def test_available_cpus_is_affinity_lowered_to_the_quota_rounded_up(conf, affinity, quota, cpus):
    assert conf["available_cpus"](affinity, quota) == cpus


# --- worker count ----------------------------------------------------------------------


def test_worker_count_is_one_per_cpu_by_default_and_capped(conf):
    count = conf["worker_count"]
    assert count({}, 2) == 2
    assert count({"BURNPROOF_WORKERS": ""}, 3) == 3
    assert count({}, 500) == conf["MAX_AUTO_WORKERS"] == 32


def test_burnproof_workers_overrides_the_count(conf):
    assert conf["worker_count"]({"BURNPROOF_WORKERS": " 5 "}, 2) == 5
    assert conf["worker_count"]({"BURNPROOF_WORKERS": "64"}, 2) == 64  # the cap is for auto only


@pytest.mark.parametrize("given", ["0", "-2", "two", "1.5"])
def test_a_bad_burnproof_workers_is_refused_naming_the_variable(conf, given):
    with pytest.raises(ValueError, match="BURNPROOF_WORKERS must be a positive whole number"):
        conf["worker_count"]({"BURNPROOF_WORKERS": given}, 2)


def test_loaded_settings_follow_the_environment(load_conf):
    conf = load_conf(BURNPROOF_BIND="0.0.0.0:9090", BURNPROOF_WORKERS="3")
    assert conf["bind"] == ["0.0.0.0:9090"]
    assert conf["workers"] == 3


def test_default_settings(conf):
    assert conf["bind"] == ["127.0.0.1:8080"]
    assert conf["workers"] == conf["process_cpus"]() >= 1
    assert conf["worker_class"] == "sync"
    assert (conf["timeout"], conf["graceful_timeout"]) == (30, 25)
    assert conf["graceful_timeout"] < conf["timeout"]
    assert conf["max_requests"] > 0 and 0 < conf["max_requests_jitter"] < conf["max_requests"]
    assert conf["limit_request_line"] <= 4094 and conf["limit_request_fields"] <= 100
    assert conf["control_socket_disable"] is True
    assert conf["accesslog"] is None
    if Path("/dev/shm").is_dir():
        assert conf["worker_tmp_dir"] == "/dev/shm"


def test_the_app_compute_budget_default_stays_below_the_worker_timeout(conf):
    # the shared interface: BURNPROOF_COMPUTE_BUDGET_S defaults to 20 s, gunicorn's timeout
    # must stay above it so a long plan gets the app's 503, never a killed worker
    assert conf["timeout"] > 20


def test_native_thread_pools_are_pinned_to_one(load_conf):

    load_conf()
    for name in (*THREAD_VARIABLES, "NUMEXPR_NUM_THREADS"):
        assert os.environ[name] == "1"


def test_process_cpus_never_uses_the_host_count(conf, monkeypatch):

    monkeypatch.setattr(os, "cpu_count", lambda: 96)
    monkeypatch.setattr(os, "sched_getaffinity", lambda pid: {0, 1})
    assert conf["process_cpus"]() <= 2


def test_the_conf_is_valid_for_gunicorn(conf):
    from gunicorn.config import Config

    settings = Config().settings
    for name in (
        "bind",
        "workers",
        "worker_class",
        "timeout",
        "graceful_timeout",
        "keepalive",
        "max_requests",
        "max_requests_jitter",
        "limit_request_line",
        "limit_request_fields",
        "limit_request_field_size",
        "worker_tmp_dir",
        "control_socket_disable",
        "accesslog",
        "on_starting",
        "post_worker_init",
        "child_exit",
    ):
        assert name in settings, f"gunicorn 27 has no setting {name!r}"
        settings[name].set(conf[name])  # runs gunicorn's own validator for the value


# --- hooks -----------------------------------------------------------------------------


def test_on_starting_wipes_only_prometheus_files(load_conf, tmp_path):
    metrics = tmp_path / "metrics"
    metrics.mkdir()
    (metrics / "counter_123.db").write_bytes(b"old")
    (metrics / "histogram_456.db").write_bytes(b"old")
    (metrics / "notes.txt").write_text("keep me")
    conf = load_conf(PROMETHEUS_MULTIPROC_DIR=str(metrics))
    conf["on_starting"](server=None)
    assert sorted(p.name for p in metrics.iterdir()) == ["notes.txt"]


def test_on_starting_creates_a_missing_metrics_dir(load_conf, tmp_path):
    metrics = tmp_path / "run" / "metrics"
    conf = load_conf(PROMETHEUS_MULTIPROC_DIR=str(metrics))
    conf["on_starting"](server=None)
    assert metrics.is_dir()


def test_child_exit_marks_the_worker_dead_in_the_metrics_dir(load_conf, tmp_path):
    from prometheus_client import multiprocess

    metrics = tmp_path / "metrics"
    metrics.mkdir()
    dead, alive = metrics / "gauge_livesum_4242.db", metrics / "gauge_livesum_4343.db"
    kept = metrics / "counter_4242.db"  # counters of a dead worker still count
    for path in (dead, alive, kept):
        path.write_bytes(b"")
    conf = load_conf(PROMETHEUS_MULTIPROC_DIR=str(metrics))
    assert callable(multiprocess.mark_process_dead)
    conf["child_exit"](server=None, worker=SimpleNamespace(pid=4242))
    assert not dead.exists()
    assert alive.exists() and kept.exists()


def test_sigterm_in_a_worker_marks_it_draining_then_runs_gunicorns_handler(conf):
    calls = []
    original = signal.getsignal(signal.SIGTERM)
    signal.signal(signal.SIGTERM, lambda signum, frame: calls.append(signum))
    draining.clear_draining()
    try:
        conf["post_worker_init"](worker=SimpleNamespace())
        handler = signal.getsignal(signal.SIGTERM)
        assert draining.draining_reason({}) is None
        handler(signal.SIGTERM, None)
        assert calls == [signal.SIGTERM]  # the previous (gunicorn's) handler still runs
        assert draining.draining_reason({}).startswith("draining: this worker received SIGTERM")
    finally:
        signal.signal(signal.SIGTERM, original)
        draining.clear_draining()
