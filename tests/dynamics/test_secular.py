"""Secular J2 drift: sun-synchronous and critical inclinations, and a numerical J2 integration."""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

from service.dynamics.anomalies import true_to_mean_anomaly
from service.dynamics.bodies import EARTH, MARS
from service.dynamics.elements import Elements, elements_to_state, period_s, state_to_elements
from service.dynamics.secular import j2_secular_rates, propagate_j2_secular

MU = EARTH.mu_km3_s2
R_EARTH = EARTH.equatorial_radius_km
SECONDS_PER_DAY = 86400.0
# Sun-synchronous node rate: 360 deg per tropical year of 365.2421897 d = 0.98564736 deg/day
# (project REFERENCES.md, "Sun-synchronous orbits").
SUN_SYNC_DEG_PER_DAY = 360.0 / 365.2421897


def _j2_acceleration_rhs(_t, y):
    """Two-body + J2 acceleration (Curtis 3rd ed., eq. 12.30, equation number from memory)."""
    r = y[:3]
    r_mag = np.linalg.norm(r)
    z2 = (r[2] / r_mag) ** 2
    scale = -1.5 * EARTH.j2 * MU * R_EARTH**2 / r_mag**4
    a_j2 = scale * np.array(
        [r[0] / r_mag * (1 - 5 * z2), r[1] / r_mag * (1 - 5 * z2), r[2] / r_mag * (3 - 5 * z2)]
    )
    return np.concatenate([y[3:], -MU * r / r_mag**3 + a_j2])


# --- reference rates ----------------------------------------------------------------------------


def test_sun_synchronous_node_rate():
    assert SUN_SYNC_DEG_PER_DAY == pytest.approx(0.98564736, abs=5e-9)


@pytest.mark.parametrize(
    ("altitude_km", "inclination_deg"),
    # Project REFERENCES.md, "Sun-synchronous orbits" (computed with WGS 84 R, EGM96 J2, e = 0;
    # SMAD quotes about 98.6 deg at 800 km, from memory).
    [(500.0, 97.4018), (600.0, 97.7877), (700.0, 98.1880), (800.0, 98.6031)],
)
def test_sun_synchronous_inclinations(altitude_km, inclination_deg):
    el = Elements(R_EARTH + altitude_km, 0.0, math.radians(inclination_deg), 0.0, 0.0, 0.0)
    raan_dot, _, _ = j2_secular_rates(el, EARTH)
    # 4-decimal inclinations fix the rate to ~1e-5 relative (d ln|cos i| / di = tan i).
    assert math.degrees(raan_dot) * SECONDS_PER_DAY == pytest.approx(SUN_SYNC_DEG_PER_DAY, rel=1e-5)


def test_critical_inclination_freezes_periapsis():
    # Critical inclination 63.4349 deg (sin^2 i = 4/5; Vallado 4th ed., section 9.6;
    # Curtis 3rd ed., section 4.7, from memory).
    el = Elements(26560.0 * (1 - 0.74**2), 0.74, math.radians(63.4349), 0.0, 4.7, 0.0)
    _, argp_dot, mean_dot = j2_secular_rates(el, EARTH)
    # 63.4349 is 5e-5 deg from the exact root, leaving 4 - 5 sin^2 i of about 3e-6.
    scale = 3.0 * EARTH.j2 * (R_EARTH / el.p_km) ** 2 * (mean_dot)
    assert abs(argp_dot) < 1e-5 * scale
    exact = Elements(el.p_km, el.e, math.asin(math.sqrt(0.8)), 0.0, 4.7, 0.0)
    assert abs(j2_secular_rates(exact, EARTH)[1]) < 1e-15 * scale


def test_rates_formula_and_polar_orbit():
    # Polar orbit: no nodal drift; the formula's factors checked by hand.
    p, e = 7000.0, 0.05
    el = Elements(p, e, math.pi / 2, 1.0, 2.0, 3.0)
    raan_dot, argp_dot, mean_dot = j2_secular_rates(el, EARTH)
    n = math.sqrt(MU / (p / (1 - e * e)) ** 3)
    k = EARTH.j2 * (R_EARTH / p) ** 2
    assert abs(raan_dot) < 1e-20
    assert argp_dot == pytest.approx(0.75 * n * k * (4 - 5), rel=1e-14)
    assert mean_dot == pytest.approx(n * (1 + 0.75 * k * math.sqrt(1 - e * e) * (2 - 3)), rel=1e-14)
    # Another body: rates scale with its own constants.
    mars_el = Elements(4000.0, 0.0, 0.0, 0.0, 0.0, 0.0)
    raan_mars = j2_secular_rates(mars_el, MARS)[0]
    n_mars = math.sqrt(MARS.mu_km3_s2 / 4000.0**3)
    expected = -1.5 * n_mars * MARS.j2 * (MARS.equatorial_radius_km / 4000.0) ** 2
    assert raan_mars == pytest.approx(expected, rel=1e-14)


