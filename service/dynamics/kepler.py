"""Two-body propagation with universal variables (Kepler's problem), vectorised over samples.

One numpy call propagates many (state, time) pairs: elliptic, parabolic and hyperbolic
orbits, forward and backward in time. The universal anomaly chi solves the universal Kepler
equation by Newton's method with Halley's correction (``scipy.optimize.newton``'s array rules);
the state follows from the Lagrange coefficients f, g, f-dot and g-dot. The Stumpff functions
C and S behind the universal functions live in ``service.dynamics.stumpff``.

Sources: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013),
Algorithm 8 (KEPLER); Curtis, Orbital Mechanics for Engineering Students, 3rd ed.,
section 3.7 and Algorithms 3.3 and 3.4.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize.elementwise import find_root

from service.dynamics.stumpff import _C_COEFFS, _S_COEFFS, stumpff_cs
from service.dynamics.stumpff import _Z_SERIES as _STUMPFF_SERIES

# Newton iterates on y = chi / s with s = sqrt(mu) |dt| / r0 (the short-arc chi), where
# roots are of order 1; after a step below 1e-10, Halley's cubic convergence leaves y at
# rounding level, and the residual check below catches any sample where it does not.
_STEP_TOL = 1e-10
# Newton settles about 99% of samples within six iterations; the batch iterates as long as
# its slowest sample, so stragglers go to the bracketing solver, which is cheap for a few.
_NEWTON_MAXITER = 6
# |F(chi)| of the universal Kepler equation relative to the sizes of its terms: Newton's
# roots sit at rounding level (~1e-16) or far above it, so samples above _SETTLED_TOL go on
# to the bracketing solver; a result is accepted up to _RESIDUAL_TOL, which leaves room for
# sinh's amplification of rounding (sqrt(-z) eps <= 1.3e-13 under _HYPERBOLIC_CAP).
_SETTLED_TOL = 1e-15
_RESIDUAL_TOL = 1e-12
# Accepted |f gdot - fdot g - 1|, relative to the sizes of the two products.
_LAGRANGE_TOL = 1e-9
# Vallado's Algorithm 8 picks the parabolic guess for |alpha| < 1e-6 in canonical units
# (per Earth radius); scaled by r0 here so the switch does not depend on the body.
_PARABOLIC_ALPHA_R0 = 1e-6
# |dt| below this fraction of sqrt(r0^3 / mu) takes the first terms of the f and g series.
_SERIES_DT = 1e-20
# sqrt(-alpha) |chi| beyond which sinh overflows once multiplied by r0: the search stops there.
_HYPERBOLIC_CAP = 600.0


class KeplerConvergenceError(RuntimeError):
    """The universal Kepler equation was not solved to tolerance for some samples."""


def _universal(y, s, alpha):
    """U0, U1/s, U2/s, U3/s at chi = s y: U0 = 1 - zC, U1 = chi(1 - zS), U2 = chi^2 C, U3 = chi^3 S.

    Vallado 4th ed. (2013) Algorithm 8 writes them with c2 = C, c3 = S and psi = z. Divided
    by the per-sample scale s they stay normal numbers even where chi itself would underflow.
    """
    chi = s * y
    z = alpha * chi * chi
    c, st = stumpff_cs(z)
    return [1.0 - z * c, y * (1.0 - z * st), y * chi * c, y * chi * chi * st]


class _ScaledKepler:
    """Universal Kepler equation in y = chi / s, divided by s: G(y) = F(s y) / s = 0.

    F = r0 U1 + sigma0 U2 + U3 - sqrt(mu) dt with sigma0 = r0.v0 / sqrt(mu) (Curtis 3rd ed.
    Algorithm 3.3; Vallado 4th ed. Algorithm 8); dF/dchi = r0 U0 + sigma0 U1 + U2 = r and
    d2F/dchi2 = sigma0 U0 + (1 - alpha r0) U1. With s = sqrt(mu) |dt| / r0, sqrt(mu) dt / s
    is t = sign(dt) r0. ``_newton_halley`` evaluates G, G' and G'' together.
    """

    def __init__(self, s, r0n, sigma0, alpha, t):
        self.s, self.r0n, self.sigma0, self.alpha, self.t = s, r0n, sigma0, alpha, t


def _scaled_kepler(y, s, r0n, sigma0, alpha, t):
    """G(y) of ``_ScaledKepler``, elementwise, for scipy's bracketing solver."""
    _, v1, v2, v3 = _universal(y, s, alpha)
    return r0n * v1 + sigma0 * v2 + v3 - t


