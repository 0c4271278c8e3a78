"""Central bodies and the constants every computation here stands on.

Each constant names its published source beside it. Altitudes in burnproof are
measured from a sphere of the body's equatorial radius (the convention of
``periapsis altitude`` in flight-dynamics practice); for an oblate body that
is the conservative choice, since the polar surface lies below that sphere.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

# Standard acceleration of gravity, exact by definition: 3rd CGPM (1901).
G0_M_S2 = 9.80665

_SECONDS_PER_DAY = 86400.0


@dataclass(frozen=True)
class Body:
    """A central body: gravity, size, oblateness and rotation.

    ``mu_km3_s2`` is GM; ``equatorial_radius_km`` the reference radius of the
    gravity model and of altitudes; ``j2`` the unnormalised second zonal
    harmonic (J2 = -C20); ``rotation_rate_rad_s`` the sidereal spin rate;
    ``flattening`` the reference ellipsoid's f (0 for a sphere).
    """

    name: str
    mu_km3_s2: float
    equatorial_radius_km: float
    j2: float
    rotation_rate_rad_s: float
    flattening: float

    def altitude_km(self, radius_km):
        """Altitude above the equatorial-radius sphere, km (scalar or array)."""
        return radius_km - self.equatorial_radius_km


EARTH = Body(
    name="earth",
    # EGM96 / WGS 84 (NIMA TR8350.2, 3rd ed., 2000, table 3.1); IERS Conventions 2010 table 1.1.
    mu_km3_s2=398600.4418,
    # WGS 84 semi-major axis (NIMA TR8350.2, table 3.1); pyerfa eform(1) gives the same.
    equatorial_radius_km=6378.137,
    # EGM96: J2 = -sqrt(5) * C20(normalised) with C20 = -4.84165371736e-4 (Lemoine et al. 1998).
    j2=1.08262668e-3,
    # WGS 84 nominal mean angular velocity of the Earth (NIMA TR8350.2, table 3.1).
    rotation_rate_rad_s=7.292115e-5,
    # WGS 84 reciprocal flattening 298.257223563 (NIMA TR8350.2, table 3.1).
    flattening=1.0 / 298.257223563,
)

MOON = Body(
    name="moon",
    # JPL DE430 (Folkner et al. 2014, IPN Progress Report 42-196, table 8).
    mu_km3_s2=4902.800066,
    # Mean radius, IAU WG on Cartographic Coordinates and Rotational Elements 2009
    # (Archinal et al. 2011, table 5); the Moon is taken as a sphere.
    equatorial_radius_km=1737.4,
    # GRAIL GL0660B, unnormalised J2 (Konopliv et al. 2013), from memory.
    j2=2.0330530e-4,
    # IAU WG 2009 prime-meridian rate W' = 13.17635815 deg/day (Archinal et al. 2011, table 2).
    rotation_rate_rad_s=math.radians(13.17635815) / _SECONDS_PER_DAY,
    flattening=0.0,
)

MARS = Body(
    name="mars",
    # JPL DE430 (Folkner et al. 2014, table 8): GM of the Mars system, 42828.375214 km^3/s^2.
    mu_km3_s2=42828.375214,
    # IAU WG 2009 equatorial radius (Archinal et al. 2011, table 5).
    equatorial_radius_km=3396.19,
    # MGS95J / GMM-2B unnormalised J2 (Lemoine et al. 2001), from memory.
    j2=1.96045e-3,
    # IAU WG 2009 prime-meridian rate W' = 350.89198226 deg/day (Archinal et al. 2011, table 2).
    rotation_rate_rad_s=math.radians(350.89198226) / _SECONDS_PER_DAY,
    # IAU WG 2009: equatorial 3396.19 km, polar 3376.20 km.
    flattening=(3396.19 - 3376.20) / 3396.19,
)

BODIES: dict[str, Body] = {body.name: body for body in (EARTH, MOON, MARS)}


def body_named(name: str) -> Body:
    """The body called ``name`` (``earth``, ``moon`` or ``mars``); KeyError names the choices."""
    try:
        return BODIES[name]
    except KeyError:
        raise KeyError(
            f"unknown central body {name!r}; known: {', '.join(sorted(BODIES))}"
        ) from None
