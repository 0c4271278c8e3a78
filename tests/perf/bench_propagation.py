"""Benchmark: vectorised Kepler propagation against a per-sample loop of the same algorithm.

Run with ``.venv/bin/python tests/perf/bench_propagation.py`` (or ``make bench``). This is a
script, not a test: its name does not match pytest's ``test_*.py`` pattern and it asserts
nothing about timings. It prints the wall time and throughput of ``propagate`` on 1,000,000
seeded (state, time) pairs, the time of a Python loop calling ``propagate`` with one (3,)
state at a time on a subset (scaled to the full count), their ratio and peak memory.
"""

from __future__ import annotations

import argparse
import resource
import time
import tracemalloc

import numpy as np

from service.dynamics.bodies import EARTH
from service.dynamics.kepler import propagate

MU_KM3_S2 = EARTH.mu_km3_s2


def _rotation(raan_rad, inc_rad, argp_rad):
    """Perifocal-to-inertial matrices R3(-raan) R1(-i) R3(-argp), shape (N, 3, 3)."""
    co, so = np.cos(raan_rad), np.sin(raan_rad)
    ci, si = np.cos(inc_rad), np.sin(inc_rad)
    cw, sw = np.cos(argp_rad), np.sin(argp_rad)
    m = np.empty((raan_rad.size, 3, 3))
    m[:, 0, 0] = co * cw - so * sw * ci
    m[:, 0, 1] = -co * sw - so * cw * ci
    m[:, 0, 2] = so * si
    m[:, 1, 0] = so * cw + co * sw * ci
    m[:, 1, 1] = -so * sw + co * cw * ci
    m[:, 1, 2] = -co * si
    m[:, 2, 0] = sw * si
    m[:, 2, 1] = cw * si
    m[:, 2, 2] = ci
    return m


def _states(rng, rp_km, e, nu_rad):
    """Inertial states from periapsis radius, eccentricity, true anomaly and random angles."""
    n = rp_km.size
    p_km = rp_km * (1.0 + e)
    radius_km = p_km / (1.0 + e * np.cos(nu_rad))
    r_pf = np.stack([np.cos(nu_rad), np.sin(nu_rad), np.zeros(n)], axis=1) * radius_km[:, None]
    v_pf = np.stack([-np.sin(nu_rad), e + np.cos(nu_rad), np.zeros(n)], axis=1)
    v_pf *= np.sqrt(MU_KM3_S2 / p_km)[:, None]
    rot = _rotation(
        rng.uniform(0, 2 * np.pi, n), rng.uniform(0, np.pi, n), rng.uniform(0, 2 * np.pi, n)
    )
    return np.einsum("nij,nj->ni", rot, r_pf), np.einsum("nij,nj->ni", rot, v_pf)


def make_pairs(n: int, seed: int = 20240601, hyperbolic_fraction: float = 0.1):
    """Seeded (r0, v0, dt) pairs: LEO-to-HEO ellipses over up to 5 orbits, some hyperbolae."""
    rng = np.random.default_rng(seed)
    n_hyp = round(n * hyperbolic_fraction)
    n_ell = n - n_hyp
    # Ellipses: perigee 200-2000 km altitude, apogee from perigee up to 150,000 km radius.
    rp = EARTH.equatorial_radius_km + rng.uniform(200.0, 2000.0, n_ell)
    ra = np.exp(rng.uniform(np.log(rp), np.log(150_000.0)))
    e_ell = (ra - rp) / (ra + rp)
    r_ell, v_ell = _states(rng, rp, e_ell, rng.uniform(-np.pi, np.pi, n_ell))
    a = 0.5 * (ra + rp)
    period = 2 * np.pi * np.sqrt(a**3 / MU_KM3_S2)
    dt_ell = rng.uniform(-5.0, 5.0, n_ell) * period
    # Hyperbolae: e 1.05-3, within 90% of the asymptote's true anomaly, +/- 12 h.
    rp_h = EARTH.equatorial_radius_km + rng.uniform(200.0, 5000.0, n_hyp)
    e_h = rng.uniform(1.05, 3.0, n_hyp)
    nu_h = rng.uniform(-0.9, 0.9, n_hyp) * np.arccos(-1.0 / e_h)
    r_h, v_h = _states(rng, rp_h, e_h, nu_h)
    dt_h = rng.uniform(-12.0, 12.0, n_hyp) * 3600.0
    order = rng.permutation(n)
    r0 = np.concatenate([r_ell, r_h])[order]
    v0 = np.concatenate([v_ell, v_h])[order]
    dt = np.concatenate([dt_ell, dt_h])[order]
    return r0, v0, dt


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--pairs", type=int, default=1_000_000)
    parser.add_argument("--loop-samples", type=int, default=2_000)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()

    r0, v0, dt = make_pairs(args.pairs)
    propagate(r0[:1000], v0[:1000], dt[:1000], MU_KM3_S2)  # warm-up (imports, caches)

    times = []
    for _ in range(args.repeats):
        start = time.perf_counter()
        r, v = propagate(r0, v0, dt, MU_KM3_S2)
        times.append(time.perf_counter() - start)
    vec_s = min(times)

    m = args.loop_samples
    start = time.perf_counter()
    loop_r = np.empty((m, 3))
    loop_v = np.empty((m, 3))
    for i in range(m):
        loop_r[i], loop_v[i] = propagate(r0[i], v0[i], dt[i], MU_KM3_S2)
    loop_s = time.perf_counter() - start
    loop_scaled_s = loop_s * args.pairs / m
    agree_km = float(np.max(np.abs(loop_r - r[:m])))
    agree_km_s = float(np.max(np.abs(loop_v - v[:m])))

    # Memory is measured in a separate run: tracemalloc's bookkeeping would skew the timings.
    tracemalloc.start()
    propagate(r0, v0, dt, MU_KM3_S2)
    _, traced_peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    max_rss_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss

    n_hyp = int(np.sum(2.0 / np.linalg.norm(r0, axis=1) < np.sum(v0 * v0, 1) / MU_KM3_S2))
    print(f"pairs: {args.pairs:,} ({n_hyp:,} hyperbolic), loop subset: {m:,}")
    print(f"{'what':<44}{'time (s)':>12}{'pairs/s':>14}")
    print(
        f"{'vectorised propagate (best of ' + str(args.repeats) + ')':<44}{vec_s:>12.3f}"
        f"{args.pairs / vec_s:>14,.0f}"
    )
    print(f"{'per-sample loop, ' + f'{m:,}' + ' samples':<44}{loop_s:>12.3f}{m / loop_s:>14,.0f}")
    print(
        f"{'per-sample loop, scaled to ' + f'{args.pairs:,}':<44}{loop_scaled_s:>12.1f}"
        f"{m / loop_s:>14,.0f}"
    )
    print(f"speed-up (loop / vectorised): {loop_scaled_s / vec_s:,.0f}x")
    print(f"peak traced memory of one vectorised call: {traced_peak / 2**20:,.0f} MiB")
    print(f"peak resident memory of the process: {max_rss_kib / 1024:,.0f} MiB")
    print(f"loop vs vectorised, max difference: {agree_km:.2e} km, {agree_km_s:.2e} km/s")


if __name__ == "__main__":
    main()
