"""IAU 1976 precession (service.dynamics.precession) against pyerfa's pmat76."""

from __future__ import annotations

import erfa
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.precession import (
    frame_rotation_y,
    frame_rotation_z,
    precession_angles_rad,
    precession_mod_to_j2000,
)
from service.dynamics.timescales import julian_date_utc

EPOCHS = np.datetime64("1990-01-01T00:00:00", "ms") + np.linspace(
    0, 60 * 365.25 * 86_400_000, 97
).astype("int64").astype("timedelta64[ms]")


def test_matches_erfa_pmat76_over_1990_2049():
    # pyerfa pmat76(date) is the IAU 1976 matrix J2000 -> mean of date (Lieske et al. 1977);
    # ours is its transpose. Same date argument on both sides (the JD of the UTC epoch).
    ours = precession_mod_to_j2000(EPOCHS)
    reference = np.array([erfa.pmat76(jd, 0.0).T for jd in julian_date_utc(EPOCHS)])
    assert ours.shape == (EPOCHS.size, 3, 3)
    assert np.max(np.abs(ours - reference)) < 1e-12


def test_identity_at_j2000_and_one_matrix_for_one_epoch():
    matrix = precession_mod_to_j2000(np.datetime64("2000-01-01T12:00:00"))
    assert matrix.shape == (3, 3)
    assert np.array_equal(matrix, np.eye(3))


def test_general_precession_in_a_century():
    # Lieske et al. (1977): zeta + z at T = 1 is 4612.4362 + 1.39656 + 0.036201 arcsec (the
    # polynomial coefficients themselves); theta 2004.3109 - 0.42665 - 0.041833 arcsec.
    zeta, theta, z = precession_angles_rad(np.datetime64("2100-01-01T12:00:00"))
    arcsec = np.degrees(1.0) * 3600.0
    assert (zeta + z) * arcsec == pytest.approx(4612.4362 + 1.39656 + 0.036201, abs=1e-9)
    assert theta * arcsec == pytest.approx(2004.3109 - 0.42665 - 0.041833, abs=1e-9)


@settings(max_examples=200, deadline=None)
@given(st.integers(-50 * 365 * 86_400_000, 50 * 365 * 86_400_000))
def test_rotation_is_proper_and_agrees_with_erfa(ms_from_j2000):
    when = np.datetime64("2000-01-01T12:00:00", "ms") + np.timedelta64(ms_from_j2000, "ms")
    matrix = precession_mod_to_j2000(when)
    assert np.allclose(matrix @ matrix.T, np.eye(3), rtol=0, atol=1e-15)
    assert np.linalg.det(matrix) == pytest.approx(1.0, abs=1e-15)
    assert np.allclose(matrix, erfa.pmat76(julian_date_utc(when), 0.0).T, rtol=0, atol=1e-12)


def test_frame_rotations_match_erfa():
    # pyerfa rz / ry rotate the axes (passive rotation), as ROT3 / ROT2 here.
    for angle in (-2.0, 0.3, 1.7):
        assert np.allclose(frame_rotation_z(angle), erfa.rz(angle, np.eye(3)), atol=1e-16)
        assert np.allclose(frame_rotation_y(angle), erfa.ry(angle, np.eye(3)), atol=1e-16)
    assert frame_rotation_z(np.zeros(4)).shape == (4, 3, 3)
