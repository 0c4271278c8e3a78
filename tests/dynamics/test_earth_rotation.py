"""Sidereal time, WGS 84 sites and look angles (service.dynamics.earth_rotation).

References: Vallado 4th ed. and Curtis 3rd ed. worked examples, pyerfa and astropy (offline,
bundled IERS tables).
"""

from __future__ import annotations

import math
import warnings

import erfa
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.earth_rotation import (
    ecef_to_inertial_km,
    ecef_to_inertial_matrix,
    geodetic_to_ecef_km,
    gmst_rad,
    look_angles,
)
from service.dynamics.timescales import milliseconds_since_j2000

ARCSEC_RAD = math.radians(1.0 / 3600.0)
# What the model leaves out of the Earth-fixed -> J2000 rotation (module docstring): nutation
# and the equation of the equinoxes (a net tilt below 20 arcsec), polar motion (< 0.5 arcsec)
# and frame bias (23 mas).
FRAME_BUDGET_RAD = 20.0 * ARCSEC_RAD
# 1 s of UT1 is 15.04 arcsec of Earth rotation.
ARCSEC_PER_UT1_SECOND = 15.041

rng = np.random.default_rng(20240501)
# 60 epochs in 2005-2023, inside the bundled IERS B table (UT1 - UTC and polar motion known).
PAST = np.datetime64("2005-01-01T00:00:00", "ms") + np.sort(
    rng.integers(0, 19 * 365 * 86_400_000, 60)
).astype("timedelta64[ms]")
# 500 epochs across 1990-2049 for the pure formula checks.
WIDE = np.datetime64("1990-01-01T00:00:00", "ms") + rng.integers(
    0, 60 * 365 * 86_400_000, 500
).astype("timedelta64[ms]")


@pytest.fixture
def astropy_offline():
    """astropy with no downloads: bundled IERS and leap-second tables, no age limit."""
    from astropy.utils import iers

    with (
        iers.conf.set_temp("auto_download", False),
        iers.conf.set_temp("auto_max_age", None),
        warnings.catch_warnings(),
    ):
        warnings.filterwarnings("ignore", message=".*dubious year", category=UserWarning)
        yield


def _wrapped_deg(angle_rad):
    return np.degrees(np.abs(np.angle(np.exp(1j * np.asarray(angle_rad)))))


def test_gmst_vallado_example_3_5():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Example 3-5:
    # 1992-08-20 12:14 UT1 -> GMST 152.578787810 deg (from memory). The book rounds its
    # Julian date to 1e-6 day along the way; allow 1e-6 deg.
    gmst = math.degrees(gmst_rad(np.datetime64("1992-08-20T12:14:00")))
    assert gmst == pytest.approx(152.578787810, abs=1e-6)


def test_gmst_matches_erfa_gmst82():
    # pyerfa gmst82(UT1 as a two-part JD) with UT1 = UTC; the same IAU 1982 formula.
    ms = milliseconds_since_j2000(WIDE)
    days, rest = np.divmod(ms, 86_400_000)
    reference = erfa.gmst82(2451545.0 + days, rest / 86_400_000.0)
    assert np.max(_wrapped_deg(gmst_rad(WIDE) - reference)) < 1e-8
    assert np.all((gmst_rad(WIDE) >= 0.0) & (gmst_rad(WIDE) < 2.0 * math.pi))


def test_gmst_matches_astropy_sidereal_time(astropy_offline):
    # astropy Time(..., scale="ut1").sidereal_time("mean", "greenwich", model="IAU1982"),
    # given the UTC labels as UT1 (the model's UT1 = UTC).
    from astropy.time import Time

    ut1 = Time(WIDE.astype(str), scale="ut1")
    reference = ut1.sidereal_time("mean", "greenwich", model="IAU1982").to_value("rad")
    assert np.max(_wrapped_deg(gmst_rad(WIDE) - reference)) < 1e-8


