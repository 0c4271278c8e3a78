"""Debris-mitigation formulas for end-of-life disposal: geostationary graveyard orbits and the
protected regions, after the IADC Space Debris Mitigation Guidelines (IADC-02-01).

Sources: Inter-Agency Space Debris Coordination Committee, IADC Space Debris Mitigation
Guidelines, IADC-02-01 (revision not pinned; section numbers as in the project's REFERENCES.md):
section 3.3.2 (protected regions), section 5.3.1 (geostationary disposal), section 5.3.2 (25-year
post-mission lifetime in low Earth orbit, from memory). Values marked "from memory" below were
not checked against the document's text.

Geometry: altitudes are above the equatorial-radius sphere of ``bodies.EARTH`` (as everywhere in
burnproof). The protected regions are shells bounded in altitude (and, for the geostationary one,
in latitude); whether an orbit can enter them is judged from its perigee and apogee altitudes
(see ``can_enter_geo_protected_region`` for why the inclination does not change the answer).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.bodies import EARTH
from service.dynamics.inputs import FloatOrArray, finite, non_negative, positive, scalar_or_array

# Geostationary radius (mu / w^2)^(1/3) with WGS 84 / EGM96 mu and w: 42164.17 km, i.e. an
# altitude of 35786.04 km, which IADC-02-01 section 3.3.2 rounds to 35786 km.
GEO_RADIUS_KM = (EARTH.mu_km3_s2 / EARTH.rotation_rate_rad_s**2) ** (1.0 / 3.0)
GEO_ALTITUDE_KM = GEO_RADIUS_KM - EARTH.equatorial_radius_km

# IADC-02-01 section 3.3.2: the geostationary protected region is the shell
# GEO altitude +/- 200 km within latitudes -15 deg to +15 deg.
GEO_PROTECTED_HALF_WIDTH_KM = 200.0
GEO_PROTECTED_LOWER_ALTITUDE_KM = GEO_ALTITUDE_KM - GEO_PROTECTED_HALF_WIDTH_KM
GEO_PROTECTED_UPPER_ALTITUDE_KM = GEO_ALTITUDE_KM + GEO_PROTECTED_HALF_WIDTH_KM
GEO_PROTECTED_LATITUDE_RAD = math.radians(15.0)

# IADC-02-01 section 3.3.2: the low-Earth-orbit protected region is the shell from the
# surface up to 2000 km altitude.
LEO_PROTECTED_UPPER_ALTITUDE_KM = 2000.0

# IADC-02-01 section 5.3.1: 235 km = 200 km (the protected half width) + 35 km (the most that
# luni-solar and geopotential perturbations lower the perigee; this split from memory); the
# coefficient 1000 carries solar radiation pressure through CR and A/m.
IADC_GEO_BASE_PERIGEE_INCREASE_KM = 235.0
IADC_GEO_SRP_COEFFICIENT_KM = 1000.0
# IADC-02-01 section 5.3.1: eccentricity of the disposal orbit at most 0.003 (from memory).
IADC_GEO_MAX_ECCENTRICITY = 0.003
# IADC-02-01 section 5.3.2: post-mission orbital lifetime in LEO at most 25 years (from memory).
IADC_LEO_MAX_LIFETIME_YEARS = 25.0


def iadc_geo_min_perigee_increase_km(
    cr: ArrayLike, area_m2: ArrayLike, mass_kg: ArrayLike
) -> FloatOrArray:
    """Minimum perigee increase above the geostationary altitude for a graveyard orbit.

    Source: IADC Space Debris Mitigation Guidelines, IADC-02-01, section 5.3.1:
    delta_H = 235 km + 1000 CR A/m, with A/m in m^2/kg (e.g. CR 1.5, A/m 0.02 -> 265 km).

    Parameters (broadcast): ``cr`` solar radiation pressure coefficient (>= 0, typically 1 to 2);
    ``area_m2`` cross-sectional area, m^2 (>= 0); ``mass_kg`` dry mass, kg (> 0). Returns km,
    a numpy float64 for scalar inputs.
    """
    coefficient = non_negative("cr", cr)
    area = non_negative("area_m2", area_m2)
    mass = positive("mass_kg", mass_kg)
    return scalar_or_array(
        IADC_GEO_BASE_PERIGEE_INCREASE_KM + IADC_GEO_SRP_COEFFICIENT_KM * coefficient * area / mass
    )


def iadc_geo_min_disposal_perigee_altitude_km(
    cr: ArrayLike, area_m2: ArrayLike, mass_kg: ArrayLike
) -> FloatOrArray:
    """Lowest perigee altitude a geostationary graveyard orbit may have: GEO altitude + delta_H.

    Source: IADC-02-01, section 5.3.1 (see ``iadc_geo_min_perigee_increase_km``), with the
    geostationary altitude ``GEO_ALTITUDE_KM`` = (mu / w^2)^(1/3) - R = 35786.04 km.
    Parameters as ``iadc_geo_min_perigee_increase_km``. Returns km.
    """
    return scalar_or_array(GEO_ALTITUDE_KM + iadc_geo_min_perigee_increase_km(cr, area_m2, mass_kg))


def max_latitude_rad(inclination_rad: ArrayLike) -> FloatOrArray:
    """Highest latitude an orbit reaches: i for prograde, pi - i for retrograde orbits.

    Source: elementary spherical geometry: the orbit plane is tilted by i to the equator, so its
    highest point above the equator lies at latitude min(i, pi - i). Latitude here is geocentric.
    Parameter: ``inclination_rad`` in [0, pi], rad. Returns rad.
    """
    inclination = _inclination(inclination_rad)
    return scalar_or_array(np.minimum(inclination, np.pi - inclination))


def _inclination(inclination_rad: ArrayLike) -> np.ndarray:
    inclination = finite("inclination_rad", inclination_rad)
    if np.any((inclination < 0.0) | (inclination > np.pi)):
        raise ValueError(f"inclination_rad must lie in [0, pi], got {inclination_rad!r}")
    return inclination


def _altitude_range(
    perigee_alt_km: ArrayLike, apogee_alt_km: ArrayLike
) -> tuple[np.ndarray, np.ndarray]:
    perigee = finite("perigee_alt_km", perigee_alt_km)
    apogee = finite("apogee_alt_km", apogee_alt_km)
    if np.any(apogee < perigee):
        raise ValueError(
            f"apogee_alt_km ({apogee_alt_km!r}) must not be below perigee_alt_km "
            f"({perigee_alt_km!r})"
        )
    return perigee, apogee


def can_enter_geo_protected_region(
    perigee_alt_km: ArrayLike, apogee_alt_km: ArrayLike, inclination_rad: ArrayLike
) -> bool | np.ndarray:
    """Whether an orbit passes through the geostationary protected region (now or as it drifts).

    Source: IADC-02-01, section 3.3.2 (region: GEO altitude +/- 200 km, latitude +/- 15 deg).
    True when the orbit's altitude range [perigee, apogee] overlaps the region's altitude band
    (boundaries included). The inclination does not change the answer, and this is stated on
    purpose: every orbit crosses the equator (latitude 0, inside the +/- 15 deg band) twice a
    revolution, and as the line of apsides turns (J2, luni-solar perturbations) the altitude at
    those crossings sweeps the whole range from perigee to apogee. An orbit whose altitudes reach
    the band therefore enters the region, whatever its inclination (``max_latitude_rad`` only
    tells how far beyond the latitude band it also goes).

    Parameters (broadcast): ``perigee_alt_km``, ``apogee_alt_km`` altitudes, km (apogee >=
    perigee); ``inclination_rad`` in [0, pi], rad (validated). Returns bool or bool array.
    """
    perigee, apogee = _altitude_range(perigee_alt_km, apogee_alt_km)
    _inclination(inclination_rad)
    enters = (perigee <= GEO_PROTECTED_UPPER_ALTITUDE_KM) & (
        apogee >= GEO_PROTECTED_LOWER_ALTITUDE_KM
    )
    enters = np.broadcast_to(enters, np.broadcast_shapes(enters.shape, np.shape(inclination_rad)))
    return bool(enters) if enters.ndim == 0 else enters.copy()


def can_enter_leo_protected_region(
    perigee_alt_km: ArrayLike, apogee_alt_km: ArrayLike
) -> bool | np.ndarray:
    """Whether an orbit passes through the low-Earth-orbit protected region (up to 2000 km).

    Source: IADC-02-01, section 3.3.2 (region: the shell from the surface up to 2000 km). The
    region spans all latitudes, so the perigee alone decides: True when perigee <= 2000 km.
    Parameters (broadcast): ``perigee_alt_km``, ``apogee_alt_km`` altitudes, km (apogee >=
    perigee). Returns bool or bool array.
    """
    perigee, apogee = _altitude_range(perigee_alt_km, apogee_alt_km)
    enters = np.broadcast_to(
        perigee <= LEO_PROTECTED_UPPER_ALTITUDE_KM, np.broadcast_shapes(perigee.shape, apogee.shape)
    )
    return bool(enters) if enters.ndim == 0 else enters.copy()
