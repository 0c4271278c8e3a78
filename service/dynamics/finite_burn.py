"""A burn flown with finite thrust, compared with the impulsive model the plan assumes.

The finite model integrates two-body gravity plus a constant thrust held along a fixed
inertial unit direction (the planned impulsive delta-v direction), with the mass falling at
F / (Isp g0). The impulsive model coasts to the burn's mid-point, adds the whole delta-v
there, and coasts on to cutoff. Comparing the two at cutoff tells how good the impulsive
approximation is for this burn (Robbins, "An analytical study of the impulsive
approximation", AIAA Journal 4(8), 1966, from memory).

The mid-point convention carries a bias of first order in the burn time: at constant thrust
the acceleration grows as the mass drops, so the centre of the thrust impulse falls after
the mid-point, by about t_b dv / (12 c) for dv << c (c = Isp g0). It shows in the state
differences and, for burns across the velocity, in the loss.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.integrate import solve_ivp

from service.dynamics import rocket
from service.dynamics.bodies import G0_M_S2
from service.dynamics.kepler import propagate

# DOP853 at these tolerances keeps a LEO state to well below a millimetre over a burn
# lasting a good fraction of an orbit; the absolute parts matter only for components near 0
# (km, km/s; the mass part is scaled by the initial mass).
_RTOL = 1e-12
_ATOL_KM = 1e-9
_ATOL_KM_S = 1e-12

# Below this |cos| of the angle between the burn and the velocity the energy-equivalent
# loss mostly measures second-order energy changes (an impulse across the velocity changes
# the energy only by s^2 / 2), so the result carries a note saying so.
_MIN_ALONG_TRACK_COS = 0.5


@dataclass(frozen=True)
class FiniteBurnResult:
    """Finite-burn state at cutoff next to the impulsive model's, and the finite-burn loss.

    ``position_difference_km`` and ``velocity_difference_m_s`` are the magnitudes of
    finite minus impulsive at the cutoff epoch. ``equivalent_impulsive_delta_v_m_s`` and
    ``loss_m_s`` are defined in :func:`simulate_finite_burn`; both are None when no
    equivalent impulse exists, and ``note`` says why. ``note`` also warns when the loss is
    ill-suited to the burn's direction; it is None otherwise. ``duration_s`` is the burn
    time (ignition to cutoff).
    """

    r_cutoff_km: np.ndarray
    v_cutoff_km_s: np.ndarray
    mass_cutoff_kg: float
    r_impulsive_km: np.ndarray
    v_impulsive_km_s: np.ndarray
    position_difference_km: float
    velocity_difference_m_s: float
    equivalent_impulsive_delta_v_m_s: float | None
    loss_m_s: float | None
    duration_s: float
    note: str | None = None


def _vector3(name: str, value: ArrayLike) -> np.ndarray:
    arr = np.array(value, dtype=float)
    if arr.shape != (3,):
        raise ValueError(f"{name} must have shape (3,), got {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ValueError(f"{name} must be finite, got {arr.tolist()}")
    return arr


def _scalar(name: str, value: float, *, allow_zero: bool = False) -> float:
    x = float(value)
    if not np.isfinite(x) or x < 0.0 or (x == 0.0 and not allow_zero):
        limit = "non-negative" if allow_zero else "positive"
        raise ValueError(f"{name} must be finite and {limit}, got {value!r}")
    return x


def _energy_km2_s2(r_km: np.ndarray, v_km_s: np.ndarray, mu_km3_s2: float) -> float:
    return float(v_km_s @ v_km_s / 2.0 - mu_km3_s2 / np.linalg.norm(r_km))


@dataclass(frozen=True)
class _ThrustArc:
    """One constant-thrust arc, checked: start state, unit direction, km/s^2 force, mass flow."""

    r0_km: np.ndarray
    v0_km_s: np.ndarray
    m0_kg: float
    u: tuple[float, float, float]
    thrust_kn: float  # N / 1000: with mass in kg, km/s^2
    mdot_kg_s: float
    duration_s: float


def _thrust_arc(r_km, v_km_s, mass_kg, direction, thrust_n, isp_s, duration_s) -> _ThrustArc:
    r0 = _vector3("r_km", r_km)
    v0 = _vector3("v_km_s", v_km_s)
    u = _vector3("direction", direction)
    m0 = _scalar("mass_kg", mass_kg)
    thrust = _scalar("thrust_n", thrust_n, allow_zero=True)
    isp = _scalar("isp_s", isp_s)
    duration = _scalar("duration_s", duration_s, allow_zero=True)
    u_norm = np.linalg.norm(u)
    if u_norm == 0.0:
        raise ValueError("thrust direction must be a non-zero vector")
    if np.linalg.norm(r0) == 0.0:
        raise ValueError("position must not be zero")
    mdot = thrust / (isp * G0_M_S2)
    if mdot * duration >= m0:
        raise ValueError(
            f"burn of {duration} s at {mdot} kg/s would consume the whole {m0} kg mass"
        )
    ux, uy, uz = (u / u_norm).tolist()
    return _ThrustArc(r0, v0, m0, (ux, uy, uz), thrust / 1000.0, mdot, duration)


# At most this many burns share one integration: their step sizes are set by the hardest of
# them, so a long burn in a large group would make every other one take its small steps.
_BURNS_PER_INTEGRATION = 8


def _fly_arcs(arcs: list[_ThrustArc], mu: float) -> list[tuple[np.ndarray, np.ndarray, float]]:
    """(r_km, v_km_s, mass_kg) at the end of each arc; zero-length arcs end where they start.

    Arcs of similar duration are integrated together, up to ``_BURNS_PER_INTEGRATION`` in
    one ``solve_ivp`` call, each in its own normalised time tau = t / duration in [0, 1]
    (dy/dtau = duration * dy/dt), so one call flies them all to their own cutoffs.
    """
    ends: list = [(arc.r0_km, arc.v0_km_s, arc.m0_kg) for arc in arcs]
    moving = sorted((k for k, arc in enumerate(arcs) if arc.duration_s > 0.0),
                    key=lambda k: arcs[k].duration_s)  # fmt: skip
    for first in range(0, len(moving), _BURNS_PER_INTEGRATION):
        group = moving[first : first + _BURNS_PER_INTEGRATION]
        flown = _integrate([arcs[k] for k in group], mu)
        for k, end in zip(group, flown, strict=True):
            ends[k] = end
    return ends


def _integrate(arcs: list[_ThrustArc], mu: float) -> list[tuple[np.ndarray, np.ndarray, float]]:
    """One solve_ivp (DOP853, rtol 1e-12) over the stacked states of ``arcs``, tau in [0, 1]."""
    terms = [(*arc.u, arc.thrust_kn, arc.mdot_kg_s, arc.duration_s) for arc in arcs]

    def rhs(_tau: float, y: np.ndarray) -> np.ndarray:
        # About 70 calls per integration: plain floats instead of small arrays. Per arc the
        # same arithmetic as -mu / |r|^3 r + (F / m) u with numpy's scalar power for |r|^3,
        # scaled by the arc's duration.
        values = y.tolist()
        out: list[float] = []
        for k, (ux, uy, uz, thrust_kn, mdot, duration) in enumerate(terms):
            x, yy, z, vx, vy, vz, mass = values[7 * k : 7 * k + 7]
            gravity = -mu / float(np.float64(math.sqrt(x * x + yy * yy + z * z)) ** 3)
            push = thrust_kn / mass
            out += (
                duration * vx,
                duration * vy,
                duration * vz,
                duration * (gravity * x + push * ux),
                duration * (gravity * yy + push * uy),
                duration * (gravity * z + push * uz),
                -duration * mdot,
            )
        return np.array(out)

    y0 = np.concatenate([np.concatenate((a.r0_km, a.v0_km_s, (a.m0_kg,))) for a in arcs])
    atol = np.concatenate([[_ATOL_KM] * 3 + [_ATOL_KM_S] * 3 + [_RTOL * a.m0_kg] for a in arcs])
    sol = solve_ivp(rhs, (0.0, 1.0), y0, method="DOP853", rtol=_RTOL, atol=atol)
    if not sol.success:
        raise RuntimeError(f"finite-burn integration failed: {sol.message}")
    y = sol.y[:, -1]
    if not np.all(np.isfinite(y)):
        raise RuntimeError("finite-burn integration produced a non-finite state")
    return [(y[7 * k : 7 * k + 3].copy(), y[7 * k + 3 : 7 * k + 6].copy(), float(y[7 * k + 6]))
            for k in range(len(arcs))]  # fmt: skip


def propagate_constant_thrust(
    r_km: ArrayLike,
    v_km_s: ArrayLike,
    mass_kg: float,
    direction: ArrayLike,
    thrust_n: float,
    isp_s: float,
    duration_s: float,
    mu_km3_s2: float,
) -> tuple[np.ndarray, np.ndarray, float]:
    """Integrate two-body motion with constant thrust along a fixed inertial direction.

    Equations of motion: r'' = -mu r / |r|^3 + (F / m) u, m' = -F / (Isp g0) (Curtis,
    Orbital Mechanics for Engineering Students, 3rd ed., chapter 6, non-impulsive orbital
    maneuvers, from memory), integrated with scipy.integrate.solve_ivp, DOP853,
    rtol 1e-12, in normalised time tau = t / duration. ``thrust_n`` may be 0 (pure
    two-body coast, useful as a check).

    Parameters: ``r_km`` (3,) km and ``v_km_s`` (3,) km/s at the start; ``mass_kg`` > 0;
    ``direction`` (3,) any non-zero length (normalised here); ``thrust_n`` N (>= 0);
    ``isp_s`` s (> 0); ``duration_s`` s (>= 0); ``mu_km3_s2`` km^3/s^2 (> 0).
    Returns (r_km, v_km_s, mass_kg) at the end. Raises ValueError on bad input and
    RuntimeError (with the solver's message) if the integration fails.
    """
    arc = _thrust_arc(r_km, v_km_s, mass_kg, direction, thrust_n, isp_s, duration_s)
    return _fly_arcs([arc], _scalar("mu_km3_s2", mu_km3_s2))[0]


def _equivalent_impulse_km_s(
    v_c: np.ndarray, r_c: np.ndarray, u: np.ndarray, energy: float, planned: float, mu: float
) -> float | None:
    """Root s of |v_c + s u|^2 / 2 - mu / |r_c| = energy nearest ``planned``; None if none.

    s^2 + 2 b s + c = 0 with b = v_c . u and c = 2 (E_c - energy). The roots are taken as
    q = -(b + sign(b) sqrt(b^2 - c)) and c / q, which avoids cancellation when s << |v_c|
    (Press et al., Numerical Recipes, 3rd ed., section 5.6, from memory).
    """
    b = float(v_c @ u)
    c = 2.0 * (_energy_km2_s2(r_c, v_c, mu) - energy)
    disc = b * b - c
    if disc < 0.0:
        return None
    q = -(b + np.copysign(np.sqrt(disc), b))
    if q == 0.0:
        return 0.0
    roots = (q, c / q)
    return float(min(roots, key=lambda s: abs(s - planned)))


def simulate_finite_burn(
    r_ignition_km: ArrayLike,
    v_ignition_km_s: ArrayLike,
    mass_ignition_kg: float,
    delta_v_inertial_m_s: ArrayLike,
    thrust_n: float,
    isp_s: float,
    mu_km3_s2: float,
) -> FiniteBurnResult:
    """Fly one burn with finite thrust and compare it with the mid-point impulsive model.

    Duration: exact constant-thrust time from the rocket equation
    (:func:`service.dynamics.rocket.burn_duration_s`). Finite model: thrust along the fixed
    inertial unit vector u = dv / |dv| from ignition to cutoff
    (:func:`propagate_constant_thrust`). Impulsive model: Kepler coast to the mid-point
    (ignition + duration / 2), add dv, coast to cutoff (universal-variable propagation).

    Finite-burn loss (burnproof's definition): the equivalent impulsive delta-v is the
    impulse s along the same u, applied to the impulsive model's pre-burn mid-point state
    (r_c, v_c), that gives the same specific orbital energy as the finite burn's final
    orbit: |v_c + s u|^2 / 2 - mu / |r_c| = E_finite, a quadratic in s solved in closed
    form, taking the root nearest the planned |dv|. loss = |dv| - s; positive means the
    finite burn achieves less than the impulsive model. If no real root exists (the finite
    burn ends below the lowest energy an impulse along u can reach, in practice only for
    burns nearly perpendicular to the velocity), equivalent and loss are None and ``note``
    says so. Energy is the measure because it sets the semi-major axis and period the
    maneuver is planned for; pointing errors show in the state differences instead. For
    burns mostly across the velocity (|cos(u, v_c)| < 0.5) the loss is still given but
    ``note`` warns that it is ill-suited there: such an impulse changes the energy only at
    second order, so small energy differences become large (even negative) losses.

    Parameters: ``r_ignition_km`` (3,) km and ``v_ignition_km_s`` (3,) km/s at ignition;
    ``mass_ignition_kg`` kg (> 0); ``delta_v_inertial_m_s`` (3,) planned impulsive delta-v in
    inertial components, m/s (non-zero); ``thrust_n`` N (> 0); ``isp_s`` s (> 0);
    ``mu_km3_s2`` km^3/s^2 (> 0). ``simulate_finite_burns`` does many at once.
    Raises ValueError on bad input, RuntimeError if the integration fails.
    """
    burn = FiniteBurn(
        r_ignition_km, v_ignition_km_s, mass_ignition_kg, delta_v_inertial_m_s, thrust_n, isp_s
    )
    return simulate_finite_burns([burn], mu_km3_s2)[0]


@dataclass(frozen=True)
class FiniteBurn:
    """One burn to fly with finite thrust: the arguments of :func:`simulate_finite_burn`."""

    r_ignition_km: ArrayLike
    v_ignition_km_s: ArrayLike
    mass_ignition_kg: float
    delta_v_inertial_m_s: ArrayLike
    thrust_n: float
    isp_s: float


def simulate_finite_burns(burns: list[FiniteBurn], mu_km3_s2: float) -> list[FiniteBurnResult]:
    """:func:`simulate_finite_burn` for each of ``burns``, their finite arcs integrated together.

    Every burn is checked first (ValueError naming the bad value, as for one burn); the
    finite arcs are then flown by ``_fly_arcs`` (several per solve_ivp call, each to its own
    cutoff), and each is compared with its own impulsive model. The results agree with
    one-at-a-time integration to the integrator's tolerance (rtol 1e-12).
    """
    mu = _scalar("mu_km3_s2", mu_km3_s2)
    setups = [_setup(burn) for burn in burns]
    ends = _fly_arcs([arc for arc, _ in setups], mu)
    return [_compare(arc, dv, end, mu) for (arc, dv), end in zip(setups, ends, strict=True)]


def _setup(burn: FiniteBurn) -> tuple[_ThrustArc, np.ndarray]:
    """The burn's finite arc (duration from the rocket equation) and its delta-v, m/s."""
    r0 = _vector3("r_ignition_km", burn.r_ignition_km)
    v0 = _vector3("v_ignition_km_s", burn.v_ignition_km_s)
    dv = _vector3("delta_v_inertial_m_s", burn.delta_v_inertial_m_s)
    m0 = _scalar("mass_ignition_kg", burn.mass_ignition_kg)
    thrust = _scalar("thrust_n", burn.thrust_n)
    isp = _scalar("isp_s", burn.isp_s)
    dv_m_s = float(np.linalg.norm(dv))
    if dv_m_s == 0.0:
        raise ValueError("delta-v must be non-zero: a burn needs a thrust direction")
    duration = float(rocket.burn_duration_s(m0, dv_m_s, thrust, isp))
    if duration == 0.0:
        raise ValueError(f"delta-v {dv_m_s} m/s is too small to give a burn duration")
    return _thrust_arc(r0, v0, m0, dv / dv_m_s, thrust, isp, duration), dv


def _compare(arc: _ThrustArc, dv: np.ndarray, end, mu: float) -> FiniteBurnResult:
    """The finite arc's end against the mid-point impulsive model (see simulate_finite_burn)."""
    r0, v0, duration = arc.r0_km, arc.v0_km_s, arc.duration_s
    dv_m_s = float(np.linalg.norm(dv))
    u = dv / dv_m_s
    r_f, v_f, m_f = end
    half = duration / 2.0
    r_c, v_c = propagate(r0, v0, half, mu)
    r_c, v_c = np.asarray(r_c, dtype=float), np.asarray(v_c, dtype=float)
    r_i, v_i = propagate(r_c, v_c + dv / 1000.0, half, mu)
    r_i, v_i = np.asarray(r_i, dtype=float), np.asarray(v_i, dtype=float)

    s_km_s = _equivalent_impulse_km_s(
        v_c, r_c, u, _energy_km2_s2(r_f, v_f, mu), dv_m_s / 1000.0, mu
    )
    if s_km_s is None:
        equivalent = loss = None
        note = (
            "no impulse along the planned direction at the mid-point reaches the finite "
            "burn's final orbital energy (burn nearly perpendicular to the velocity); "
            "finite-burn loss undefined"
        )
    else:
        equivalent = 1000.0 * s_km_s
        loss = dv_m_s - equivalent
        note = None
        speed = float(np.linalg.norm(v_c))
        along_track = abs(float(u @ v_c)) / speed if speed > 0.0 else 0.0
        if along_track < _MIN_ALONG_TRACK_COS:
            note = (
                f"burn mostly across the velocity (|cos| = {along_track:.3f}): an impulse "
                "there changes the energy only at second order, so the energy-equivalent "
                "loss is sensitive to small energy differences; judge the position and "
                "velocity differences too"
            )

    return FiniteBurnResult(
        r_cutoff_km=r_f,
        v_cutoff_km_s=v_f,
        mass_cutoff_kg=m_f,
        r_impulsive_km=r_i,
        v_impulsive_km_s=v_i,
        position_difference_km=float(np.linalg.norm(r_f - r_i)),
        velocity_difference_m_s=1000.0 * float(np.linalg.norm(v_f - v_i)),
        equivalent_impulsive_delta_v_m_s=equivalent,
        loss_m_s=loss,
        duration_s=duration,
        note=note,
    )
