"""True, eccentric, hyperbolic, parabolic and mean anomalies, and mean motion.

Why a module of its own: it holds the geometry (true anomaly to and from the eccentric,
hyperbolic and parabolic anomalies), the choice of conic for each sample, and the mean motion
that turns a mean anomaly into time; solving Kepler's and Barker's equations for the mean
anomaly is ``service.dynamics.kepler_equation``'s job. Sources: Vallado, Fundamentals of
Astrodynamics and Applications, 4th ed. (2013), Algorithms 5 (nu to anomaly) and 6 (anomaly to
nu), and the anomaly relations of section 2.2; Curtis, Orbital Mechanics for Engineering
Students, 3rd ed., sections 3.4-3.6.

Definitions used here:

* elliptic (e < 1): M = E - e sin E. Whole revolutions are kept: if nu - 2 pi k lies in
  [-pi, pi] then so do E - 2 pi k and M - 2 pi k, so nu -> M is a continuous, increasing map
  of the real line (time since periapsis is M / n, also across revolutions).
* parabolic (e == 1 exactly): B = tan(nu / 2) and M = B + B^3 / 3 (Vallado's form of Barker's
  equation; Curtis's M_p = B/2 + B^3/6 is half of it). nu must lie in (-pi, pi).
* hyperbolic (e > 1): M = e sinh H - H, nu must lie between the asymptotes,
  |nu| < arccos(-1/e); results for nu are in (-nu_inf, nu_inf).

Mean motion n makes M = n (t - t_periapsis) in every case: sqrt(mu / a^3) (elliptic),
sqrt(mu / (-a)^3) (hyperbolic), and the parabolic mean motion n_p = 2 sqrt(mu / p^3), which
follows from Barker's equation t - t_p = (1/2) sqrt(p^3 / mu) (B + B^3 / 3) (Vallado
Algorithm 3; Curtis 3rd ed. section 3.5, whose M_p = mu^2 t / h^3 is half of this M since
h^2 = mu p). Near e = 1 ``kepler_equation`` evaluates the elliptic and hyperbolic forms as
(1 - e) sin E + (E - sin E) and (e - 1) sinh H + (sinh H - H), with series for small angles,
so that M / n stays continuous through the parabola. (Within the first revolution this holds
to rounding; beyond it a nearly parabolic ellipse's M = 2 pi k + M' cannot hold the tiny M'
near periapsis, which is a limit of the mean anomaly itself, not of the solver.)
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.inputs import finite, float_or_array
from service.dynamics.kepler_equation import (
    KEPLER_MAX_ITERATIONS,
    KEPLER_STEP_TOLERANCE_RAD,
    TWO_PI,
    FloatOrArray,
    eccentric_to_mean_anomaly,
    eccentricity_array,
    hyperbolic_to_mean_anomaly,
    mean_to_eccentric_anomaly,
    mean_to_hyperbolic_anomaly,
    mean_to_parabolic_anomaly,
    parabolic_to_mean_anomaly,
    require_elliptic,
    require_hyperbolic,
    wrap_revolutions,
)

# --- elliptic -----------------------------------------------------------------------------------


def true_to_eccentric_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Eccentric anomaly E from true anomaly (e < 1), keeping whole revolutions.

    Vallado 4th ed., Algorithm 5 (nu to anomaly: tan(E/2) = sqrt((1-e)/(1+e)) tan(nu/2));
    Curtis 3rd ed., section 3.4.
    ``nu_rad`` any real angle, ``e`` in [0, 1).
    """
    nu = finite("true anomaly nu_rad", nu_rad)
    e_array = eccentricity_array(e)
    require_elliptic(e_array)
    reduced, turns = wrap_revolutions(nu)
    half = 0.5 * reduced
    eccentric = 2.0 * np.arctan2(
        np.sqrt(1.0 - e_array) * np.sin(half), np.sqrt(1.0 + e_array) * np.cos(half)
    )
    return float_or_array(eccentric + turns)


