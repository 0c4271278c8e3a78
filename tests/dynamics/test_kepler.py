"""Tests of service.dynamics.kepler: published examples, an independent integrator, properties."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

from service.dynamics import kepler
from service.dynamics.bodies import EARTH, MOON
from service.dynamics.kepler import (
    KeplerConvergenceError,
    propagate,
    propagate_many_times,
)

MU = EARTH.mu_km3_s2
PROPERTY = settings(max_examples=200, deadline=None)


def state_from_elements(rp_km, e, nu_rad, i_rad=0.4, raan_rad=1.1, argp_rad=2.3, mu=MU):
    """Inertial state from periapsis radius and angles (Curtis 3rd ed., Algorithm 4.5).

    Written here, not imported, so the tests do not lean on other modules of the package.
    """
    p = rp_km * (1.0 + e)
    r_pf = p / (1.0 + e * math.cos(nu_rad)) * np.array([math.cos(nu_rad), math.sin(nu_rad), 0.0])
    v_pf = math.sqrt(mu / p) * np.array([-math.sin(nu_rad), e + math.cos(nu_rad), 0.0])
    co, so = math.cos(raan_rad), math.sin(raan_rad)
    ci, si = math.cos(i_rad), math.sin(i_rad)
    cw, sw = math.cos(argp_rad), math.sin(argp_rad)
    q = np.array(
        [
            [co * cw - so * sw * ci, -co * sw - so * cw * ci, so * si],
            [so * cw + co * sw * ci, -so * sw + co * cw * ci, -co * si],
            [sw * si, cw * si, ci],
        ]
    )
    return q @ r_pf, q @ v_pf


def period_s(r_km, v_km_s, mu=MU):
    a = 1.0 / (2.0 / np.linalg.norm(r_km) - np.dot(v_km_s, v_km_s) / mu)
    return 2.0 * math.pi * math.sqrt(a**3 / mu)


def integrate(r0, v0, times_s, mu=MU):
    """Two-body states at times_s by scipy's DOP853 (the independent oracle).

    Integrated in canonical units (length |r0|, time sqrt(|r0|^3 / mu)) so that
    rtol = atol = 1e-12 mean the same for every orbit; forward and backward separately.
    """
    du = float(np.linalg.norm(r0))
    tu = math.sqrt(du**3 / mu)
    vu = du / tu
    y0 = np.concatenate([r0 / du, v0 / vu])

    def rhs(_t, y):
        r = y[:3]
        return np.concatenate([y[3:], -r / np.dot(r, r) ** 1.5])

    out = np.empty((len(times_s), 6))
    times = np.asarray(times_s, dtype=float) / tu
    for sign in (1.0, -1.0):
        pick = np.flatnonzero(sign * times >= 0.0)
        if pick.size == 0:
            continue
        order = pick[np.argsort(sign * times[pick])]
        sol = solve_ivp(
            rhs,
            (0.0, times[order[-1]]),
            y0,
            method="DOP853",
            t_eval=times[order],
            rtol=1e-12,
            atol=1e-12,
        )
        assert sol.success, sol.message
        out[order] = sol.y.T
    return out[:, :3] * du, out[:, 3:] * vu


# ---------------------------------------------------------------- published examples


def test_vallado_example_2_4():
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Example 2-4.
    r0 = np.array([1131.340, -2282.343, 6672.423])
    v0 = np.array([-5.64305, 4.30333, 2.42879])
    r, v = propagate(r0, v0, 40.0 * 60.0, 398600.4418)
    r_ref = np.array([-4219.7527, 4363.0292, -3958.7666])
    v_ref = np.array([3.689866, -1.916735, -6.112511])
    np.testing.assert_allclose(r, r_ref, rtol=1e-5)
    np.testing.assert_allclose(v, v_ref, rtol=1e-5)
    # Also within half a unit of the last printed digit.
    np.testing.assert_allclose(r, r_ref, rtol=0, atol=5e-5)
    np.testing.assert_allclose(v, v_ref, rtol=0, atol=5e-7)


def test_curtis_example_3_7():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 3.7 (from memory).
    r0 = np.array([7000.0, -12124.0, 0.0])
    v0 = np.array([2.6679, 4.6210, 0.0])
    r, v = propagate(r0, v0, 3600.0, 398600.0)
    np.testing.assert_allclose(r, [-3297.8, 7413.4, 0.0], rtol=0, atol=0.05)
    # The printed velocity [-8.2977, -0.96309] differs from ours [-8.29760, -0.96404] by up
    # to 9.5e-4 km/s, and scipy's DOP853 (next test) agrees with ours to 1e-9 km/s: the book
    # carries chi = 253.53 and f-dot, g-dot to five digits, and vy is the difference of two
    # ~7 km/s terms, which turns that rounding into ~1e-3 km/s. Hence the loose atol.
    np.testing.assert_allclose(v, [-8.2977, -0.96309, 0.0], rtol=0, atol=1e-3)


def test_curtis_example_3_7_against_scipy_integrator():
    # Same case; oracle scipy.integrate.solve_ivp (DOP853).
    r0 = np.array([7000.0, -12124.0, 0.0])
    v0 = np.array([2.6679, 4.6210, 0.0])
    r, v = propagate(r0, v0, 3600.0, 398600.0)
    r_ref, v_ref = integrate(r0, v0, [3600.0], mu=398600.0)
    np.testing.assert_allclose(r, r_ref[0], rtol=0, atol=1e-6)
    np.testing.assert_allclose(v, v_ref[0], rtol=0, atol=1e-9)


# ---------------------------------------------------------------- independent oracle

ORACLE_CASES = {
    # name: (periapsis radius km, e, true anomaly rad, time span s)
    "elliptic e=0.7, 3 orbits": (7000.0, 0.7, 2.0, "3P"),
    "LEO near-circular, 5 orbits": (6778.137, 0.001, 0.3, "5P"),
    "hyperbolic e=1.5, 6 h": (7000.0, 1.5, -0.5, 6 * 3600.0),
    "hyperbolic e=3, 6 h": (8000.0, 3.0, 0.8, 6 * 3600.0),
    "near-parabolic e=1-1e-8, 6 h": (7000.0, 1.0 - 1e-8, -1.0, 6 * 3600.0),
    "near-parabolic e=1+1e-8, 6 h": (7000.0, 1.0 + 1e-8, 1.2, 6 * 3600.0),
    "high e=0.97 through periapsis": (6800.0, 0.97, -0.3, "1P"),
}


@pytest.mark.parametrize("name", list(ORACLE_CASES))
def test_agrees_with_scipy_dop853_both_directions(name):
    # Oracle: scipy.integrate.solve_ivp, DOP853, rtol = atol = 1e-12 in canonical units.
    rp, e, nu, span = ORACLE_CASES[name]
    r0, v0 = state_from_elements(rp, e, nu)
    if isinstance(span, str):
        span = float(span[:-1]) * period_s(r0, v0)
    times = np.linspace(-span, span, 41)
    r, v = propagate(r0, v0, times, MU)
    r_ref, v_ref = integrate(r0, v0, times)
    assert r.shape == (41, 3)
    np.testing.assert_allclose(r, r_ref, rtol=0, atol=1e-3)  # metres
    np.testing.assert_allclose(v, v_ref, rtol=0, atol=1e-6)  # mm/s


def test_inbound_hyperbola_from_sphere_of_influence():
    # A state 925,000 km out, falling in: Newton from Vallado's log guess wanders here, so
    # this exercises the bracketing finish. Oracle: scipy solve_ivp (DOP853).
    e, rp = 2.0, 6678.137
    p = rp * (1 + e)
    nu = -math.acos((p / 925_000.0 - 1.0) / e)
    r0, v0 = state_from_elements(rp, e, nu)
    # Time to periapsis from the hyperbolic Kepler equation (Curtis 3rd ed., section 3.6).
    a = rp / (1.0 - e)
    f_anomaly = 2.0 * math.atanh(math.sqrt((e - 1.0) / (e + 1.0)) * math.tan(nu / 2.0))
    to_periapsis = -(e * math.sinh(f_anomaly) - f_anomaly) / math.sqrt(MU / (-a) ** 3)
    times = np.array([0.5, 0.9, 0.99, 1.0, 1.01, 1.5]) * to_periapsis
    r, v = propagate(r0, v0, times, MU)
    r_ref, v_ref = integrate(r0, v0, times)
    np.testing.assert_allclose(r, r_ref, rtol=0, atol=1e-3)
    np.testing.assert_allclose(v, v_ref, rtol=0, atol=1e-6)
    assert np.linalg.norm(r[3]) == pytest.approx(rp, abs=1e-6)


def test_many_orbits_fold_onto_one():
    # Elliptic motion repeats with the period 2 pi sqrt(a^3/mu) (Kepler's third law).
    r0, v0 = state_from_elements(7000.0, 0.6, 1.0)
    period = period_s(r0, v0)
    r_far, v_far = propagate(r0, v0, 1000.0 * period + 1234.5, MU)
    r_near, v_near = propagate(r0, v0, 1234.5, MU)
    np.testing.assert_allclose(r_far, r_near, rtol=0, atol=1e-6)
    np.testing.assert_allclose(v_far, v_near, rtol=0, atol=1e-9)


# ---------------------------------------------------------------- properties


@st.composite
def orbit_and_time(draw):
    kind = draw(st.sampled_from(["elliptic", "hyperbolic", "near-parabolic"]))
    rp = draw(st.floats(6600.0, 42000.0))
    if kind == "elliptic":
        # Apoapsis kept within 400,000 km (about the Moon's distance).
        e = draw(st.floats(0.0, 1.0)) * min(0.95, (4e5 - rp) / (4e5 + rp))
    elif kind == "hyperbolic":
        e = draw(st.floats(1.05, 4.0))
    else:
        e = 1.0 + draw(st.floats(-1e-6, 1e-6))
    nu_max = math.pi if e < 1.0 else math.acos(-1.0 / e)
    nu = draw(st.floats(-0.8, 0.8)) * nu_max
    angles = [draw(st.floats(0.0, 2 * math.pi)) for _ in range(3)]
    r0, v0 = state_from_elements(rp, e, nu, *angles)
    if kind == "elliptic":
        dt = draw(st.floats(-5.0, 5.0)) * period_s(r0, v0)
    else:
        dt = draw(st.floats(-43200.0, 43200.0))
    return r0, v0, dt


def energy(r, v):
    return 0.5 * np.sum(v * v, axis=-1) - MU / np.linalg.norm(r, axis=-1)


@PROPERTY
@given(orbit_and_time())
def test_energy_and_angular_momentum_conserved(case):
    r0, v0, dt = case
    r, v = propagate(r0, v0, dt, MU)
    # Energy relative to its kinetic and potential parts (the total can be ~0).
    scale = 0.5 * np.dot(v0, v0) + MU / np.linalg.norm(r0)
    assert abs(energy(r, v) - energy(r0, v0)) <= 1e-10 * scale
    h0 = np.cross(r0, v0)
    assert np.linalg.norm(np.cross(r, v) - h0) <= 1e-10 * np.linalg.norm(h0)


@PROPERTY
@given(orbit_and_time())
def test_forward_then_back_returns_start(case):
    r0, v0, dt = case
    r, v = propagate(r0, v0, dt, MU)
    r_back, v_back = propagate(r, v, -dt, MU)
    np.testing.assert_allclose(r_back, r0, rtol=0, atol=1e-6)
    np.testing.assert_allclose(v_back, v0, rtol=0, atol=1e-9)


@PROPERTY
@given(orbit_and_time(), st.floats(-0.9, 0.9))
def test_two_steps_equal_one(case, split):
    r0, v0, dt = case
    dt1 = split * dt
    dt2 = dt - dt1
    r_one, v_one = propagate(r0, v0, dt1 + dt2, MU)
    r_mid, v_mid = propagate(r0, v0, dt1, MU)
    r_two, v_two = propagate(r_mid, v_mid, dt2, MU)
    np.testing.assert_allclose(r_two, r_one, rtol=0, atol=1e-6)
    np.testing.assert_allclose(v_two, v_one, rtol=0, atol=1e-9)


@settings(max_examples=50, deadline=None)
@given(st.lists(orbit_and_time(), min_size=2, max_size=30))
def test_batch_equals_single_calls(cases):
    r0 = np.array([c[0] for c in cases])
    v0 = np.array([c[1] for c in cases])
    dt = np.array([c[2] for c in cases])
    r, v = propagate(r0, v0, dt, MU)
    for k, (rk, vk, dtk) in enumerate(cases):
        r1, v1 = propagate(rk, vk, dtk, MU)
        np.testing.assert_allclose(r[k], r1, rtol=1e-12, atol=1e-12 * np.linalg.norm(r1))
        np.testing.assert_allclose(v[k], v1, rtol=1e-12, atol=1e-12 * np.linalg.norm(v1))


# ---------------------------------------------------------------- shapes and zero time


def test_shapes_broadcast():
    r0, v0 = state_from_elements(7000.0, 0.1, 0.2)
    assert propagate(r0, v0, 60.0, MU)[0].shape == (3,)
    r_t, v_t = propagate(r0, v0, [60.0, 120.0, 180.0], MU)
    assert r_t.shape == v_t.shape == (3, 3)
    rs, vs = np.stack([r0, 2 * r0]), np.stack([v0, v0 / math.sqrt(2)])
    assert propagate(rs, vs, 60.0, MU)[0].shape == (2, 3)
    assert propagate(rs, vs, [60.0, 90.0], MU)[1].shape == (2, 3)
    # per-sample GM: Earth and Moon (service.dynamics.bodies) in one call
    r_mix, v_mix = propagate(rs, vs, [60.0, 90.0], [MU, MOON.mu_km3_s2])
    np.testing.assert_allclose(r_mix[1], propagate(rs[1], vs[1], 90.0, MOON.mu_km3_s2)[0])
    np.testing.assert_allclose(v_mix[0], propagate(rs[0], vs[0], 60.0, MU)[1])
    # one state, many times: each row equals its own single call
    for k, t in enumerate([60.0, 120.0, 180.0]):
        np.testing.assert_allclose(r_t[k], propagate(r0, v0, t, MU)[0], rtol=1e-13)


def test_many_times_helper():
    r0, v0 = state_from_elements(7000.0, 0.1, 0.2)
    times = np.linspace(0.0, 7200.0, 7)
    r, v = propagate_many_times(r0, v0, times, MU)
    assert r.shape == v.shape == (7, 3)
    np.testing.assert_array_equal(r, propagate(r0, v0, times, MU)[0])
    with pytest.raises(ValueError, match="one state"):
        propagate_many_times(np.stack([r0, r0]), np.stack([v0, v0]), times, MU)
    with pytest.raises(ValueError, match="times_s"):
        propagate_many_times(r0, v0, 60.0, MU)


def test_whole_period_returns_start():
    # A circular orbit after exactly one period 2 pi sqrt(r^3/mu) (Kepler's third law):
    # the time folds to 0.
    r0 = np.array([6600.0, 0.0, 0.0])
    v0 = np.array([0.0, math.sqrt(MU / 6600.0), 0.0])
    r, v = propagate(r0, v0, period_s(r0, v0), MU)
    np.testing.assert_allclose(r, r0, rtol=0, atol=1e-9)
    np.testing.assert_allclose(v, v0, rtol=0, atol=1e-12)


@pytest.mark.parametrize("dt", [5e-324, -1e-300, 1e-200, 3e-18])
def test_tiny_times(dt):
    # Over such times r = r0 + v0 dt and v = v0 - mu r0 dt / |r0|^3 to rounding (the f and g
    # series; the next terms are below 1e-30 relative).
    r0, v0 = state_from_elements(7000.0, 0.3, 0.5)
    r, v = propagate(r0, v0, dt, MU)
    np.testing.assert_allclose(r, r0 + v0 * dt, rtol=1e-15)
    np.testing.assert_allclose(v, v0 - MU * r0 * dt / np.linalg.norm(r0) ** 3, rtol=1e-15)


def test_series_and_universal_paths_meet():
    # Either side of the switch at 1e-20 of sqrt(r0^3 / mu), the two paths agree.
    r0, v0 = state_from_elements(7000.0, 0.3, 0.5)
    switch = kepler._SERIES_DT * math.sqrt(np.linalg.norm(r0) ** 3 / MU)
    r, v = propagate(r0, v0, [switch * (1 - 1e-9), switch * (1 + 1e-9)], MU)
    np.testing.assert_allclose(r[0], r[1], rtol=1e-15)
    np.testing.assert_allclose(v[0], v[1], rtol=1e-15)


def test_zero_time_returns_input_exactly():
    r0, v0 = state_from_elements(7000.0, 1.5, 0.4)
    r, v = propagate(r0, v0, 0.0, MU)
    assert np.array_equal(r, r0) and np.array_equal(v, v0)
    r, v = propagate(r0, v0, [0.0, 60.0, 0.0], MU)
    assert np.array_equal(r[0], r0) and np.array_equal(v[2], v0)
    assert not np.array_equal(r[1], r0)


# ---------------------------------------------------------------- errors


@pytest.mark.parametrize(
    ("r0", "v0", "dt", "mu", "message"),
    [
        ([np.nan, 7000.0, 0.0], [0.0, 7.5, 0.0], 60.0, MU, "non-finite"),
        ([7000.0, 0.0, 0.0], [0.0, np.inf, 0.0], 60.0, MU, "non-finite"),
        ([7000.0, 0.0, 0.0], [0.0, 7.5, 0.0], np.nan, MU, "non-finite"),
        ([7000.0, 0.0, 0.0], [0.0, 7.5, 0.0], 60.0, np.nan, "non-finite"),
        ([0.0, 0.0, 0.0], [0.0, 7.5, 0.0], 60.0, MU, "non-zero"),
        ([7000.0, 0.0, 0.0], [0.0, 7.5, 0.0], 60.0, 0.0, "positive"),
        ([7000.0, 0.0, 0.0], [0.0, 7.5, 0.0], 60.0, -MU, "positive"),
        ([7000.0, 0.0], [0.0, 7.5, 0.0], 60.0, MU, "shape"),
        ([[7000.0, 0.0, 0.0]] * 2, [0.0, 7.5, 0.0], [1.0, 2.0, 3.0], MU, "broadcast"),
    ],
)
def test_bad_input_raises_value_error(r0, v0, dt, mu, message):
    with pytest.raises(ValueError, match=message):
        propagate(r0, v0, dt, mu)


def test_bracketing_finish_matches_newton(monkeypatch):
    # With one Newton iteration almost every sample is left to scipy's find_root; the
    # answers must be the same as Newton's own.
    rng = np.random.default_rng(7)
    cases = [
        state_from_elements(7000.0, e, nu)
        for e, nu in zip(rng.uniform(0.0, 0.9, 20), rng.uniform(-3.0, 3.0, 20), strict=True)
    ]
    r0 = np.array([c[0] for c in cases])
    v0 = np.array([c[1] for c in cases])
    dt = rng.uniform(-20000.0, 20000.0, 20)
    r_ref, v_ref = propagate(r0, v0, dt, MU)
    monkeypatch.setattr(kepler, "_NEWTON_MAXITER", 1)
    r, v = propagate(r0, v0, dt, MU)
    np.testing.assert_allclose(r, r_ref, rtol=0, atol=1e-8)
    np.testing.assert_allclose(v, v_ref, rtol=0, atol=1e-11)


class _WrongRoot:
    """Stands in for scipy's find_root and answers the middle of the bracket."""

    def __init__(self, x):
        self.x = x


@pytest.mark.parametrize(
    ("answer", "worst"),
    [(lambda lo, hi: 0.5 * (lo + hi), r"0\.\d+"), (lambda lo, hi: np.nan * lo, "non-finite")],
)
def test_non_convergence_names_count_and_residual(monkeypatch, answer, worst):
    monkeypatch.setattr(kepler, "_NEWTON_MAXITER", 1)
    monkeypatch.setattr(kepler, "find_root", lambda f, init, args: _WrongRoot(answer(*init)))
    r0, v0 = state_from_elements(7000.0, 0.9, -0.2)
    pattern = rf"did not converge for [123] of 3 samples: worst relative residual .* {worst} \("
    with pytest.raises(KeplerConvergenceError, match=pattern):
        propagate(r0, v0, [30000.0, 40000.0, 50000.0], MU)


def test_lagrange_identity_guard_raises(monkeypatch):
    monkeypatch.setattr(kepler, "_LAGRANGE_TOL", -1.0)
    r0, v0 = state_from_elements(7000.0, 0.1, 0.2)
    with pytest.raises(KeplerConvergenceError, match=r"Lagrange identity .* for 2 of 2"):
        propagate(r0, v0, [60.0, 120.0], MU)