def test_ut1_equals_utc_costs_under_0_004_deg(astropy_offline):
    # With astropy's real UT1 (bundled IERS B) the difference is |UT1 - UTC| of rotation.
    from astropy.time import Time

    utc = Time(PAST.astype(str), scale="utc")
    reference = utc.sidereal_time("mean", "greenwich", model="IAU1982").to_value("rad")
    assert np.max(_wrapped_deg(gmst_rad(PAST) - reference)) < 0.004


@settings(max_examples=200, deadline=None)
@given(st.floats(-90.0, 90.0), st.floats(-180.0, 360.0), st.floats(-0.5, 40000.0))
def test_geodetic_to_ecef_matches_erfa_gd2gc(lat_deg, lon_deg, height_km):
    # pyerfa gd2gc(1 = WGS 84, lon, lat, height in metres): to the millimetre.
    lat, lon = math.radians(lat_deg), math.radians(lon_deg)
    reference = erfa.gd2gc(1, lon, lat, height_km * 1000.0) / 1000.0
    assert np.allclose(geodetic_to_ecef_km(lat, lon, height_km), reference, rtol=0, atol=1e-6)


def test_geodetic_to_ecef_poles_and_equator():
    # WGS 84 (NIMA TR8350.2, table 3.1): a = 6378.137 km, b = 6356.7523142 km.
    assert np.allclose(geodetic_to_ecef_km(0.0, 0.0, 0.0), [6378.137, 0.0, 0.0], atol=1e-9)
    assert np.allclose(geodetic_to_ecef_km(math.pi / 2, 0.0, 0.0), [0, 0, 6356.7523142], atol=1e-6)
    sites = geodetic_to_ecef_km(np.zeros(4), np.linspace(0.0, 3.0, 4), 1.0)
    assert sites.shape == (4, 3)


def test_ecef_to_inertial_matches_astropy_within_the_frame_budget(astropy_offline):
    # astropy ITRS -> GCRS (IAU 2006/2000A, polar motion, bundled IERS B) with UT1 - UTC set to
    # 0 as in the model: the remaining difference is nutation and polar motion, < 20 arcsec.
    from astropy.coordinates import GCRS, ITRS, CartesianRepresentation
    from astropy.time import Time

    times = Time(PAST.astype(str), scale="utc")
    times.delta_ut1_utc = np.zeros(PAST.size)
    for axis in np.eye(3) * 7000.0:
        r_ecef = np.tile(axis, (PAST.size, 1))
        itrs = ITRS(CartesianRepresentation(r_ecef.T, unit="km"), obstime=times)
        reference = itrs.transform_to(GCRS(obstime=times)).cartesian.xyz.to_value("km").T
        ours = ecef_to_inertial_km(r_ecef, PAST)
        assert np.max(np.linalg.norm(ours - reference, axis=1) / 7000.0) < FRAME_BUDGET_RAD


def test_ecef_to_inertial_is_a_rotation():
    matrices = ecef_to_inertial_matrix(WIDE[:20])
    assert np.allclose(matrices @ np.swapaxes(matrices, 1, 2), np.eye(3), atol=1e-15)
    # At J2000.0 precession is the identity: the prime meridian points at GMST.
    j2000 = np.datetime64("2000-01-01T12:00:00")
    r = ecef_to_inertial_km([7000.0, 0.0, 0.0], j2000)
    angle = gmst_rad(j2000)
    assert np.allclose(r, [7000.0 * math.cos(angle), 7000.0 * math.sin(angle), 0.0], atol=1e-9)