def _relative_residual(v1, v2, v3, r0n, sigma0, t):
    """|G| over the sum of its terms' sizes: rounding level when y is the root."""
    terms = (r0n * v1, sigma0 * v2, v3, -t)
    size = sum(np.abs(term) for term in terms)
    # size is 0 only for dt folded to exactly 0 (whole periods), where y = 0 is exact.
    return np.abs(sum(terms)) / np.where(size > 0.0, size, 1.0)


def _y_bound(alpha, r0n, h2, mu, s):
    """Largest |y| = |chi| / s the root can have: the bracket, and the guard for guesses.

    dchi/dt = sqrt(mu) / r and r >= r_p, so |chi| <= sqrt(mu) |dt| / r_p, i.e. |y| <= r0 / r_p;
    with |dt| <= P/2 an ellipse spans |dE| <= pi + 2e, so |chi| <= (pi + 2) / sqrt(alpha);
    past sqrt(-alpha) |chi| = 600 a hyperbolic state would overflow: the bracket stops there.
    """
    p = h2 / mu
    e = np.sqrt(np.maximum(1.0 - p * alpha, 0.0))  # 1 - p alpha = e^2, >= 0 up to rounding
    by_periapsis = np.where(p > 0.0, r0n * (1.0 + e) / p, np.inf)
    cap = np.where(alpha > 0.0, np.pi + 2.0, _HYPERBOLIC_CAP) / (np.sqrt(np.abs(alpha)) * s)
    # A margin: 1 - p alpha loses digits for near-circular orbits, leaving e good to ~1e-8.
    return np.minimum(by_periapsis, cap) * (1.0 + 1e-6)


def _initial_y(r0n, rv, alpha, mu, sqrt_mu, dt, h2, s, bound):
    """Vallado 4th ed. (2013) Algorithm 8 starting values of chi, over s, guarded."""
    alpha_r0 = alpha * r0n
    sgn = np.sign(dt)
    y0 = np.empty_like(dt)
    ell = alpha_r0 > _PARABOLIC_ALPHA_R0
    hyp = alpha_r0 < -_PARABOLIC_ALPHA_R0
    par = ~(ell | hyp)
    y0[ell] = (alpha_r0 * sgn)[ell]  # chi = sqrt(mu) alpha dt
    if hyp.any():
        a = 1.0 / alpha[hyp]
        num = -2.0 * mu[hyp] * alpha[hyp] * dt[hyp]
        den = rv[hyp] + sgn[hyp] * np.sqrt(-mu[hyp] * a) * (1.0 - alpha_r0[hyp])
        y0[hyp] = sgn[hyp] * np.sqrt(-a) * np.log(num / den) / s[hyp]
    if par.any():
        # Barker's equation by Vallado's trigonometric root: cot 2s' = 3 sqrt(mu/p^3) dt,
        # tan^3 w = tan s', chi = sqrt(p) 2 cot 2w = sqrt(p) (1/tan w - tan w).
        p = h2[par] / mu[par]
        x = 3.0 * np.sqrt(mu[par] / p**3) * dt[par]
        tan_w = np.cbrt(np.tan(0.5 * np.arctan2(1.0, x)))
        y0[par] = np.sqrt(p) * (1.0 / tan_w - tan_w) / s[par]
    # The log formula has the wrong sign for short hyperbolic arcs; such guesses, and any
    # outside the bracket, start from the short-arc value chi = sqrt(mu) dt / r0 (y = +-1).
    bad = ~np.isfinite(y0) | (y0 * sgn <= 0.0) | (np.abs(y0) > bound)
    y0[bad] = (sgn * np.minimum(1.0, bound))[bad]
    return y0


