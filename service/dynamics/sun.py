"""Where the Sun is, seen from the Earth, the Moon or Mars, in J2000 (GCRF) axes, km.

Low-precision models, enough for eclipse geometry (the Sun's disc is 0.53 deg wide from the
Earth): the Sun is good to about 0.01 deg in direction, Mars's heliocentric position to a few
hundredths of a degree. Valid 1950-2050 (the Sun) and 1800-2050 (Mars); epochs outside
1950-2050 raise ValueError. UTC stands in for UT1 and TDB (the 69 s TT - UTC moves the Sun by
< 3 arcsec and Mars by < 2 arcsec). Positions are geometric: no light time, no aberration
(about 20 arcsec), no nutation (< 20 arcsec).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.anomalies import mean_to_true_anomaly
from service.dynamics.precession import ARCSEC_RAD, precession_mod_to_j2000
from service.dynamics.timescales import (
    DAYS_PER_JULIAN_CENTURY,
    J2000_UTC,
    MS_PER_DAY,
    epochs_ms,
    julian_centuries_j2000,
)

# Astronomical unit, exact by definition: IAU 2012 Resolution B2.
AU_KM = 149_597_870.7
# Nominal solar radius: IAU 2015 Resolution B3.
SUN_RADIUS_KM = 695_700.0
# Obliquity of the J2000 ecliptic that Standish's recipe rotates by ("Keplerian Elements for
# Approximate Positions of the Major Planets", JPL).
STANDISH_OBLIQUITY_RAD = np.radians(23.43928)

_FIRST = np.datetime64("1950-01-01T00:00:00", "ms")
_LAST = np.datetime64("2050-12-31T23:59:59.999", "ms")

# Standish, "Keplerian Elements for Approximate Positions of the Major Planets" (JPL), table 1
# (1800 AD - 2050 AD), Mars: a (au), e, I (deg), L (deg), long. perihelion (deg), long. node
# (deg) at J2000.0, then their rates per Julian century.
_MARS_ELEMENTS = np.array(
    [1.52371034, 0.09339410, 1.84969142, -4.55343205, -23.94362959, 49.55953891]
)
_MARS_RATES = np.array(
    [0.00001847, 0.00007882, -0.00813131, 19140.30268499, 0.44441088, -0.29257343]
)


def _within_range(epochs: ArrayLike) -> np.ndarray:
    times = epochs_ms(epochs)
    if np.any((times < _FIRST) | (times > _LAST)):
        raise ValueError("the Sun and Mars models are valid for epochs in 1950-2050 only")
    return times


def sun_position_mean_of_date_km(epochs: ArrayLike) -> np.ndarray:
    """Geocentric Sun (3,) or (N, 3), km, in mean-equator-and-equinox-of-date (MOD) axes.

    Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 29
    (SUN, after the Astronomical Almanac's low-precision formulae), T in Julian centuries:
    mean longitude 280.460 + 36000.771 T deg, mean anomaly M = 357.5291092 + 35999.05034 T deg,
    ecliptic longitude lambda = mean longitude + 1.914666471 sin M + 0.019994643 sin 2M deg,
    ecliptic latitude 0, r = 1.000140612 - 0.016708617 cos M - 0.000139589 cos 2M au,
    obliquity 23.439291 - 0.0130042 T deg; r = r (cos l, cos e sin l, sin e sin l).
    ``epochs`` UTC datetime64, 1950-2050.
    """
    t = np.asarray(julian_centuries_j2000(_within_range(epochs)), dtype=float)
    mean_longitude = 280.460 + 36000.771 * t
    mean_anomaly = np.radians(357.5291092 + 35999.05034 * t)
    longitude = np.radians(
        mean_longitude
        + 1.914666471 * np.sin(mean_anomaly)
        + 0.019994643 * np.sin(2.0 * mean_anomaly)
    )
    distance_au = (
        1.000140612 - 0.016708617 * np.cos(mean_anomaly) - 0.000139589 * np.cos(2.0 * mean_anomaly)
    )
    obliquity = np.radians(23.439291 - 0.0130042 * t)
    direction = np.stack(
        [
            np.cos(longitude),
            np.cos(obliquity) * np.sin(longitude),
            np.sin(obliquity) * np.sin(longitude),
        ],
        axis=-1,
    )
    return direction * (distance_au * AU_KM)[..., None]


def sun_position_km(epochs: ArrayLike) -> np.ndarray:
    """Geocentric Sun (3,) or (N, 3), km, in J2000 (GCRF) axes, about 0.01 deg in direction.

    Vallado 4th ed., Algorithm 29 in mean-of-date axes (``sun_position_mean_of_date_km``),
    rotated to J2000 by IAU 1976 precession (Vallado 4th ed., eqs. 3-88 to 3-90). The 23 mas
    frame bias between J2000 and GCRF is ignored. ``epochs`` UTC datetime64, 1950-2050.
    """
    one = _sun_position_one_km(epochs)
    if one is not None:
        return one
    mod = sun_position_mean_of_date_km(epochs)
    return np.einsum("...ij,...j->...i", precession_mod_to_j2000(epochs), mod)


def _sun_position_one_km(epochs) -> np.ndarray | None:
    """``sun_position_km`` of a single epoch (shape (1,)), or None for anything else.

    A root search asks for one epoch at a time. The same arithmetic as the array code (the
    Sun's series and the precession angles in plain floats, numpy's radians, the rotation
    matrices multiplied and applied by the same numpy calls on arrays of the same shapes),
    so the same position, without the per-call cost of the general path.
    """
    if not (isinstance(epochs, np.ndarray) and epochs.shape == (1,)):
        return None
    if epochs.dtype != np.dtype("datetime64[ms]") or np.isnat(epochs[0]):
        return None
    if not _FIRST <= epochs[0] <= _LAST:
        return None
    ms = int((epochs[0] - J2000_UTC).astype(np.int64))
    t = ms / (MS_PER_DAY * DAYS_PER_JULIAN_CENTURY)
    mean_longitude = 280.460 + 36000.771 * t
    mean_anomaly = float(np.radians(357.5291092 + 35999.05034 * t))
    longitude = float(
        np.radians(
            mean_longitude
            + 1.914666471 * math.sin(mean_anomaly)
            + 0.019994643 * math.sin(2.0 * mean_anomaly)
        )
    )
    distance_au = (
        1.000140612
        - 0.016708617 * math.cos(mean_anomaly)
        - 0.000139589 * math.cos(2.0 * mean_anomaly)
    )
    obliquity = float(np.radians(23.439291 - 0.0130042 * t))
    scale = distance_au * AU_KM
    mod = np.array(
        [
            [
                math.cos(longitude) * scale,
                math.cos(obliquity) * math.sin(longitude) * scale,
                math.sin(obliquity) * math.sin(longitude) * scale,
            ]
        ]
    )
    zeta = ((0.017998 * t + 0.30188) * t + 2306.2181) * t * ARCSEC_RAD
    theta = ((-0.041833 * t - 0.42665) * t + 2004.3109) * t * ARCSEC_RAD
    z = ((0.018203 * t + 1.09468) * t + 2306.2181) * t * ARCSEC_RAD
    j2000_to_mod = _rotation_z(-z) @ _rotation_y(theta) @ _rotation_z(-zeta)
    return np.einsum("...ij,...j->...i", np.swapaxes(j2000_to_mod, -1, -2), mod)


def _rotation_z(angle_rad: float) -> np.ndarray:
    c, s = math.cos(angle_rad), math.sin(angle_rad)
    return np.array([[[c, s, 0.0], [-s, c, 0.0], [0.0, 0.0, 1.0]]])


def _rotation_y(angle_rad: float) -> np.ndarray:
    c, s = math.cos(angle_rad), math.sin(angle_rad)
    return np.array([[[c, 0.0, -s], [0.0, 1.0, 0.0], [s, 0.0, c]]])


def mars_heliocentric_position_km(epochs: ArrayLike) -> np.ndarray:
    """Heliocentric Mars (3,) or (N, 3), km, in J2000 equatorial axes.

    Standish, "Keplerian Elements for Approximate Positions of the Major Planets" (JPL),
    table 1 and its recipe: elements at T centuries, argument of perihelion = long. perihelion
    - long. node, M = L - long. perihelion, Kepler's equation for the anomaly, then the
    orbital-plane position rotated by node, inclination and argument of perihelion to the J2000
    ecliptic, and by the obliquity 23.43928 deg to the equator. ``epochs`` UTC, 1950-2050.
    """
    t = np.asarray(julian_centuries_j2000(_within_range(epochs)), dtype=float)
    elements = _MARS_ELEMENTS + t[..., None] * _MARS_RATES
    a_au, e = elements[..., 0], elements[..., 1]
    inclination, mean_longitude, perihelion, node = np.moveaxis(
        np.radians(elements[..., 2:]), -1, 0
    )
    # Keep M in (-pi, pi]: the anomaly solver keeps revolutions, and the angle is all we need.
    mean_anomaly = np.mod(mean_longitude - perihelion + np.pi, 2.0 * np.pi) - np.pi
    nu = np.asarray(mean_to_true_anomaly(mean_anomaly, e), dtype=float)
    radius_km = a_au * (1.0 - e * e) / (1.0 + e * np.cos(nu)) * AU_KM
    u = perihelion - node + nu
    cos_node, sin_node, cos_i = np.cos(node), np.sin(node), np.cos(inclination)
    ecliptic = radius_km[..., None] * np.stack(
        [
            cos_node * np.cos(u) - sin_node * np.sin(u) * cos_i,
            sin_node * np.cos(u) + cos_node * np.sin(u) * cos_i,
            np.sin(u) * np.sin(inclination),
        ],
        axis=-1,
    )
    c, s = np.cos(STANDISH_OBLIQUITY_RAD), np.sin(STANDISH_OBLIQUITY_RAD)
    x, y, z = np.moveaxis(ecliptic, -1, 0)
    return np.stack([x, c * y - s * z, s * y + c * z], axis=-1)


def sun_position_from_body_km(body_name: str, epochs: ArrayLike) -> np.ndarray:
    """The Sun seen from the centre of ``body_name``: (3,) or (N, 3) km, J2000 axes.

    earth: ``sun_position_km``. moon: the geocentric Sun as well; the Moon is at most
    406 700 km from the Earth, so the Moon-centred direction differs by < 0.16 deg and the
    distance by < 0.3 %, far below what eclipse timing around the Moon resolves (the Sun's disc
    is 0.53 deg wide). mars: minus ``mars_heliocentric_position_km`` (Standish, table 1).
    Raises ValueError for any other body.
    """
    if body_name in ("earth", "moon"):
        return sun_position_km(epochs)
    if body_name == "mars":
        return -mars_heliocentric_position_km(epochs)
    raise ValueError(f"no Sun model for body {body_name!r}; known: earth, moon, mars")
