"""The rotating Earth: sidereal time, ground sites on WGS 84 and a site's view of a spacecraft.

Earth-fixed (ECEF) axes turn into J2000 (GCRF) axes by the mean sidereal angle about z (to the
mean equator and equinox of date) and IAU 1976 precession. Left out: UT1 - UTC (< 0.9 s, so
UT1 = UTC here: < 0.004 deg of rotation), nutation and the equation of the equinoxes (a net
tilt below 20 arcsec), polar motion (< 0.5 arcsec, ~15 m on the ground) and the 23 mas frame
bias. A spacecraft's Earth-fixed position is therefore off by up to ~20 arcsec (plus the UT1
term) times its geocentric distance, and a site's line of sight to it by that displacement
over the range: ~0.01-0.04 deg for low orbits seen at 800-3000 km, ~0.006 deg for distant ones."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.bodies import EARTH
from service.dynamics.precession import frame_rotation_z, precession_mod_to_j2000
from service.dynamics.timescales import MS_PER_DAY, julian_centuries_j2000, milliseconds_since_j2000

_SECONDS_PER_DAY = 86400.0


def gmst_rad(epochs: ArrayLike) -> float | np.ndarray:
    """Greenwich mean sidereal time, rad in [0, 2 pi), IAU 1982 model with UT1 = UTC.

    Aoki et al., Astronomy and Astrophysics 105 (1982) 359; Vallado, Fundamentals of
    Astrodynamics and Applications, 4th ed. (2013), eq. 3-47: GMST = 67310.54841 s
    + (876600 h + 8640184.812866 s) T + 0.093104 T^2 - 6.2e-6 T^3, T in Julian centuries of
    UT1 from J2000.0. The 876600 h T term is whole days plus the time of day, taken here from
    exact milliseconds so that no large product loses digits. ``epochs`` UTC datetime64.
    """
    milliseconds = milliseconds_since_j2000(epochs)
    t = np.asarray(julian_centuries_j2000(epochs), dtype=float)
    time_of_day_s = np.mod(milliseconds, MS_PER_DAY) / 1000.0
    seconds = 67310.54841 + time_of_day_s + ((-6.2e-6 * t + 0.093104) * t + 8640184.812866) * t
    angle = np.mod(seconds, _SECONDS_PER_DAY) * (2.0 * np.pi / _SECONDS_PER_DAY)
    return float(angle) if angle.ndim == 0 else angle


def _finite(name: str, value: ArrayLike) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return array


def geodetic_to_ecef_km(lat_rad: ArrayLike, lon_rad: ArrayLike, height_km: ArrayLike) -> np.ndarray:
    """Earth-fixed position (3,) or (N, 3), km, of geodetic latitude, longitude and height.

    Vallado 4th ed., eq. 3-7 (Algorithm 51, SITE) on the WGS 84 ellipsoid
    (a = 6378.137 km, f = 1/298.257223563; NIMA TR8350.2): C = a / sqrt(1 - e^2 sin^2 lat),
    S = C (1 - e^2), r = ((C + h) cos lat cos lon, (C + h) cos lat sin lon, (S + h) sin lat).
    ``lat_rad`` in [-pi/2, pi/2], ``lon_rad`` any, ``height_km`` above the ellipsoid; they
    broadcast.
    """
    lat = _finite("latitude lat_rad", lat_rad)
    lon = _finite("longitude lon_rad", lon_rad)
    height = _finite("height_km", height_km)
    if np.any(np.abs(lat) > np.pi / 2.0):
        raise ValueError(f"geodetic latitude must lie in [-pi/2, pi/2] rad, got {lat_rad!r}")
    f = EARTH.flattening
    e2 = f * (2.0 - f)
    c = EARTH.equatorial_radius_km / np.sqrt(1.0 - e2 * np.sin(lat) ** 2)
    s = c * (1.0 - e2)
    return np.stack(
        np.broadcast_arrays(
            (c + height) * np.cos(lat) * np.cos(lon),
            (c + height) * np.cos(lat) * np.sin(lon),
            (s + height) * np.sin(lat),
        ),
        axis=-1,
    )


def ecef_to_inertial_matrix(epochs: ArrayLike) -> np.ndarray:
    """Matrix (3, 3) or (N, 3, 3) with r_J2000 = M @ r_ECEF: precession @ ROT3(-GMST).

    Vallado 4th ed., chapter 3 (the IAU-76/FK5 reduction) without polar motion and nutation,
    and with GMST (IAU 1982) in place of apparent sidereal time.
    """
    return precession_mod_to_j2000(epochs) @ frame_rotation_z(-np.asarray(gmst_rad(epochs)))


def _vectors(name: str, value: ArrayLike) -> np.ndarray:
    array = _finite(name, value)
    if array.ndim not in (1, 2) or array.shape[-1] != 3:
        raise ValueError(f"{name} must have shape (3,) or (N, 3), got {array.shape}")
    return array


def ecef_to_inertial_km(r_ecef_km: ArrayLike, epochs: ArrayLike) -> np.ndarray:
    """Earth-fixed positions (3,) or (N, 3), km, in J2000 (GCRF) axes at the given epochs.

    Rotation by GMST about z to mean-of-date axes, then IAU 1976 precession to J2000
    (``ecef_to_inertial_matrix``; Vallado 4th ed., chapter 3, with the approximations in the
    module docstring). Positions and epochs broadcast.
    """
    r = _vectors("r_ecef_km", r_ecef_km)
    return np.einsum("...ij,...j->...i", ecef_to_inertial_matrix(epochs), r)


def look_angles(
    r_sat_inertial_km: ArrayLike,
    lat_rad: ArrayLike,
    lon_rad: ArrayLike,
    height_km: ArrayLike,
    epochs: ArrayLike,
) -> tuple[float | np.ndarray, float | np.ndarray, float | np.ndarray]:
    """Elevation, azimuth (rad) and range (km) of a spacecraft from a ground site.

    Vallado 4th ed., Algorithm 27 (RAZEL), in east-north-up form: the site-to-spacecraft vector
    rho in Earth-fixed axes is projected on the site's east, north and up (geodetic normal);
    elevation = atan2(up, hypot(east, north)), azimuth = atan2(east, north) from north through
    east in [0, 2 pi), range = |rho|. Straight overhead the azimuth is undefined and 0 is
    returned. ``r_sat_inertial_km`` (3,) or (N, 3) in J2000 axes; site geodetic latitude,
    longitude (rad) and height (km) on WGS 84; ``epochs`` UTC; all broadcast.
    """
    r_sat = _vectors("r_sat_inertial_km", r_sat_inertial_km)
    site = geodetic_to_ecef_km(lat_rad, lon_rad, height_km)
    to_ecef = np.swapaxes(ecef_to_inertial_matrix(epochs), -1, -2)
    rho = np.einsum("...ij,...j->...i", to_ecef, r_sat) - site
    lat = np.asarray(lat_rad, dtype=float)
    lon = np.asarray(lon_rad, dtype=float)
    east_axis = np.stack(np.broadcast_arrays(-np.sin(lon), np.cos(lon), 0.0 * lon), axis=-1)
    north_axis = np.stack(
        [-np.sin(lat) * np.cos(lon), -np.sin(lat) * np.sin(lon), np.cos(lat) + 0.0 * lon], axis=-1
    )
    up_axis = np.stack(
        [np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat) + 0.0 * lon], axis=-1
    )
    east = np.sum(rho * east_axis, axis=-1)
    north = np.sum(rho * north_axis, axis=-1)
    up = np.sum(rho * up_axis, axis=-1)
    range_km = np.linalg.norm(rho, axis=-1)
    # Below a millimetre the direction is rounding noise of the rotations, not geometry.
    if np.any(range_km < 1e-6):
        raise ValueError("the spacecraft is at the ground site; look angles are undefined")
    elevation = np.arctan2(up, np.hypot(east, north))
    azimuth = np.mod(np.arctan2(east, north), 2.0 * np.pi)
    # A tiny negative angle wraps to 2 pi itself in floating point; it is north, 0.
    azimuth = np.where(azimuth >= 2.0 * np.pi, 0.0, azimuth)

    def out(value: np.ndarray) -> float | np.ndarray:
        return float(value) if value.ndim == 0 else value

    return out(elevation), out(azimuth), out(range_km)