def _newton_halley(eq, y0: np.ndarray) -> np.ndarray:
    """The root of G(y) by ``scipy.optimize.newton``'s array Halley iteration, step for step.

    scipy's rules exactly (every sample with a non-zero derivative steps each iteration until
    all steps are below the tolerance; when no sample converges it raises, and the caller
    then kept the last iterate it had evaluated), without its per-call and per-derivative
    overhead, which dominated the cost of small batches.
    """
    s, r0n, sigma0, alpha, t = eq.s, eq.r0n, eq.sigma0, eq.alpha, eq.t
    p = np.array(y0, dtype=float, copy=True)
    failures = np.ones_like(p, dtype=bool)
    nz_der = np.ones_like(failures)
    evaluated = p
    for _ in range(_NEWTON_MAXITER):
        v0, v1, v2, v3 = _universal(p, s, alpha)
        evaluated = p.copy()
        fval = r0n * v1 + sigma0 * v2 + v3 - t
        if not fval.any():
            return p
        fder = r0n * v0 + s * (sigma0 * v1 + v2)
        nz_der = fder != 0
        if not nz_der.any():
            return p
        fder2 = s * (sigma0 * v0 + (1.0 - alpha * r0n) * s * v1)
        if nz_der.all():
            dp = fval / fder
            dp = dp / (1.0 - 0.5 * dp * fder2 / fder)
            p -= dp
            failures = np.abs(dp) >= _STEP_TOL
            if not failures.any():
                return p
        else:
            dp = fval[nz_der] / fder[nz_der]
            dp = dp / (1.0 - 0.5 * dp * fder2[nz_der] / fder[nz_der])
            p[nz_der] -= dp
            failures[nz_der] = np.abs(dp) >= _STEP_TOL
            if not failures[nz_der].any():
                return p
    if not (~nz_der & failures).any() and failures.all():
        return evaluated  # where scipy raised for want of any converged sample
    return p


def _solve_y(eq, y0, bound):
    """U0 and U1..U3 over s at the root: Newton-Halley from y0, bracketing where needed."""
    y = _newton_halley(eq, y0)
    u = _universal(y, eq.s, eq.alpha)
    unsettled = ~(_relative_residual(*u[1:], eq.r0n, eq.sigma0, eq.t) <= _SETTLED_TOL)
    if unsettled.any():
        # Newton from Vallado's guesses can wander for high-e arcs through periapsis and for
        # hyperbolic states far out and inbound; Chandrupatla's bracketing method on
        # [0, bound] cannot: G(0) = -t and G increases with y (dG/dy = r > 0).
        i = np.flatnonzero(unsettled)
        forward = eq.t[i] > 0.0
        bracket = (np.where(forward, 0.0, -bound[i]), np.where(forward, bound[i], 0.0))
        args = (eq.s[i], eq.r0n[i], eq.sigma0[i], eq.alpha[i], eq.t[i])
        y[i] = find_root(_scaled_kepler, bracket, args=args).x
        for full, part in zip(u, _universal(y[i], eq.s[i], eq.alpha[i]), strict=True):
            full[i] = part
    return u


