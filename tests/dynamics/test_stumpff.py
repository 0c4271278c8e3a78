"""Stumpff functions: definitions, their series near zero, and an identity across the switch."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.stumpff import stumpff_c, stumpff_s

PROPERTY = settings(max_examples=200, deadline=None)


@PROPERTY
@given(st.floats(-400.0, 400.0))
def test_stumpff_identity(z):
    # U1^2 = U2 (1 + U0) in Stumpff form: (1 - z S)^2 = C (2 - z C), for every z
    # (Curtis 3rd ed., section 3.7, from the definitions); crosses the series switch.
    c, s = stumpff_c(z), stumpff_s(z)
    lhs, rhs = (1.0 - z * s) ** 2, c * (2.0 - z * c)
    assert abs(lhs - rhs) <= 1e-13 * max(1.0, abs(lhs))


def test_stumpff_values():
    # Definitions: Curtis 3rd ed., section 3.7; C(0) = 1/2, S(0) = 1/6 are the series' limits.
    assert stumpff_c(0.0) == 0.5
    assert stumpff_s(0.0) == 1.0 / 6.0
    z = np.array([-50.0, -4.0, 4.0, 30.0])
    x = np.sqrt(np.abs(z))
    c_ref = np.where(z > 0, (1 - np.cos(x)) / z, (np.cosh(x) - 1) / -z)
    s_ref = np.where(z > 0, (x - np.sin(x)) / x**3, (np.sinh(x) - x) / x**3)
    np.testing.assert_allclose(stumpff_c(z), c_ref, rtol=1e-13)
    np.testing.assert_allclose(stumpff_s(z), s_ref, rtol=1e-13)
    assert stumpff_c(z.reshape(2, 2)).shape == (2, 2)


def test_stumpff_series_near_zero_and_across_switch():
    # Near 0, the first Maclaurin terms 1/2 - z/24 + z^2/720 and 1/6 - z/120 + z^2/5040
    # (Curtis 3rd ed., section 3.7) are exact to rounding for |z| <= 1e-4.
    z = np.array([-1e-4, -1e-9, 1e-9, 1e-4])
    np.testing.assert_allclose(stumpff_c(z), 0.5 - z / 24 + z**2 / 720, rtol=1e-15)
    np.testing.assert_allclose(stumpff_s(z), 1 / 6 - z / 120 + z**2 / 5040, rtol=1e-15)
    # Continuous across the switch between series and closed form at |z| = 1.
    for edge in (-1.0, 1.0):
        zz = np.array([edge * (1 - 1e-12), edge * (1 + 1e-12)])
        assert abs(np.diff(stumpff_c(zz))[0]) < 1e-13
        assert abs(np.diff(stumpff_s(zz))[0]) < 1e-13
