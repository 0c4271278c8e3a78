"""Tests of the debris-mitigation disposal formulas (service.dynamics.disposal)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.disposal import (
    GEO_ALTITUDE_KM,
    GEO_PROTECTED_LATITUDE_RAD,
    GEO_PROTECTED_LOWER_ALTITUDE_KM,
    GEO_PROTECTED_UPPER_ALTITUDE_KM,
    GEO_RADIUS_KM,
    IADC_GEO_MAX_ECCENTRICITY,
    IADC_LEO_MAX_LIFETIME_YEARS,
    LEO_PROTECTED_UPPER_ALTITUDE_KM,
    can_enter_geo_protected_region,
    can_enter_leo_protected_region,
    iadc_geo_min_disposal_perigee_altitude_km,
    iadc_geo_min_perigee_increase_km,
    max_latitude_rad,
)

# Computed independently with Python's decimal (40 digits): (398600.4418 / 7.292115e-5^2)^(1/3)
# = 42164.172931 km (WGS 84 mu and w), minus 6378.137 km. The widely quoted geostationary radius
# 42164.17 km agrees (from memory).
HAND_GEO_ALTITUDE_KM = 35786.035931


def test_geostationary_altitude():
    assert GEO_ALTITUDE_KM == pytest.approx(HAND_GEO_ALTITUDE_KM, abs=1e-6)
    assert GEO_RADIUS_KM == pytest.approx(42164.17, abs=0.01)
    # IADC-02-01, section 3.3.2 gives the geostationary altitude as 35786 km.
    assert GEO_ALTITUDE_KM == pytest.approx(35786.0, abs=0.05)
    # A circular orbit of that radius turns with the Earth: period 2 pi / w = 86164.1006 s,
    # within 0.02 s of the sidereal day 86164.0905 s (from memory; WGS 84 rounds w).
    period_s = 2.0 * math.pi * math.sqrt(GEO_RADIUS_KM**3 / 398600.4418)
    assert period_s == pytest.approx(2.0 * math.pi / 7.292115e-5, rel=1e-13)
    assert period_s == pytest.approx(86164.0905, abs=0.02)


def test_iadc_worked_example():
    # IADC-02-01, section 5.3.1 (REFERENCES.md): CR 1.5, A/m 0.02 m^2/kg -> 265 km.
    assert iadc_geo_min_perigee_increase_km(1.5, 20.0, 1000.0) == pytest.approx(265.0, rel=1e-15)
    assert iadc_geo_min_perigee_increase_km(1.5, 0.02, 1.0) == pytest.approx(265.0, rel=1e-15)


@pytest.mark.parametrize(
    ("cr", "area_m2", "mass_kg", "expected_km"),
    [
        # Hand-computed from 235 + 1000 CR A/m (IADC-02-01, section 5.3.1).
        (1.2, 40.0, 2000.0, 259.0),  # A/m 0.02, CR 1.2: 235 + 24
        (2.0, 100.0, 2500.0, 315.0),  # A/m 0.04, CR 2: 235 + 80
        (1.5, 0.0, 1000.0, 235.0),  # no area: the bare 200 km + 35 km margin
        (1.0, 5.0, 4000.0, 236.25),  # A/m 0.00125: 235 + 1.25
    ],
)
def test_iadc_hand_computed(cr, area_m2, mass_kg, expected_km):
    assert iadc_geo_min_perigee_increase_km(cr, area_m2, mass_kg) == pytest.approx(
        expected_km, rel=1e-14
    )


def test_min_disposal_perigee_altitude():
    # GEO altitude + increase: 35786.036 + 265 = 36051.036 km for the IADC example.
    assert iadc_geo_min_disposal_perigee_altitude_km(1.5, 20.0, 1000.0) == pytest.approx(
        HAND_GEO_ALTITUDE_KM + 265.0, abs=1e-6
    )


def test_iadc_formula_broadcasts():
    increase = iadc_geo_min_perigee_increase_km(np.array([1.0, 1.5, 2.0]), 20.0, 1000.0)
    assert increase.shape == (3,)
    np.testing.assert_allclose(increase, [255.0, 265.0, 275.0], rtol=1e-14)
    assert np.ndim(iadc_geo_min_perigee_increase_km(1.5, 20.0, 1000.0)) == 0


@settings(max_examples=200, deadline=None)
@given(
    st.floats(min_value=0.0, max_value=3.0),
    st.floats(min_value=0.0, max_value=500.0),
    st.floats(min_value=1.0, max_value=1e4),
)
def test_iadc_increase_is_linear_in_cr_area_over_mass(cr, area_m2, mass_kg):
    increase = iadc_geo_min_perigee_increase_km(cr, area_m2, mass_kg)
    assert increase >= 235.0
    # Doubling the mass halves the radiation-pressure term.
    assert iadc_geo_min_perigee_increase_km(cr, area_m2, 2.0 * mass_kg) - 235.0 == pytest.approx(
        0.5 * (increase - 235.0), rel=1e-12, abs=1e-12
    )


@pytest.mark.parametrize(
    ("cr", "area_m2", "mass_kg", "name"),
    [
        (1.5, 20.0, 0.0, "mass_kg"),
        (1.5, 20.0, -1.0, "mass_kg"),
        (1.5, -1.0, 1000.0, "area_m2"),
        (-0.1, 20.0, 1000.0, "cr"),
        (math.nan, 20.0, 1000.0, "cr"),
    ],
)
def test_iadc_formula_refuses_bad_values(cr, area_m2, mass_kg, name):
    with pytest.raises(ValueError, match=name):
        iadc_geo_min_perigee_increase_km(cr, area_m2, mass_kg)


def test_guideline_constants():
    # IADC-02-01: eccentricity <= 0.003 (section 5.3.1, from memory); 25-year LEO lifetime
    # (section 5.3.2, from memory); protected regions (section 3.3.2): GEO +/- 200 km and
    # +/- 15 deg latitude, LEO up to 2000 km.
    assert IADC_GEO_MAX_ECCENTRICITY == 0.003
    assert IADC_LEO_MAX_LIFETIME_YEARS == 25.0
    assert GEO_PROTECTED_LOWER_ALTITUDE_KM == pytest.approx(35586.0, abs=0.05)
    assert GEO_PROTECTED_UPPER_ALTITUDE_KM == pytest.approx(35986.0, abs=0.05)
    assert GEO_PROTECTED_LATITUDE_RAD == pytest.approx(math.radians(15.0), rel=1e-15)
    assert LEO_PROTECTED_UPPER_ALTITUDE_KM == 2000.0


def test_graveyard_orbit_meets_the_eccentricity_limit_hand_computed():
    # Hand-computed: a graveyard orbit 36051 x 36300 km has
    # e = (36300 - 36051) / (2 * 6378.137 + 36051 + 36300) = 249 / 85107.274 = 0.0029257.
    r_p = 6378.137 + 36051.0
    r_a = 6378.137 + 36300.0
    e = (r_a - r_p) / (r_a + r_p)
    assert e == pytest.approx(0.0029257, abs=1e-7)
    assert e <= IADC_GEO_MAX_ECCENTRICITY
    assert not can_enter_geo_protected_region(36051.0, 36300.0, math.radians(0.1))


@pytest.mark.parametrize(
    ("perigee_km", "apogee_km", "inclination_deg", "enters"),
    [
        (35786.0, 35786.0, 0.0, True),  # geostationary
        (35786.0, 35786.0, 90.0, True),  # polar at GEO altitude: crosses the equator in band
        (200.0, 35786.0, 7.0, True),  # transfer orbit
        (36051.0, 36100.0, 0.0, False),  # IADC graveyard for the 265 km example
        (35986.1, 40000.0, 0.0, False),  # perigee 0.06 km above the upper bound
        (35986.0, 40000.0, 0.0, True),  # perigee 0.04 km below the upper bound
        (500.0, 35586.1, 28.5, True),  # apogee 0.06 km above the lower bound
        (500.0, 35585.9, 28.5, False),  # apogee 0.14 km below the lower bound
        (35000.0, 37000.0, 63.4, True),  # straddles the band
        (500.0, 800.0, 98.0, False),  # low Earth orbit
    ],
)
def test_geo_protected_region_hand_computed(perigee_km, apogee_km, inclination_deg, enters):
    # Region bounds 35786.04 -/+ 200 km (IADC-02-01, section 3.3.2), inclusive.
    result = can_enter_geo_protected_region(perigee_km, apogee_km, math.radians(inclination_deg))
    assert result is enters


@settings(max_examples=200, deadline=None)
@given(
    st.floats(min_value=100.0, max_value=60000.0),
    st.floats(min_value=0.0, max_value=60000.0),
    st.floats(min_value=0.0, max_value=math.pi),
)
def test_geo_region_is_altitude_overlap_whatever_the_inclination(perigee_km, extra_km, incl_rad):
    # Independent statement of the rule: the altitude of the orbit nearest the geostationary
    # altitude lies within 200 km of it.
    apogee_km = perigee_km + extra_km
    nearest_km = min(max(GEO_ALTITUDE_KM, perigee_km), apogee_km)
    expected = abs(nearest_km - GEO_ALTITUDE_KM) <= 200.0
    assert can_enter_geo_protected_region(perigee_km, apogee_km, incl_rad) is expected


def test_geo_region_broadcasts():
    enters = can_enter_geo_protected_region(
        np.array([35786.0, 36051.0, 200.0]), np.array([35786.0, 36100.0, 35786.0]), 0.0
    )
    np.testing.assert_array_equal(enters, [True, False, True])
    many_inclinations = can_enter_geo_protected_region(35786.0, 35786.0, np.array([0.0, 1.0]))
    np.testing.assert_array_equal(many_inclinations, [True, True])


@pytest.mark.parametrize(
    ("inclination_deg", "max_latitude_deg"),
    [(0.0, 0.0), (15.0, 15.0), (63.4, 63.4), (90.0, 90.0), (98.0, 82.0), (180.0, 0.0)],
)
def test_max_latitude(inclination_deg, max_latitude_deg):
    # Hand-computed: min(i, 180 deg - i).
    assert max_latitude_rad(math.radians(inclination_deg)) == pytest.approx(
        math.radians(max_latitude_deg), abs=1e-15
    )


@pytest.mark.parametrize("bad", [-0.01, math.pi + 0.01, math.nan])
def test_inclination_out_of_range_is_refused(bad):
    with pytest.raises(ValueError, match="inclination_rad"):
        max_latitude_rad(bad)
    with pytest.raises(ValueError, match="inclination_rad"):
        can_enter_geo_protected_region(35786.0, 35786.0, bad)


@pytest.mark.parametrize(
    ("perigee_km", "apogee_km", "enters"),
    [
        (500.0, 500.0, True),
        (2000.0, 2000.0, True),  # on the boundary (inclusive)
        (2000.1, 2500.0, False),
        (200.0, 35786.0, True),  # transfer orbit: perigee in the region
        (35786.0, 35786.0, False),  # geostationary
    ],
)
def test_leo_protected_region_hand_computed(perigee_km, apogee_km, enters):
    # IADC-02-01, section 3.3.2: the region reaches 2000 km altitude, at every latitude.
    assert can_enter_leo_protected_region(perigee_km, apogee_km) is enters


def test_region_checks_refuse_inverted_orbits():
    with pytest.raises(ValueError, match="apogee_alt_km"):
        can_enter_geo_protected_region(36000.0, 35000.0, 0.0)
    with pytest.raises(ValueError, match="apogee_alt_km"):
        can_enter_leo_protected_region(800.0, 500.0)
    with pytest.raises(ValueError, match="perigee_alt_km"):
        can_enter_leo_protected_region(math.inf, math.inf)
