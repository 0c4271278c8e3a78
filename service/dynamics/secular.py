"""Secular drift of the node, periapsis and mean anomaly caused by the body's J2 oblateness.

Rates (Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), section 9.6,
secular J2 rates, eq. 9-41 (equation number from memory); Curtis, Orbital Mechanics for
Engineering Students, 3rd ed., eqs. 4.52 (node) and 4.53 (periapsis)), with
n = sqrt(mu / a^3) and p = a (1 - e^2):

    raan_dot = -3/2 n J2 (R/p)^2 cos i
    argp_dot =  3/4 n J2 (R/p)^2 (4 - 5 sin^2 i)
    M_dot    =  n [1 + 3/4 J2 (R/p)^2 sqrt(1 - e^2) (2 - 3 sin^2 i)]

Approximation, stated once: these are first-order averaged (mean-element) rates, but the
osculating elements of the given state are used as if they were mean elements, and the
periodic J2 terms are ignored. The error is of the order of the J2 short-period terms,
J2 (R/p)^2 relative in a, e, i (~1e-3), i.e. positions off by up to a few km in low Earth
orbit, while the accumulated drift of the node and periapsis is right to a few tenths of a
percent. Closed orbits only: the rates average over a revolution, which an open orbit lacks.

Degenerate orbits use elements.py's conventions. For a circular orbit argp is 0 and nu holds
the argument of latitude, so u advances at argp_dot + M_dot; for an equatorial orbit raan is 0
and argp holds the longitude of periapsis, and raan_dot is still added to the raan slot, so
the rotation R3(-raan) R1(-i) R3(-argp) turns the line of apsides by raan_dot + argp_dot for
prograde and argp_dot - raan_dot (in the direction of motion) for retrograde orbits, as the
geometry requires.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.anomalies import mean_to_true_anomaly, true_to_mean_anomaly
from service.dynamics.bodies import Body
from service.dynamics.elements import Elements, elements_to_state, state_to_elements
from service.dynamics.inputs import float_or_array

FloatOrArray = float | np.ndarray


def _closed_only(e: np.ndarray) -> None:
    if np.any(e >= 1.0):
        raise ValueError(
            f"J2 secular drift applies to closed orbits (e < 1) only; got e = {e!r}: an open "
            "trajectory has no revolution to average the J2 perturbation over"
        )


def j2_secular_rates(elements: Elements, body: Body) -> tuple[FloatOrArray, ...]:
    """Secular J2 rates of RAAN, argument of periapsis and mean anomaly, rad/s.

    Vallado 4th ed., section 9.6, eq. 9-41 (number from memory); Curtis 3rd ed., eqs. 4.52 and
    4.53 (module docstring). ``elements`` (mean elements, here taken as osculating) with e < 1;
    ``body`` with ``mu_km3_s2``, ``equatorial_radius_km`` and ``j2``.
    Returns (raan_dot_rad_s, argp_dot_rad_s, mean_anomaly_dot_rad_s), floats or (N,) arrays.
    Raises ValueError for e >= 1.
    """
    e = np.asarray(elements.e, dtype=float)
    _closed_only(e)
    p = np.asarray(elements.p_km, dtype=float)
    one_minus_e2 = (1.0 - e) * (1.0 + e)
    mean_motion = np.sqrt(body.mu_km3_s2 * one_minus_e2**3 / p**3)
    sin_i = np.sin(np.asarray(elements.i_rad, dtype=float))
    cos_i = np.cos(np.asarray(elements.i_rad, dtype=float))
    factor = body.j2 * (body.equatorial_radius_km / p) ** 2 * mean_motion
    raan_dot = -1.5 * factor * cos_i
    argp_dot = 0.75 * factor * (4.0 - 5.0 * sin_i**2)
    mean_anomaly_dot = mean_motion + 0.75 * factor * np.sqrt(one_minus_e2) * (2.0 - 3.0 * sin_i**2)
    return float_or_array(raan_dot), float_or_array(argp_dot), float_or_array(mean_anomaly_dot)


def propagate_j2_secular(
    r0_km: ArrayLike, v0_km_s: ArrayLike, dt_s: ArrayLike, body: Body
) -> tuple[np.ndarray, np.ndarray]:
    """State after ``dt_s`` with raan, argp and M advanced at their secular J2 rates.

    The J2 part of Vallado's PKEPLER (Algorithm 64 in the 3rd ed. (2007), per the header of his
    companion code): state -> elements, linear advance of raan, argp and M (here with the J2
    term in M_dot), elements -> state.
    ``r0_km`` (3,) or (N, 3) km, ``v0_km_s`` likewise km/s, ``dt_s`` float or (N,) s (one state
    at many times, many states at one time, or N pairs), ``body`` with ``mu_km3_s2``,
    ``equatorial_radius_km``, ``j2``. Returns (r_km, v_km_s). Raises ValueError for open
    orbits (e >= 1) and non-finite input. Accuracy: see the module docstring.
    """
    dt = np.asarray(dt_s, dtype=float)
    if not np.all(np.isfinite(dt)):
        raise ValueError(f"dt_s must be finite, got {dt_s!r}")
    start = state_to_elements(r0_km, v0_km_s, body.mu_km3_s2)
    e = np.asarray(start.e, dtype=float)
    _closed_only(e)
    raan_dot, argp_dot, mean_anomaly_dot = j2_secular_rates(start, body)
    mean_anomaly = true_to_mean_anomaly(start.nu_rad, e) + np.asarray(mean_anomaly_dot) * dt
    advanced = Elements(
        p_km=start.p_km,
        e=start.e,
        i_rad=start.i_rad,
        raan_rad=float_or_array(start.raan_rad + np.asarray(raan_dot) * dt),
        argp_rad=float_or_array(start.argp_rad + np.asarray(argp_dot) * dt),
        nu_rad=mean_to_true_anomaly(mean_anomaly, e),
    )
    return elements_to_state(advanced, body.mu_km3_s2)
