"""Inclination, combined and Hohmann plane changes against published values and oracles."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.bodies import EARTH
from service.dynamics.plane_change import (
    combined_change_delta_v_km_s,
    hohmann_with_plane_change,
    inclination_change_delta_v_km_s,
)
from service.dynamics.transfers import hohmann

MU = EARTH.mu_km3_s2
RE = EARTH.equatorial_radius_km

# Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Example 6-1.
R_LEO_KM = RE + 191.34411
R_GEO_KM = RE + 35781.34857

radius_km = st.floats(min_value=6500.0, max_value=2.0e6, allow_nan=False, allow_infinity=False)
PROPERTY = settings(max_examples=200, deadline=None)


def _rotate_about_x(v, angle):
    return np.array([v[0], v[1] * math.cos(angle), v[1] * math.sin(angle)])


@pytest.mark.parametrize(
    ("v1", "v2", "angle"), [(7.5, 7.5, 1e-9), (7.5, 3.1, 0.5), (1.6, 3.07, 2.9)]
)
def test_combined_change_matches_the_vector_difference(v1, v2, angle):
    # Independent oracle: numpy vectors, the second turned through the angle.
    a = np.array([0.0, v1, 0.0])
    b = _rotate_about_x(np.array([0.0, v2, 0.0]), angle)
    assert combined_change_delta_v_km_s(v1, v2, angle) == pytest.approx(
        np.linalg.norm(b - a), rel=1e-12
    )
    # Law of cosines as printed (Vallado 4th ed., Algorithm 42), where it is well conditioned.
    if angle > 1e-3:
        printed = math.sqrt(v1**2 + v2**2 - 2.0 * v1 * v2 * math.cos(angle))
        assert combined_change_delta_v_km_s(v1, v2, angle) == pytest.approx(printed, rel=1e-12)


def test_inclination_change_of_sixty_degrees_costs_the_orbital_speed():
    # Equilateral velocity triangle: 2 v sin(30 deg) = v (Vallado 4th ed., Algorithm 39).
    assert inclination_change_delta_v_km_s(7.5, math.radians(60.0)) == pytest.approx(7.5, rel=1e-15)
    assert combined_change_delta_v_km_s(7.5, 7.5, 0.3) == pytest.approx(
        inclination_change_delta_v_km_s(7.5, 0.3), rel=1e-15
    )


def _brute_force_total(r1, r2, di, points=400_001):
    # Independent oracle: every split on a fine numpy grid, each burn as the length of a
    # difference of planar velocity vectors (the printed law of cosines loses digits when
    # the two speeds are nearly equal and the angle small).
    a_t = 0.5 * (r1 + r2)
    v1, v2 = math.sqrt(MU / r1), math.sqrt(MU / r2)
    vp, va = math.sqrt(MU * (2 / r1 - 1 / a_t)), math.sqrt(MU * (2 / r2 - 1 / a_t))

    def totals(alpha):
        beta = di - alpha
        return np.hypot(vp * np.cos(alpha) - v1, vp * np.sin(alpha)) + np.hypot(
            v2 * np.cos(beta) - va, v2 * np.sin(beta)
        )

    # A coarse grid, then a second fine grid around its best point: a sharp minimum
    # between two coarse points would otherwise make the oracle worse than the answer.
    alpha = np.linspace(0.0, di, points)
    k = int(np.argmin(totals(alpha)))
    step = di / (points - 1)
    alpha = np.linspace(max(0.0, alpha[k] - 2.0 * step), min(di, alpha[k] + 2.0 * step), points)
    total = totals(alpha)
    k = int(np.argmin(total))
    return total[k], alpha[k]


@PROPERTY
@given(radius_km, radius_km, st.floats(min_value=0.0, max_value=math.pi))
def test_optimal_split_matches_brute_force_and_beats_the_alternatives(r1, r2, di):
    p = hohmann_with_plane_change(r1, r2, di, MU)
    oracle_total, _ = _brute_force_total(r1, r2, di)
    assert p.total_km_s == pytest.approx(oracle_total, abs=1e-7)
    assert p.total_km_s <= oracle_total + 1e-9
    assert p.total_km_s <= p.all_at_apoapsis_total_km_s + 1e-12
    assert p.total_km_s <= p.separate_total_km_s + 1e-12
    assert p.di1_rad + p.di2_rad == pytest.approx(di, abs=1e-15)
    assert 0.0 <= p.di1_rad <= di


def test_leo_to_geo_from_a_28_5_degree_launch_site():
    # GEO radius from the sidereal rate, (mu / omega^2)^(1/3) = 42164.17 km; 200 km parking orbit.
    r_geo = (MU / EARTH.rotation_rate_rad_s**2) ** (1.0 / 3.0)
    p = hohmann_with_plane_change(RE + 200.0, r_geo, math.radians(28.5), MU)
    # About 4.2-4.3 km/s with ~2 deg of the turn at perigee: common practice, from memory.
    assert 4.2 < p.total_km_s < 4.3
    assert 1.5 < math.degrees(p.di1_rad) < 3.0
    oracle_total, oracle_split = _brute_force_total(RE + 200.0, r_geo, math.radians(28.5))
    assert p.total_km_s == pytest.approx(oracle_total, abs=1e-9)
    assert p.di1_rad == pytest.approx(oracle_split, abs=1e-5)
    assert p.total_km_s < p.all_at_apoapsis_total_km_s < p.separate_total_km_s


def test_optimal_split_is_stationary_as_in_vallado_algorithm_42():
    # Vallado 4th ed. Algorithm 42 iterates sin(di1) = dva vf vtb sin(di2) / (vi vta dvb); at an
    # interior optimum both sides agree.
    r1, r2, di = R_LEO_KM, R_GEO_KM, math.radians(28.5)
    p = hohmann_with_plane_change(r1, r2, di, MU)
    a_t = 0.5 * (r1 + r2)
    vi, vf = math.sqrt(MU / r1), math.sqrt(MU / r2)
    vta, vtb = math.sqrt(MU * (2 / r1 - 1 / a_t)), math.sqrt(MU * (2 / r2 - 1 / a_t))
    rhs = p.dv1_km_s * vf * vtb * math.sin(p.di2_rad) / (vi * vta * p.dv2_km_s)
    assert math.sin(p.di1_rad) == pytest.approx(rhs, rel=1e-6)


def test_no_plane_change_is_hohmann():
    p = hohmann_with_plane_change(R_LEO_KM, R_GEO_KM, 0.0, MU)
    h = hohmann(R_LEO_KM, R_GEO_KM, MU)
    assert (p.dv1_km_s, p.dv2_km_s) == pytest.approx((h.dv1_km_s, h.dv2_km_s), abs=1e-12)
    assert p.all_at_apoapsis_total_km_s == pytest.approx(h.total_km_s, abs=1e-12)
    assert p.separate_total_km_s == pytest.approx(h.total_km_s, abs=1e-12)
    assert p.di1_rad == 0.0 and p.di2_rad == 0.0


def test_same_radius_turns_in_one_impulse():
    # 2 v sin(a/2) + 2 v sin(b/2) with a + b fixed is concave: one burn is cheapest.
    p = hohmann_with_plane_change(7000.0, 7000.0, 1.0, MU)
    v = math.sqrt(MU / 7000.0)
    assert p.total_km_s == pytest.approx(2.0 * v * math.sin(0.5), rel=1e-12)
    assert min(p.di1_rad, p.di2_rad) == 0.0


def test_lowering_with_a_plane_change_mirrors_raising():
    up = hohmann_with_plane_change(R_LEO_KM, R_GEO_KM, 0.4, MU)
    down = hohmann_with_plane_change(R_GEO_KM, R_LEO_KM, 0.4, MU)
    assert down.total_km_s == pytest.approx(up.total_km_s, rel=1e-10)
    assert down.di2_rad == pytest.approx(up.di1_rad, abs=1e-6)
    assert down.all_at_apoapsis_total_km_s == pytest.approx(
        up.all_at_apoapsis_total_km_s, rel=1e-14
    )


def test_plane_change_vectorised_matches_scalar_calls():
    r2 = np.array([R_GEO_KM, 2.0 * R_LEO_KM, R_LEO_KM])
    di = np.array([0.5, 0.1, 1.0])
    p = hohmann_with_plane_change(R_LEO_KM, r2, di, MU)
    assert p.total_km_s.shape == (3,)
    for k in range(3):
        one = hohmann_with_plane_change(R_LEO_KM, r2[k], di[k], MU)
        assert p.total_km_s[k] == pytest.approx(one.total_km_s, rel=1e-15)


@pytest.mark.parametrize("angle", [-0.1, 3.5, math.nan])
def test_bad_angles_and_speeds_are_refused(angle):
    with pytest.raises(ValueError):
        inclination_change_delta_v_km_s(7.5, angle)
    with pytest.raises(ValueError):
        combined_change_delta_v_km_s(7.5, 3.0, angle)
    with pytest.raises(ValueError):
        hohmann_with_plane_change(R_LEO_KM, R_GEO_KM, angle, MU)
    with pytest.raises(ValueError):
        inclination_change_delta_v_km_s(-1.0, 0.1)
