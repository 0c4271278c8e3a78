"""Body constants against independent libraries (astropy, pyerfa, scipy)."""

import math

import astropy.constants as const
import erfa
import pytest
import scipy.constants

from service.dynamics.bodies import EARTH, G0_M_S2, MARS, MOON, body_named


def test_standard_gravity_is_the_cgpm_value():
    # 3rd CGPM (1901): 9.80665 m/s^2 exactly; scipy.constants.g and astropy's g0 carry it.
    assert G0_M_S2 == scipy.constants.g == const.g0.value


def test_earth_ellipsoid_matches_erfa_wgs84():
    # pyerfa eform(1) returns the WGS 84 ellipsoid (a in metres, f).
    a_m, f = erfa.eform(1)
    assert EARTH.equatorial_radius_km * 1000.0 == pytest.approx(a_m, rel=0, abs=1e-9)
    assert EARTH.flattening == pytest.approx(f, rel=1e-15)


def test_earth_gm_agrees_with_astropy_nominal_value():
    # astropy's GM_earth is the IAU 2015 nominal 3.986004e14 m^3/s^2, rounded from the
    # EGM96 / WGS 84 value: agreement to its printed digits (relative 2e-7) only.
    assert EARTH.mu_km3_s2 * 1e9 == pytest.approx(const.GM_earth.value, rel=2e-7)


def test_earth_radius_agrees_with_astropy_nominal_value():
    # astropy's R_earth is the IAU 2015 nominal equatorial radius 6378.1 km (rounded).
    assert EARTH.equatorial_radius_km * 1000.0 == pytest.approx(const.R_earth.value, abs=50.0)


def test_earth_j2_from_egm96_normalised_c20():
    # EGM96 normalised C20 = -4.84165371736e-4 (Lemoine et al. 1998); J2 = -sqrt(5) * C20.
    assert EARTH.j2 == pytest.approx(-math.sqrt(5.0) * -4.84165371736e-4, rel=1e-8)


def test_earth_rotation_rate_is_one_sidereal_day():
    # WGS 84 rate 7.292115e-5 rad/s is one turn per sidereal day of 86164.0905 s (from memory).
    assert 2.0 * math.pi / EARTH.rotation_rate_rad_s == pytest.approx(86164.09, abs=0.05)


def test_moon_and_mars_rotation_periods():
    # Sidereal rotation periods: Moon 27.321661 d, Mars 24.6229 h (IAU WG 2009 rates, from memory).
    assert 2.0 * math.pi / MOON.rotation_rate_rad_s / 86400.0 == pytest.approx(27.321661, abs=1e-5)
    assert 2.0 * math.pi / MARS.rotation_rate_rad_s / 3600.0 == pytest.approx(24.6229, abs=1e-4)


def test_moon_gm_against_earth_moon_mass_ratio():
    # IAU 2009 system of astronomical constants: Earth/Moon mass ratio 81.30056 (from memory).
    assert EARTH.mu_km3_s2 / MOON.mu_km3_s2 == pytest.approx(81.30056, rel=2e-6)


def test_body_lookup_names_the_choices():
    assert body_named("mars") is MARS
    with pytest.raises(KeyError, match="earth, mars, moon"):
        body_named("venus")


def test_altitude_is_measured_from_the_equatorial_sphere():
    assert EARTH.altitude_km(6778.137) == pytest.approx(400.0)
