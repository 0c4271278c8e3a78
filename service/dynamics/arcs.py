"""Coast arcs: the lowest point actually flown between two epochs, and samples along an arc.

A coast arc's periapsis says how low its orbit goes; whether the spacecraft gets
there before the next burn is another matter. On a two-body arc the radius
falls monotonically towards periapsis and rises after it, so over an interval
with no periapsis passage the lowest radius lies at one of the two ends; with a
passage it is the periapsis radius. That gives the exact minimum without
sampling: the trajectory equation r = p / (1 + e cos nu) (Vallado, Fundamentals
of Astrodynamics and Applications, 4th ed. (2013), chapter 1; Curtis, Orbital
Mechanics for Engineering Students, 3rd ed., chapter 2) is monotonic in |nu|.
``sample_arc`` gives states along an arc for an independent check and for plotting.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from service.dynamics.anomalies import (
    mean_motion_rad_s,
    mean_to_true_anomaly,
    true_to_mean_anomaly,
)
from service.dynamics.elements import (
    ECCENTRICITY_CIRCULAR,
    Elements,
    periapsis_radius_km,
    state_to_elements,
)
from service.dynamics.kepler import propagate

_TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class LowestPoint:
    """Lowest radius on an arc and when it is reached, seconds after the arc's start."""

    radius_km: float
    time_from_start_s: float


def time_to_next_periapsis_s(r_km, v_km_s, mu_km3_s2: float, *, elements: Elements | None = None):
    """Seconds from the state until the next periapsis passage; inf when it has passed for good.

    Time since periapsis from the mean anomaly, t = M / n, with the elliptic,
    parabolic and hyperbolic forms of Kepler's equation (Vallado 4th ed.,
    chapter 2). Circular orbits give 0: every point is periapsis. ``elements`` may give the
    state's elements when the caller has them (``state_to_elements`` of the same state).
    """
    if elements is None:
        elements = state_to_elements(r_km, v_km_s, mu_km3_s2)
    e = np.asarray(elements.e, dtype=float)
    # In the circular conventions ``nu`` holds an argument of latitude or a true
    # longitude, not a true anomaly; the radius is constant there anyway.
    nu = np.where(e < ECCENTRICITY_CIRCULAR, 0.0, elements.nu_rad)
    mean_anomaly = true_to_mean_anomaly(nu, e)
    n = mean_motion_rad_s(elements.p_km, e, mu_km3_s2)
    closed = e < 1.0
    wrapped = np.mod(mean_anomaly, _TWO_PI)
    to_go_closed = np.where(wrapped == 0.0, 0.0, (_TWO_PI - wrapped) / n)
    to_go_open = np.where(mean_anomaly <= 0.0, -mean_anomaly / n, np.inf)
    result = np.where(closed, to_go_closed, to_go_open)
    return float(result) if result.ndim == 0 else result


def swept_angle_rad(
    r_km, v_km_s, dt_s: float, mu_km3_s2: float, *, elements: Elements | None = None
) -> float:
    """Orbit angle travelled in ``dt_s`` on the two-body orbit of the state, whole turns counted.

    The change of true anomaly from Kepler's equation, M = M0 + n dt (Vallado 4th ed.,
    chapter 2); elliptic mean and true anomalies keep their revolutions, so a burn that
    lasts longer than an orbit sweeps more than 2 pi. For circular orbits the argument of
    latitude (or true longitude) stands in for the true anomaly, as in ``elements``.
    ``elements`` may give the state's elements when the caller has them.
    """
    if elements is None:
        elements = state_to_elements(r_km, v_km_s, mu_km3_s2)
    start = true_to_mean_anomaly(elements.nu_rad, elements.e)
    rate = mean_motion_rad_s(elements.p_km, elements.e, mu_km3_s2)
    end = mean_to_true_anomaly(start + rate * dt_s, elements.e)
    return float(end - elements.nu_rad)


def lowest_point(
    r_start_km,
    v_start_km_s,
    duration_s: float | None,
    mu_km3_s2: float,
    r_end_km=None,
    *,
    elements: Elements | None = None,
) -> LowestPoint:
    """The lowest radius flown on a two-body arc of ``duration_s`` seconds (None: open-ended).

    An open-ended closed orbit reaches its periapsis within one period; an
    open-ended unbound one reaches it only if it is still inbound. ``r_end_km``
    may give the end state already computed (e.g. with J2 drift); otherwise the
    end is propagated here. ``elements`` may give the start state's elements when the caller
    has them.
    """
    r_start = np.asarray(r_start_km, dtype=float)
    v_start = np.asarray(v_start_km_s, dtype=float)
    if elements is None:
        elements = state_to_elements(r_start, v_start, mu_km3_s2)
    radius_start = float(np.linalg.norm(r_start))
    to_periapsis = time_to_next_periapsis_s(r_start, v_start, mu_km3_s2, elements=elements)
    if duration_s is None:
        if np.isfinite(to_periapsis):
            return LowestPoint(float(periapsis_radius_km(elements)), to_periapsis)
        return LowestPoint(radius_start, 0.0)
    if duration_s < 0.0:
        raise ValueError(f"arc duration must not be negative, got {duration_s} s")
    if to_periapsis <= duration_s:
        return LowestPoint(float(periapsis_radius_km(elements)), to_periapsis)
    if r_end_km is None:
        r_end_km, _ = propagate(r_start, v_start, duration_s, mu_km3_s2)
    radius_end = float(np.linalg.norm(r_end_km))
    if radius_end < radius_start:
        return LowestPoint(radius_end, float(duration_s))
    return LowestPoint(radius_start, 0.0)


def sample_arc(r_start_km, v_start_km_s, duration_s: float, mu_km3_s2: float, samples: int):
    """``samples`` evenly spaced states over an arc, ends included.

    Returns (times_s (S,), r_km (S, 3), v_km_s (S, 3)).

    One vectorised call of the universal-variable propagator.
    """
    if samples < 2:
        raise ValueError(f"an arc needs at least 2 samples, got {samples}")
    times_s = np.linspace(0.0, float(duration_s), samples)
    r_km, v_km_s = propagate(
        np.asarray(r_start_km, dtype=float),
        np.asarray(v_start_km_s, dtype=float),
        times_s,
        mu_km3_s2,
    )
    return times_s, r_km, v_km_s