def _solve(r0, v0, dt, mu):
    """Propagate n >= 1 samples with dt != 0; arrays (n, 3), (n, 3), (n,), (n,)."""
    n = dt.shape[0]
    if n == 1:
        one = _solve_one(r0[0].tolist(), v0[0].tolist(), float(dt[0]), float(mu[0]))
        if one is not None:
            return np.array([one[0]]), np.array([one[1]])
        # scipy's newton takes a scalar code path with other stopping rules for one sample;
        # two copies keep single calls on the same algorithm as batches.
        r, v = _solve(np.repeat(r0, 2, 0), np.repeat(v0, 2, 0), np.repeat(dt, 2), np.repeat(mu, 2))
        return r[:1], v[:1]
    sqrt_mu = np.sqrt(mu)
    r0n = np.sqrt(np.einsum("ij,ij->i", r0, r0))
    rv = np.einsum("ij,ij->i", r0, v0)
    alpha = 2.0 / r0n - np.einsum("ij,ij->i", v0, v0) / mu
    (x0, y0, z0), (vx0, vy0, vz0) = r0.T, v0.T
    h2 = (y0 * vz0 - z0 * vy0) ** 2 + (z0 * vx0 - x0 * vz0) ** 2 + (x0 * vy0 - y0 * vx0) ** 2

    # Elliptic motion repeats each period: fold dt into [-P/2, P/2] so that many-orbit spans
    # cost no more iterations than one and chi stays within one revolution.
    dt_r = dt.copy()
    ell = np.flatnonzero(alpha > 0.0)
    if ell.size:
        period = 2.0 * np.pi / (sqrt_mu[ell] * alpha[ell] ** 1.5)
        revs = np.round(dt[ell] / period)
        fold = revs != 0.0
        dt_r[ell[fold]] = dt[ell[fold]] - revs[fold] * period[fold]

    s = sqrt_mu * np.abs(dt_r) / r0n
    s[s == 0.0] = 1.0  # dt folded to exactly 0: any scale finds y = 0
    bound = _y_bound(alpha, r0n, h2, mu, s)
    eq = _ScaledKepler(s, r0n, rv / sqrt_mu, alpha, np.sign(dt_r) * r0n)
    _, v1, v2, v3 = _solve_y(eq, _initial_y(r0n, rv, alpha, mu, sqrt_mu, dt_r, h2, s, bound), bound)
    residual = _relative_residual(v1, v2, v3, eq.r0n, eq.sigma0, eq.t)
    _require(residual, _RESIDUAL_TOL, "did not converge", "relative residual of Kepler's eq.")

    # Lagrange coefficients in universal variables (U_k = s v_k): Curtis 3rd ed.
    # Algorithm 3.4, Vallado 4th ed. Algorithm 8.
    f = 1.0 - s * v2 / r0n
    g = dt_r - s * v3 / sqrt_mu
    r = f[:, None] * r0 + g[:, None] * v0
    rn = np.sqrt(np.einsum("ij,ij->i", r, r))
    fdot = -sqrt_mu * s * v1 / (rn * r0n)
    gdot = 1.0 - s * v2 / rn
    v = fdot[:, None] * r0 + gdot[:, None] * v0
    # f gdot - fdot g = 1 follows from conserved angular momentum: a cheap guard that chi,
    # |r| and the coefficients agree, judged against the sizes of the two products.
    fg, gf = f * gdot, fdot * g
    lagrange = np.abs(fg - gf - 1.0) / np.maximum(1.0, np.abs(fg) + np.abs(gf))
    _require(lagrange, _LAGRANGE_TOL, "failed the Lagrange identity f*gdot - fdot*g = 1", "error")
    return r, v


def _dot(a: list, b: list) -> float:
    """``np.einsum("ij,ij->i")`` of one row, summed in the order numpy sums three terms."""
    return a[0] * b[0] + a[2] * b[2] + a[1] * b[1]


def _stumpff_one(z: float) -> tuple[float, float]:
    """``stumpff_cs`` for one float, in plain Python arithmetic (the same formulas)."""
    if z > _STUMPFF_SERIES:
        x = math.sqrt(z)
        half = math.sin(0.5 * x)
        return 2.0 * (half * half) / z, (x - math.sin(x)) / (z * x)
    if z < -_STUMPFF_SERIES:
        zn = -z
        x = math.sqrt(zn)
        half = float(np.sinh(0.5 * x))
        return 2.0 * (half * half) / zn, (float(np.sinh(x)) - x) / (zn * x)
    c, s = _C_COEFFS[-1], _S_COEFFS[-1]
    for k in range(len(_C_COEFFS) - 2, -1, -1):
        c = c * z + _C_COEFFS[k]
        s = s * z + _S_COEFFS[k]
    return c, s


