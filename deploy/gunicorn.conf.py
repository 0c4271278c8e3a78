"""gunicorn settings for burnproof in production.

Run: ``gunicorn -c deploy/gunicorn.conf.py service.wsgi:app``.

Environment read here (all optional):

- ``BURNPROOF_BIND``: the address to listen on, default ``127.0.0.1:8080`` (the container
  sets ``0.0.0.0:8080``).
- ``BURNPROOF_WORKERS``: the number of worker processes, a positive whole number; by
  default one per CPU this process may use (``worker_count`` below).
- ``PROMETHEUS_MULTIPROC_DIR``: prometheus_client's multiprocess directory; when set, its
  ``*.db`` files are wiped at start and a dead worker's live gauges are dropped.

Worker sizing. Validation is CPU-bound: numpy propagation and a Monte Carlo of thousands
of samples, with no I/O to wait on. gunicorn's own docs suggest ``2-4 x $(NUM_CORES)``
workers, a rule for workers that spend much of their time waiting on I/O; for CPU-bound
sync workers the common practice is about one worker per CPU, since more only time-slice
the same cores: throughput stays the same and every request's latency grows. So the
default is one sync worker per available CPU (``ceil`` of a fractional cgroup quota, at
least 1, at most ``MAX_AUTO_WORKERS``). "Available" means what this process may really
run on: its CPU affinity (``os.sched_getaffinity``, which a cpuset narrows) and the CFS
bandwidth quota of its cgroup (v2 ``cpu.max``, v1 ``cpu.cfs_quota_us`` /
``cpu.cfs_period_us``; Linux kernel docs, "Control Group v2" and "CFS Bandwidth
Control"), never ``os.cpu_count()``, which counts the host's CPUs and would start dozens of
workers in a container limited to two.

Each worker runs its numpy with one BLAS/OpenMP thread (set in the environment here,
before any worker imports numpy), so N workers use N cores and not N times the host's.
"""

from __future__ import annotations

import math
import os
import signal
from collections.abc import Iterable, Mapping, MutableMapping
from pathlib import Path

DEFAULT_BIND = "127.0.0.1:8080"
MAX_AUTO_WORKERS = 32  # a bound on the automatic count only; BURNPROOF_WORKERS may go past it
CGROUP_ROOT = Path("/sys/fs/cgroup")
PROC_SELF_CGROUP = Path("/proc/self/cgroup")
NATIVE_THREAD_VARIABLES = (
    "OMP_NUM_THREADS",
    "OPENBLAS_NUM_THREADS",
    "MKL_NUM_THREADS",
    "NUMEXPR_NUM_THREADS",
)


# --- pure helpers (tested in tests/deploy/test_gunicorn_conf.py) -------------------------


def parse_cpu_max(text: str) -> float | None:
    """CPUs granted by a cgroup v2 ``cpu.max``: "$MAX $PERIOD" in microseconds; "max": None."""
    fields = text.split()
    if not fields or fields[0] == "max":
        return None
    period_us = float(fields[1]) if len(fields) > 1 else 100_000.0  # the kernel's default
    quota_us = float(fields[0])
    if quota_us <= 0 or period_us <= 0:
        return None
    return quota_us / period_us


def parse_cfs_quota(quota_text: str, period_text: str) -> float | None:
    """CPUs granted by cgroup v1 ``cpu.cfs_quota_us`` over ``cpu.cfs_period_us``; -1: no limit."""
    quota_us = float(quota_text.strip())
    period_us = float(period_text.strip())
    if quota_us <= 0 or period_us <= 0:
        return None
    return quota_us / period_us


def _cgroup_paths(proc_self_cgroup_text: str) -> tuple[str | None, str | None]:
    """This process's (v2 path, v1 cpu-controller path) from the text of /proc/self/cgroup."""
    v2_path = v1_path = None
    for line in proc_self_cgroup_text.splitlines():
        parts = line.split(":", 2)
        if len(parts) != 3:
            continue
        hierarchy, controllers, path = parts
        if hierarchy == "0" and controllers == "":
            v2_path = path
        elif "cpu" in controllers.split(","):
            v1_path = path
    return v2_path, v1_path


