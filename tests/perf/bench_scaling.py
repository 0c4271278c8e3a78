"""Benchmark: how validation time grows with the number of maneuvers (1, 10, 100, 500).

Run with ``.venv/bin/python tests/perf/bench_scaling.py`` (or ``make bench``). A script, not
a test: nothing here asserts a timing. Each plan starts on a 500 km, 51.6 deg circular orbit
with a 5 m/s prograde raise and then n - 1 small along-track trims (0.02 m/s, alternately
forward and back, so the orbit stays where the raise put it), 15 minutes apart: far enough
apart for the sequencing rules, small enough for every budget. The plans carry a target
orbit (the raised one) and three ground stations, so that every check runs normally on
every plan; disposal judges only end-of-life plans and says so (the script prints each
check's statuses). Validation runs in process with the engine of
``bench_validate.py`` (every check but execution-dispersion, which has its own benchmark)
and the default profile; the median of several runs per plan is printed with the
per-maneuver cost, and the exponent k of time ~ n^k is fitted to all four points
(``numpy.polyfit`` on the logarithms) and to the last two, where the fixed cost matters
least.

Target (issue 8): no worse than linear, exponent <= 1.1.
"""

from __future__ import annotations

import argparse
import math
import statistics
import time
from collections import Counter

import numpy as np
from _bench import DISPERSION_CHECK, machine, verdict

from service.engine import build_engine
from service.engine.registry import PluginPolicy
from service.schemas.plan import load_plan

EPOCH = np.datetime64("2031-09-14T06:00:00", "ms")
MU_KM3_S2 = 398600.4418  # EGM96
EARTH_RADIUS_KM = 6378.137  # WGS 84
SPACING_S = 900.0
RAISE_M_S = 5.0
TRIM_M_S = 0.02
RADIUS_KM = EARTH_RADIUS_KM + 500.0
STATIONS = [  # invented sites at real places, 5 deg masks
    {"id": "north", "latitude_deg": 67.86, "longitude_deg": 20.96, "height_km": 0.4},
    {"id": "equator", "latitude_deg": 5.25, "longitude_deg": -52.78, "height_km": 0.0},
    {"id": "south", "latitude_deg": -52.94, "longitude_deg": -70.85, "height_km": 0.1},
]


def raised_apoapsis_altitude_km() -> float:
    """Apoapsis altitude after the raise from the circular orbit (vis-viva, Curtis 3rd ed.)."""
    speed = math.sqrt(MU_KM3_S2 / RADIUS_KM) + RAISE_M_S / 1000.0
    a_km = 1.0 / (2.0 / RADIUS_KM - speed * speed / MU_KM3_S2)
    return 2.0 * a_km - RADIUS_KM - EARTH_RADIUS_KM


def plan_with(count: int) -> dict:
    """A wire-format plan with ``count`` trims (see the module docstring)."""
    maneuvers = []
    for index in range(count):
        ignition = EPOCH + np.timedelta64(int((600.0 + index * SPACING_S) * 1000.0), "ms")
        maneuvers.append(
            {
                "id": f"trim-{index + 1}",
                "ignition": f"{ignition}Z",
                "engine": "main",
                "frame": "TNW",
                "delta_v_m_s": [_along_track_m_s(index), 0.0, 0.0],
            }
        )
    radius_km = RADIUS_KM
    inclination = math.radians(51.6)
    speed = math.sqrt(MU_KM3_S2 / radius_km)
    return {
        "plan_id": f"scaling-{count}",
        "central_body": "earth",
        "epoch": f"{EPOCH}Z",
        "initial_state": {
            "frame": "GCRF",
            "position_km": [radius_km, 0.0, 0.0],
            "velocity_km_s": [0.0, speed * math.cos(inclination), speed * math.sin(inclination)],
        },
        "spacecraft": {
            "dry_mass_kg": 540.0,
            "propellant_kg": 62.0,
            "engines": [
                {
                    "id": "main",
                    "thrust_n": 22.0,
                    "isp_s": 228.0,
                    "max_burn_s": 1200.0,
                    "min_burn_s": 0.1,
                }
            ],
            "drag_area_m2": 4.2,
            "drag_coefficient": 2.2,
        },
        "maneuvers": maneuvers,
        "target_orbit": {
            "periapsis_altitude_km": 500.0,
            "apoapsis_altitude_km": round(raised_apoapsis_altitude_km(), 1),
            "tolerance_km": 5.0,
        },
        "ground_stations": [{**station, "min_elevation_deg": 5.0} for station in STATIONS],
        "profile": "default",
    }


def _along_track_m_s(index: int) -> float:
    if index == 0:
        return RAISE_M_S
    return TRIM_M_S if index % 2 == 1 else -TRIM_M_S


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--counts", type=int, nargs="+", default=[1, 10, 100, 500])
    parser.add_argument("--budget-s", type=float, default=20.0, help="time to spend per plan")
    args = parser.parse_args()

    engine = build_engine(policy=PluginPolicy(deny=frozenset({DISPERSION_CHECK})))
    rows = []
    statuses: dict[int, dict[str, Counter]] = {}
    for count in args.counts:
        plan = load_plan(plan_with(count))
        start = time.perf_counter()
        report = engine.validate(plan)  # warm-up, and how long one run takes
        first_s = time.perf_counter() - start
        runs = max(3, min(200, int(args.budget_s / max(first_s, 1e-4))))
        times = []
        for _ in range(runs):
            start = time.perf_counter()
            engine.validate(plan)
            times.append(time.perf_counter() - start)
        rows.append((count, runs, statistics.median(times)))
        per_check: dict[str, Counter] = {}
        for finding in report["findings"]:
            per_check.setdefault(finding["check"], Counter())[finding["status"]] += 1
        statuses[count] = per_check

    counts = np.array([row[0] for row in rows], dtype=float)
    medians = np.array([row[2] for row in rows])
    slope = float(np.polyfit(np.log(counts), np.log(medians), 1)[0])
    tail = float(np.log(medians[-1] / medians[-2]) / np.log(counts[-1] / counts[-2]))

    print("bench_scaling: engine.validate time against the number of maneuvers")
    print(machine())
    print(
        f"plans: 500 km circular, a {RAISE_M_S} m/s raise then {TRIM_M_S} m/s along-track trims "
        f"every {SPACING_S:.0f} s, a target orbit and {len(STATIONS)} stations; "
        f"checks: all but {DISPERSION_CHECK}"
    )
    print(f"{'maneuvers':>10}{'runs':>7}{'median ms':>12}{'ms per maneuver':>17}")
    for count, runs, median_s in rows:
        print(f"{count:>10}{runs:>7}{1000.0 * median_s:>12.2f}{1000.0 * median_s / count:>17.3f}")
    print("statuses per check (largest plan):")
    for check_id, counter in sorted(statuses[rows[-1][0]].items()):
        print(f"  {check_id:<22}{dict(sorted(counter.items()))}")
    skipped = sorted(
        check_id
        for per_check in statuses.values()
        for check_id, counter in per_check.items()
        if counter.get("skipped") and len(counter) == 1
    )
    print(f"checks skipped outright on some plan: {', '.join(sorted(set(skipped))) or 'none'}")
    print(f"fitted exponent (log-log, all points): {slope:.2f}")
    print(f"exponent between the two largest plans: {tail:.2f}")
    print(f"target: no worse than linear (exponent <= 1.1): {verdict(slope <= 1.1)} ({slope:.2f})")


if __name__ == "__main__":
    main()
