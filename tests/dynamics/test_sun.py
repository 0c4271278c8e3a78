"""The Sun from the Earth, the Moon and Mars (service.dynamics.sun) against Vallado and astropy."""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from service.dynamics.sun import (
    AU_KM,
    SUN_RADIUS_KM,
    mars_heliocentric_position_km,
    sun_position_from_body_km,
    sun_position_km,
    sun_position_mean_of_date_km,
)

# About thirty epochs spread over 1990-2049 (and through the day).
EPOCHS = np.datetime64("1990-01-01T00:00:00", "ms") + np.linspace(
    0, 59.99 * 365.25 * 86_400_000, 31
).astype("int64").astype("timedelta64[ms]")


@pytest.fixture
def astropy_offline():
    """astropy with no downloads: bundled IERS and leap-second tables, no age limit."""
    from astropy.utils import iers

    with (
        iers.conf.set_temp("auto_download", False),
        iers.conf.set_temp("auto_max_age", None),
        warnings.catch_warnings(),
    ):
        # erfa calls years past its leap-second table "dubious"; TT - UTC is then held fixed,
        # which is all these comparisons need.
        warnings.filterwarnings("ignore", message=".*dubious year", category=UserWarning)
        yield


def _angle_deg(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    cross = np.linalg.norm(np.cross(u, v), axis=-1)
    return np.degrees(np.arctan2(cross, np.sum(u * v, axis=-1)))


def test_vallado_example_5_1_mean_of_date():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Example 5-1:
    # 2006-04-02 00:00 UTC (JD 2453827.5), r_MOD = (0.9771945, 0.1924424, 0.0834308) au
    # (from memory; the book rounds its intermediate values, hence 2e-6 au).
    r = sun_position_mean_of_date_km(np.datetime64("2006-04-02T00:00:00")) / AU_KM
    assert r.shape == (3,)
    assert np.allclose(r, [0.9771945, 0.1924424, 0.0834308], rtol=0, atol=2e-6)


def test_agrees_with_astropy_get_sun(astropy_offline):
    # astropy.coordinates.get_sun: the apparent geocentric Sun in GCRS (includes ~20 arcsec of
    # annual aberration and light time). Algorithm 29 is good to 0.01 deg: allow 0.02 deg.
    from astropy.coordinates import get_sun
    from astropy.time import Time

    reference = get_sun(Time(EPOCHS.astype(str), scale="utc")).cartesian.xyz.to_value("km").T
    ours = sun_position_km(EPOCHS)
    assert ours.shape == (EPOCHS.size, 3)
    assert np.max(_angle_deg(ours, reference)) < 0.02
    distance_ratio = np.linalg.norm(ours, axis=1) / np.linalg.norm(reference, axis=1)
    assert np.max(np.abs(distance_ratio - 1.0)) < 1e-4


def test_mars_agrees_with_astropy_builtin_ephemeris(astropy_offline):
    # astropy get_body_barycentric with the "builtin" ephemeris (pyerfa epv00 and plan94):
    # Sun minus Mars is the heliocentric Sun seen from Mars. Standish's table 1 gives Mars to a
    # few hundredths of a degree: allow 0.05 deg and 5e-4 in distance.
    from astropy.coordinates import get_body_barycentric, solar_system_ephemeris
    from astropy.time import Time

    times = Time(EPOCHS.astype(str), scale="utc")
    with solar_system_ephemeris.set("builtin"):
        mars = get_body_barycentric("mars", times).xyz.to_value("km").T
        sun = get_body_barycentric("sun", times).xyz.to_value("km").T
    reference = sun - mars
    ours = sun_position_from_body_km("mars", EPOCHS)
    assert np.max(_angle_deg(ours, reference)) < 0.05
    distance_ratio = np.linalg.norm(ours, axis=1) / np.linalg.norm(reference, axis=1)
    assert np.max(np.abs(distance_ratio - 1.0)) < 5e-4
    assert np.allclose(mars_heliocentric_position_km(EPOCHS), -ours, rtol=0, atol=0)


def test_mars_distance_stays_between_perihelion_and_aphelion():
    # Mars: a = 1.5237 au, e = 0.0934 (Standish, table 1): 1.381 to 1.666 au.
    distance_au = np.linalg.norm(mars_heliocentric_position_km(EPOCHS), axis=1) / AU_KM
    assert np.all((distance_au > 1.3813) & (distance_au < 1.6661))


def test_earth_and_moon_use_the_geocentric_sun():
    assert np.array_equal(sun_position_from_body_km("earth", EPOCHS), sun_position_km(EPOCHS))
    assert np.array_equal(sun_position_from_body_km("moon", EPOCHS), sun_position_km(EPOCHS))


def test_distance_and_season():
    # Perihelion early January (0.9833 au), aphelion early July (1.0167 au): Astronomical
    # Almanac, from memory. The Sun is north of the equator in June and south in December.
    january = sun_position_km(np.datetime64("2024-01-03T00:00:00"))
    july = sun_position_km(np.datetime64("2024-07-05T00:00:00"))
    assert np.linalg.norm(january) / AU_KM == pytest.approx(0.9833, abs=2e-4)
    assert np.linalg.norm(july) / AU_KM == pytest.approx(1.0167, abs=2e-4)
    assert july[2] > 0.0 > january[2]


def test_constants():
    # IAU 2012 Resolution B2 (au, exact) and IAU 2015 Resolution B3 (nominal solar radius).
    assert AU_KM == 149_597_870.7
    assert SUN_RADIUS_KM == 695_700.0


def test_bad_inputs_raise():
    with pytest.raises(ValueError, match="1950-2050"):
        sun_position_km(np.datetime64("2051-01-01T00:00:00"))
    with pytest.raises(ValueError, match="1950-2050"):
        sun_position_from_body_km("mars", np.datetime64("1949-12-31T23:59:59"))
    with pytest.raises(ValueError, match="venus"):
        sun_position_from_body_km("venus", EPOCHS)
    with pytest.raises(ValueError, match="NaT"):
        sun_position_km(np.datetime64("NaT", "ms"))
