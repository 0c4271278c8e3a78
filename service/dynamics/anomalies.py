"""True, eccentric, hyperbolic, parabolic and mean anomalies, and mean motion.

Kepler's equation is solved with ``scipy.optimize.newton`` (Halley's method: first and second
derivatives given) on whole arrays; Barker's equation has a closed-form root. Sources: Vallado,
Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithms 2 (elliptic Kepler),
3 (Barker) and 4 (hyperbolic Kepler), and the anomaly relations of section 2.2; Curtis, Orbital
Mechanics for Engineering Students, 3rd ed., sections 3.4-3.6.

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
h^2 = mu p). Near e = 1 the elliptic and hyperbolic forms are evaluated as
(1 - e) sin E + (E - sin E) and (e - 1) sinh H + (sinh H - H), with series for small angles,
so that M / n stays continuous through the parabola. (Within the first revolution this holds
to rounding; beyond it a nearly parabolic ellipse's M = 2 pi k + M' cannot hold the tiny M'
near periapsis, which is a limit of the mean anomaly itself, not of the solver.)
"""

from __future__ import annotations

import math
import warnings

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import newton

FloatOrArray = float | np.ndarray

TWO_PI = 2.0 * math.pi
# Newton/Halley stops once a step is below this (radians); the next iterate is then exact to
# rounding because Halley's method converges cubically.
KEPLER_STEP_TOLERANCE_RAD = 1e-13
KEPLER_MAX_ITERATIONS = 100
# Below |x| < 1 the series for x - sin x and sinh x - x replaces the cancelling difference.
_SERIES_LIMIT = 1.0
_SERIES_TERMS = 10


def _as_float_array(value, name: str) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return array


def _eccentricity(e) -> np.ndarray:
    e_array = _as_float_array(e, "eccentricity e")
    if np.any(e_array < 0.0):
        raise ValueError(f"eccentricity must be >= 0, got {e!r}")
    return e_array


def _result(array: np.ndarray) -> FloatOrArray:
    return float(array) if array.ndim == 0 else array


def _wrap_revolutions(angle_rad: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Split an angle into 2 pi k plus a remainder in [-pi, pi]."""
    turns = np.round(angle_rad / TWO_PI)
    return angle_rad - TWO_PI * turns, TWO_PI * turns


def _odd_series(x: np.ndarray, alternating: bool) -> np.ndarray:
    """x^3/3! -+ x^5/5! + ... : the Taylor tail of x - sin x (alternating) or sinh x - x."""
    x2 = x * x
    total = np.zeros_like(x)
    for k in range(_SERIES_TERMS, 0, -1):
        sign = (-1.0) ** (k + 1) if alternating else 1.0
        total = sign / math.factorial(2 * k + 1) + x2 * total
    return total * x * x2


def _x_minus_sin(x: np.ndarray) -> np.ndarray:
    small = np.abs(x) < _SERIES_LIMIT
    return np.where(small, _odd_series(x, alternating=True), x - np.sin(x))


def _sinh_minus_x(x: np.ndarray) -> np.ndarray:
    small = np.abs(x) < _SERIES_LIMIT
    return np.where(small, _odd_series(x, alternating=False), np.sinh(x) - x)


def _solve(equation: tuple, x0: np.ndarray, args: tuple, what: str) -> np.ndarray:
    """Halley's method (scipy newton; f, f', f'' in ``equation``); every sample must converge."""
    func, fprime, fprime2 = equation
    if x0.size == 0:
        return x0
    options = dict(
        fprime=fprime,
        fprime2=fprime2,
        tol=KEPLER_STEP_TOLERANCE_RAD,
        maxiter=KEPLER_MAX_ITERATIONS,
        full_output=True,
    )
    with warnings.catch_warnings():
        # Non-convergence is reported below as a ValueError naming the samples.
        warnings.simplefilter("ignore", RuntimeWarning)
        if x0.size == 1:  # scipy takes its scalar path here
            scalar_args = tuple(np.reshape(a, ()) for a in args)
            root, info = newton(func, x0.reshape(()), args=scalar_args, disp=False, **options)
            root, converged = np.reshape(root, x0.shape), np.full(x0.shape, info.converged)
        else:
            try:
                root, converged, _ = newton(func, x0, args=args, **options)
            except RuntimeError:
                # scipy raises instead of reporting when every sample failed.
                root, converged = x0, np.zeros(x0.shape, dtype=bool)
    converged = np.asarray(converged) & np.isfinite(root)
    if not np.all(converged):
        bad = np.flatnonzero(~converged)
        raise ValueError(
            f"{what} did not converge in {KEPLER_MAX_ITERATIONS} iterations "
            f"for sample(s) {bad.tolist()[:10]}"
        )
    return np.asarray(root, dtype=float)


# --- elliptic -----------------------------------------------------------------------------------


def _elliptic_only(e: np.ndarray) -> None:
    if np.any(e >= 1.0):
        raise ValueError(f"eccentric anomaly needs an elliptic orbit (e < 1), got e = {e!r}")


def true_to_eccentric_anomaly(nu_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Eccentric anomaly E from true anomaly (e < 1), keeping whole revolutions.

    Vallado 4th ed., Algorithm 5 (nu to anomaly: tan(E/2) = sqrt((1-e)/(1+e)) tan(nu/2));
    Curtis 3rd ed., section 3.4.
    ``nu_rad`` any real angle, ``e`` in [0, 1).
    """
    nu = _as_float_array(nu_rad, "true anomaly nu_rad")
    e_array = _eccentricity(e)
    _elliptic_only(e_array)
    reduced, turns = _wrap_revolutions(nu)
    half = 0.5 * reduced
    eccentric = 2.0 * np.arctan2(
        np.sqrt(1.0 - e_array) * np.sin(half), np.sqrt(1.0 + e_array) * np.cos(half)
    )
    return _result(eccentric + turns)


