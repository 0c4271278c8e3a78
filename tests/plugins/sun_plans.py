"""Plans placed against the Sun for the Sun and shadow checks, and hand formulas to judge them.

The invented spacecraft 'lumen-4' flies a 400 km circular orbit whose plane holds the Sun's
direction at the plan epoch (beta angle zero), so that its phase from the subsolar point says
where it is: 0 deg under the Sun, 180 deg straight behind the Earth. The Sun's position comes
from the core (``service.dynamics.sun``); everything judged against it is computed here by hand.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq

from service.dynamics.sun import SUN_RADIUS_KM, sun_position_km
from service.engine.plan import CartesianState, Maneuver
from tests.plugins.conftest import make_plan

MU_KM3_S2 = 398600.4418  # Earth GM, EGM96 / WGS 84
EARTH_RADIUS_KM = 6378.137  # WGS 84 equatorial radius
A_KM = 6778.137  # 400 km circular
MEAN_MOTION_RAD_S = math.sqrt(MU_KM3_S2 / A_KM**3)  # n = sqrt(mu / a^3) (Kepler's third law)
EPOCH = np.datetime64("2031-05-02T00:00:00", "ms")
MS = np.timedelta64(1, "ms")


def unit(vector) -> np.ndarray:
    vector = np.asarray(vector, dtype=float)
    return vector / np.linalg.norm(vector, axis=-1, keepdims=True)


def sun_axes(epoch: np.datetime64 = EPOCH) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(s, t, n): the Sun's direction, the in-plane axis 90 deg ahead of it, the orbit normal."""
    s = unit(sun_position_km(epoch))
    n = unit(np.cross(s, [0.0, 0.0, 1.0]))
    return s, np.cross(n, s), n


def at(seconds: float) -> np.datetime64:
    """EPOCH + seconds, to the millisecond."""
    return EPOCH + np.timedelta64(round(seconds * 1000.0), "ms")


def burn(name: str, seconds: float, dv_m_s=(0.01, 0.0, 0.0), frame: str = "TNW") -> Maneuver:
    return Maneuver(name, at(seconds), "main", frame, tuple(float(x) for x in dv_m_s))


def zero_beta_plan(phase_deg: float, maneuvers, **changes):
    """'lumen-4' at ``phase_deg`` from the subsolar point at EPOCH, moving towards larger phase."""
    s, t, _ = sun_axes()
    phase = math.radians(phase_deg)
    r = A_KM * (math.cos(phase) * s + math.sin(phase) * t)
    v = math.sqrt(MU_KM3_S2 / A_KM) * (-math.sin(phase) * s + math.cos(phase) * t)
    return make_plan(
        plan_id="lumen-4-geometry-01",
        initial_state=CartesianState("GCRF", tuple(r), tuple(v)),
        maneuvers=tuple(maneuvers),
        **changes,
    )


def sunlit_fraction_by_hand(r_km, sun_km, body_radius_km: float = EARTH_RADIUS_KM) -> float:
    """Visible fraction of the Sun's disc: two overlapping discs.

    Montenbruck & Gill, Satellite Orbits (2000), section 3.4.2, eqs. 3.85-3.87: apparent radii
    a (Sun) and b (body), their separation c; the overlap area
    A = a^2 acos(x/a) + b^2 acos((c - x)/b) - c y, x = (c^2 + a^2 - b^2) / (2c),
    y = sqrt(a^2 - x^2); fraction = 1 - A / (pi a^2).
    """
    r = np.asarray(r_km, dtype=float)
    to_sun = np.asarray(sun_km, dtype=float) - r
    a = math.asin(SUN_RADIUS_KM / np.linalg.norm(to_sun))
    b = math.asin(body_radius_km / np.linalg.norm(r))
    c = math.acos(float(np.dot(-r, to_sun) / (np.linalg.norm(r) * np.linalg.norm(to_sun))))
    if c >= a + b:
        return 1.0
    if c <= b - a:
        return 0.0
    x = (c * c + a * a - b * b) / (2.0 * c)
    y = math.sqrt(a * a - x * x)
    overlap = a * a * math.acos(x / a) + b * b * math.acos((c - x) / b) - c * y
    return 1.0 - overlap / (math.pi * a * a)


def phase_position_km(phase_deg: float) -> np.ndarray:
    """Where 'lumen-4' is at ``phase_deg`` (no burns yet), from the orbit's own axes."""
    s, t, _ = sun_axes()
    phase = math.radians(phase_deg)
    return A_KM * (math.cos(phase) * s + math.sin(phase) * t)


def fraction_at(start_phase_deg: float, seconds: float) -> float:
    """The hand fraction 'lumen-4' sees ``seconds`` after EPOCH on its circular orbit (no burn)."""
    phase = start_phase_deg + math.degrees(MEAN_MOTION_RAD_S * seconds)
    return sunlit_fraction_by_hand(phase_position_km(phase), sun_position_km(at(seconds)))


def penumbra_edge_s(start_phase_deg: float, low_s: float, high_s: float) -> float:
    """Seconds after EPOCH at which the hand fraction leaves 1, bracketed (scipy brentq)."""
    return brentq(lambda t: fraction_at(start_phase_deg, t) - (1.0 - 1e-9), low_s, high_s)


def umbra_edge_s(start_phase_deg: float, low_s: float, high_s: float) -> float:
    """Seconds after EPOCH at which the hand fraction leaves 0, bracketed (scipy brentq)."""
    return brentq(lambda t: fraction_at(start_phase_deg, t) - 1e-9, low_s, high_s)


def cylindrical_entry_s(start_phase_deg: float) -> float:
    """Shadow entry on the cylindrical model at zero beta: phase 180 - asin(R / a) deg.

    Vallado, Fundamentals of Astrodynamics and Applications, 4th ed., section 5.3 (Algorithm 34
    and the eclipse geometry around it).
    """
    entry_deg = 180.0 - math.degrees(math.asin(EARTH_RADIUS_KM / A_KM))
    return math.radians(entry_deg - start_phase_deg) / MEAN_MOTION_RAD_S
