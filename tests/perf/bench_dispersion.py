"""Benchmark: the execution-dispersion Monte Carlo kernel against a per-sample Python loop.

Run with ``.venv/bin/python tests/perf/bench_dispersion.py`` (or ``make bench``). A script,
not a test: pytest does not collect ``bench_*.py`` and nothing here asserts a timing. It
builds a 6-burn plan with ``service.dynamics.trajectory.build_trajectory``, times
``service.dynamics.dispersion.disperse`` on 100,000 samples (best and median of a few
runs), then times the straightforward loop of the same model, ``disperse`` called with
``samples=1`` once per sample, on a subset scaled to the full count, and prints the ratio.
The two runs draw different random numbers, so they are compared statistically (the mean
periapsis of each arc within a few standard errors), not sample by sample.

Targets (issue 8): 100,000 samples in under 1 s on this 2-core machine, and at least 50
times the loop.
"""

from __future__ import annotations

import argparse
import math
import statistics
import time

import numpy as np
from _bench import machine, verdict

from service.dynamics.bodies import EARTH
from service.dynamics.dispersion import BurnErrors, disperse
from service.dynamics.elements import elements_from_semi_major_axis, elements_to_state
from service.dynamics.epochs import add_seconds, epoch
from service.dynamics.trajectory import BurnSpec, EngineSpec, build_trajectory

EPOCH = epoch("2031-05-02T00:00:00")
MAIN = EngineSpec(id="main", thrust_n=22.0, isp_s=228.0)
RCS = EngineSpec(id="rcs", thrust_n=4.0, isp_s=215.0)
# 1 % + 0.02 m/s magnitude, 0.5 deg pointing and 1 s ignition timing, 1-sigma (a cautious
# small-satellite error model, common practice).
ERRORS = BurnErrors(0.01, 0.02, math.radians(0.5), 1.0)


def six_burn_plan():
    """A 400 km, 51.6 deg orbit raised, trimmed and lowered by six burns in three frames."""
    r_km, v_km_s = elements_to_state(
        elements_from_semi_major_axis(
            EARTH.equatorial_radius_km + 400.0, 0.0005, math.radians(51.6), 0.3, 0.0, 0.0
        ),
        EARTH.mu_km3_s2,
    )
    burns = [
        BurnSpec("raise-1", add_seconds(EPOCH, 900.0), MAIN, "TNW", (12.5, 0.0, 0.0)),
        BurnSpec("raise-2", add_seconds(EPOCH, 3700.0), MAIN, "TNW", (12.4, 0.0, 0.0)),
        BurnSpec("plane-1", add_seconds(EPOCH, 9000.0), MAIN, "RTN", (0.0, 1.0, 6.0)),
        BurnSpec("trim-1", add_seconds(EPOCH, 15000.0), RCS, "TNW", (0.4, 0.1, 0.0)),
        BurnSpec("lower-1", add_seconds(EPOCH, 21000.0), MAIN, "TNW", (-8.0, 0.0, 0.0)),
        BurnSpec("trim-2", add_seconds(EPOCH, 26000.0), RCS, "GCRF", (0.2, -0.3, 0.1)),
    ]
    trajectory = build_trajectory(EARTH, EPOCH, r_km, v_km_s, 602.0, burns, finite_burns=False)
    by_id = {burn.id: burn for burn in burns}
    return trajectory, [by_id[burn.id] for burn in trajectory.maneuvers]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=100_000)
    parser.add_argument("--loop-samples", type=int, default=300)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()

    trajectory, burns = six_burn_plan()
    errors = [ERRORS] * len(burns)
    disperse(trajectory, burns, errors, 1000, np.random.default_rng(1))  # warm-up

    times = []
    for repeat in range(args.repeats):
        rng = np.random.default_rng(20310502 + repeat)
        start = time.perf_counter()
        result = disperse(trajectory, burns, errors, args.samples, rng)
        times.append(time.perf_counter() - start)
    best_s, median_s = min(times), statistics.median(times)

    rng = np.random.default_rng(7)
    start = time.perf_counter()
    looped = [disperse(trajectory, burns, errors, 1, rng) for _ in range(args.loop_samples)]
    loop_s = time.perf_counter() - start
    loop_scaled_s = loop_s * args.samples / args.loop_samples
    ratio = loop_scaled_s / median_s

    # Same model, different draws: each arc's mean periapsis must agree within 5 standard
    # errors of the difference of the two means.
    loop_alt = np.stack([one.periapsis_altitude_km[:, 0] for one in looped], axis=1)
    vec_alt = result.periapsis_altitude_km
    standard_error = np.sqrt(
        vec_alt.var(axis=1) / vec_alt.shape[1] + loop_alt.var(axis=1) / loop_alt.shape[1]
    )
    gap = np.abs(vec_alt.mean(axis=1) - loop_alt.mean(axis=1))
    agree = bool(np.all(gap <= 5.0 * np.maximum(standard_error, 1e-9)))

    print("bench_dispersion: execution-dispersion Monte Carlo kernel (service.dynamics.dispersion)")
    print(machine())
    print(
        f"plan: {len(burns)} burns, {len(trajectory.arcs)} arcs; samples {args.samples:,}; "
        f"loop subset {args.loop_samples:,} (disperse with samples=1 per sample)"
    )
    print(f"{'what':<52}{'time (s)':>11}{'samples/s':>14}")
    print(
        f"{'disperse, ' + f'{args.samples:,}' + ' samples, best of ' + str(args.repeats):<52}"
        f"{best_s:>11.3f}{args.samples / best_s:>14,.0f}"
    )
    print(
        f"{'disperse, ' + f'{args.samples:,}' + ' samples, median':<52}"
        f"{median_s:>11.3f}{args.samples / median_s:>14,.0f}"
    )
    print(
        f"{'per-sample loop, ' + f'{args.loop_samples:,}' + ' samples':<52}"
        f"{loop_s:>11.3f}{args.loop_samples / loop_s:>14,.0f}"
    )
    print(
        f"{'per-sample loop, scaled to ' + f'{args.samples:,}':<52}"
        f"{loop_scaled_s:>11.1f}{args.loop_samples / loop_s:>14,.0f}"
    )
    print(f"speed-up (loop / vectorised median): {ratio:,.0f}x")
    print(f"loop and vectorised agree statistically (arc mean periapsis): {agree}")
    print(
        f"target: {args.samples:,} samples under 1 s: {verdict(median_s < 1.0)} ({median_s:.3f} s)"
    )
    print(f"target: at least 50x the loop: {verdict(ratio >= 50.0)} ({ratio:,.0f}x)")


if __name__ == "__main__":
    main()
