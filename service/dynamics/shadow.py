"""Is the spacecraft in the body's shadow: conical umbra and penumbra, and the cylindrical model.

Positions are body-centred, km, in any one set of inertial axes: the spacecraft ``r_sat_km``
and the Sun ``r_sun_km`` (``service.dynamics.sun.sun_position_from_body_km``). The body is a
sphere of ``body_radius_km`` (the equatorial radius for the Earth: the shadow is then a little
too wide near the poles, by up to 21 km on the 6357 km polar radius, the side that understates
power). Vectors are (3,) or (N, 3) and broadcast; one geometry gives a float (``shadow_state``:
a str).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.sun import SUN_RADIUS_KM

SUNLIGHT, PENUMBRA, UMBRA = "sunlight", "penumbra", "umbra"


def _vectors(r_sat_km: ArrayLike, r_sun_km: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    sat = np.asarray(r_sat_km, dtype=float)
    sun = np.asarray(r_sun_km, dtype=float)
    for name, value in (("r_sat_km", sat), ("r_sun_km", sun)):
        if value.ndim not in (1, 2) or value.shape[-1] != 3:
            raise ValueError(f"{name} must have shape (3,) or (N, 3), got {value.shape}")
        if not np.all(np.isfinite(value)):
            raise ValueError(f"{name} must be finite")
    try:
        return np.broadcast_arrays(sat, sun)
    except ValueError:
        raise ValueError(
            f"cannot pair {sat.shape} spacecraft with {sun.shape} Sun positions"
        ) from None


def _radius(body_radius_km: float) -> float:
    radius = float(body_radius_km)
    if not np.isfinite(radius) or radius <= 0.0:
        raise ValueError(f"body radius must be positive and finite, got {body_radius_km!r} km")
    return radius


def _float_or_array(value: np.ndarray) -> float | np.ndarray:
    return float(value) if value.ndim == 0 else value


# Taylor coefficients of u - sin u = u^3/3! - u^5/5! + ... (nine terms: exact to rounding for
# u < 1, where the direct difference would cancel).
_U_MINUS_SIN_U = np.array([(-1.0) ** (k + 1) / math.factorial(2 * k + 1) for k in range(1, 10)])


def _u_minus_sin_u(u: np.ndarray) -> np.ndarray:
    small = np.polynomial.polynomial.polyval(u * u, _U_MINUS_SIN_U) * u**3
    return np.where(u < 1.0, small, u - np.sin(u))


def _lens_area(a: np.ndarray, b: np.ndarray, c: np.ndarray) -> np.ndarray:
    """Area shared by plane discs of radii a and b whose centres are c apart, |a - b| < c < a + b.

    The Montenbruck & Gill (section 3.4.2) lens A = a^2 acos(x / a) + b^2 acos((c - x) / b) - c y
    written as two circular segments R^2 (2 t - sin 2 t) / 2 with half-angles t = atan2(y, x) and
    atan2(y, c - x). Seen from low orbit b is ~1 rad and a ~0.005 rad, and the acos form loses
    about half its digits (errors ~1e-9 in the fraction); this form keeps them all.
    """
    x = ((c - b) * (c + b) + a * a) / (2.0 * c)
    # (a - x)(a + x) >= 0 holds exactly for intersecting discs; rounding can dip below by an ulp.
    y = np.sqrt(np.maximum((a - x) * (a + x), 0.0))
    segment_a = 0.5 * a * a * _u_minus_sin_u(2.0 * np.arctan2(y, x))
    segment_b = 0.5 * b * b * _u_minus_sin_u(2.0 * np.arctan2(y, c - x))
    return segment_a + segment_b


def disc_angles_rad(
    r_sat_km: ArrayLike, r_sun_km: ArrayLike, body_radius_km: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Apparent radii of the Sun (a) and the body (b), and their centres' separation (c), rad.

    Montenbruck & Gill, Satellite Orbits (2000), section 3.4.2, eqs. 3.85-3.87:
    a = asin(R_sun / |r_sun - r|), b = asin(R_body / |r|), c = angle between -r and r_sun - r
    (taken with atan2 of the cross and dot products, accurate at every angle). Each (N,) or
    0-d. ValueError if the spacecraft is not above the body's surface or inside the Sun.
    """
    sat, sun = _vectors(r_sat_km, r_sun_km)
    radius = _radius(body_radius_km)
    to_sun = sun - sat
    sat_distance = np.linalg.norm(sat, axis=-1)
    sun_distance = np.linalg.norm(to_sun, axis=-1)
    if np.any(sat_distance <= radius):
        raise ValueError(
            f"spacecraft at {np.min(sat_distance):.3f} km from the centre is not above the "
            f"body's {radius:.3f} km surface; no shadow geometry there"
        )
    if np.any(sun_distance <= SUN_RADIUS_KM):
        raise ValueError("the spacecraft lies within the Sun's radius of the Sun position")
    a = np.arcsin(SUN_RADIUS_KM / sun_distance)
    b = np.arcsin(radius / sat_distance)
    cross = np.linalg.norm(np.cross(-sat, to_sun), axis=-1)
    c = np.arctan2(cross, np.sum(-sat * to_sun, axis=-1))
    return a, b, c


