"""Kepler's and Barker's equations: a textbook example, scipy brentq as an independent solver."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from service.dynamics import kepler_equation
from service.dynamics.kepler_equation import (
    mean_to_eccentric_anomaly,
    mean_to_hyperbolic_anomaly,
    mean_to_parabolic_anomaly,
)

SETTINGS = settings(max_examples=200, deadline=None)


def _brentq_elliptic(m_rad: float, e: float) -> float:
    # |E - M| = e |sin E| <= e brackets the root; the plain textbook form of the equation.
    return brentq(
        lambda x: x - e * math.sin(x) - m_rad,
        m_rad - e - 1e-9,
        m_rad + e + 1e-9,
        xtol=1e-15,
        rtol=4 * np.finfo(float).eps,
        maxiter=500,
    )


def _brentq_hyperbolic(m_rad: float, e: float) -> float:
    bound = math.asinh(abs(m_rad) / (e - 1.0)) + 1.0
    return brentq(
        lambda x: e * math.sinh(x) - x - m_rad,
        -bound,
        bound,
        xtol=1e-15,
        rtol=4 * np.finfo(float).eps,
        maxiter=500,
    )


def test_vallado_example_2_1_kepler_equation():
    # Vallado 4th ed., Example 2-1: M = 235.4 deg, e = 0.4 -> E = 220.512074767522 deg
    # (from memory; scipy brentq on E - e sin E = M gives the same to 1e-12 deg).
    e_rad = mean_to_eccentric_anomaly(math.radians(235.4), 0.4)
    assert math.degrees(e_rad) == pytest.approx(220.512074767522, abs=1e-9)


# --- Kepler's equation against an independent bracketing solver --------------------------------


@SETTINGS
@given(
    st.lists(
        st.tuples(
            st.floats(-60.0, 60.0),
            st.one_of(st.floats(0.0, 0.99), st.floats(0.99, 1.0 - 1e-9), st.just(0.0)),
        ),
        min_size=1,
        max_size=20,
    )
)
def test_elliptic_kepler_matches_brentq(samples):
    m, e = (np.array(x) for x in zip(*samples, strict=True))
    solved = mean_to_eccentric_anomaly(m, e)
    expected = [_brentq_elliptic(mi, ei) for mi, ei in zip(m, e, strict=True)]
    # Absolute rounding of E grows with the number of whole revolutions in M.
    assert np.all(np.abs(solved - np.array(expected)) <= 1e-11 * np.maximum(1.0, np.abs(m)))


@SETTINGS
@given(
    st.lists(
        st.tuples(
            st.floats(-1e4, 1e4),
            st.one_of(st.floats(1.0 + 1e-6, 1.1), st.floats(1.1, 50.0)),
        ),
        min_size=1,
        max_size=20,
    )
)
def test_hyperbolic_kepler_matches_brentq(samples):
    m, e = (np.array(x) for x in zip(*samples, strict=True))
    solved = mean_to_hyperbolic_anomaly(m, e)
    expected = np.array([_brentq_hyperbolic(mi, ei) for mi, ei in zip(m, e, strict=True)])
    np.testing.assert_allclose(solved, expected, rtol=1e-12, atol=1e-12)


def test_kepler_residuals_at_extremes():
    # Far beyond brentq's comfortable range: check the equations' residuals directly.
    m = np.array([1e-12, 1e-6, 3.0, math.pi, 1e3, 1e8])
    for e in (1.0 - 1e-12, 0.5):
        big_e = mean_to_eccentric_anomaly(m, e)
        np.testing.assert_allclose(big_e - e * np.sin(big_e), m, rtol=1e-12, atol=1e-20)
    for e in (1.0 + 1e-12, 1.5, 1e3):
        h = mean_to_hyperbolic_anomaly(m, e)
        np.testing.assert_allclose(e * np.sinh(h) - h, m, rtol=1e-12, atol=1e-20)


def test_barker_closed_form_solves_the_cubic_and_matches_brentq():
    # Independent: scipy brentq on B + B^3/3 = M (Vallado 4th ed., Algorithm 3 definition).
    m = np.array([-1e6, -30.0, -1.0, -1e-9, 0.0, 1e-12, 0.5, 6.773707977922729 * 2, 1e9])
    b = mean_to_parabolic_anomaly(m)
    np.testing.assert_allclose(b + b**3 / 3.0, m, rtol=1e-14, atol=1e-300)
    for mi, bi in zip(m, b, strict=True):
        bound = abs(mi) ** (1.0 / 3.0) * 2.0 + 1.0
        root = brentq(lambda x, mi=mi: x + x**3 / 3.0 - mi, -bound, bound, xtol=1e-300, rtol=1e-15)
        assert bi == pytest.approx(root, rel=1e-13, abs=1e-300)


def test_no_convergence_raises_value_error(monkeypatch):
    monkeypatch.setattr(kepler_equation, "KEPLER_MAX_ITERATIONS", 1)
    with pytest.raises(ValueError, match="did not converge"):
        mean_to_eccentric_anomaly(np.array([0.1, 1.0, 2.0]), 0.9)
    with pytest.raises(ValueError, match="did not converge"):
        mean_to_hyperbolic_anomaly(2.0, 1.3)
