"""Tests of the local orbital frames RTN and TNW (service.dynamics.frames)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays
from scipy.spatial.transform import Rotation

from service.dynamics.bodies import EARTH
from service.dynamics.frames import (
    inertial_to_local,
    local_to_inertial,
    rtn_to_inertial_matrix,
    tnw_to_inertial_matrix,
)

MU = EARTH.mu_km3_s2
X, Y, Z = np.eye(3)

vectors = arrays(np.float64, 3, elements=st.floats(-1e4, 1e4))
positions = arrays(np.float64, 3, elements=st.floats(-5e4, 5e4))
velocities = arrays(np.float64, 3, elements=st.floats(-20.0, 20.0))


def _well_defined(r, v):
    """Keep states whose r and v are clearly not parallel (the frame is well conditioned)."""
    rn, vn = np.linalg.norm(r), np.linalg.norm(v)
    return rn > 1.0 and vn > 1e-3 and np.linalg.norm(np.cross(r, v)) > 1e-3 * rn * vn


def _eccentric_state(p_km, e, nu_rad, raan_rad, i_rad, argp_rad):
    """Inertial state from perifocal coordinates.

    Curtis, Orbital Mechanics for Engineering Students, 3rd ed., section 4.6, perifocal
    state vectors (from memory; equation numbers not checked):
    r = p / (1 + e cos nu) [cos nu, sin nu, 0], v = sqrt(mu / p) [-sin nu, e + cos nu, 0];
    rotated by the 3-1-3 sequence (RAAN, i,
    argument of periapsis) with scipy's Rotation.
    """
    r_pf = p_km / (1 + e * math.cos(nu_rad)) * np.array([math.cos(nu_rad), math.sin(nu_rad), 0])
    v_pf = math.sqrt(MU / p_km) * np.array([-math.sin(nu_rad), e + math.cos(nu_rad), 0.0])
    rot = Rotation.from_euler("ZXZ", [raan_rad, i_rad, argp_rad])
    return rot.apply(r_pf), rot.apply(v_pf)


def test_circular_equatorial_hand_case():
    # Counter-clockwise circular orbit in the x-y plane, spacecraft on +x: R = x, T = y,
    # N = z (Vallado, 4th ed., section 3.3, RSW axes by definition).
    r = np.array([7000.0, 0.0, 0.0])
    v = np.array([0.0, math.sqrt(MU / 7000.0), 0.0])
    np.testing.assert_allclose(rtn_to_inertial_matrix(r, v), np.eye(3), atol=1e-15)
    # TNW: T along v = y, W = z, N = W x T = -x (CCSDS 502.0-B-3, section 3.2.4.11).
    np.testing.assert_allclose(
        tnw_to_inertial_matrix(r, v), np.column_stack((Y, -X, Z)), atol=1e-15
    )
    np.testing.assert_allclose(local_to_inertial([1.0, 2.0, 3.0], "RTN", r, v), [1, 2, 3])
    np.testing.assert_allclose(local_to_inertial([1.0, 2.0, 3.0], "TNW", r, v), [-2, 1, 3])


def test_tnw_shares_rtn_axes_on_a_circular_orbit():
    # On a circular orbit v is perpendicular to r, so TNW's T is RTN's T, W is N, and
    # TNW's N (= W x T) is -R. An inclined, rotated example.
    r, v = _eccentric_state(7000.0, 0.0, 0.7, 0.3, 1.1, 2.0)
    rtn = rtn_to_inertial_matrix(r, v)
    tnw = tnw_to_inertial_matrix(r, v)
    np.testing.assert_allclose(tnw[:, 0], rtn[:, 1], atol=1e-15)
    np.testing.assert_allclose(tnw[:, 1], -rtn[:, 0], atol=1e-15)
    np.testing.assert_allclose(tnw[:, 2], rtn[:, 2], atol=1e-15)
    dv_tnw = np.array([12.5, 0.0, 0.0])
    np.testing.assert_allclose(
        local_to_inertial(dv_tnw, "TNW", r, v),
        local_to_inertial([0.0, 12.5, 0.0], "RTN", r, v),
        atol=1e-13,
    )


@pytest.mark.parametrize("e, nu_deg", [(0.3, 60.0), (0.7, 135.0), (0.1, -100.0), (1.5, 40.0)])
def test_eccentric_orbit_flight_path_angle_separates_the_frames(e, nu_deg):
    # Flight-path angle: tan(gamma) = e sin(nu) / (1 + e cos(nu)) (Curtis, 3rd ed.,
    # section 2.6, from memory), independent of the frame code. Radial and transverse
    # velocity: v_r = (mu/h) e sin(nu), v_t = (mu/h)(1 + e cos(nu)) (same section, from
    # memory). T of TNW is v/|v|: T_tnw = cos(gamma) T + sin(gamma) R, and
    # N_tnw = W x T_tnw = sin(gamma) T - cos(gamma) R (a rotation by gamma about N = W).
    p, nu = 12000.0, math.radians(nu_deg)
    r, v = _eccentric_state(p, e, nu, 1.2, 0.5, -0.4)
    gamma = math.atan2(e * math.sin(nu), 1 + e * math.cos(nu))
    rtn = rtn_to_inertial_matrix(r, v)
    tnw = tnw_to_inertial_matrix(r, v)
    R, T, N = rtn.T
    np.testing.assert_allclose(tnw[:, 0], math.cos(gamma) * T + math.sin(gamma) * R, atol=1e-14)
    np.testing.assert_allclose(tnw[:, 1], math.sin(gamma) * T - math.cos(gamma) * R, atol=1e-14)
    np.testing.assert_allclose(tnw[:, 2], N, atol=1e-14)
    # Components of v itself.
    mu_over_h = MU / math.sqrt(MU * p)
    np.testing.assert_allclose(
        inertial_to_local(v, "RTN", r, v),
        [mu_over_h * e * math.sin(nu), mu_over_h * (1 + e * math.cos(nu)), 0.0],
        atol=1e-12,
    )
    np.testing.assert_allclose(
        inertial_to_local(v, "TNW", r, v), [np.linalg.norm(v), 0.0, 0.0], atol=1e-12
    )
    # The rotation between the frames, from local to local.
    c, s = math.cos(gamma), math.sin(gamma)
    np.testing.assert_allclose(
        tnw.T @ rtn, [[s, c, 0.0], [-c, s, 0.0], [0.0, 0.0, 1.0]], atol=1e-14
    )


@settings(max_examples=200, deadline=None)
@given(r=positions, v=velocities)
def test_matrices_are_proper_rotations(r, v):
    assume(_well_defined(r, v))
    for matrix in (rtn_to_inertial_matrix(r, v), tnw_to_inertial_matrix(r, v)):
        np.testing.assert_allclose(matrix.T @ matrix, np.eye(3), atol=1e-12)
        assert np.linalg.det(matrix) == pytest.approx(1.0, abs=1e-12)


@settings(max_examples=200, deadline=None)
@given(vec=vectors, r=positions, v=velocities, frame=st.sampled_from(["RTN", "TNW"]))
def test_length_kept_and_round_trip(vec, r, v, frame):
    assume(_well_defined(r, v))
    inertial = local_to_inertial(vec, frame, r, v)
    assert np.linalg.norm(inertial) == pytest.approx(np.linalg.norm(vec), rel=1e-12, abs=1e-9)
    np.testing.assert_allclose(inertial_to_local(inertial, frame, r, v), vec, atol=1e-9)
    np.testing.assert_allclose(
        local_to_inertial(inertial_to_local(vec, frame, r, v), frame, r, v), vec, atol=1e-9
    )


def test_vectorised_states_match_single_calls():
    rng = np.random.default_rng(20310502)
    r = rng.uniform(-8000.0, 8000.0, (50, 3))
    v = rng.uniform(-8.0, 8.0, (50, 3))
    vec = rng.uniform(-100.0, 100.0, (50, 3))
    for builder in (rtn_to_inertial_matrix, tnw_to_inertial_matrix):
        stacked = builder(r, v)
        assert stacked.shape == (50, 3, 3)
        for k in (0, 17, 49):
            np.testing.assert_array_equal(stacked[k], builder(r[k], v[k]))
    for frame in ("RTN", "TNW"):
        many = local_to_inertial(vec, frame, r, v)
        assert many.shape == (50, 3)
        for k in (0, 17, 49):
            np.testing.assert_allclose(many[k], local_to_inertial(vec[k], frame, r[k], v[k]))
        # One vector at many states, and many vectors at one state.
        assert local_to_inertial(vec[0], frame, r, v).shape == (50, 3)
        one_state = inertial_to_local(vec, frame, r[3], v[3])
        assert one_state.shape == (50, 3)
        np.testing.assert_allclose(one_state[5], inertial_to_local(vec[5], frame, r[3], v[3]))


@pytest.mark.parametrize("frame", ["GCRF", "EME2000"])
def test_inertial_frames_are_the_identity(frame):
    r = np.array([7000.0, 10.0, -300.0])
    v = np.array([0.1, 7.5, 0.2])
    vec = np.array([1.0, -2.0, 3.0])
    np.testing.assert_array_equal(local_to_inertial(vec, frame, r, v), vec)
    np.testing.assert_array_equal(inertial_to_local(vec, frame, r, v), vec)
    many = local_to_inertial(vec, frame, np.tile(r, (4, 1)), np.tile(v, (4, 1)))
    assert many.shape == (4, 3)
    # Zero angular momentum does not matter in an inertial frame.
    np.testing.assert_array_equal(local_to_inertial(vec, frame, r, 2 * r), vec)


@pytest.mark.parametrize("frame", ["RTN", "TNW"])
@pytest.mark.parametrize(
    "r, v",
    [
        ([7000.0, 0.0, 0.0], [0.0, 0.0, 0.0]),  # zero velocity
        ([0.0, 0.0, 0.0], [0.0, 7.5, 0.0]),  # zero position
        ([7000.0, 0.0, 0.0], [3.0, 0.0, 0.0]),  # rectilinear: h = 0
        ([7000.0, 1.0, 0.0], [7000.0, 1.0 + 1e-14, 0.0]),  # parallel to rounding
        ([7000.0, float("nan"), 0.0], [0.0, 7.5, 0.0]),
        ([7000.0, 0.0, 0.0], [0.0, float("inf"), 0.0]),
        ([7000.0, 0.0], [0.0, 7.5]),  # wrong shape
    ],
)
def test_undefined_frame_raises(frame, r, v):
    with pytest.raises(ValueError):
        local_to_inertial([1.0, 0.0, 0.0], frame, r, v)
    with pytest.raises(ValueError):
        inertial_to_local([1.0, 0.0, 0.0], frame, r, v)


def test_one_bad_state_in_many_raises():
    r = np.array([[7000.0, 0.0, 0.0], [7000.0, 0.0, 0.0]])
    v = np.array([[0.0, 7.5, 0.0], [1.0, 0.0, 0.0]])
    with pytest.raises(ValueError, match="angular momentum"):
        rtn_to_inertial_matrix(r, v)


@pytest.mark.parametrize("frame", ["rtn", "LVLH", "RSW", "NTW", "ICRF", ""])
def test_unknown_frame_raises(frame):
    r, v = [7000.0, 0.0, 0.0], [0.0, 7.5, 0.0]
    with pytest.raises(ValueError, match="unknown frame"):
        local_to_inertial([1.0, 0.0, 0.0], frame, r, v)
    with pytest.raises(ValueError, match="unknown frame"):
        inertial_to_local([1.0, 0.0, 0.0], frame, r, v)


@pytest.mark.parametrize("vec", [[1.0, 2.0], [1.0, float("nan"), 0.0], [[[1.0, 2.0, 3.0]]]])
def test_bad_vector_raises(vec):
    with pytest.raises(ValueError):
        local_to_inertial(vec, "RTN", [7000.0, 0.0, 0.0], [0.0, 7.5, 0.0])
