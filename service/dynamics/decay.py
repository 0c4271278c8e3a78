"""Post-mission orbital lifetime in low Earth orbit from orbit-averaged drag decay.

Model (King-Hele, Satellite Orbits in an Atmosphere: Theory and Applications, 1987, chapter 3;
Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), section 9.7; chapter
and section numbers from memory, equation numbers not cited). Drag decelerates the spacecraft
along its velocity with acceleration 1/2 B rho v^2, B = Cd A / m (m^2/kg). Put into Gauss's
variational equations and averaged over one revolution with the eccentric anomaly E as the
variable, dM = (1 - e cos E) dE:

    da/dt = -B sqrt(mu a) <rho (1 + e cos E)^(3/2) / (1 - e cos E)^(1/2)>
    de/dt = -B sqrt(mu / a) (1 - e^2) <rho ((1 + e cos E) / (1 - e cos E))^(1/2) cos E>

where <.> = (1 / 2 pi) integral over E from 0 to 2 pi and rho = rho(a (1 - e cos E) - R).
For e = 0 the first reduces to the closed form da/dt = -B rho sqrt(mu a). The average is taken
numerically (composite Gauss-Legendre, panels graded towards perigee so that the density peak
of an eccentric orbit is resolved), which keeps eccentric orbits right without King-Hele's
series in e and in a e / H, and works with any density profile.

The equations are integrated with scipy.integrate.solve_ivp, with a (not t) as the independent
variable and (t, e) as the state, until the perigee altitude falls to the re-entry altitude
(100 km by default: below it the remaining life is hours), or t reaches a cap (200 years by
default), beyond which the lifetime is reported only as "more than the cap".

Numerical accuracy (tests/dynamics/test_decay.py): the orbit average agrees with adaptive
quadrature within 3e-4 relative (1e-5 for near-circular orbits); the decay of a and e over days
agrees with a Cartesian two-body + drag integration within 1e-4; lifetimes agree with a
time-domain integration and, for circular orbits, with the quadrature of dt/da within 1e-3.
All far below the model's own uncertainty.

Stated plainly, the limits of the answer:
- Solar activity changes lifetimes by a factor of several. The default density table (Vallado
  Table 8-4) is a static mean-activity model; over a solar cycle thermospheric density varies by
  a factor of several (an order of magnitude and more at 600 to 800 km), so a lifetime from this
  module is an estimate good to a factor of a few, not a prediction.
- The atmosphere does not rotate here. King-Hele's factor F = (1 - r_p w cos i / v_p)^2 (from
  memory) would change the drag by up to about 13 % in low Earth orbit: less for prograde
  near-equatorial orbits, more for retrograde ones.
- No J2, no luni-solar or radiation-pressure perturbations: for highly eccentric orbits (e.g.
  geostationary transfer orbits) those move the perigee and can dominate the lifetime.
- Cd, A and m are taken as constant over the whole decay (attitude averaged by the caller).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.integrate import solve_ivp

from service.dynamics.atmosphere import EXPONENTIAL_MODEL_NAME, density_exponential_kg_m3
from service.dynamics.bodies import EARTH
from service.dynamics.inputs import FloatOrArray, finite, positive, scalar_or_array

SECONDS_PER_JULIAN_YEAR = 365.25 * 86400.0
DEFAULT_REENTRY_ALTITUDE_KM = 100.0
DEFAULT_MAX_YEARS = 200.0

_M_PER_KM = 1000.0
_RTOL = 1e-6
_PANELS = 8
_GL_NODES, _GL_WEIGHTS = np.polynomial.legendre.leggauss(8)
# The thinnest scale height of Earth's atmosphere above 80 km is about 5.4 km (Table 8-4):
# the first panel spans the eccentric anomaly over which altitude rises by that much.
_FINEST_SCALE_HEIGHT_KM = 5.0

DensityModel = Callable[[np.ndarray], np.ndarray]


@dataclass(frozen=True)
class OrbitalLifetime:
    """Estimated orbital lifetime: ``years`` (None when beyond ``max_years``) and the model used.

    ``capped`` is True when the orbit had not re-entered after ``max_years``; ``model`` names the
    decay model, atmosphere and assumptions, including the solar-activity caveat.
    """

    years: float | None
    capped: bool
    max_years: float
    model: str


def _quadrature(a_km: np.ndarray, e: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights in E over [0, pi], shape (N, 64), panels graded towards perigee.

    The integrands depend on cos E only, so the average over [0, 2 pi] is the one over [0, pi].
    """
    spread_km = a_km * np.abs(e)
    ratio = np.divide(
        _FINEST_SCALE_HEIGHT_KM,
        spread_km,
        out=np.full_like(spread_km, np.inf),
        where=spread_km > 0.0,
    )
    first_edge = np.minimum(np.arccos(np.clip(1.0 - ratio, -1.0, 1.0)), np.pi / _PANELS)
    growth = (np.pi / first_edge) ** (1.0 / (_PANELS - 1))
    edges = first_edge[:, None] * growth[:, None] ** np.arange(_PANELS)
    edges[:, -1] = np.pi
    edges = np.concatenate([np.zeros_like(edges[:, :1]), edges], axis=1)
    half = 0.5 * np.diff(edges, axis=1)[:, :, None]
    middle = 0.5 * (edges[:, 1:] + edges[:, :-1])[:, :, None]
    nodes = (middle + half * _GL_NODES).reshape(len(a_km), -1)
    weights = (half * _GL_WEIGHTS).reshape(len(a_km), -1)
    return nodes, weights