def eccentric_to_true_anomaly(eccentric_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """True anomaly from eccentric anomaly (e < 1), keeping whole revolutions.

    Vallado 4th ed., Algorithm 6 (anomaly to nu); Curtis 3rd ed., section 3.4.
    ``eccentric_anomaly_rad`` any real angle, ``e`` in [0, 1).
    """
    eccentric = finite("eccentric anomaly", eccentric_anomaly_rad)
    e_array = eccentricity_array(e)
    require_elliptic(e_array)
    reduced, turns = wrap_revolutions(eccentric)
    half = 0.5 * reduced
    nu = 2.0 * np.arctan2(
        np.sqrt(1.0 + e_array) * np.sin(half), np.sqrt(1.0 - e_array) * np.cos(half)
    )
    return float_or_array(nu + turns)


# --- hyperbolic ---------------------------------------------------------------------------------


def _check_within_asymptotes(nu: np.ndarray, e: np.ndarray) -> None:
    outside = 1.0 + e * np.cos(nu) <= 0.0
    if np.any(outside):
        bad = np.flatnonzero(np.broadcast_to(outside, np.broadcast(nu, e).shape))
        raise ValueError(
            "true anomaly nu_rad lies on or beyond the asymptotes of the open trajectory "
            f"(needs 1 + e cos(nu) > 0, i.e. |nu| < arccos(-1/e)) at sample(s) {bad.tolist()[:10]}"
        )


def true_to_hyperbolic_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Hyperbolic anomaly H from true anomaly (e > 1).

    Vallado 4th ed., Algorithm 5 (sinh H = sqrt(e^2 - 1) sin nu / (1 + e cos nu));
    Curtis 3rd ed., section 3.6. ``nu_rad`` within the asymptotes, ``e`` > 1.
    """
    nu = finite("true anomaly nu_rad", nu_rad)
    e_array = eccentricity_array(e)
    require_hyperbolic(e_array)
    _check_within_asymptotes(nu, e_array)
    root = np.sqrt((e_array - 1.0) * (e_array + 1.0))
    return float_or_array(np.arcsinh(root * np.sin(nu) / (1.0 + e_array * np.cos(nu))))


def hyperbolic_to_true_anomaly(hyperbolic_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """True anomaly in (-nu_inf, nu_inf) from hyperbolic anomaly (e > 1).

    Vallado 4th ed., Algorithm 6 (tan(nu/2) = sqrt((e+1)/(e-1)) tanh(H/2));
    Curtis 3rd ed., section 3.6.
    """
    hyperbolic = finite("hyperbolic anomaly", hyperbolic_anomaly_rad)
    e_array = eccentricity_array(e)
    require_hyperbolic(e_array)
    ratio = np.sqrt((e_array + 1.0) / (e_array - 1.0))
    return float_or_array(2.0 * np.arctan(ratio * np.tanh(0.5 * hyperbolic)))


# --- parabolic ----------------------------------------------------------------------------------


def true_to_parabolic_anomaly(nu_rad: ArrayLike) -> FloatOrArray:
    """Parabolic anomaly B = tan(nu / 2) (e == 1); nu in (-pi, pi) modulo 2 pi.

    Vallado 4th ed., Algorithm 5 (B = tan(nu/2)); Curtis 3rd ed., section 3.5.
    """
    nu = finite("true anomaly nu_rad", nu_rad)
    _check_within_asymptotes(nu, np.ones_like(nu))
    reduced, _ = wrap_revolutions(nu)
    return float_or_array(np.tan(0.5 * reduced))


def parabolic_to_true_anomaly(parabolic_anomaly: ArrayLike) -> FloatOrArray:
    """True anomaly in (-pi, pi) from the parabolic anomaly B (nu = 2 atan B).

    Vallado 4th ed., Algorithm 6.
    """
    b = finite("parabolic anomaly B", parabolic_anomaly)
    return float_or_array(2.0 * np.arctan(b))


# --- one elliptic sample in plain Python arithmetic ------------------------------------------
#
# Trajectory building and the checks ask about one orbit at a time, where numpy's per-call
# cost is most of the work. These follow the array code above and in ``kepler_equation``
# step for step (same formulas, same order of operations, numpy's own arctan2, cbrt and
# scalar power, scipy's scalar Newton-Halley rules), so they give the same floats; any input
# other than one finite elliptic sample goes to the array code.


def _one(value) -> float | None:
    """``value`` as a Python float when it is one finite float64 number, else None."""
    if type(value) is float:
        number = value
    elif isinstance(value, np.float64) or (
        isinstance(value, np.ndarray) and value.shape == () and value.dtype == np.float64
    ):
        number = float(value)
    else:
        return None
    return number if math.isfinite(number) else None


def _wrap_revolutions_one(angle_rad: float) -> tuple[float, float]:
    turns = float(round(angle_rad / TWO_PI))  # half to even, as np.round
    return angle_rad - TWO_PI * turns, TWO_PI * turns


def _x_minus_sin_one(x: float) -> float:
    if abs(x) < 1.0:
        x2 = x * x
        total = 0.0
        for k in range(10, 0, -1):
            total = (-1.0) ** (k + 1) / math.factorial(2 * k + 1) + x2 * total
        return total * x * x2
    return x - math.sin(x)


def _true_to_mean_one(nu: float, e: float) -> float:
    reduced, turns = _wrap_revolutions_one(nu)
    half = 0.5 * reduced
    eccentric = 2.0 * float(
        np.arctan2(math.sqrt(1.0 - e) * math.sin(half), math.sqrt(1.0 + e) * math.cos(half))
    )
    eccentric += turns
    return (1.0 - e) * math.sin(eccentric) + _x_minus_sin_one(eccentric)


def _mean_to_true_one(m: float, e: float) -> float | None:
    reduced, turns = _wrap_revolutions_one(m)
    magnitude = abs(reduced)
    cube_bound = float(np.cbrt(6.0 * magnitude / (1.0 - math.pi**2 / 20.0)))
    p0 = min(min(magnitude + e, math.pi), cube_bound)
    one_minus_e = 1.0 - e
    for _ in range(KEPLER_MAX_ITERATIONS):
        fval = one_minus_e * math.sin(p0) + _x_minus_sin_one(p0) - magnitude
        if fval == 0.0:
            break
        half_sine = np.float64(math.sin(0.5 * p0))
        fder = one_minus_e * math.cos(p0) + 2.0 * float(half_sine**2)  # numpy's scalar power
        if fder == 0.0 or not math.isfinite(fval):
            return None
        step = fval / fder
        adj = step * (e * math.sin(p0)) / fder / 2
        if abs(adj) < 1:
            step /= 1.0 - adj
        p = p0 - step
        if abs(p - p0) <= KEPLER_STEP_TOLERANCE_RAD:
            p0 = p
            break
        p0 = p
    else:
        return None
    if not math.isfinite(p0):
        return None
    eccentric = math.copysign(p0, reduced) + turns
    reduced, turns = _wrap_revolutions_one(eccentric)
    half = 0.5 * reduced
    nu = 2.0 * float(
        np.arctan2(math.sqrt(1.0 + e) * math.sin(half), math.sqrt(1.0 - e) * math.cos(half))
    )
    return nu + turns


# --- any conic ----------------------------------------------------------------------------------


def _by_conic(e: np.ndarray, values: np.ndarray, elliptic, parabolic, hyperbolic):
    """Apply the branch for each sample's conic to the matching subset of ``values``."""
    e, values = np.broadcast_arrays(e, values)
    out = np.empty(values.shape, dtype=float)
    for mask, branch in ((e < 1.0, elliptic), (e == 1.0, parabolic), (e > 1.0, hyperbolic)):
        if np.any(mask):
            out[mask] = branch(values[mask], e[mask])
    return out


def true_to_mean_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Mean anomaly from true anomaly for any conic (definitions in the module docstring).

    Vallado 4th ed., section 2.2 and Algorithms 2-4; Curtis 3rd ed., sections 3.4-3.6.
    ``nu_rad`` and ``e`` broadcast; e == 1 exactly selects the parabola.
    """
    nu_one, e_one = _one(nu_rad), _one(e)
    if nu_one is not None and e_one is not None and 0.0 <= e_one < 1.0:
        return _true_to_mean_one(nu_one, e_one)
    nu = finite("true anomaly nu_rad", nu_rad)
    e_array = eccentricity_array(e)
    out = _by_conic(
        e_array,
        nu,
        lambda x, ecc: eccentric_to_mean_anomaly(true_to_eccentric_anomaly(x, ecc), ecc),
        lambda x, ecc: parabolic_to_mean_anomaly(true_to_parabolic_anomaly(x)),
        lambda x, ecc: hyperbolic_to_mean_anomaly(true_to_hyperbolic_anomaly(x, ecc), ecc),
    )
    return float_or_array(out)


def mean_to_true_anomaly(m_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """True anomaly from mean anomaly for any conic (definitions in the module docstring).

    Vallado 4th ed., Algorithms 2-4; Curtis 3rd ed., Algorithms 3.1 and 3.2.
    Elliptic results keep M's revolution; parabolic and hyperbolic ones lie between the
    asymptotes. Raises ValueError if Kepler's equation does not converge.
    """
    m_one, e_one = _one(m_rad), _one(e)
    if m_one is not None and e_one is not None and 0.0 <= e_one < 1.0:
        nu = _mean_to_true_one(m_one, e_one)
        if nu is not None:
            return nu
    m = finite("mean anomaly m_rad", m_rad)
    e_array = eccentricity_array(e)
    out = _by_conic(
        e_array,
        m,
        lambda x, ecc: eccentric_to_true_anomaly(mean_to_eccentric_anomaly(x, ecc), ecc),
        lambda x, ecc: parabolic_to_true_anomaly(mean_to_parabolic_anomaly(x)),
        lambda x, ecc: hyperbolic_to_true_anomaly(mean_to_hyperbolic_anomaly(x, ecc), ecc),
    )
    return float_or_array(out)


def mean_motion_rad_s(p_km: ArrayLike, e: ArrayLike, mu_km3_s2: ArrayLike) -> FloatOrArray:
    """Mean motion n (rad/s) such that M = n (t - t_periapsis), for any conic.

    Vallado 4th ed., section 2.2: n = sqrt(mu / |a|^3) with |a| = p / |1 - e^2| for e != 1; the
    parabolic mean motion n_p = 2 sqrt(mu / p^3) for e == 1 (Vallado Algorithm 3, Barker's
    equation; see the module docstring). ``p_km`` semi-latus rectum > 0, ``e`` >= 0,
    ``mu_km3_s2`` > 0.
    """
    p_one, e_one, mu_one = _one(p_km), _one(e), _one(mu_km3_s2)
    if (
        p_one is not None
        and e_one is not None
        and mu_one is not None
        and p_one > 0.0
        and mu_one > 0.0
        and 0.0 <= e_one < 1.0
    ):
        # The array code raises a numpy scalar (not an array) to 1.5: numpy's scalar power.
        factor = float(np.float64(abs((1.0 - e_one) * (1.0 + e_one))) ** 1.5)
        return factor * math.sqrt(mu_one / float(np.power(p_one, 3.0)))
    p = finite("semi-latus rectum p_km", p_km)
    e_array = eccentricity_array(e)
    mu = finite("mu_km3_s2", mu_km3_s2)
    if np.any(p <= 0.0):
        raise ValueError(f"semi-latus rectum must be > 0 km, got {p_km!r}")
    if np.any(mu <= 0.0):
        raise ValueError(f"mu_km3_s2 must be > 0, got {mu_km3_s2!r}")
    one_minus_e2 = np.abs((1.0 - e_array) * (1.0 + e_array))
    parabolic = e_array == 1.0
    factor = np.where(parabolic, 2.0, one_minus_e2**1.5)
    return float_or_array(factor * np.sqrt(mu / p**3))