def _read(path: Path) -> str | None:
    try:
        return path.read_text(encoding="ascii")
    except (OSError, UnicodeDecodeError):
        return None


def _candidates(root: Path, relative: str | None) -> Iterable[Path]:
    """The cgroup directory itself: at the mount root (a container's own cgroup namespace)
    and, when different, under the path /proc/self/cgroup names (a host's hierarchy)."""
    yield root
    if relative and relative.strip("/"):
        yield root / relative.strip("/")


def cgroup_cpu_limit(
    root: Path = CGROUP_ROOT, proc_self_cgroup: Path = PROC_SELF_CGROUP
) -> float | None:
    """The tightest CFS quota, in CPUs, found for this process under ``root``; None: none set.

    Looks at cgroup v2 (``cpu.max`` at the root or in the unified mount's ``unified/``
    sub-directory of a hybrid host) and v1 (``cpu/`` or ``cpu,cpuacct/``). Unreadable or
    malformed files count as no limit: sizing must never stop the server from starting.
    """
    v2_path, v1_path = _cgroup_paths(_read(proc_self_cgroup) or "")
    limits: list[float] = []
    for v2_root in (root, root / "unified"):
        for directory in _candidates(v2_root, v2_path):
            text = _read(directory / "cpu.max")
            if text is not None:
                try:
                    limit = parse_cpu_max(text)
                except ValueError:
                    limit = None
                if limit is not None:
                    limits.append(limit)
    for v1_root in (root / "cpu", root / "cpu,cpuacct"):
        for directory in _candidates(v1_root, v1_path):
            quota = _read(directory / "cpu.cfs_quota_us")
            period = _read(directory / "cpu.cfs_period_us")
            if quota is None or period is None:
                continue
            try:
                limit = parse_cfs_quota(quota, period)
            except ValueError:
                limit = None
            if limit is not None:
                limits.append(limit)
    return min(limits) if limits else None


def available_cpus(affinity_cpus: int, quota_cpus: float | None) -> int:
    """Whole CPUs to size for: the affinity count, lowered to ``ceil`` of a quota, at least 1.

    A fractional quota rounds up (1.5 CPUs -> 2 workers): the second worker still gets
    half a core's time, and one worker would leave it idle.
    """
    cpus = float(max(affinity_cpus, 1))
    if quota_cpus is not None:
        cpus = min(cpus, quota_cpus)
    return max(1, math.ceil(cpus))


def worker_count(environ: Mapping[str, str], cpus: int) -> int:
    """``BURNPROOF_WORKERS`` when given (a positive whole number), else ``cpus`` capped."""
    given = environ.get("BURNPROOF_WORKERS", "").strip()
    if not given:
        return max(1, min(cpus, MAX_AUTO_WORKERS))
    if not given.isdigit() or int(given) < 1:
        raise ValueError(f"BURNPROOF_WORKERS must be a positive whole number, not {given!r}")
    return int(given)


def process_cpus() -> int:
    """The CPUs this process may use, from its affinity and its cgroup's quota."""
    try:
        affinity = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # not Linux: the best there is
        affinity = os.cpu_count() or 1
    return available_cpus(affinity, cgroup_cpu_limit())


def pin_native_threads(environ: MutableMapping[str, str]) -> None:
    """One BLAS/OpenMP/numexpr thread per worker: set before a worker imports numpy."""
    for name in NATIVE_THREAD_VARIABLES:
        environ[name] = "1"


def wipe_multiprocess_dir(directory: str) -> None:
    """Create ``directory`` if needed and remove prometheus_client's ``*.db`` files in it.

    Files of a previous run would otherwise be summed into this one's counters. Only
    ``*.db`` files are removed, so a directory set by mistake to somewhere shared loses
    nothing else.
    """
    path = Path(directory)
    path.mkdir(parents=True, exist_ok=True)
    for stale in path.glob("*.db"):
        stale.unlink(missing_ok=True)


