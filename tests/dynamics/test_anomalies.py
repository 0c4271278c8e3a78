"""Anomalies and mean motion: textbook examples, round trips, conventions and refusals."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.anomalies import (
    eccentric_to_true_anomaly,
    hyperbolic_to_true_anomaly,
    mean_motion_rad_s,
    mean_to_true_anomaly,
    parabolic_to_true_anomaly,
    true_to_eccentric_anomaly,
    true_to_hyperbolic_anomaly,
    true_to_mean_anomaly,
    true_to_parabolic_anomaly,
)
from service.dynamics.kepler_equation import (
    eccentric_to_mean_anomaly,
    hyperbolic_to_mean_anomaly,
    mean_to_eccentric_anomaly,
    mean_to_hyperbolic_anomaly,
    mean_to_parabolic_anomaly,
    parabolic_to_mean_anomaly,
)

SETTINGS = settings(max_examples=200, deadline=None)
MU_CURTIS_KM3_S2 = 398600.0  # Curtis 3rd ed. uses mu = 398600 km^3/s^2 in chapter 3.


# --- textbook examples --------------------------------------------------------------------------


def test_curtis_example_3_1_time_since_perigee():
    # Curtis 3rd ed., Example 3.1 (from memory): rp = 9600 km, ra = 21000 km, theta = 120 deg
    # -> e = 0.37255, E = 1.7281 rad, Me = 1.3601 rad, t = 4077 s.
    rp, ra = 9600.0, 21000.0
    e = (ra - rp) / (ra + rp)
    p = 2.0 * rp * ra / (ra + rp)
    nu = math.radians(120.0)
    assert e == pytest.approx(0.37255, abs=5e-6)
    assert true_to_eccentric_anomaly(nu, e) == pytest.approx(1.7281, abs=5e-5)
    m = true_to_mean_anomaly(nu, e)
    assert m == pytest.approx(1.3601, abs=5e-5)
    assert m / mean_motion_rad_s(p, e, MU_CURTIS_KM3_S2) == pytest.approx(4077.0, abs=0.5)


def test_curtis_example_3_2_true_anomaly_after_three_hours():
    # Curtis 3rd ed., Example 3.2 (from memory): same orbit, t = 3 h after perigee
    # -> Me = 3.6029 rad, E = 3.4794 rad, theta = 193.2 deg.
    rp, ra = 9600.0, 21000.0
    e = (ra - rp) / (ra + rp)
    p = 2.0 * rp * ra / (ra + rp)
    m = mean_motion_rad_s(p, e, MU_CURTIS_KM3_S2) * 3 * 3600.0
    assert m == pytest.approx(3.6029, abs=5e-5)
    assert mean_to_eccentric_anomaly(m, e) == pytest.approx(3.4794, abs=5e-5)
    assert math.degrees(mean_to_true_anomaly(m, e)) == pytest.approx(193.2, abs=0.05)


def test_curtis_example_3_4_parabola_six_hours_after_perigee():
    # Curtis 3rd ed., Example 3.4 (from memory): geocentric parabola, perigee speed 10 km/s;
    # 6 h after perigee theta = 144.75 deg and r = 86976 km.
    v_perigee = 10.0
    rp = 2.0 * MU_CURTIS_KM3_S2 / v_perigee**2
    p = 2.0 * rp
    m = mean_motion_rad_s(p, 1.0, MU_CURTIS_KM3_S2) * 6 * 3600.0
    nu = mean_to_true_anomaly(m, 1.0)
    assert math.degrees(nu) == pytest.approx(144.75, abs=0.005)
    assert p / (1.0 + math.cos(nu)) == pytest.approx(86976.0, abs=1.0)


def test_curtis_example_3_5_hyperbola():
    # Curtis 3rd ed., Example 3.5 (from memory): perigee speed 15 km/s at 300 km altitude
    # (R = 6378 km). At theta = 100 deg: r = 48497 km, F = 2.2927 rad, t = 4141 s after perigee;
    # three hours later: theta = 107.78 deg, r = 163180 km.
    rp = 6378.0 + 300.0
    h = rp * 15.0
    p = h**2 / MU_CURTIS_KM3_S2
    e = p / rp - 1.0
    nu = math.radians(100.0)
    assert p / (1.0 + e * math.cos(nu)) == pytest.approx(48497.0, abs=1.0)
    assert true_to_hyperbolic_anomaly(nu, e) == pytest.approx(2.2927, abs=5e-5)
    n = mean_motion_rad_s(p, e, MU_CURTIS_KM3_S2)
    t = true_to_mean_anomaly(nu, e) / n
    assert t == pytest.approx(4141.0, abs=0.5)
    nu_later = mean_to_true_anomaly(n * (t + 3 * 3600.0), e)
    assert math.degrees(nu_later) == pytest.approx(107.78, abs=0.005)
    assert p / (1.0 + e * math.cos(nu_later)) == pytest.approx(163180.0, abs=1.0)


# --- round trips and conventions ----------------------------------------------------------------


@SETTINGS
@given(st.floats(-3.14159, 3.14159))
def test_barker_round_trip(nu):
    b = true_to_parabolic_anomaly(nu)
    assert parabolic_to_true_anomaly(b) == pytest.approx(nu, abs=1e-13)
    m = parabolic_to_mean_anomaly(b)
    assert mean_to_parabolic_anomaly(m) == pytest.approx(b, rel=1e-13, abs=1e-300)
    assert mean_to_true_anomaly(m, 1.0) == pytest.approx(nu, abs=1e-13)


@SETTINGS
@given(st.floats(-40.0, 40.0), st.floats(0.0, 0.999))
def test_elliptic_round_trips_keep_revolutions(nu, e):
    big_e = true_to_eccentric_anomaly(nu, e)
    assert eccentric_to_true_anomaly(big_e, e) == pytest.approx(nu, abs=1e-12)
    m = eccentric_to_mean_anomaly(big_e, e)
    # M carries rounding eps |M|, magnified by dnu/dM, largest at periapsis:
    # (1 + e)^2 / (1 - e^2)^(3/2).
    condition = (1.0 + e) ** 2 / ((1.0 - e) * (1.0 + e)) ** 1.5
    tolerance = 1e-12 + 10.0 * np.finfo(float).eps * max(1.0, abs(m)) * condition
    assert mean_to_true_anomaly(m, e) == pytest.approx(nu, abs=tolerance)
    # Same revolution: nu, E and M agree on the nearest multiple of 2 pi.
    assert round(nu / (2 * math.pi)) == round(big_e / (2 * math.pi)) == round(m / (2 * math.pi))


@SETTINGS
@given(st.floats(-3.14, 3.14), st.floats(1.0 - 1e-6, 1.0 - 1e-15))
def test_near_parabolic_ellipse_round_trip_within_first_revolution(nu, e):
    m = true_to_mean_anomaly(nu, e)
    assert mean_to_true_anomaly(m, e) == pytest.approx(nu, abs=1e-12)


@SETTINGS
@given(st.floats(1.0 + 1e-12, 30.0), st.floats(-0.999, 0.999))
def test_hyperbolic_round_trip(e, fraction):
    nu = fraction * math.acos(-1.0 / e)
    h = true_to_hyperbolic_anomaly(nu, e)
    assert hyperbolic_to_true_anomaly(h, e) == pytest.approx(nu, abs=1e-12)
    m = hyperbolic_to_mean_anomaly(h, e)
    assert mean_to_true_anomaly(m, e) == pytest.approx(nu, abs=1e-11)


@pytest.mark.parametrize("nu", [0.5, 2.0, 3.0])
def test_time_since_periapsis_is_continuous_through_the_parabola(nu):
    # t = M / n must tend to the parabolic (Barker) time as e -> 1 from either side,
    # with a difference proportional to |e - 1|.
    p, mu = 7000.0, 398600.4418
    t_parabola = true_to_mean_anomaly(nu, 1.0) / mean_motion_rad_s(p, 1.0, mu)
    for offset in (1e-6, 1e-10):
        for e in (1.0 - offset, 1.0 + offset):
            t = true_to_mean_anomaly(nu, e) / mean_motion_rad_s(p, e, mu)
            assert abs(t / t_parabola - 1.0) < 200.0 * offset


def test_mixed_conics_vectorised_equals_per_sample():
    nu = np.array([0.3, -2.0, 1.0, 1.2, -0.5, 7.0])
    e = np.array([0.0, 0.7, 1.0, 1.5, 4.0, 0.1])
    m = true_to_mean_anomaly(nu, e)
    assert m.shape == (6,)
    for k in range(6):
        assert m[k] == true_to_mean_anomaly(nu[k], e[k])
    back = mean_to_true_anomaly(m, e)
    np.testing.assert_allclose(back, nu, atol=1e-12)
    for k in range(6):
        assert back[k] == pytest.approx(mean_to_true_anomaly(m[k], e[k]), abs=1e-15)


def test_scalars_give_floats_and_broadcasting():
    assert isinstance(mean_to_true_anomaly(1.0, 0.2), float)
    assert isinstance(true_to_mean_anomaly(1.0, 2.0), float)
    out = mean_to_true_anomaly(np.linspace(0, 6, 7), 0.3)
    assert out.shape == (7,)
    out = true_to_mean_anomaly(0.4, np.array([0.0, 0.5, 1.0, 2.0]))
    assert out.shape == (4,)


def test_mean_motion_definitions():
    mu, p = 398600.4418, 9000.0
    for e in (0.0, 0.3, 0.99):
        a = p / (1.0 - e * e)
        assert mean_motion_rad_s(p, e, mu) == pytest.approx(math.sqrt(mu / a**3), rel=1e-14)
    for e in (1.01, 3.0):
        a = p / (1.0 - e * e)
        assert mean_motion_rad_s(p, e, mu) == pytest.approx(math.sqrt(mu / (-a) ** 3), rel=1e-14)
    assert mean_motion_rad_s(p, 1.0, mu) == pytest.approx(2.0 * math.sqrt(mu / p**3), rel=1e-15)


# --- refusals -----------------------------------------------------------------------------------


def test_bad_inputs_raise():
    with pytest.raises(ValueError, match="eccentricity"):
        true_to_mean_anomaly(1.0, -0.1)
    with pytest.raises(ValueError, match="finite"):
        mean_to_true_anomaly(math.nan, 0.1)
    with pytest.raises(ValueError, match="finite"):
        true_to_mean_anomaly(1.0, math.inf)
    with pytest.raises(ValueError, match="asymptotes"):
        true_to_mean_anomaly(2.5, 1.5)  # arccos(-1/1.5) = 131.8 deg < 2.5 rad
    with pytest.raises(ValueError, match="asymptotes"):
        true_to_mean_anomaly(math.pi, 1.0)
    with pytest.raises(ValueError, match="elliptic"):
        true_to_eccentric_anomaly(0.1, 1.0)
    with pytest.raises(ValueError, match="hyperbolic"):
        mean_to_hyperbolic_anomaly(0.1, 0.5)
    with pytest.raises(ValueError, match="mu_km3_s2"):
        mean_motion_rad_s(7000.0, 0.1, 0.0)
    with pytest.raises(ValueError, match="semi-latus"):
        mean_motion_rad_s(-7000.0, 0.1, 398600.4418)