# --- propagation --------------------------------------------------------------------------------


def _leo_state(inclination_deg=51.6, e=0.001, nu=0.2):
    el = Elements(6878.0 * (1 - e * e), e, math.radians(inclination_deg), 1.0, 0.5, nu)
    return el, *elements_to_state(el, MU)


def test_zero_time_returns_start_state():
    for inc, e in ((51.6, 0.001), (0.0, 0.0), (180.0, 0.3), (97.0, 0.0)):
        _, r0, v0 = _leo_state(inc, e)
        r, v = propagate_j2_secular(r0, v0, 0.0, EARTH)
        np.testing.assert_allclose(r, r0, rtol=0, atol=1e-10 * np.linalg.norm(r0))
        np.testing.assert_allclose(v, v0, rtol=0, atol=1e-10 * np.linalg.norm(v0))


def test_one_nodal_period_moves_node_by_rate_times_time():
    el, r0, v0 = _leo_state(51.6, 0.01)
    raan_dot, argp_dot, mean_dot = j2_secular_rates(el, EARTH)
    nodal_period = 2 * math.pi / (argp_dot + mean_dot)  # argument of latitude returns
    r, v = propagate_j2_secular(r0, v0, nodal_period, EARTH)
    after = state_to_elements(r, v, MU)
    assert after.raan_rad - el.raan_rad == pytest.approx(raan_dot * nodal_period, abs=1e-12)
    # The mean argument of latitude argp + M is back where it started.
    u_before = el.argp_rad + true_to_mean_anomaly(el.nu_rad, el.e)
    u_after = after.argp_rad + true_to_mean_anomaly(after.nu_rad, after.e)
    assert math.remainder(u_after - u_before, 2 * math.pi) == pytest.approx(0.0, abs=1e-10)
    assert after.p_km == pytest.approx(el.p_km, rel=1e-12)
    assert after.e == pytest.approx(el.e, rel=1e-9)
    assert after.i_rad == pytest.approx(el.i_rad, abs=1e-12)


@pytest.mark.parametrize(("inclination_deg", "e"), [(51.6, 0.001), (98.0, 0.01), (30.0, 0.1)])
def test_node_drift_matches_numerical_j2_integration(inclination_deg, e):
    # Independent: scipy solve_ivp (DOP853) of two-body + J2 acceleration over 15 orbits.
    # The integration gives osculating elements with short-period wiggles; a straight-line fit
    # over 15 revolutions averages them out. Measured agreement is 0.01-0.3 %.
    el = Elements(7000.0 * (1 - e * e), e, math.radians(inclination_deg), 1.0, 0.5, 0.2)
    r0, v0 = elements_to_state(el, MU)
    t = np.linspace(0.0, 15 * period_s(el, MU), 1501)
    sol = solve_ivp(
        _j2_acceleration_rhs,
        (0.0, t[-1]),
        np.concatenate([r0, v0]),
        method="DOP853",
        t_eval=t,
        rtol=1e-11,
        atol=1e-9,
    )
    assert sol.success
    osculating = state_to_elements(sol.y[:3].T, sol.y[3:].T, MU)
    numerical_rate = np.polyfit(t, np.unwrap(osculating.raan_rad), 1)[0]
    r, v = propagate_j2_secular(r0, v0, t, EARTH)
    secular = state_to_elements(r, v, MU)
    secular_rate = np.polyfit(t, np.unwrap(secular.raan_rad), 1)[0]
    assert secular_rate == pytest.approx(j2_secular_rates(el, EARTH)[0], rel=1e-9)
    assert secular_rate == pytest.approx(numerical_rate, rel=0.02)
    if e >= 0.1:  # periapsis is well defined only for a clearly eccentric orbit
        numerical_argp = np.polyfit(t, np.unwrap(osculating.argp_rad), 1)[0]
        secular_argp = np.polyfit(t, np.unwrap(secular.argp_rad), 1)[0]
        assert secular_argp == pytest.approx(numerical_argp, rel=0.02)


@settings(max_examples=100, deadline=None)
@given(
    st.floats(0.0, 0.8),
    st.sampled_from([0.0, 0.3, 1.2, math.pi / 2, 2.5, math.pi]),
    st.floats(0.0, 2 * math.pi),
    st.floats(-2e5, 2e5),
)
def test_mirror_symmetry(e, inclination, nu, dt):
    # The J2 field is symmetric under y -> -y and z -> -z, so mirroring the start state must
    # mirror the result; this exercises the retrograde/equatorial angle conventions.
    el = Elements(7500.0 * (1 - e * e), e, inclination, 0.7, 1.9, nu)
    r0, v0 = elements_to_state(el, MU)
    r, v = propagate_j2_secular(r0, v0, dt, EARTH)
    for mirror in (np.array([1.0, -1.0, 1.0]), np.array([1.0, 1.0, -1.0])):
        rm, vm = propagate_j2_secular(r0 * mirror, v0 * mirror, dt, EARTH)
        np.testing.assert_allclose(rm, r * mirror, rtol=0, atol=1e-8 * np.linalg.norm(r))
        np.testing.assert_allclose(vm, v * mirror, rtol=0, atol=1e-8 * np.linalg.norm(v))


