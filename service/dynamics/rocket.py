"""The rocket equation: propellant, delta-v, mass flow and burn time of a constant-thrust engine.

Tsiolkovsky (1903): delta_v = Isp g0 ln(m0 / m1). Sutton & Biblarz, Rocket Propulsion
Elements, 9th ed. (2017), eq. 4-6; Curtis, Orbital Mechanics for Engineering Students,
3rd ed. (2014), eq. 11.30 (equation numbers from memory). g0 is the standard acceleration
of gravity (``G0_M_S2``, 9.80665 m/s^2 exactly).

All functions are vectorised: scalar or array arguments broadcast, and scalar inputs give
numpy float64 scalars. Masses in kg, delta-v in m/s, Isp in s, thrust in N.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.bodies import G0_M_S2
from service.dynamics.inputs import non_negative, positive, scalar_or_array


def _floats(*values) -> tuple[float, ...] | None:
    """The arguments as Python floats when every one is a finite float (or int), else None.

    One burn at a time is the common call; such arguments skip the array checks (the same
    arithmetic follows, with numpy's expm1), anything else takes the general path.
    """
    out = []
    for value in values:
        kind = type(value)
        if kind is not float and kind is not int and kind is not np.float64:
            return None
        number = float(value)
        if not math.isfinite(number):
            return None
        out.append(number)
    return tuple(out)


def exhaust_velocity_m_s(isp_s: ArrayLike) -> np.ndarray | np.float64:
    """Effective exhaust velocity c = Isp g0.

    Source: Sutton & Biblarz, Rocket Propulsion Elements, 9th ed. (2017), chapter 2
    (c = Isp g0; from memory). Parameter: ``isp_s`` specific impulse, s (> 0). Returns m/s.
    """
    return scalar_or_array(positive("isp_s", isp_s) * G0_M_S2)


def propellant_for_delta_v_kg(
    mass_before_kg: ArrayLike, delta_v_m_s: ArrayLike, isp_s: ArrayLike
) -> np.ndarray | np.float64:
    """Propellant a burn of ``delta_v_m_s`` consumes: m0 (1 - exp(-dv / (Isp g0))).

    Source: Tsiolkovsky rocket equation; Curtis, 3rd ed., eq. 11.30; Sutton & Biblarz,
    9th ed., eq. 4-6. Written as -m0 expm1(-dv/c) so small delta-v keeps full precision.

    Parameters: ``mass_before_kg`` mass at ignition, kg (> 0); ``delta_v_m_s`` velocity
    change, m/s (>= 0); ``isp_s`` specific impulse, s (> 0). Returns kg.
    """
    one = _floats(mass_before_kg, delta_v_m_s, isp_s)
    if one is not None and one[0] > 0.0 and one[1] >= 0.0 and one[2] > 0.0:
        m0, dv, c = one[0], one[1], one[2] * G0_M_S2
        return np.float64(-m0 * float(np.expm1(-dv / c)))
    m0 = positive("mass_before_kg", mass_before_kg)
    dv = non_negative("delta_v_m_s", delta_v_m_s)
    c = positive("isp_s", isp_s) * G0_M_S2
    return scalar_or_array(-m0 * np.expm1(-dv / c))


def delta_v_for_propellant_m_s(
    mass_before_kg: ArrayLike, propellant_kg: ArrayLike, isp_s: ArrayLike
) -> np.ndarray | np.float64:
    """Delta-v from burning ``propellant_kg``: Isp g0 ln(m0 / (m0 - mp)).

    Source: Tsiolkovsky rocket equation; Curtis, 3rd ed., eq. 11.30; Sutton & Biblarz,
    9th ed., eq. 4-6. Written as -c log1p(-mp/m0) for precision with little propellant.

    Parameters: ``mass_before_kg`` mass at ignition, kg (> 0); ``propellant_kg`` propellant
    burned, kg (0 <= mp < m0: burning the whole mass is refused); ``isp_s`` specific impulse,
    s (> 0). Returns m/s.
    """
    m0 = positive("mass_before_kg", mass_before_kg)
    mp = non_negative("propellant_kg", propellant_kg)
    c = positive("isp_s", isp_s) * G0_M_S2
    if np.any(mp >= m0):
        raise ValueError(
            f"propellant ({propellant_kg!r} kg) must be less than the mass before the burn "
            f"({mass_before_kg!r} kg)"
        )
    return scalar_or_array(-c * np.log1p(-mp / m0))


def mass_flow_kg_s(thrust_n: ArrayLike, isp_s: ArrayLike) -> np.ndarray | np.float64:
    """Propellant mass flow of an engine: mdot = F / (Isp g0).

    Source: Sutton & Biblarz, 9th ed., chapter 2 (F = mdot c, c = Isp g0; from memory).
    Parameters: ``thrust_n`` thrust, N (> 0); ``isp_s`` specific impulse, s (> 0).
    Returns kg/s.
    """
    thrust = positive("thrust_n", thrust_n)
    c = positive("isp_s", isp_s) * G0_M_S2
    return scalar_or_array(thrust / c)


def burn_duration_s(
    mass_before_kg: ArrayLike, delta_v_m_s: ArrayLike, thrust_n: ArrayLike, isp_s: ArrayLike
) -> np.ndarray | np.float64:
    """Exact constant-thrust burn time for ``delta_v_m_s``: propellant / mass flow.

    t = m0 c (1 - exp(-dv / c)) / F with c = Isp g0: the rocket equation's propellant
    (Curtis, 3rd ed., eq. 11.30) burned at the constant rate F / c (Sutton & Biblarz, 9th ed.,
    chapter 2). No small-delta-v approximation (t = m0 dv / F) is made.

    Parameters: ``mass_before_kg`` mass at ignition, kg (> 0); ``delta_v_m_s`` m/s (>= 0);
    ``thrust_n`` N (> 0); ``isp_s`` s (> 0). Returns s.
    """
    one = _floats(mass_before_kg, delta_v_m_s, thrust_n, isp_s)
    if one is not None and one[0] > 0.0 and one[1] >= 0.0 and one[2] > 0.0 and one[3] > 0.0:
        m0, dv, thrust, c = one[0], one[1], one[2], one[3] * G0_M_S2
        return np.float64(-m0 * float(np.expm1(-dv / c)) * c / thrust)
    m0 = positive("mass_before_kg", mass_before_kg)
    dv = non_negative("delta_v_m_s", delta_v_m_s)
    thrust = positive("thrust_n", thrust_n)
    c = positive("isp_s", isp_s) * G0_M_S2
    return scalar_or_array(-m0 * np.expm1(-dv / c) * c / thrust)