def _site_axes(lat: float, lon: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    east = np.array([-math.sin(lon), math.cos(lon), 0.0])
    north = np.array(
        [-math.sin(lat) * math.cos(lon), -math.sin(lat) * math.sin(lon), math.cos(lat)]
    )
    up = np.array([math.cos(lat) * math.cos(lon), math.cos(lat) * math.sin(lon), math.sin(lat)])
    return east, north, up


def test_look_angles_curtis_example():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., chapter 5 worked example
    # (from memory, Example 5.10): ISS at r = (-2032.4, 4591.2, -4544.8) km, sea-level site at
    # latitude -40 deg, local sidereal time 110 deg -> azimuth 129.8 deg, elevation 41.41 deg
    # (arithmetic re-done by hand: 129.767 deg, 41.412 deg with Curtis's R = 6378 km,
    # f = 0.003353). At J2000.0 precession is the identity, so the longitude is chosen to put
    # the local sidereal time at 110 deg. WGS 84's extra 0.137 km of radius and the printed
    # rounding allow 0.07 deg in azimuth and 0.03 deg in elevation.
    when = np.datetime64("2000-01-01T12:00:00")
    lon = math.radians(110.0) - gmst_rad(when)
    elevation, azimuth, range_km = look_angles(
        [-2032.4, 4591.2, -4544.8], math.radians(-40.0), lon, 0.0, when
    )
    assert math.degrees(azimuth) == pytest.approx(129.8, abs=0.07)
    assert math.degrees(elevation) == pytest.approx(41.41, abs=0.03)
    assert range_km == pytest.approx(589.0, abs=1.0)  # the hand computation above


@settings(max_examples=200, deadline=None)
@given(
    st.floats(-89.0, 89.0),
    st.floats(-180.0, 180.0),
    st.floats(-89.0, 89.99),
    st.floats(0.0, 359.99),
    st.floats(200.0, 40000.0),
    st.integers(0, 59 * 365 * 86_400_000),
)
def test_look_angles_round_trip(lat_deg, lon_deg, el_deg, az_deg, range_km, ms):
    # A spacecraft placed at a known elevation, azimuth and range from the site (east-north-up,
    # Vallado 4th ed. Algorithm 27) comes back with the same three values.
    when = np.datetime64("1990-01-01T00:00:00", "ms") + np.timedelta64(ms, "ms")
    lat, lon, el, az = (math.radians(x) for x in (lat_deg, lon_deg, el_deg, az_deg))
    east, north, up = _site_axes(lat, lon)
    rho = range_km * (
        math.cos(el) * (math.sin(az) * east + math.cos(az) * north) + math.sin(el) * up
    )
    r_sat = ecef_to_inertial_km(geodetic_to_ecef_km(lat, lon, 0.3) + rho, when)
    elevation, azimuth, rng_km = look_angles(r_sat, lat, lon, 0.3, when)
    assert elevation == pytest.approx(el, abs=1e-9)
    assert _wrapped_deg(azimuth - az) < 1e-6
    assert rng_km == pytest.approx(range_km, rel=1e-12)


def test_overhead_is_90_deg_and_horizon_is_0():
    when = np.datetime64("2031-05-02T03:00:00")
    lat, lon, height = math.radians(52.0), math.radians(4.4), 0.1
    east, _, up = _site_axes(lat, lon)
    site = geodetic_to_ecef_km(lat, lon, height)
    overhead = ecef_to_inertial_km(site + 800.0 * up, when)
    horizon = ecef_to_inertial_km(site + 2000.0 * east, when)
    elevation, _, range_km = look_angles(np.stack([overhead, horizon]), lat, lon, height, when)
    assert elevation[0] == pytest.approx(math.pi / 2, abs=1e-12)
    assert elevation[1] == pytest.approx(0.0, abs=1e-12)
    assert range_km == pytest.approx([800.0, 2000.0], rel=1e-12)
    _, azimuth, _ = look_angles(horizon, lat, lon, height, when)
    assert azimuth == pytest.approx(math.pi / 2, abs=1e-12)


def test_look_angles_match_astropy_altaz(astropy_offline):
    # astropy's recipe for near-Earth objects: GCRS -> ITRS, minus the site, topocentric ITRS
    # -> AltAz (no refraction). With UT1 - UTC = 0 as in the model, the line of sight can
    # differ only by the frame budget (20 arcsec) turning the spacecraft's geocentric position,
    # so by at most 20 arcsec * |r_sat| / range: 0.01-0.04 deg for LEO ranges of 800-3000 km.
    # With astropy's real UT1 the budget grows by |UT1 - UTC| * 15 arcsec/s.
    from astropy.coordinates import GCRS, ITRS, AltAz, CartesianRepresentation, EarthLocation
    from astropy.time import Time

    lat, lon, height = math.radians(40.0), math.radians(-105.3), 1.6
    n = PAST.size
    el = np.radians(rng.uniform(5.0, 85.0, n))
    az = np.radians(rng.uniform(0.0, 360.0, n))
    distance = rng.uniform(800.0, 3000.0, n)
    east, north, up = _site_axes(lat, lon)
    rho = distance[:, None] * (
        (np.cos(el) * np.sin(az))[:, None] * east
        + (np.cos(el) * np.cos(az))[:, None] * north
        + np.sin(el)[:, None] * up
    )
    r_sat = ecef_to_inertial_km(geodetic_to_ecef_km(lat, lon, height) + rho, PAST)
    elevation, azimuth, range_km = look_angles(r_sat, lat, lon, height, PAST)
    site = EarthLocation.from_geodetic(math.degrees(lon), math.degrees(lat), height * 1000.0)

    for real_ut1 in (False, True):
        times = Time(PAST.astype(str), scale="utc")
        if not real_ut1:
            times.delta_ut1_utc = np.zeros(n)
        budget = FRAME_BUDGET_RAD + np.abs(times.delta_ut1_utc) * ARCSEC_PER_UT1_SECOND * ARCSEC_RAD
        geocentric = GCRS(CartesianRepresentation(r_sat.T, unit="km"), obstime=times)
        itrs = geocentric.transform_to(ITRS(obstime=times))
        topocentric = ITRS(
            itrs.cartesian - site.get_itrs(times).cartesian, obstime=times, location=site
        )
        altaz = topocentric.transform_to(AltAz(obstime=times, location=site))
        separation = _separation(elevation, azimuth, altaz.alt.rad, altaz.az.rad)
        geocentric_km = np.linalg.norm(r_sat, axis=1)
        assert np.all(separation < budget * geocentric_km / range_km)
        assert np.all(np.abs(range_km - altaz.distance.to_value("km")) < budget * geocentric_km)
        assert np.max(np.degrees(separation)) < 0.05


def _separation(el1, az1, el2, az2):
    def unit(el, az):
        return np.stack([np.cos(el) * np.sin(az), np.cos(el) * np.cos(az), np.sin(el)], axis=-1)

    u, v = unit(el1, az1), unit(el2, az2)
    return np.arctan2(np.linalg.norm(np.cross(u, v), axis=-1), np.sum(u * v, axis=-1))


def test_shapes_and_bad_inputs():
    when = np.datetime64("2031-05-02T03:00:00")
    assert isinstance(gmst_rad(when), float)
    assert gmst_rad(WIDE[:5]).shape == (5,)
    el, az, rng_km = look_angles([7000.0, 0.0, 0.0], 0.1, 0.2, 0.0, when)
    assert all(isinstance(x, float) for x in (el, az, rng_km))
    with pytest.raises(ValueError, match="latitude"):
        geodetic_to_ecef_km(2.0, 0.0, 0.0)
    with pytest.raises(ValueError, match="finite"):
        geodetic_to_ecef_km(0.0, np.nan, 0.0)
    with pytest.raises(ValueError, match="shape"):
        ecef_to_inertial_km([1.0, 2.0], when)
    site = ecef_to_inertial_km(geodetic_to_ecef_km(0.1, 0.2, 0.0), when)
    with pytest.raises(ValueError, match="at the ground site"):
        look_angles(site, 0.1, 0.2, 0.0, when)
