"""Hohmann, bi-elliptic and combined plane-change transfers against published values and oracles."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

from service.dynamics.bodies import EARTH
from service.dynamics.plane_change import hohmann_with_plane_change
from service.dynamics.transfers import (
    bi_elliptic,
    bi_elliptic_always_cheaper_ratio,
    bi_elliptic_break_even_ratio,
    bi_elliptic_limit_total_km_s,
    cheaper_of,
    circular_speed_km_s,
    hohmann,
    hohmann_peak_ratio,
    hohmann_peak_total_per_v1,
)

MU = EARTH.mu_km3_s2
RE = EARTH.equatorial_radius_km
HOURS = 3600.0

# Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Examples 6-1 and 6-2.
R_LEO_KM = RE + 191.34411
R_GEO_KM = RE + 35781.34857
RB_EX62_KM = RE + 503873.0
R2_EX62_KM = RE + 376310.0

radius_km = st.floats(min_value=6500.0, max_value=2.0e6, allow_nan=False, allow_infinity=False)
PROPERTY = settings(max_examples=200, deadline=None)


# --- Hohmann ------------------------------------------------------------------------------


def test_hohmann_vallado_example_6_1():
    # Vallado 4th ed. Example 6-1: dv_a 2.457038, dv_b 1.478187, total 3.935224 km/s, 5.256713 h.
    h = hohmann(R_LEO_KM, R_GEO_KM, MU)
    assert h.dv1_km_s == pytest.approx(2.457038, abs=1e-6)
    assert h.dv2_km_s == pytest.approx(1.478187, abs=1e-6)
    assert h.total_km_s == pytest.approx(3.935224, abs=1e-6)
    assert h.time_of_flight_s / HOURS == pytest.approx(5.256713, abs=1e-6)
    assert h.transfer_semi_major_axis_km == pytest.approx(0.5 * (R_LEO_KM + R_GEO_KM), rel=1e-15)


def test_hohmann_lowering_swaps_the_burns_of_vallado_example_6_1():
    # Reversing Vallado 4th ed. Example 6-1: the same two magnitudes in the other order.
    up, down = hohmann(R_LEO_KM, R_GEO_KM, MU), hohmann(R_GEO_KM, R_LEO_KM, MU)
    assert down.dv1_km_s == pytest.approx(up.dv2_km_s, rel=1e-13)
    assert down.dv2_km_s == pytest.approx(up.dv1_km_s, rel=1e-13)
    assert down.time_of_flight_s == pytest.approx(up.time_of_flight_s, rel=1e-15)


def test_hohmann_between_equal_radii_costs_nothing_and_takes_half_a_period():
    # Two-body period 2 pi sqrt(r^3 / mu) (Kepler's third law).
    h = hohmann(7000.0, 7000.0, MU)
    assert h.total_km_s == pytest.approx(0.0, abs=1e-12)
    assert h.time_of_flight_s == pytest.approx(math.pi * math.sqrt(7000.0**3 / MU), rel=1e-15)


def test_circular_speed_is_sqrt_mu_over_r():
    # Vis-viva with a = r (Vallado 4th ed., Algorithm 36): 7.784 km/s at Example 6-1's r1.
    assert circular_speed_km_s(R_LEO_KM, MU) == pytest.approx(math.sqrt(MU / R_LEO_KM), rel=1e-15)


@PROPERTY
@given(radius_km, radius_km)
def test_hohmann_total_is_the_same_both_ways(r1, r2):
    assert hohmann(r1, r2, MU).total_km_s == pytest.approx(
        hohmann(r2, r1, MU).total_km_s, rel=1e-12
    )


# --- bi-elliptic --------------------------------------------------------------------------


def test_bi_elliptic_vallado_example_6_2():
    # Vallado 4th ed. Example 6-2: 3.156233, 0.677358, 0.070466 km/s, total 3.904057 km/s.
    b = bi_elliptic(R_LEO_KM, RB_EX62_KM, R2_EX62_KM, MU)
    assert b.dv1_km_s == pytest.approx(3.156233, abs=1e-6)
    assert b.dv2_km_s == pytest.approx(0.677358, abs=1e-6)
    assert b.dv3_km_s == pytest.approx(0.070466, abs=1e-6)
    assert b.total_km_s == pytest.approx(3.904057, abs=1e-6)
    # Published 593.919803 h; the formula pi (sqrt(a1^3/mu) + sqrt(a2^3/mu)) gives 593.920002 h.
    assert b.time_of_flight_s / HOURS == pytest.approx(593.919803, rel=1e-6)


def test_bi_elliptic_refuses_an_apoapsis_inside_either_orbit():
    with pytest.raises(ValueError, match="rb_km"):
        bi_elliptic(R_LEO_KM, R2_EX62_KM - 1.0, R2_EX62_KM, MU)
    with pytest.raises(ValueError, match="rb_km"):
        bi_elliptic(R2_EX62_KM, R2_EX62_KM - 1.0, R_LEO_KM, MU)


@PROPERTY
@given(radius_km, radius_km)
def test_bi_elliptic_with_rb_at_the_outer_orbit_is_hohmann(r1, r2):
    b = bi_elliptic(r1, max(r1, r2), r2, MU)
    assert b.total_km_s == pytest.approx(hohmann(r1, r2, MU).total_km_s, rel=1e-12, abs=1e-12)
    # Algorithm 37 still flies the second half-ellipse, here half of the outer circular orbit.
    half_outer = math.pi * math.sqrt(max(r1, r2) ** 3 / MU)
    assert b.time_of_flight_s == pytest.approx(
        hohmann(r1, r2, MU).time_of_flight_s + half_outer, rel=1e-12
    )


@PROPERTY
@given(radius_km, radius_km, st.floats(min_value=1.0, max_value=1e3))
def test_bi_elliptic_total_is_the_same_both_ways(r1, r2, scale):
    rb = scale * max(r1, r2)
    assert bi_elliptic(r1, rb, r2, MU).total_km_s == pytest.approx(
        bi_elliptic(r2, rb, r1, MU).total_km_s, rel=1e-12
    )


def test_bi_elliptic_limit_is_sqrt2_minus_1_times_both_circular_speeds():
    # rb -> inf in Vallado 4th ed. Algorithm 37: escape minus circular speed at each end.
    v1, v2 = circular_speed_km_s(R_LEO_KM, MU), circular_speed_km_s(R2_EX62_KM, MU)
    limit = bi_elliptic_limit_total_km_s(R_LEO_KM, R2_EX62_KM, MU)
    assert limit == pytest.approx((math.sqrt(2.0) - 1.0) * (v1 + v2), rel=1e-15)
    far = bi_elliptic(R_LEO_KM, 1e14 * R2_EX62_KM, R2_EX62_KM, MU).total_km_s
    assert far == pytest.approx(limit, rel=1e-6)
    assert far > limit


# --- ratio thresholds ---------------------------------------------------------------------


def test_break_even_ratio_textbook_value():
    # 11.938765: textbook value (Vallado 4th ed. and Curtis 3rd ed., chapter 6), from memory.
    ratio = bi_elliptic_break_even_ratio()
    assert ratio == pytest.approx(11.938765, abs=1e-6)
    assert hohmann(1.0, ratio, 1.0).total_km_s == pytest.approx(
        bi_elliptic_limit_total_km_s(1.0, ratio, 1.0), rel=1e-12
    )


def test_hohmann_peak_textbook_values_and_cubic():
    # 15.581719 and 0.536258 v1: textbook values (Vallado 4th ed., chapter 6), from memory.
    assert hohmann_peak_ratio() == pytest.approx(15.581719, abs=1e-6)
    assert hohmann_peak_total_per_v1() == pytest.approx(0.536258, abs=1e-6)
    assert bi_elliptic_always_cheaper_ratio() == pytest.approx(15.581719, abs=1e-6)
    # Setting d(total)/dR = 0 gives R^3 - 15 R^2 - 9 R - 1 = 0 (derived; numpy.roots as oracle).
    roots = np.roots([1.0, -15.0, -9.0, -1.0])
    assert hohmann_peak_ratio() == pytest.approx(max(roots.real), rel=1e-12)


def test_hohmann_peak_agrees_with_scipy_minimize_scalar():
    # Independent oracle: scipy's bounded minimiser on the dimensional Hohmann total.
    res = minimize_scalar(
        lambda ratio: -hohmann(1.0, ratio, 1.0).total_km_s,
        bounds=(2.0, 50.0),
        method="bounded",
        options={"xatol": 1e-10},
    )
    assert res.x == pytest.approx(hohmann_peak_ratio(), abs=1e-4)
    assert -res.fun == pytest.approx(hohmann_peak_total_per_v1(), rel=1e-12)


def _bi_minus_hohmann(ratio, rb_over_outer):
    rb = max(ratio, 1.0) * rb_over_outer
    return bi_elliptic(1.0, rb, ratio, 1.0).total_km_s - hohmann(1.0, ratio, 1.0).total_km_s


RB_GRID = np.geomspace(1.0 + 1e-4, 1e9, 20001)


@pytest.mark.parametrize("ratio", [15.6, 15.7, 20.0, 100.0, 1.0 / 20.0])
def test_above_the_peak_every_bi_elliptic_beats_hohmann(ratio):
    assert np.all(_bi_minus_hohmann(ratio, RB_GRID) < 0.0)


@pytest.mark.parametrize("ratio", [12.0, 13.0, 15.0, 15.5, 1.0 / 13.0])
def test_between_the_thresholds_it_depends_on_rb(ratio):
    gap = _bi_minus_hohmann(ratio, RB_GRID)
    assert gap.max() > 0.0 and gap.min() < 0.0


@pytest.mark.parametrize("ratio", [1.5, 5.0, 11.0, 11.9, 1.0 / 11.0])
def test_below_break_even_hohmann_always_wins(ratio):
    assert np.all(_bi_minus_hohmann(ratio, RB_GRID) > 0.0)


# --- cheaper_of ---------------------------------------------------------------------------


def test_cheaper_of_picks_hohmann_below_and_the_bi_parabolic_limit_above_break_even():
    low = cheaper_of(RE + 200.0, 5.0 * (RE + 200.0), MU)
    assert low.method == "hohmann" and not low.bi_elliptic_is_cheaper
    assert low.total_km_s == low.hohmann_total_km_s
    high = cheaper_of(R_LEO_KM, R2_EX62_KM, MU)
    assert high.method == "bi-elliptic" and math.isinf(high.bi_elliptic_rb_km)
    assert high.total_km_s == bi_elliptic_limit_total_km_s(R_LEO_KM, R2_EX62_KM, MU)


def test_cheaper_of_with_vallado_example_6_2_cap():
    # Vallado 4th ed. Example 6-2: the bi-elliptic total 3.904057 km/s is below the Hohmann one.
    c = cheaper_of(R_LEO_KM, R2_EX62_KM, MU, rb_max_km=RB_EX62_KM)
    assert c.method == "bi-elliptic"
    assert c.total_km_s == pytest.approx(3.904057, abs=1e-6)
    assert c.hohmann_total_km_s > c.total_km_s


def test_cheaper_of_vectorised_and_refuses_a_cap_inside_the_orbits():
    r2 = np.array([2.0, 13.0, 100.0]) * R_LEO_KM
    c = cheaper_of(R_LEO_KM, r2, MU)
    assert c.total_km_s.shape == (3,)
    assert list(c.method) == ["hohmann", "bi-elliptic", "bi-elliptic"]
    assert cheaper_of(R_LEO_KM, r2, MU, rb_max_km=r2).method.tolist() == ["hohmann"] * 3
    with pytest.raises(ValueError, match="rb_km"):
        cheaper_of(R_LEO_KM, R_GEO_KM, MU, rb_max_km=R_GEO_KM - 1.0)


@pytest.mark.parametrize("ratio", [0.05, 0.1, 2.0, 11.0, 12.5, 15.0, 15.7, 60.0])
def test_bi_elliptic_cheapest_rb_under_a_cap_is_at_an_end(ratio):
    # What cheaper_of relies on: over rb in [outer, cap] the minimum sits at an end of the range.
    for cap in (1.5, 30.0, 1e4):
        grid = np.linspace(1.0, cap, 20001)
        gap = _bi_minus_hohmann(ratio, grid)
        assert gap.min() >= min(gap[0], gap[-1]) - 1e-14


# --- shapes and bad input -----------------------------------------------------------------


def test_scalars_give_scalars_and_arrays_keep_their_shape():
    h = hohmann(R_LEO_KM, R_GEO_KM, MU)
    assert isinstance(h.total_km_s, float)
    arr = hohmann(np.full((4,), R_LEO_KM), R_GEO_KM, MU)
    assert arr.total_km_s.shape == (4,)
    assert np.allclose(arr.total_km_s, h.total_km_s, rtol=1e-15, atol=0)
    b = bi_elliptic(R_LEO_KM, np.array([RB_EX62_KM, 2 * RB_EX62_KM]), R2_EX62_KM, MU)
    assert b.total_km_s.shape == (2,)


@pytest.mark.parametrize("bad", [0.0, -7000.0, math.nan, math.inf])
def test_bad_radii_and_gm_are_refused(bad):
    for call in (
        lambda: hohmann(bad, R_GEO_KM, MU),
        lambda: hohmann(R_LEO_KM, np.array([R_GEO_KM, bad]), MU),
        lambda: hohmann(R_LEO_KM, R_GEO_KM, bad),
        lambda: bi_elliptic(R_LEO_KM, bad, R2_EX62_KM, MU),
        lambda: bi_elliptic_limit_total_km_s(bad, R2_EX62_KM, MU),
        lambda: cheaper_of(R_LEO_KM, bad, MU),
        lambda: circular_speed_km_s(bad, MU),
        lambda: hohmann_with_plane_change(R_LEO_KM, bad, 0.1, MU),
        lambda: hohmann_with_plane_change(R_LEO_KM, R_GEO_KM, 0.1, bad),
    ):
        with pytest.raises(ValueError):
            call()