def sunlit_fraction(
    r_sat_km: ArrayLike, r_sun_km: ArrayLike, body_radius_km: float
) -> float | np.ndarray:
    """Fraction of the Sun's disc visible from the spacecraft, 0 (umbra) to 1 (sunlight).

    Montenbruck & Gill, Satellite Orbits (2000), section 3.4.2, eqs. 3.85-3.87 (conical shadow):
    with a, b, c from ``disc_angles_rad``, c >= a + b is full sunlight (1); c <= b - a is the
    umbra (0); c <= a - b (body inside the solar disc) leaves 1 - b^2 / a^2; otherwise the
    overlap of the two discs, A = a^2 acos(x / a) + b^2 acos((c - x) / b) - c y with
    x = (c^2 + a^2 - b^2) / (2 c), y = sqrt(a^2 - x^2), leaves 1 - A / (pi a^2) (evaluated in
    the rounding-safe form of ``_lens_area``). The discs are treated as plane circles, as in the
    source: the overlap lies inside the Sun's disc (0.27 deg in radius from the Earth), where
    that is good to order a^2 ~ 2e-5 relative. ``body_radius_km`` > 0.
    """
    a, b, c = disc_angles_rad(r_sat_km, r_sun_km, body_radius_km)
    fraction = np.ones_like(c)
    umbra = c <= b - a
    partial = (c < a + b) & ~umbra
    annular = partial & (c <= a - b)
    overlap = partial & ~annular
    fraction[umbra] = 0.0
    fraction[annular] = 1.0 - (b[annular] / a[annular]) ** 2
    fraction[overlap] = 1.0 - _lens_area(a[overlap], b[overlap], c[overlap]) / (
        np.pi * a[overlap] ** 2
    )
    return _float_or_array(fraction)


def shadow_state(fraction: ArrayLike) -> str | np.ndarray:
    """ "sunlight" (fraction == 1), "umbra" (fraction == 0) or "penumbra" (in between).

    The names of Montenbruck & Gill, Satellite Orbits (2000), section 3.4.2 (an annular
    eclipse, where the body lies inside the solar disc, counts as penumbra). ``fraction``
    float or (N,) in [0, 1]; one fraction gives a str, N fractions an (N,) array of str.
    """
    values = np.asarray(fraction, dtype=float)
    if not np.all(np.isfinite(values)) or np.any((values < 0.0) | (values > 1.0)):
        raise ValueError(f"sunlit fraction must lie in [0, 1], got {fraction!r}")
    states = np.where(values >= 1.0, SUNLIGHT, np.where(values <= 0.0, UMBRA, PENUMBRA))
    return str(states) if states.ndim == 0 else states


def in_cylindrical_shadow(
    r_sat_km: ArrayLike, r_sun_km: ArrayLike, body_radius_km: float
) -> bool | np.ndarray:
    """True where the spacecraft is in the body's cylindrical shadow (Sun at infinity).

    Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 34
    (SHADOW), cylindrical model: behind the body (r . s < 0, s the unit vector to the Sun) and
    within ``body_radius_km`` of the shadow axis, |r - (r . s) s| < R. Positions body-centred.
    """
    sat, sun = _vectors(r_sat_km, r_sun_km)
    radius = _radius(body_radius_km)
    sun_distance = np.linalg.norm(sun, axis=-1)
    if np.any(sun_distance == 0.0):
        raise ValueError("the Sun position must not be the body's centre")
    unit = sun / sun_distance[..., None]
    along = np.sum(sat * unit, axis=-1)
    off_axis = np.linalg.norm(sat - along[..., None] * unit, axis=-1)
    shadowed = (along < 0.0) & (off_axis < radius)
    return bool(shadowed) if shadowed.ndim == 0 else shadowed