def test_vectorised_equals_per_row():
    # Equal to rounding: scipy's array and scalar Newton paths stop at slightly different
    # iterates (both converged), hence rtol 1e-12 rather than bit equality.
    states = [
        _leo_state(inc, e, nu)
        for inc, e, nu in ((51.6, 0.001, 0.2), (0.0, 0.2, 1.0), (180.0, 0.0, 2.0), (98.0, 0.0, 3.0))
    ]
    r0 = np.array([s[1] for s in states])
    v0 = np.array([s[2] for s in states])
    dts = np.array([0.0, 600.0, 86400.0, -3000.0])
    # N states, one time.
    r, v = propagate_j2_secular(r0, v0, 5000.0, EARTH)
    assert r.shape == v.shape == (4, 3)
    for k in range(4):
        rk, vk = propagate_j2_secular(r0[k], v0[k], 5000.0, EARTH)
        np.testing.assert_allclose(r[k], rk, rtol=0, atol=1e-12 * np.linalg.norm(rk))
        np.testing.assert_allclose(v[k], vk, rtol=0, atol=1e-12 * np.linalg.norm(vk))
    # One state, N times.
    r, v = propagate_j2_secular(r0[0], v0[0], dts, EARTH)
    assert r.shape == (4, 3)
    for k in range(4):
        rk, _ = propagate_j2_secular(r0[0], v0[0], dts[k], EARTH)
        np.testing.assert_allclose(r[k], rk, rtol=0, atol=1e-12 * np.linalg.norm(rk))
    # N pairs.
    r, v = propagate_j2_secular(r0, v0, dts, EARTH)
    for k in range(4):
        rk, vk = propagate_j2_secular(r0[k], v0[k], dts[k], EARTH)
        np.testing.assert_allclose(r[k], rk, rtol=0, atol=1e-12 * np.linalg.norm(rk))
        np.testing.assert_allclose(v[k], vk, rtol=0, atol=1e-12 * np.linalg.norm(vk))
    # Single state, single time keeps shape (3,).
    r, v = propagate_j2_secular(r0[0], v0[0], 10.0, EARTH)
    assert r.shape == v.shape == (3,)


def test_rates_vectorised():
    el = Elements(
        np.array([7000.0, 8000.0]), np.array([0.0, 0.1]), np.array([0.5, 2.0]), 0.0, 0.0, 0.0
    )
    rates = j2_secular_rates(el, EARTH)
    for k in range(2):
        row = Elements(el.p_km[k], el.e[k], el.i_rad[k], 0.0, 0.0, 0.0)
        for batch, single in zip(rates, j2_secular_rates(row, EARTH), strict=True):
            assert batch[k] == pytest.approx(single, rel=1e-15)


def test_open_orbits_and_bad_input_refused():
    escape = math.sqrt(2 * MU / 7000.0)
    for speed in (escape, 1.2 * escape):
        with pytest.raises(ValueError, match="closed orbits"):
            propagate_j2_secular([7000.0, 0.0, 0.0], [0.0, speed, 0.0], 60.0, EARTH)
    with pytest.raises(ValueError, match="closed orbits"):
        j2_secular_rates(Elements(7000.0, 1.0, 0.1, 0.0, 0.0, 0.0), EARTH)
    with pytest.raises(ValueError, match="closed orbits"):
        j2_secular_rates(Elements(7000.0, np.array([0.1, 2.0]), 0.1, 0.0, 0.0, 0.0), EARTH)
    with pytest.raises(ValueError, match="dt_s"):
        propagate_j2_secular([7000.0, 0.0, 0.0], [0.0, 7.5, 0.0], math.nan, EARTH)
    with pytest.raises(ValueError, match="finite"):
        propagate_j2_secular([7000.0, 0.0, math.inf], [0.0, 7.5, 0.0], 1.0, EARTH)


def test_body_may_be_any_object_with_the_three_attributes():
    body = SimpleNamespace(mu_km3_s2=MU, equatorial_radius_km=R_EARTH, j2=0.0)
    el, r0, v0 = _leo_state()
    # Without J2 the motion is Keplerian: one period later the state repeats.
    r, v = propagate_j2_secular(r0, v0, period_s(el, MU), body)
    np.testing.assert_allclose(r, r0, rtol=0, atol=1e-8 * np.linalg.norm(r0))
    np.testing.assert_allclose(v, v0, rtol=0, atol=1e-8 * np.linalg.norm(v0))