def _solve_one_unguarded(r0: list, v0: list, dt: float, mu: float) -> tuple[list, list] | None:
    """``_solve`` for one sample in plain Python floats: Python's per-call cost is a few
    microseconds where numpy's is tens, and a single state is the common call (trajectory
    building, root searches along an arc). Same formulas and order of operations, same
    Newton-Halley iteration as scipy's array ``newton`` (tolerance, iteration cap, stopping
    rules), and numpy's own sinh, pow, log, tan, cbrt and arctan2 (which can differ from
    the math module's in the last bit), so results equal the array path's bit for bit.
    Returns None whenever that path would do anything else (a zero or non-finite step, no
    convergence in ``_NEWTON_MAXITER``, a root not settled, a failed guard): the caller then
    takes the array path, which decides.
    """
    x0, y0, z0 = r0
    vx0, vy0, vz0 = v0
    sqrt_mu = math.sqrt(mu)
    r0n = math.sqrt(_dot(r0, r0))
    rv = _dot(r0, v0)
    alpha = 2.0 / r0n - _dot(v0, v0) / mu
    hx, hy, hz = y0 * vz0 - z0 * vy0, z0 * vx0 - x0 * vz0, x0 * vy0 - y0 * vx0
    h2 = hx * hx + hy * hy + hz * hz
    if alpha > 0.0:
        period = 2.0 * math.pi / (sqrt_mu * float(np.power(alpha, 1.5)))
        revs = float(round(dt / period))  # half to even, as np.round
        if revs != 0.0:
            dt = dt - revs * period
    s = sqrt_mu * abs(dt) / r0n
    if s == 0.0:
        s = 1.0
    # _y_bound
    p = h2 / mu
    e = math.sqrt(max(1.0 - p * alpha, 0.0))
    by_periapsis = r0n * (1.0 + e) / p if p > 0.0 else math.inf
    if alpha == 0.0:
        return None
    cap = (math.pi + 2.0 if alpha > 0.0 else _HYPERBOLIC_CAP) / (math.sqrt(abs(alpha)) * s)
    bound = min(by_periapsis, cap) * (1.0 + 1e-6)
    # _initial_y
    alpha_r0 = alpha * r0n
    sgn = (dt > 0.0) - (dt < 0.0)
    if alpha_r0 > _PARABOLIC_ALPHA_R0:
        y = alpha_r0 * sgn
    elif alpha_r0 < -_PARABOLIC_ALPHA_R0:
        a = 1.0 / alpha
        ratio = (-2.0 * mu * alpha * dt) / (rv + sgn * math.sqrt(-mu * a) * (1.0 - alpha_r0))
        y = sgn * math.sqrt(-a) * float(np.log(ratio)) / s if ratio > 0.0 else math.nan
    else:
        x = 3.0 * math.sqrt(mu / float(np.power(p, 3.0))) * dt
        tan_w = float(np.cbrt(np.tan(0.5 * float(np.arctan2(1.0, x)))))
        y = math.sqrt(p) * (1.0 / tan_w - tan_w) / s if tan_w != 0.0 else math.nan
    if not math.isfinite(y) or y * sgn <= 0.0 or abs(y) > bound:
        y = sgn * min(1.0, bound)
    # Newton-Halley on G(y) (``_ScaledKepler``), scipy's array rules for one sample.
    sigma0 = rv / sqrt_mu
    t = sgn * r0n
    one_minus_ar0 = 1.0 - alpha * r0n
    for _ in range(_NEWTON_MAXITER):
        chi = s * y
        z = alpha * chi * chi
        c, st = _stumpff_one(z)
        u0, u1, u2 = 1.0 - z * c, y * (1.0 - z * st), y * chi * c
        g = r0n * u1 + sigma0 * u2 + y * chi * chi * st - t
        if g == 0.0:
            break
        dg = r0n * u0 + s * (sigma0 * u1 + u2)
        if dg == 0.0 or not math.isfinite(g) or not math.isfinite(dg):
            return None
        d2g = s * (sigma0 * u0 + one_minus_ar0 * s * u1)
        step = g / dg
        step = step / (1.0 - 0.5 * step * d2g / dg)
        y -= step
        if abs(step) < _STEP_TOL:
            break
    else:
        return None
    chi = s * y
    z = alpha * chi * chi
    c, st = _stumpff_one(z)
    u1, u2, u3 = y * (1.0 - z * st), y * chi * c, y * chi * chi * st
    terms = (r0n * u1, sigma0 * u2, u3, -t)
    size = abs(terms[0]) + abs(terms[1]) + abs(terms[2]) + abs(terms[3])
    total = abs(terms[0] + terms[1] + terms[2] + terms[3])
    if not total / (size if size > 0.0 else 1.0) <= _SETTLED_TOL:
        return None
    f = 1.0 - s * u2 / r0n
    g = dt - s * u3 / sqrt_mu
    r = [f * x0 + g * vx0, f * y0 + g * vy0, f * z0 + g * vz0]
    rn = math.sqrt(_dot(r, r))
    fdot = -sqrt_mu * s * u1 / (rn * r0n)
    gdot = 1.0 - s * u2 / rn
    v = [fdot * x0 + gdot * vx0, fdot * y0 + gdot * vy0, fdot * z0 + gdot * vz0]
    fg, gf = f * gdot, fdot * g
    if not abs(fg - gf - 1.0) / max(1.0, abs(fg) + abs(gf)) <= _LAGRANGE_TOL:
        return None
    if not all(map(math.isfinite, r + v)):
        return None
    return r, v