def eccentric_to_true_anomaly(eccentric_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """True anomaly from eccentric anomaly (e < 1), keeping whole revolutions.

    Vallado 4th ed., Algorithm 6 (anomaly to nu); Curtis 3rd ed., section 3.4.
    ``eccentric_anomaly_rad`` any real angle, ``e`` in [0, 1).
    """
    eccentric = _as_float_array(eccentric_anomaly_rad, "eccentric anomaly")
    e_array = _eccentricity(e)
    _elliptic_only(e_array)
    reduced, turns = _wrap_revolutions(eccentric)
    half = 0.5 * reduced
    nu = 2.0 * np.arctan2(
        np.sqrt(1.0 + e_array) * np.sin(half), np.sqrt(1.0 - e_array) * np.cos(half)
    )
    return _result(nu + turns)


def eccentric_to_mean_anomaly(eccentric_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Mean anomaly from Kepler's equation M = E - e sin E (e < 1).

    Vallado 4th ed., section 2.2 (Kepler's equation); Curtis 3rd ed., eq. 3.14.
    Written as (1 - e) sin E + (E - sin E) to stay accurate near e = 1.
    """
    eccentric = _as_float_array(eccentric_anomaly_rad, "eccentric anomaly")
    e_array = _eccentricity(e)
    _elliptic_only(e_array)
    return _result((1.0 - e_array) * np.sin(eccentric) + _x_minus_sin(eccentric))


def _kepler_elliptic(eccentric, m, e):
    return (1.0 - e) * np.sin(eccentric) + _x_minus_sin(eccentric) - m


def _kepler_elliptic_prime(eccentric, m, e):
    return (1.0 - e) * np.cos(eccentric) + 2.0 * np.sin(0.5 * eccentric) ** 2


def _kepler_elliptic_prime2(eccentric, m, e):
    return e * np.sin(eccentric)


_ELLIPTIC = (_kepler_elliptic, _kepler_elliptic_prime, _kepler_elliptic_prime2)


def mean_to_eccentric_anomaly(m_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Eccentric anomaly solving Kepler's equation M = E - e sin E (e < 1).

    Vallado 4th ed., Algorithm 2 (KepEqtnE), solved by Halley's method (scipy.optimize.newton
    with fprime2). Starting value: Vallado's E0 = M + e for M in [0, pi] (the equation is odd,
    so |M| is solved), capped by pi and by the bound E <= (6M / (1 - pi^2/20))^(1/3) that
    follows from E - sin E >= E^3/6 - E^5/120. Each is an upper bound on the root and the
    function is convex there, so the iteration approaches monotonically.
    ``m_rad`` any real angle (whole revolutions kept), ``e`` in [0, 1).
    """
    m = _as_float_array(m_rad, "mean anomaly m_rad")
    e_array = _eccentricity(e)
    _elliptic_only(e_array)
    m, e_array = np.broadcast_arrays(m, e_array)
    reduced, turns = _wrap_revolutions(m)
    magnitude = np.abs(reduced)
    cube_bound = np.cbrt(6.0 * magnitude / (1.0 - math.pi**2 / 20.0))
    start = np.minimum(np.minimum(magnitude + e_array, math.pi), cube_bound)
    root = _solve(_ELLIPTIC, np.array(start), (magnitude, e_array), "elliptic Kepler equation")
    return _result(np.copysign(root, reduced) + turns)


# --- hyperbolic ---------------------------------------------------------------------------------


def _hyperbolic_only(e: np.ndarray) -> None:
    if np.any(e <= 1.0):
        raise ValueError(f"hyperbolic anomaly needs a hyperbolic orbit (e > 1), got e = {e!r}")


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
    nu = _as_float_array(nu_rad, "true anomaly nu_rad")
    e_array = _eccentricity(e)
    _hyperbolic_only(e_array)
    _check_within_asymptotes(nu, e_array)
    root = np.sqrt((e_array - 1.0) * (e_array + 1.0))
    return _result(np.arcsinh(root * np.sin(nu) / (1.0 + e_array * np.cos(nu))))


def hyperbolic_to_true_anomaly(hyperbolic_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """True anomaly in (-nu_inf, nu_inf) from hyperbolic anomaly (e > 1).

    Vallado 4th ed., Algorithm 6 (tan(nu/2) = sqrt((e+1)/(e-1)) tanh(H/2));
    Curtis 3rd ed., section 3.6.
    """
    hyperbolic = _as_float_array(hyperbolic_anomaly_rad, "hyperbolic anomaly")
    e_array = _eccentricity(e)
    _hyperbolic_only(e_array)
    ratio = np.sqrt((e_array + 1.0) / (e_array - 1.0))
    return _result(2.0 * np.arctan(ratio * np.tanh(0.5 * hyperbolic)))


def hyperbolic_to_mean_anomaly(hyperbolic_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Hyperbolic mean anomaly M = e sinh H - H (e > 1).

    Vallado 4th ed., section 2.2; Curtis 3rd ed., section 3.6. Written as
    (e - 1) sinh H + (sinh H - H) to stay accurate near e = 1.
    """
    hyperbolic = _as_float_array(hyperbolic_anomaly_rad, "hyperbolic anomaly")
    e_array = _eccentricity(e)
    _hyperbolic_only(e_array)
    return _result((e_array - 1.0) * np.sinh(hyperbolic) + _sinh_minus_x(hyperbolic))


def _kepler_hyperbolic(hyperbolic, m, e):
    return (e - 1.0) * np.sinh(hyperbolic) + _sinh_minus_x(hyperbolic) - m


def _kepler_hyperbolic_prime(hyperbolic, m, e):
    return (e - 1.0) * np.cosh(hyperbolic) + 2.0 * np.sinh(0.5 * hyperbolic) ** 2


def _kepler_hyperbolic_prime2(hyperbolic, m, e):
    return e * np.sinh(hyperbolic)


_HYPERBOLIC = (_kepler_hyperbolic, _kepler_hyperbolic_prime, _kepler_hyperbolic_prime2)


def mean_to_hyperbolic_anomaly(m_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Hyperbolic anomaly solving M = e sinh H - H (e > 1).

    Vallado 4th ed., Algorithm 4 (KepEqtnH), solved by Halley's method (scipy.optimize.newton
    with fprime2). Starting value: the upper bound min(asinh(|M|/(e-1)), (6|M|/e)^(1/3)) on the
    root (from e sinh H - H >= (e-1) sinh H and >= e H^3 / 6); Vallado's own starting values
    (M +- e, M/(e-1)) overflow sinh for large M, these do not. The function is convex above
    the root, so the iteration approaches monotonically.
    """
    m = _as_float_array(m_rad, "mean anomaly m_rad")
    e_array = _eccentricity(e)
    _hyperbolic_only(e_array)
    m, e_array = np.broadcast_arrays(m, e_array)
    magnitude = np.abs(m)
    start = np.minimum(np.arcsinh(magnitude / (e_array - 1.0)), np.cbrt(6.0 * magnitude / e_array))
    root = _solve(_HYPERBOLIC, np.array(start), (magnitude, e_array), "hyperbolic Kepler equation")
    return _result(np.copysign(root, m))


# --- parabolic ----------------------------------------------------------------------------------


def true_to_parabolic_anomaly(nu_rad: ArrayLike) -> FloatOrArray:
    """Parabolic anomaly B = tan(nu / 2) (e == 1); nu in (-pi, pi) modulo 2 pi.

    Vallado 4th ed., Algorithm 5 (B = tan(nu/2)); Curtis 3rd ed., section 3.5.
    """
    nu = _as_float_array(nu_rad, "true anomaly nu_rad")
    _check_within_asymptotes(nu, np.ones_like(nu))
    reduced, _ = _wrap_revolutions(nu)
    return _result(np.tan(0.5 * reduced))


def parabolic_to_true_anomaly(parabolic_anomaly: ArrayLike) -> FloatOrArray:
    """True anomaly in (-pi, pi) from the parabolic anomaly B (nu = 2 atan B).

    Vallado 4th ed., Algorithm 6.
    """
    b = _as_float_array(parabolic_anomaly, "parabolic anomaly B")
    return _result(2.0 * np.arctan(b))


def parabolic_to_mean_anomaly(parabolic_anomaly: ArrayLike) -> FloatOrArray:
    """Parabolic mean anomaly M = B + B^3 / 3 (Barker's equation).

    Vallado 4th ed., Algorithm 3 (n_p (t - T) = B + B^3/3 with n_p = 2 sqrt(mu/p^3)).
    """
    b = _as_float_array(parabolic_anomaly, "parabolic anomaly B")
    return _result(b + b**3 / 3.0)


def mean_to_parabolic_anomaly(m_rad: ArrayLike) -> FloatOrArray:
    """Parabolic anomaly B solving Barker's equation B + B^3 / 3 = M, in closed form.

    Vallado 4th ed., Algorithm 3 gives the real root of B^3 + 3B - 3M = 0 as B = 2 cot(2w)
    with cot(2s) = 3M/2, tan^3 w = tan s; the same root is written here as
    B = 2 sinh(asinh(3M/2) / 3) (since 2 sinh 3x = 8 sinh^3 x + 6 sinh x), which has no
    cancellation at small or large M. Curtis 3rd ed., eq. 3.32 is the Cardano form of the root.
    """
    m = _as_float_array(m_rad, "mean anomaly m_rad")
    return _result(2.0 * np.sinh(np.arcsinh(1.5 * m) / 3.0))


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
    nu = _as_float_array(nu_rad, "true anomaly nu_rad")
    e_array = _eccentricity(e)
    out = _by_conic(
        e_array,
        nu,
        lambda x, ecc: eccentric_to_mean_anomaly(true_to_eccentric_anomaly(x, ecc), ecc),
        lambda x, ecc: parabolic_to_mean_anomaly(true_to_parabolic_anomaly(x)),
        lambda x, ecc: hyperbolic_to_mean_anomaly(true_to_hyperbolic_anomaly(x, ecc), ecc),
    )
    return _result(out)


def mean_to_true_anomaly(m_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """True anomaly from mean anomaly for any conic (definitions in the module docstring).

    Vallado 4th ed., Algorithms 2-4; Curtis 3rd ed., Algorithms 3.1 and 3.2.
    Elliptic results keep M's revolution; parabolic and hyperbolic ones lie between the
    asymptotes. Raises ValueError if Kepler's equation does not converge.
    """
    m = _as_float_array(m_rad, "mean anomaly m_rad")
    e_array = _eccentricity(e)
    out = _by_conic(
        e_array,
        m,
        lambda x, ecc: eccentric_to_true_anomaly(mean_to_eccentric_anomaly(x, ecc), ecc),
        lambda x, ecc: parabolic_to_true_anomaly(mean_to_parabolic_anomaly(x)),
        lambda x, ecc: hyperbolic_to_true_anomaly(mean_to_hyperbolic_anomaly(x, ecc), ecc),
    )
    return _result(out)


def mean_motion_rad_s(p_km: ArrayLike, e: ArrayLike, mu_km3_s2: ArrayLike) -> FloatOrArray:
    """Mean motion n (rad/s) such that M = n (t - t_periapsis), for any conic.

    Vallado 4th ed., section 2.2: n = sqrt(mu / |a|^3) with |a| = p / |1 - e^2| for e != 1; the
    parabolic mean motion n_p = 2 sqrt(mu / p^3) for e == 1 (Vallado Algorithm 3, Barker's
    equation; see the module docstring). ``p_km`` semi-latus rectum > 0, ``e`` >= 0,
    ``mu_km3_s2`` > 0.
    """
    p = _as_float_array(p_km, "semi-latus rectum p_km")
    e_array = _eccentricity(e)
    mu = _as_float_array(mu_km3_s2, "mu_km3_s2")
    if np.any(p <= 0.0):
        raise ValueError(f"semi-latus rectum must be > 0 km, got {p_km!r}")
    if np.any(mu <= 0.0):
        raise ValueError(f"mu_km3_s2 must be > 0, got {mu_km3_s2!r}")
    one_minus_e2 = np.abs((1.0 - e_array) * (1.0 + e_array))
    parabolic = e_array == 1.0
    factor = np.where(parabolic, 2.0, one_minus_e2**1.5)
    return _result(factor * np.sqrt(mu / p**3))
