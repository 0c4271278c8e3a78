"""Tests of orbit-averaged drag decay and orbital lifetime (service.dynamics.decay)."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad, solve_ivp
from scipy.special import ive

from service.dynamics.atmosphere import EXPONENTIAL_BASE_ALTITUDE_KM, density_exponential_kg_m3
from service.dynamics.bodies import EARTH
from service.dynamics.decay import (
    SECONDS_PER_JULIAN_YEAR,
    OrbitalLifetime,
    orbit_averaged_decay_rates,
    orbital_lifetime_years,
)

MU = EARTH.mu_km3_s2
R = EARTH.equatorial_radius_km
B_SMALLSAT_M2_KG = 0.01  # Cd 2.2, A/m ~ 0.0045 m^2/kg: a typical small satellite


def _a_e(perigee_km: float, apogee_km: float) -> tuple[float, float]:
    a = R + 0.5 * (perigee_km + apogee_km)
    return a, (apogee_km - perigee_km) / (2.0 * a)


def _constant_scale_height(rho_p: float, perigee_km: float, scale_height_km: float):
    def density(altitude_km):
        return rho_p * np.exp(-(np.asarray(altitude_km) - perigee_km) / scale_height_km)

    return density


# --- the orbit-averaged rates ------------------------------------------------------------


@pytest.mark.parametrize("altitude_km", [150.0, 250.0, 400.0, 747.2119, 1200.0])
def test_circular_rate_is_the_closed_form(altitude_km):
    # Circular orbit: da/dt = -B rho sqrt(mu a) (King-Hele 1987, chapter 3; Vallado 4th ed.,
    # section 9.7; from memory), with B rho converted from 1/m to 1/km; de/dt = 0.
    a = R + altitude_km
    da_dt, de_dt = orbit_averaged_decay_rates(a, 0.0, B_SMALLSAT_M2_KG)
    expected = (
        -B_SMALLSAT_M2_KG * 1000.0 * density_exponential_kg_m3(altitude_km) * math.sqrt(MU * a)
    )
    assert da_dt == pytest.approx(expected, rel=1e-13)
    assert de_dt == 0.0


@pytest.mark.parametrize(
    ("perigee_km", "scale_height_km", "e"),
    [(300.0, 50.0, 0.001), (300.0, 50.0, 0.01), (300.0, 50.0, 0.03), (250.0, 40.0, 0.05)],
)
def test_king_hele_bessel_series_for_small_eccentricity(perigee_km, scale_height_km, e):
    # King-Hele (1987), series for an atmosphere of constant scale height H, with c = a e / H
    # and rho_p the perigee density (from memory, re-derived by expanding the integrands):
    #   da/dt = -B sqrt(mu a) rho_p e^-c [I0 + 2 e I1 + 3/4 e^2 (I0 + I2) + O(e^3)]
    #   de/dt = -B sqrt(mu/a) rho_p e^-c [I1 + e/2 (I0 + I2) - e^2/8 (5 I1 - I3) + O(e^3)]
    # Bessel functions from scipy.special.ive (= I_n(c) e^-c). The residual must be O(e^3).
    rho_p = 3e-11
    a = (R + perigee_km) / (1.0 - e)
    c = a * e / scale_height_km
    density = _constant_scale_height(rho_p, perigee_km, scale_height_km)
    da_dt, de_dt = orbit_averaged_decay_rates(a, e, B_SMALLSAT_M2_KG, density=density)
    k = B_SMALLSAT_M2_KG * 1000.0 * rho_p
    da_series = (
        -k
        * math.sqrt(MU * a)
        * (ive(0, c) + 2 * e * ive(1, c) + 0.75 * e**2 * (ive(0, c) + ive(2, c)))
    )
    de_series = (
        -k
        * math.sqrt(MU / a)
        * (ive(1, c) + e / 2 * (ive(0, c) + ive(2, c)) - e**2 / 8 * (5 * ive(1, c) - ive(3, c)))
    )
    assert da_dt == pytest.approx(da_series, rel=max(2.0 * e**3, 1e-10))
    assert de_dt == pytest.approx(de_series, rel=max(2.0 * e**3, 1e-8))


@pytest.mark.parametrize(
    ("perigee_km", "apogee_km"),
    [(300.0, 600.0), (250.0, 1000.0), (180.0, 5000.0), (200.0, 35786.0), (400.0, 402.0)],
)
def test_orbit_average_against_adaptive_quadrature(perigee_km, apogee_km):
    # The averages (module docstring) evaluated independently with scipy.integrate.quad over
    # E in [0, pi], split where the altitude crosses a base altitude of Table 8-4.
    a, e = _a_e(perigee_km, apogee_km)
    altitudes = EXPONENTIAL_BASE_ALTITUDE_KM[
        (EXPONENTIAL_BASE_ALTITUDE_KM > perigee_km) & (EXPONENTIAL_BASE_ALTITUDE_KM < apogee_km)
    ]
    edges = np.concatenate([[0.0], np.arccos((1.0 - (R + altitudes) / a) / e), [math.pi]])

    def mean(weight):
        def integrand(ecc_anomaly):
            cos_e = math.cos(ecc_anomaly)
            rho = float(density_exponential_kg_m3(a * (1.0 - e * cos_e) - R))
            return rho * weight(cos_e)

        return (
            sum(
                quad(integrand, lo, hi, epsabs=0.0, epsrel=1e-11, limit=200)[0]
                for lo, hi in itertools.pairwise(edges)
            )
            / math.pi
        )

    k = B_SMALLSAT_M2_KG * 1000.0
    da_quad = -k * math.sqrt(MU * a) * mean(lambda c: (1 + e * c) ** 1.5 / math.sqrt(1 - e * c))
    de_quad = (
        -k
        * math.sqrt(MU / a)
        * (1 - e * e)
        * mean(lambda c: math.sqrt((1 + e * c) / (1 - e * c)) * c)
    )
    da_dt, de_dt = orbit_averaged_decay_rates(a, e, B_SMALLSAT_M2_KG)
    assert da_dt == pytest.approx(da_quad, rel=3e-4)
    assert de_dt == pytest.approx(de_quad, rel=3e-4)


def _cartesian_two_body_drag(state, b_m2_kg):
    r, v = state[:3], state[3:]
    r_norm = math.sqrt(r @ r)
    speed = math.sqrt(v @ v)
    rho = float(density_exponential_kg_m3(r_norm - R))
    # Drag 1/2 B rho v^2 against the velocity (non-rotating atmosphere, as in the model).
    acceleration = -MU * r / r_norm**3 - 0.5 * b_m2_kg * rho * 1000.0 * speed * v
    return np.concatenate([v, acceleration])


def _osculating_a_e(state):
    r, v = state[:3], state[3:]
    r_norm = math.sqrt(r @ r)
    v2 = v @ v
    e_vec = ((v2 - MU / r_norm) * r - (r @ v) * v) / MU
    return 1.0 / (2.0 / r_norm - v2 / MU), math.sqrt(e_vec @ e_vec)


def _averaged_over(span_s, a0, e0, b_m2_kg):
    def rates(_t, y):
        return list(orbit_averaged_decay_rates(y[0], y[1], b_m2_kg))

    sol = solve_ivp(rates, (0.0, span_s), [a0, e0], rtol=1e-10, atol=[1e-9, 1e-13])
    return sol.y[0, -1], sol.y[1, -1]


def test_circular_decay_matches_cartesian_integration():
    # Independent check: two-body + drag equations of motion integrated in Cartesian
    # coordinates (scipy.integrate.solve_ivp, DOP853) for 3 days from a 250 km circular orbit;
    # a circular orbit in a spherical atmosphere decays without oscillation, so the osculating
    # a at the end is compared directly. The decay (about 11 km) must agree within 0.1 %.
    span_s = 3 * 86400.0
    a0 = R + 250.0
    y0 = np.array([a0, 0.0, 0.0, 0.0, math.sqrt(MU / a0), 0.0])
    sol = solve_ivp(
        lambda _t, y: _cartesian_two_body_drag(y, B_SMALLSAT_M2_KG),
        (0.0, span_s),
        y0,
        method="DOP853",
        rtol=1e-11,
        atol=1e-9,
    )
    a_cartesian, _ = _osculating_a_e(sol.y[:, -1])
    a_mean, _ = _averaged_over(span_s, a0, 0.0, B_SMALLSAT_M2_KG)
    assert a_cartesian - a0 == pytest.approx(-11.18, abs=0.05)
    assert a_mean - a0 == pytest.approx(a_cartesian - a0, rel=1e-3)


@pytest.mark.parametrize(("perigee_km", "apogee_km"), [(250.0, 600.0), (200.0, 1500.0)])
def test_eccentric_decay_matches_cartesian_integration(perigee_km, apogee_km):
    # As above for eccentric orbits over 2 days, started at apogee. Drag acts near perigee, so
    # the osculating elements step once a revolution; sampled at apogee (the event r.v = 0,
    # decreasing) they sit midway between steps, where they equal the mean elements. The
    # changes of a and e must agree within 0.1 %.
    a0, e0 = _a_e(perigee_km, apogee_km)
    r_apogee = a0 * (1.0 + e0)
    y0 = np.array([r_apogee, 0.0, 0.0, 0.0, math.sqrt(MU * (1.0 - e0) / r_apogee), 0.0])

    def apogee(_t, y):
        return y[:3] @ y[3:]

    apogee.direction = -1.0
    sol = solve_ivp(
        lambda _t, y: _cartesian_two_body_drag(y, B_SMALLSAT_M2_KG),
        (0.0, 2 * 86400.0),
        y0,
        method="DOP853",
        rtol=1e-11,
        atol=1e-9,
        events=apogee,
    )
    t_last, y_last = sol.t_events[0][-1], sol.y_events[0][-1]
    a_cartesian, e_cartesian = _osculating_a_e(y_last)
    a_mean, e_mean = _averaged_over(t_last, a0, e0, B_SMALLSAT_M2_KG)
    assert a_cartesian < a0 - 1.0 and e_cartesian < e0
    assert a_mean - a0 == pytest.approx(a_cartesian - a0, rel=1e-3)
    assert e_mean - e0 == pytest.approx(e_cartesian - e0, rel=1e-3)


def test_rates_broadcast():
    a = R + np.array([300.0, 400.0, 500.0])
    da_dt, de_dt = orbit_averaged_decay_rates(a, 0.001, np.array([0.01, 0.02, 0.03]))
    assert da_dt.shape == de_dt.shape == (3,)
    for i in range(3):
        one_a, one_e = orbit_averaged_decay_rates(a[i], 0.001, 0.01 * (i + 1))
        assert da_dt[i] == pytest.approx(one_a, rel=1e-14)
        assert de_dt[i] == pytest.approx(one_e, rel=1e-14)
    assert np.ndim(orbit_averaged_decay_rates(7000.0, 0.0, 0.01)[0]) == 0


@pytest.mark.parametrize(
    ("a_km", "e", "b", "match"),
    [
        (7000.0, -0.1, 0.01, "0 <= e < 1"),
        (7000.0, 1.0, 0.01, "0 <= e < 1"),
        (7000.0, 0.0, 0.0, "ballistic_coefficient_m2_kg"),
        (-7000.0, 0.0, 0.01, "a_km"),
        (math.nan, 0.0, 0.01, "a_km"),
        (7000.0, 0.2, 0.01, "below the surface"),
    ],
)
def test_rates_refuse_bad_values(a_km, e, b, match):
    with pytest.raises(ValueError, match=match):
        orbit_averaged_decay_rates(a_km, e, b)


# --- orbital lifetime -------------------------------------------------------------------


@pytest.mark.parametrize("altitude_km", [300.0, 500.0, 650.0])
def test_circular_lifetime_is_the_quadrature_of_dt_da(altitude_km):
    # A circular orbit stays circular, so its lifetime is the integral of da / |da/dt| from
    # R + 100 km to R + h with da/dt = -B rho sqrt(mu a): evaluated with scipy.integrate.quad,
    # split at the table's base altitudes.
    def dt_da(a_km):
        return 1.0 / (
            B_SMALLSAT_M2_KG * 1000.0 * density_exponential_kg_m3(a_km - R) * math.sqrt(MU * a_km)
        )

    edges = [
        100.0,
        *EXPONENTIAL_BASE_ALTITUDE_KM[
            (EXPONENTIAL_BASE_ALTITUDE_KM > 100.0) & (EXPONENTIAL_BASE_ALTITUDE_KM < altitude_km)
        ],
        altitude_km,
    ]
    seconds = sum(
        quad(dt_da, R + lo, R + hi, epsrel=1e-11)[0] for lo, hi in itertools.pairwise(edges)
    )
    result = orbital_lifetime_years(altitude_km, altitude_km, B_SMALLSAT_M2_KG)
    assert result.years == pytest.approx(seconds / SECONDS_PER_JULIAN_YEAR, rel=1e-3)


@pytest.mark.parametrize(("perigee_km", "apogee_km"), [(350.0, 350.0), (300.0, 800.0)])
def test_lifetime_matches_time_domain_integration(perigee_km, apogee_km):
    # The module integrates in a (not t); integrating the same averaged rates in time with
    # solve_ivp and a perigee event must give the same lifetime.
    a0, e0 = _a_e(perigee_km, apogee_km)

    def rates(_t, y):
        da_dt, de_dt = orbit_averaged_decay_rates(y[0], max(y[1], 0.0), B_SMALLSAT_M2_KG)
        return [da_dt, de_dt]

    def reentry(_t, y):
        return y[0] * (1.0 - y[1]) - R - 100.0

    reentry.terminal = True
    sol = solve_ivp(
        rates,
        (0.0, 50 * SECONDS_PER_JULIAN_YEAR),
        [a0, e0],
        rtol=1e-9,
        atol=[1e-7, 1e-11],
        events=reentry,
        max_step=86400.0 * 5,
    )
    expected_years = sol.t_events[0][0] / SECONDS_PER_JULIAN_YEAR
    result = orbital_lifetime_years(perigee_km, apogee_km, B_SMALLSAT_M2_KG)
    assert result.years == pytest.approx(expected_years, rel=1e-3)


@pytest.mark.parametrize(
    ("altitude_km", "low_years", "high_years"),
    [
        # Rules of thumb (from memory) for B ~ 0.01 m^2/kg under mean solar activity, asserted
        # only as wide bands: weeks to months at 300 km; about a year at 400 km; a few years
        # at 500 km; decades near 600 km (the altitude below which the 25-year rule is usually
        # met); a century or more at 700 km.
        (300.0, 0.02, 0.5),
        (400.0, 0.3, 3.0),
        (500.0, 1.0, 15.0),
        (600.0, 10.0, 60.0),
        (700.0, 50.0, 300.0),
    ],
)
def test_rule_of_thumb_lifetimes(altitude_km, low_years, high_years):
    result = orbital_lifetime_years(altitude_km, altitude_km, B_SMALLSAT_M2_KG)
    assert low_years < result.years < high_years
    assert not result.capped


def test_beyond_the_cap_is_reported_as_more_than_the_cap():
    # Rule of thumb (from memory): at 800 km a small satellite stays for centuries.
    result = orbital_lifetime_years(800.0, 800.0, B_SMALLSAT_M2_KG)
    assert result == OrbitalLifetime(years=None, capped=True, max_years=200.0, model=result.model)
    longer = orbital_lifetime_years(800.0, 800.0, B_SMALLSAT_M2_KG, max_years=2000.0)
    assert 200.0 < longer.years < 2000.0 and not longer.capped


def test_lifetime_scales_exactly_as_one_over_b():
    # Both averaged rates are proportional to B, so the lifetime is proportional to 1/B.
    base = orbital_lifetime_years(300.0, 900.0, 0.01).years
    assert orbital_lifetime_years(300.0, 900.0, 0.04).years == pytest.approx(base / 4, rel=1e-3)


@settings(max_examples=25, deadline=None)
@given(
    st.floats(min_value=180.0, max_value=600.0),
    st.floats(min_value=0.0, max_value=600.0),
    st.floats(min_value=5.0, max_value=100.0),
    st.floats(min_value=0.003, max_value=0.1),
)
def test_lifetime_is_monotonic(perigee_km, extra_apogee_km, raise_km, b_m2_kg):
    # Higher perigee or apogee -> longer life; larger B -> shorter life.
    apogee_km = perigee_km + extra_apogee_km
    base = orbital_lifetime_years(perigee_km, apogee_km, b_m2_kg, max_years=1e4).years
    higher_perigee = orbital_lifetime_years(
        perigee_km + raise_km, apogee_km + raise_km, b_m2_kg, max_years=1e4
    ).years
    higher_apogee = orbital_lifetime_years(
        perigee_km, apogee_km + raise_km, b_m2_kg, max_years=1e4
    ).years
    draggier = orbital_lifetime_years(perigee_km, apogee_km, 1.5 * b_m2_kg, max_years=1e4).years
    assert higher_perigee > base
    assert higher_apogee > base
    assert draggier < base


def test_perigee_at_or_below_reentry_is_zero():
    assert orbital_lifetime_years(100.0, 500.0, 0.01).years == 0.0
    assert orbital_lifetime_years(-50.0, 500.0, 0.01).years == 0.0
    assert orbital_lifetime_years(150.0, 150.0, 0.01, reentry_altitude_km=150.0).years == 0.0
    just_above = orbital_lifetime_years(100.5, 100.5, 0.01)
    assert 0.0 < just_above.years < 1e-3


def test_result_is_frozen_and_states_the_model():
    result = orbital_lifetime_years(500.0, 500.0, 0.01)
    with pytest.raises(AttributeError):
        result.years = 1.0
    assert "Table 8-4" in result.model
    assert "King-Hele" in result.model
    assert "solar activity changes lifetimes by a factor of several" in result.model


def test_custom_density_model():
    # Half the density everywhere doubles the lifetime.
    def half(altitude_km):
        return 0.5 * density_exponential_kg_m3(altitude_km)

    full = orbital_lifetime_years(400.0, 400.0, 0.01).years
    halved = orbital_lifetime_years(400.0, 400.0, 0.01, density=half)
    assert halved.years == pytest.approx(2.0 * full, rel=1e-3)
    assert "half" in halved.model

    def vacuum(altitude_km):
        return np.zeros_like(np.asarray(altitude_km, dtype=float))

    with pytest.raises(ValueError, match="no drag"):
        orbital_lifetime_years(400.0, 400.0, 0.01, density=vacuum)


@pytest.mark.parametrize(
    ("args", "kwargs", "match"),
    [
        ((500.0, 400.0, 0.01), {}, "apogee_alt_km"),
        ((500.0, 500.0, 0.0), {}, "ballistic_coefficient_m2_kg"),
        ((500.0, 500.0, -0.01), {}, "ballistic_coefficient_m2_kg"),
        ((math.nan, 500.0, 0.01), {}, "perigee_alt_km"),
        ((500.0, math.inf, 0.01), {}, "apogee_alt_km"),
        ((np.array([400.0, 500.0]), 600.0, 0.01), {}, "single number"),
        ((500.0, 500.0, 0.01), {"max_years": 0.0}, "max_years"),
        ((500.0, 500.0, 0.01), {"reentry_altitude_km": -1.0}, "reentry_altitude_km"),
    ],
)
def test_lifetime_refuses_bad_values(args, kwargs, match):
    with pytest.raises(ValueError, match=match):
        orbital_lifetime_years(*args, **kwargs)
