"""What every benchmark script shares: the machine it ran on, percentiles, and the demo plan.

Not a test module (pytest collects ``test_*.py`` only) and not a benchmark itself; the
``bench_*.py`` scripts beside it import it from their own directory.
"""

from __future__ import annotations

import json
import os
import platform
from pathlib import Path

import numpy as np
import scipy

ROOT = Path(__file__).resolve().parents[2]
DEMO_PLAN = ROOT / "schemas" / "examples" / "kestrel-2-raise.json"
DISPERSION_CHECK = "execution-dispersion"


def cpu_model() -> str:
    """The processor's name from /proc/cpuinfo, or what ``platform`` knows."""
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or "unknown processor"


def machine() -> str:
    """One line naming the machine: CPUs, processor, OS, Python, numpy and scipy."""
    return (
        f"machine: {os.cpu_count()} CPUs ({cpu_model()}), {platform.platform()}, "
        f"Python {platform.python_version()}, numpy {np.__version__}, scipy {scipy.__version__}"
    )


def percentile_ms(times_s, q: float) -> float:
    """The q-th percentile (0-100) of durations in seconds, in milliseconds."""
    return 1000.0 * float(np.percentile(np.asarray(times_s, dtype=float), q))


def demo_plan_json() -> dict:
    return json.loads(DEMO_PLAN.read_text())


def verdict(met: bool) -> str:
    return "met" if met else "MISSED"
