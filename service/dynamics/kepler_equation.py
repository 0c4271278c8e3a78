"""Kepler's equation (elliptic, hyperbolic) and Barker's equation: mean anomaly to E, H, B and back.

Why a module of its own: solving Kepler's equation is the one iterative, numerically delicate
step between time and angle (a root on whole arrays, with its own tolerance, iteration limit
and convergence report); ``service.dynamics.anomalies`` puts the true-anomaly relations and
the any-conic dispatch on top of it. The input checks the two modules share live here, in the
lower of the two.

Kepler's equation is solved with ``scipy.optimize.newton`` (Halley's method: first and second
derivatives given) on whole arrays; Barker's equation has a closed-form root. Sources: Vallado,
Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithms 2 (elliptic Kepler),
3 (Barker) and 4 (hyperbolic Kepler), and section 2.2 (Kepler's equation); Curtis, Orbital
Mechanics for Engineering Students, 3rd ed., sections 3.4-3.6.

Equations solved here (conventions in ``service.dynamics.anomalies``):

* elliptic (e < 1): M = E - e sin E, for any real M; whole revolutions are kept.
* parabolic (e == 1 exactly): M = B + B^3 / 3 (Vallado's form of Barker's equation).
* hyperbolic (e > 1): M = e sinh H - H.

Near e = 1 the elliptic and hyperbolic forms are evaluated as (1 - e) sin E + (E - sin E) and
(e - 1) sinh H + (sinh H - H), with series for small angles, so that M / n stays continuous
through the parabola.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import newton

from service.dynamics.inputs import finite, float_or_array

FloatOrArray = float | np.ndarray

TWO_PI = 2.0 * math.pi
# Newton/Halley stops once a step is below this (radians); the next iterate is then exact to
# rounding because Halley's method converges cubically.
KEPLER_STEP_TOLERANCE_RAD = 1e-13
KEPLER_MAX_ITERATIONS = 100
# Below |x| < 1 the series for x - sin x and sinh x - x replaces the cancelling difference.
_SERIES_LIMIT = 1.0
_SERIES_TERMS = 10


def eccentricity_array(e) -> np.ndarray:
    e_array = finite("eccentricity e", e)
    if np.any(e_array < 0.0):
        raise ValueError(f"eccentricity must be >= 0, got {e!r}")
    return e_array


def wrap_revolutions(angle_rad: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
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


def require_elliptic(e: np.ndarray) -> None:
    if np.any(e >= 1.0):
        raise ValueError(f"eccentric anomaly needs an elliptic orbit (e < 1), got e = {e!r}")


def eccentric_to_mean_anomaly(eccentric_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Mean anomaly from Kepler's equation M = E - e sin E (e < 1).

    Vallado 4th ed., section 2.2 (Kepler's equation); Curtis 3rd ed., eq. 3.14.
    Written as (1 - e) sin E + (E - sin E) to stay accurate near e = 1.
    """
    eccentric = finite("eccentric anomaly", eccentric_anomaly_rad)
    e_array = eccentricity_array(e)
    require_elliptic(e_array)
    return float_or_array((1.0 - e_array) * np.sin(eccentric) + _x_minus_sin(eccentric))


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
    m = finite("mean anomaly m_rad", m_rad)
    e_array = eccentricity_array(e)
    require_elliptic(e_array)
    m, e_array = np.broadcast_arrays(m, e_array)
    reduced, turns = wrap_revolutions(m)
    magnitude = np.abs(reduced)
    cube_bound = np.cbrt(6.0 * magnitude / (1.0 - math.pi**2 / 20.0))
    start = np.minimum(np.minimum(magnitude + e_array, math.pi), cube_bound)
    root = _solve(_ELLIPTIC, np.array(start), (magnitude, e_array), "elliptic Kepler equation")
    return float_or_array(np.copysign(root, reduced) + turns)


# --- hyperbolic ---------------------------------------------------------------------------------


def require_hyperbolic(e: np.ndarray) -> None:
    if np.any(e <= 1.0):
        raise ValueError(f"hyperbolic anomaly needs a hyperbolic orbit (e > 1), got e = {e!r}")


def hyperbolic_to_mean_anomaly(hyperbolic_anomaly_rad: ArrayLike, e: ArrayLike) -> FloatOrArray:
    """Hyperbolic mean anomaly M = e sinh H - H (e > 1).

    Vallado 4th ed., section 2.2; Curtis 3rd ed., section 3.6. Written as
    (e - 1) sinh H + (sinh H - H) to stay accurate near e = 1.
    """
    hyperbolic = finite("hyperbolic anomaly", hyperbolic_anomaly_rad)
    e_array = eccentricity_array(e)
    require_hyperbolic(e_array)
    return float_or_array((e_array - 1.0) * np.sinh(hyperbolic) + _sinh_minus_x(hyperbolic))


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
    m = finite("mean anomaly m_rad", m_rad)
    e_array = eccentricity_array(e)
    require_hyperbolic(e_array)
    m, e_array = np.broadcast_arrays(m, e_array)
    magnitude = np.abs(m)
    start = np.minimum(np.arcsinh(magnitude / (e_array - 1.0)), np.cbrt(6.0 * magnitude / e_array))
    root = _solve(_HYPERBOLIC, np.array(start), (magnitude, e_array), "hyperbolic Kepler equation")
    return float_or_array(np.copysign(root, m))


# --- parabolic ----------------------------------------------------------------------------------


def parabolic_to_mean_anomaly(parabolic_anomaly: ArrayLike) -> FloatOrArray:
    """Parabolic mean anomaly M = B + B^3 / 3 (Barker's equation).

    Vallado 4th ed., Algorithm 3 (n_p (t - T) = B + B^3/3 with n_p = 2 sqrt(mu/p^3)).
    """
    b = finite("parabolic anomaly B", parabolic_anomaly)
    return float_or_array(b + b**3 / 3.0)


def mean_to_parabolic_anomaly(m_rad: ArrayLike) -> FloatOrArray:
    """Parabolic anomaly B solving Barker's equation B + B^3 / 3 = M, in closed form.

    Vallado 4th ed., Algorithm 3 gives the real root of B^3 + 3B - 3M = 0 as B = 2 cot(2w)
    with cot(2s) = 3M/2, tan^3 w = tan s; the same root is written here as
    B = 2 sinh(asinh(3M/2) / 3) (since 2 sinh 3x = 8 sinh^3 x + 6 sinh x), which has no
    cancellation at small or large M. Curtis 3rd ed., eq. 3.32 is the Cardano form of the root.
    """
    m = finite("mean anomaly m_rad", m_rad)
    return float_or_array(2.0 * np.sinh(np.arcsinh(1.5 * m) / 3.0))