def _rates(
    a_km: np.ndarray, e: np.ndarray, b_m2_kg: np.ndarray, density: DensityModel
) -> tuple[np.ndarray, np.ndarray]:
    """Orbit-averaged (da/dt km/s, de/dt 1/s) for 1-d arrays of a, e and B."""
    mu = EARTH.mu_km3_s2
    nodes, weights = _quadrature(a_km, e)
    cos_e = np.cos(nodes)
    ecc = e[:, None]
    one_plus = 1.0 + ecc * cos_e
    one_minus = 1.0 - ecc * cos_e
    # Only a trial state past re-entry, tried by the step controller, can dip below the
    # surface; the density table refuses that, and the sea-level value serves it well.
    altitude = np.maximum(a_km[:, None] * one_minus - EARTH.equatorial_radius_km, 0.0)
    rho = np.asarray(density(altitude), dtype=float)
    mean_a = np.sum(weights * rho * one_plus * np.sqrt(one_plus / one_minus), axis=1) / np.pi
    mean_e = np.sum(weights * rho * np.sqrt(one_plus / one_minus) * cos_e, axis=1) / np.pi
    # B rho is in 1/m; the rates are wanted per km.
    drag_per_km = b_m2_kg * _M_PER_KM
    da_dt = -drag_per_km * np.sqrt(mu * a_km) * mean_a
    de_dt = -drag_per_km * np.sqrt(mu / a_km) * (1.0 - e) * (1.0 + e) * mean_e
    # A circular orbit stays circular in a spherical atmosphere; the quadrature of cos E
    # would leave a rounding residue of either sign instead of the exact zero.
    return da_dt, np.where(e == 0.0, 0.0, de_dt)


def orbit_averaged_decay_rates(
    a_km: ArrayLike,
    e: ArrayLike,
    ballistic_coefficient_m2_kg: ArrayLike,
    *,
    density: DensityModel = density_exponential_kg_m3,
) -> tuple[FloatOrArray, FloatOrArray]:
    """Orbit-averaged rates of change of semi-major axis and eccentricity caused by drag.

    Source: King-Hele (1987), chapter 3; Vallado 4th ed. (2013), section 9.7 (module docstring
    gives the averaged equations). Non-rotating atmosphere, Earth constants from ``bodies.EARTH``.

    Parameters (broadcast, floats or (N,) arrays): ``a_km`` semi-major axis, km; ``e``
    eccentricity, 0 <= e < 1; ``ballistic_coefficient_m2_kg`` B = Cd A / m, m^2/kg (> 0);
    ``density`` vectorised callable, altitude km -> kg/m^3. The perigee must not be below the
    surface. Returns (da_dt_km_s, de_dt_per_s), numpy float64 for scalar inputs.
    """
    a = positive("a_km", a_km)
    ecc = finite("e", e)
    if np.any((ecc < 0.0) | (ecc >= 1.0)):
        raise ValueError(f"e must satisfy 0 <= e < 1 for a drag-decay average, got {e!r}")
    b = positive("ballistic_coefficient_m2_kg", ballistic_coefficient_m2_kg)
    a, ecc, b = np.broadcast_arrays(a, ecc, b)
    if np.any(a * (1.0 - ecc) < EARTH.equatorial_radius_km):
        raise ValueError(
            f"perigee below the surface (a = {a_km!r} km, e = {e!r}): the orbit has re-entered"
        )
    shape = a.shape
    da_dt, de_dt = _rates(a.ravel(), ecc.ravel(), b.ravel(), density)
    return scalar_or_array(da_dt.reshape(shape)), scalar_or_array(de_dt.reshape(shape))


def _scalar(name: str, value: float) -> float:
    array = finite(name, value)
    if array.ndim != 0:
        raise ValueError(f"{name} must be a single number, got an array of shape {array.shape}")
    return float(array)


def _positive_scalar(name: str, value: float) -> float:
    number = _scalar(name, value)
    if number <= 0.0:
        raise ValueError(f"{name} must be positive, got {value!r}")
    return number