def chain_sigterm_to_draining(mark_draining) -> None:
    """Make SIGTERM call ``mark_draining()`` first, then the handler installed before.

    gunicorn's worker handles SIGTERM by finishing its current request and leaving; the
    chained call makes ``/readyz`` say "draining" for whatever it still answers.
    """
    previous = signal.getsignal(signal.SIGTERM)

    def on_sigterm(signum, frame) -> None:
        mark_draining()
        if callable(previous):
            previous(signum, frame)

    signal.signal(signal.SIGTERM, on_sigterm)
    signal.siginterrupt(signal.SIGTERM, False)  # as gunicorn: let in-flight system calls finish


# --- settings ----------------------------------------------------------------------------

pin_native_threads(os.environ)

bind = [os.environ.get("BURNPROOF_BIND", "").strip() or DEFAULT_BIND]
workers = worker_count(os.environ, process_cpus())
worker_class = "sync"  # CPU-bound requests: one at a time per process, no GIL contention

# A request's compute budget is enforced in the app (BURNPROOF_COMPUTE_BUDGET_S, default
# 20 s, answered with a 503 problem); gunicorn's timeout sits above it and only catches a
# worker that stopped answering its heartbeat altogether.
timeout = 30
# On SIGTERM a worker finishes its request within this many seconds or is killed. Kept
# below the pod's terminationGracePeriodSeconds minus its preStop pause (deploy/k8s).
graceful_timeout = 25
keepalive = 5  # ignored by sync workers (gunicorn docs); set for a switch to gthread
# Recycle each worker after about this many requests, staggered by the jitter so they do
# not all restart at once: a check thread that overran its budget is abandoned, not
# stopped (service/engine/runner.py), and recycling returns what it holds.
max_requests = 2000
max_requests_jitter = 200

# Request line and headers: gunicorn's defaults are 4094 bytes, 100 fields and 8190 bytes.
# The API's paths and query are short and clients send a handful of headers, so the line and
# the field count are halved; a field keeps its default size (a bearer token fits with room).
limit_request_line = 2048
limit_request_fields = 50
limit_request_field_size = 8190

# The heartbeat file is touched on every loop; on tmpfs that never waits on a disk
# (gunicorn docs, "Blocking os.fchmod"). /dev/shm is a tmpfs in Docker and Kubernetes.
# bandit B108 waived: gunicorn makes that file with mkstemp (private, unguessable name)
# and unlinks it at once.
worker_tmp_dir = "/dev/shm" if os.path.isdir("/dev/shm") else None  # nosec B108

# No control socket: it would be created under $HOME (read-only in the container) and
# would let anything in the pod resize or stop the server.
control_socket_disable = True

accesslog = None  # the app logs one JSON line per request itself
errorlog = "-"
loglevel = os.environ.get("BURNPROOF_LOG_LEVEL", "info").strip().lower() or "info"
capture_output = False
proc_name = "burnproof"


# --- server hooks ------------------------------------------------------------------------


def on_starting(server) -> None:
    """Master, before the first worker: start prometheus_client's directory afresh."""
    directory = os.environ.get("PROMETHEUS_MULTIPROC_DIR", "").strip()
    if directory:
        wipe_multiprocess_dir(directory)


def post_worker_init(worker) -> None:
    """Worker, app loaded: SIGTERM marks this process as draining before gunicorn's handler."""
    from service.http.draining import mark_draining

    chain_sigterm_to_draining(mark_draining)


def child_exit(server, worker) -> None:
    """Master, a worker gone (any cause): drop its live gauges from the multiprocess files."""
    if os.environ.get("PROMETHEUS_MULTIPROC_DIR", "").strip():
        from prometheus_client import multiprocess

        multiprocess.mark_process_dead(worker.pid)