def _require(error: np.ndarray, tol: float, verdict: str, what: str) -> None:
    """Raise KeplerConvergenceError naming the samples whose error exceeds tol (or is NaN)."""
    bad = ~(error <= tol)
    if bad.any():
        worst = f"{np.max(error[bad]):.3g}" if np.isfinite(error[bad]).all() else "non-finite"
        raise KeplerConvergenceError(
            f"Kepler propagation {verdict} for {int(bad.sum())} of {error.size} samples: "
            f"worst {what} {worst} (tolerance {tol:g})"
        )


def _checked(value, name: str, vector: bool) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if vector and (arr.ndim not in (1, 2) or arr.shape[-1] != 3):
        raise ValueError(f"{name} must have shape (3,) or (N, 3), got {arr.shape}")
    if not vector and arr.ndim > 1:
        raise ValueError(f"{name} must be a scalar or have shape (N,), got {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ValueError(f"{name} contains non-finite values")
    return arr


_SCALARS = (float, int, np.floating, np.integer)


def _propagate_one(r0_km, v0_km_s, dt_s, mu_km3_s2) -> tuple[np.ndarray, np.ndarray] | None:
    """``propagate`` of one (3,) float state by a scalar time, or None for the general path.

    The general path does the argument checks and raises; this one only takes inputs that
    would pass them, and hands anything unusual (a very short or zero step, no settled root)
    back to it.
    """
    if not (
        isinstance(r0_km, np.ndarray)
        and isinstance(v0_km_s, np.ndarray)
        and r0_km.shape == (3,)
        and v0_km_s.shape == (3,)
        and r0_km.dtype == np.float64
        and v0_km_s.dtype == np.float64
        and isinstance(dt_s, _SCALARS)
        and isinstance(mu_km3_s2, _SCALARS)
    ):
        return None
    r0, v0 = r0_km.tolist(), v0_km_s.tolist()
    dt, mu = float(dt_s), float(mu_km3_s2)
    if not all(map(math.isfinite, r0 + v0)) or not (math.isfinite(dt) and math.isfinite(mu)):
        return None
    if mu <= 0.0:
        return None
    r0n = math.sqrt(_dot(r0, r0))
    if r0n == 0.0 or abs(dt) < _SERIES_DT * r0n * math.sqrt(r0n / mu):
        return None
    one = _solve_one(r0, v0, dt, mu)
    if one is None:
        return None
    return np.array(one[0]), np.array(one[1])


def _solve_one(r0: list, v0: list, dt: float, mu: float) -> tuple[list, list] | None:
    try:
        return _solve_one_unguarded(r0, v0, dt, mu)
    except (ArithmeticError, ValueError):
        # Python raises where numpy gives inf or nan: the array path handles those.
        return None


def propagate(r0_km, v0_km_s, dt_s, mu_km3_s2) -> tuple[np.ndarray, np.ndarray]:
    """Position and velocity after dt_s of two-body motion, for many samples in one call.

    Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 8
    (KEPLER); Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Algorithms 3.3
    and 3.4. Elliptic, parabolic and hyperbolic orbits; dt may be negative.

    r0_km: position, km, shape (3,) or (N, 3). v0_km_s: velocity, km/s, (3,) or (N, 3).
    dt_s: time of flight, s, scalar or (N,). mu_km3_s2: GM, km^3/s^2, scalar or (N,).
    Leading shapes broadcast (one state many times, many states one time, N pairs);
    returns (r_km, v_km_s) of shape (3,) when nothing is batched, else (N, 3).
    Samples with dt_s == 0 return their input exactly.

    Raises ValueError for non-finite input, a zero position, mu <= 0 or bad shapes;
    KeplerConvergenceError (a RuntimeError) if Kepler's equation is not solved to tolerance.
    """
    one = _propagate_one(r0_km, v0_km_s, dt_s, mu_km3_s2)
    if one is not None:
        return one
    r0 = _checked(r0_km, "r0_km", vector=True)
    v0 = _checked(v0_km_s, "v0_km_s", vector=True)
    dt = _checked(dt_s, "dt_s", vector=False)
    mu = _checked(mu_km3_s2, "mu_km3_s2", vector=False)
    if np.any(mu <= 0.0):
        raise ValueError("mu_km3_s2 must be positive")
    try:
        lead = np.broadcast_shapes(r0.shape[:-1], v0.shape[:-1], dt.shape, mu.shape)
    except ValueError:
        raise ValueError(
            f"cannot broadcast r0_km {r0.shape}, v0_km_s {v0.shape}, dt_s {dt.shape}, "
            f"mu_km3_s2 {mu.shape} together"
        ) from None
    n = math.prod(lead) if lead else 1
    r0 = np.broadcast_to(r0, (*lead, 3)).reshape(n, 3)
    v0 = np.broadcast_to(v0, (*lead, 3)).reshape(n, 3)
    dt = np.broadcast_to(dt, lead).reshape(n)
    mu = np.broadcast_to(mu, lead).reshape(n)
    r0n = np.sqrt(np.einsum("ij,ij->i", r0, r0))
    if np.any(r0n == 0.0):
        raise ValueError("r0_km must be non-zero")

    r = r0.copy()
    v = v0.copy()
    # Below 1e-20 of the orbit's time unit sqrt(r0^3 / mu) the Lagrange series f = 1, g = dt,
    # fdot = -mu dt / r0^3, gdot = 1 is exact to rounding (the next terms are ~1e-40), and
    # the universal anomaly would fall among subnormal numbers, where it loses its digits.
    short = np.abs(dt) < _SERIES_DT * r0n * np.sqrt(r0n / mu)
    tiny = np.flatnonzero(short & (dt != 0.0))
    r[tiny] += dt[tiny, None] * v0[tiny]
    v[tiny] -= (mu[tiny] * dt[tiny] / r0n[tiny] ** 3)[:, None] * r0[tiny]
    if not short.all():
        idx = np.flatnonzero(~short)
        # A wandering Newton iterate may overflow; every result is checked inside _solve.
        with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
            r[idx], v[idx] = _solve(r0[idx], v0[idx], dt[idx], mu[idx])
    return r.reshape(*lead, 3), v.reshape(*lead, 3)


def propagate_many_times(r0_km, v0_km_s, times_s, mu_km3_s2) -> tuple[np.ndarray, np.ndarray]:
    """States at each of several times along one arc; ``propagate`` with one state.

    Vallado 4th ed. (2013) Algorithm 8, as ``propagate``.

    r0_km: (3,) km. v0_km_s: (3,) km/s. times_s: (T,) s after the state's epoch.
    mu_km3_s2: GM, km^3/s^2. Returns (r_km, v_km_s), each (T, 3).
    """
    if np.shape(r0_km) != (3,) or np.shape(v0_km_s) != (3,):
        raise ValueError("propagate_many_times takes one state: r0_km and v0_km_s of shape (3,)")
    if np.ndim(times_s) != 1:
        raise ValueError(f"times_s must have shape (T,), got {np.shape(times_s)}")
    return propagate(r0_km, v0_km_s, times_s, mu_km3_s2)