def orbital_lifetime_years(
    perigee_alt_km: float,
    apogee_alt_km: float,
    ballistic_coefficient_m2_kg: float,
    *,
    density: DensityModel = density_exponential_kg_m3,
    max_years: float = DEFAULT_MAX_YEARS,
    reentry_altitude_km: float = DEFAULT_REENTRY_ALTITUDE_KM,
) -> OrbitalLifetime:
    """Years until drag brings the perigee down to the re-entry altitude (orbit-averaged decay).

    Source: King-Hele (1987), chapter 3; Vallado 4th ed. (2013), section 9.7; integrated with
    scipy.integrate.solve_ivp (RK45, rtol 1e-6) with a terminal event at re-entry. Solar activity
    changes lifetimes by a factor of several; the default table is a mean-activity model, so the
    answer is an estimate (module docstring lists every assumption).

    Parameters (single numbers): ``perigee_alt_km`` and ``apogee_alt_km`` altitudes above the
    equatorial radius, km (apogee >= perigee); ``ballistic_coefficient_m2_kg`` B = Cd A / m,
    m^2/kg (> 0); ``density`` vectorised callable, altitude km -> kg/m^3; ``max_years`` cap,
    years (> 0); ``reentry_altitude_km`` perigee altitude counted as re-entry, km (>= 0).
    An orbit whose perigee is already at or below the re-entry altitude has lifetime 0.
    Raises ValueError for bad inputs, RuntimeError if the integration fails.
    """
    perigee = _scalar("perigee_alt_km", perigee_alt_km)
    apogee = _scalar("apogee_alt_km", apogee_alt_km)
    b = _positive_scalar("ballistic_coefficient_m2_kg", ballistic_coefficient_m2_kg)
    cap = _positive_scalar("max_years", max_years)
    floor = _scalar("reentry_altitude_km", reentry_altitude_km)
    if floor < 0.0:
        raise ValueError(f"reentry_altitude_km must not be negative, got {reentry_altitude_km!r}")
    if apogee < perigee:
        raise ValueError(
            f"apogee_alt_km ({apogee_alt_km!r}) must not be below perigee_alt_km "
            f"({perigee_alt_km!r})"
        )
    atmosphere = (
        EXPONENTIAL_MODEL_NAME
        if density is density_exponential_kg_m3
        else f"atmosphere {getattr(density, '__name__', repr(density))}"
    )
    model = (
        f"orbit-averaged drag decay (King-Hele 1987), {atmosphere}, non-rotating atmosphere, "
        f"no J2 or luni-solar perturbations, re-entry at perigee altitude {floor:g} km; "
        "solar activity changes lifetimes by a factor of several"
    )
    if perigee <= floor:
        return OrbitalLifetime(years=0.0, capped=False, max_years=cap, model=model)

    radius = EARTH.equatorial_radius_km
    a0 = radius + 0.5 * (perigee + apogee)
    e0 = (apogee - perigee) / (2.0 * radius + perigee + apogee)
    bb = np.array([b])

    # The semi-major axis, not time, is the independent variable: decay speeds up a
    # thousandfold on the way down, while dt/da and de/da vary on the scale height only, so a
    # step in a never jumps past re-entry. The state is (t in years, e).
    def derivative(a_km: float, state: np.ndarray) -> np.ndarray:
        da_dt, de_dt = _rates(np.array([a_km]), state[1:], bb, density)
        if not da_dt[0] < 0.0:
            raise ValueError(
                f"the density model gives no drag at a = {a_km:.3f} km, e = {state[1]:.6f}"
            )
        return np.array([1.0 / (da_dt[0] * SECONDS_PER_JULIAN_YEAR), de_dt[0] / da_dt[0]])

    def reentry(a_km: float, state: np.ndarray) -> float:
        return a_km * (1.0 - state[1]) - radius - floor

    def cap_reached(_a_km: float, state: np.ndarray) -> float:
        return state[0] - cap

    reentry.terminal = True
    cap_reached.terminal = True
    solution = solve_ivp(
        derivative,
        (a0, radius + floor),
        np.array([0.0, e0]),
        method="RK45",
        rtol=_RTOL,
        atol=np.array([1e-9 * cap, 1e-10]),
        events=(reentry, cap_reached),
    )
    if solution.status == -1:
        raise RuntimeError(f"orbital lifetime integration failed: {solution.message}")
    if solution.status == 1 and solution.t_events[1].size:
        return OrbitalLifetime(years=None, capped=True, max_years=cap, model=model)
    # Re-entry: the perigee event fired, or a reached R + floor, where the perigee is below.
    years = solution.y_events[0][0][0] if solution.t_events[0].size else solution.y[0, -1]
    return OrbitalLifetime(years=float(years), capped=False, max_years=cap, model=model)
