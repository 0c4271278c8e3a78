"""Stumpff functions C(z) and S(z): the building blocks of universal-variable propagation.

Why a module of its own: one pair of functions serves elliptic (z > 0), parabolic (z = 0) and
hyperbolic (z < 0) motion, and keeping them accurate near z = 0 (a Maclaurin series where the
closed form cancels) is a numerical question apart from solving Kepler's problem;
``service.dynamics.kepler`` builds its universal functions U0..U3 on ``stumpff_cs``.

Sources: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 1
(c2, c3); Curtis, Orbital Mechanics for Engineering Students, 3rd ed., section 3.7.
"""

from __future__ import annotations

import math

import numpy as np

# Below this |z| the Stumpff functions come from their Maclaurin series: the closed form of S
# loses about 6 eps / |z| of relative accuracy as z -> 0, the series none.
_Z_SERIES = 1.0
# Eleven terms leave a truncation error below 1/22! ~ 1e-21 for |z| <= 1.
_SERIES_TERMS = 11
_C_COEFFS = tuple((-1.0) ** k / math.factorial(2 * k + 2) for k in range(_SERIES_TERMS))
_S_COEFFS = tuple((-1.0) ** k / math.factorial(2 * k + 3) for k in range(_SERIES_TERMS))


# The two series side by side, so that Horner's rule runs once over both (same arithmetic):
# row k holds the k-th coefficients of C and S.
_COEFFS = np.array([_C_COEFFS, _S_COEFFS]).T.copy()


# Up to this many samples the two series share one flat operand (per-call cost dominates);
# beyond it each series runs in place on its own (memory traffic dominates).
_SMALL_BATCH = 64


def _series(z: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """C and S from their Maclaurin series by Horner's rule (|z| <= 1)."""
    n = z.shape[0]
    if n <= _SMALL_BATCH:
        # Flat [C..., S...] operands: numpy's broadcasting costs more than the arithmetic here.
        coeffs = np.repeat(_COEFFS, n, axis=1)
        zz = np.concatenate((z, z))
        both = coeffs[-1].copy()
        for k in range(_SERIES_TERMS - 2, -1, -1):
            np.multiply(both, zz, out=both)
            np.add(both, coeffs[k], out=both)
        return both[:n], both[n:]
    cs = np.full_like(z, _C_COEFFS[-1])
    ss = np.full_like(z, _S_COEFFS[-1])
    for k in range(_SERIES_TERMS - 2, -1, -1):
        np.multiply(cs, z, out=cs)
        np.add(cs, _C_COEFFS[k], out=cs)
        np.multiply(ss, z, out=ss)
        np.add(ss, _S_COEFFS[k], out=ss)
    return cs, ss


def stumpff_cs(z: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Both Stumpff functions C(z) and S(z) of a 1-D float array (see ``stumpff_c``)."""
    pos = z > _Z_SERIES
    neg = z < -_Z_SERIES
    if not (pos.any() or neg.any()):
        # Every sample on the series (short arcs): no masks to gather and scatter.
        return _series(z)
    c = np.empty_like(z)
    s = np.empty_like(z)
    small = ~(pos | neg)
    if pos.any():
        zp = z[pos]
        x = np.sqrt(zp)
        # 1 - cos x = 2 sin^2(x/2) removes the cancellation of the textbook form.
        c[pos] = 2.0 * np.sin(0.5 * x) ** 2 / zp
        s[pos] = (x - np.sin(x)) / (zp * x)
    if neg.any():
        zn = -z[neg]
        x = np.sqrt(zn)
        c[neg] = 2.0 * np.sinh(0.5 * x) ** 2 / zn
        s[neg] = (np.sinh(x) - x) / (zn * x)
    if small.any():
        c[small], s[small] = _series(z[small])
    return c, s


def stumpff_c(z: np.ndarray | float) -> np.ndarray:
    """Stumpff function C(z) = (1 - cos sqrt z) / z, continued to z < 0 through cosh.

    Curtis, Orbital Mechanics for Engineering Students, 3rd ed., section 3.7; Vallado 4th ed.
    (2013), Algorithm 1 (his c2). Series for |z| <= 1: C(0) = 1/2, no cancellation near 0.
    z: dimensionless (alpha chi^2), float or array; returns an array of z's shape.
    """
    z_arr = np.asarray(z, dtype=float)
    with np.errstate(over="ignore"):
        return stumpff_cs(z_arr.reshape(-1))[0].reshape(z_arr.shape)


def stumpff_s(z: np.ndarray | float) -> np.ndarray:
    """Stumpff function S(z) = (sqrt z - sin sqrt z) / sqrt(z)^3, continued to z < 0.

    Curtis 3rd ed., section 3.7; Vallado 4th ed. (2013), Algorithm 1 (his c3). Series for
    |z| <= 1: S(0) = 1/6, no cancellation near 0. z as for ``stumpff_c``.
    """
    z_arr = np.asarray(z, dtype=float)
    with np.errstate(over="ignore"):
        return stumpff_cs(z_arr.reshape(-1))[1].reshape(z_arr.shape)
