"""Conical and cylindrical shadows (service.dynamics.shadow) against closed forms and scipy."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from service.dynamics.bodies import EARTH, MARS, MOON
from service.dynamics.shadow import (
    disc_angles_rad,
    in_cylindrical_shadow,
    shadow_state,
    sunlit_fraction,
)
from service.dynamics.sun import AU_KM, SUN_RADIUS_KM, sun_position_from_body_km

RE = EARTH.equatorial_radius_km
SUN_X = np.array([AU_KM, 0.0, 0.0])
EPOCH = np.datetime64("2030-03-01T00:00:00", "ms")


def _ring(radius_km: float, angles_rad: np.ndarray) -> np.ndarray:
    """Points on a circle in the x-y plane; angle 0 faces the Sun (+x), pi is behind the body."""
    return radius_km * np.stack([np.cos(angles_rad), np.sin(angles_rad), 0.0 * angles_rad], -1)


def test_behind_the_body_is_umbra_and_sunward_is_sunlight():
    assert sunlit_fraction([-(RE + 500.0), 0.0, 0.0], SUN_X, RE) == 0.0
    assert sunlit_fraction([RE + 500.0, 0.0, 0.0], SUN_X, RE) == 1.0
    # Beside the body, far from the shadow: sunlit.
    assert sunlit_fraction([0.0, RE + 500.0, 0.0], SUN_X, RE) == 1.0
    assert shadow_state(0.0) == "umbra"
    assert shadow_state(1.0) == "sunlight"
    assert shadow_state(0.4) == "penumbra"


def test_fraction_rises_monotonically_across_the_terminator():
    # A spacecraft at 7000 km moving out of the shadow: umbra, a short penumbra, sunlight.
    r = 7000.0
    edge = math.pi - math.asin(RE / r)  # the cylinder's edge, inside the penumbra band
    angles = np.linspace(edge + 0.01, edge - 0.01, 4001)
    fraction = sunlit_fraction(_ring(r, angles), SUN_X, RE)
    assert fraction[0] == 0.0 and fraction[-1] == 1.0
    assert np.all(np.diff(fraction) >= 0.0)
    band = (fraction > 0.0) & (fraction < 1.0)
    assert band.sum() > 100
    states = shadow_state(fraction)
    assert set(states[band]) == {"penumbra"}
    # The penumbra band is about the Sun's angular diameter (0.533 deg seen from 1 au) wide;
    # the cylinder edge lies inside it.
    band_angles = angles[band]
    assert band_angles.min() < edge < band_angles.max()
    # With the Sun at infinity the separation c changes one for one with the orbit angle, so
    # the band (from c = b + a to c = b - a) is the Sun's apparent diameter 2a wide.
    width = band_angles.max() - band_angles.min()
    sun_diameter = 2.0 * math.asin(SUN_RADIUS_KM / AU_KM)
    assert width == pytest.approx(sun_diameter, abs=2e-5)


def _overlap_area_quad(a: float, b: float, c: float) -> float:
    """Area shared by a disc of radius a at 0 and one of radius b at c (plane), by scipy quad."""

    def chord(x: float) -> float:
        # b^2 - (x - c)^2 factored: b ~ 1 rad and the lens ~0.005 rad wide, so the plain
        # difference of squares would lose half the digits.
        half_a = math.sqrt(max((a - x) * (a + x), 0.0))
        half_b = math.sqrt(max((b - c + x) * (b + c - x), 0.0))
        return 2.0 * min(half_a, half_b)

    lo, hi = max(-a, c - b), min(a, c + b)
    kink = ((c - b) * (c + b) + a * a) / (2.0 * c)
    # full_output: quad's "roundoff error detected" notice at this tight tolerance is returned
    # instead of warned; the caller's assertion on the value is the test.
    return quad(chord, lo, hi, points=[kink], epsabs=0.0, epsrel=1e-13, limit=200, full_output=1)[0]


@settings(max_examples=100, deadline=None)
@given(st.floats(0.0, 1.0))
def test_partial_fraction_matches_numerical_disc_overlap(where):
    # Independent check of Montenbruck & Gill eq. 3.87's lens area: scipy.integrate.quad of the
    # chord overlap of the two plane discs, at separations across the whole penumbra.
    r = 7000.0
    edge = math.pi - math.asin(RE / r)
    angle = edge - 0.006 + 0.012 * where
    sat = _ring(r, np.array([angle]))
    a, b, c = (float(x[0]) for x in disc_angles_rad(sat, SUN_X, RE))
    fraction = float(sunlit_fraction(sat, SUN_X, RE)[0])
    if not (b - a < c < a + b):
        return
    expected = 1.0 - _overlap_area_quad(a, b, c) / (math.pi * a * a)
    assert fraction == pytest.approx(expected, abs=1e-13)


def test_annular_eclipse_beyond_the_umbra_tip():
    # The Earth's umbra ends near R_E * d_sun / (R_sun - R_E) ~ 1.38e6 km; at 3e6 km on the axis
    # the Earth sits inside the solar disc: fraction 1 - b^2 / a^2 (Montenbruck & Gill 3.4.2).
    sat = np.array([-3.0e6, 0.0, 0.0])
    a, b, _ = disc_angles_rad(sat, SUN_X, RE)
    assert a > b
    assert sunlit_fraction(sat, SUN_X, RE) == pytest.approx(1.0 - (b / a) ** 2, rel=1e-14)
    assert shadow_state(sunlit_fraction(sat, SUN_X, RE)) == "penumbra"
    # The cylinder never ends: it calls this point shadowed whatever the distance.
    assert in_cylindrical_shadow(sat, SUN_X, RE)


@settings(max_examples=200, deadline=None)
@given(
    st.floats(6500.0, 50000.0),
    st.floats(0.0, 2.0 * math.pi),
    st.floats(-1.5, 1.5),
    st.floats(0.0, 2.0 * math.pi),
)
def test_cylinder_agrees_outside_the_penumbra_band(radius, lon, lat, sun_lon):
    # The umbra cone narrows and the penumbra cone widens behind the body, so the cylinder
    # (Vallado 4th ed., Algorithm 34) contains the umbra and lies inside umbra + penumbra.
    sat = radius * np.array(
        [math.cos(lat) * math.cos(lon), math.cos(lat) * math.sin(lon), math.sin(lat)]
    )
    sun = AU_KM * np.array([math.cos(sun_lon), math.sin(sun_lon), 0.0])
    fraction = sunlit_fraction(sat, sun, RE)
    cylinder = in_cylindrical_shadow(sat, sun, RE)
    if fraction == 0.0:
        assert cylinder
    if fraction == 1.0:
        assert not cylinder


def _eclipse_samples(body, altitude_km: float, sun_km: np.ndarray, dt_s: float):
    """One circular orbit at zero beta angle (the Sun in the orbit plane), sampled every dt."""
    r = body.equatorial_radius_km + altitude_km
    period = 2.0 * math.pi * math.sqrt(r**3 / body.mu_km3_s2)
    s = sun_km / np.linalg.norm(sun_km)
    normal = np.cross(s, [0.0, 0.0, 1.0])
    normal /= np.linalg.norm(normal)
    along = np.cross(normal, s)
    angles = 2.0 * math.pi * np.arange(0.0, period, dt_s) / period
    sat = r * (np.cos(angles)[:, None] * s + np.sin(angles)[:, None] * along)
    return r, period, sat


@pytest.mark.parametrize(
    ("body", "altitude_km"), [(EARTH, 500.0), (EARTH, 1500.0), (MOON, 100.0), (MARS, 400.0)]
)
def test_eclipse_duration_matches_the_cylindrical_closed_form(body, altitude_km):
    # Cylindrical shadow at beta = 0: T_ecl = (P / pi) asin(R / r) (Vallado 4th ed., section
    # 5.3; the common closed form). Sampled every 0.05 s; the conical umbra is shorter and
    # umbra + penumbra longer, by no more than the penumbra's few seconds (tens at Mars/Moon).
    dt = 0.05
    sun = sun_position_from_body_km(body.name, EPOCH)
    r, period, sat = _eclipse_samples(body, altitude_km, sun, dt)
    radius = body.equatorial_radius_km
    closed_form = period / math.pi * math.asin(radius / r)
    cylinder_s = in_cylindrical_shadow(sat, sun, radius).sum() * dt
    assert cylinder_s == pytest.approx(closed_form, abs=2.0 * dt)
    fraction = sunlit_fraction(sat, sun, radius)
    umbra_s = (fraction == 0.0).sum() * dt
    shadow_s = (fraction < 1.0).sum() * dt
    assert umbra_s < closed_form < shadow_s
    assert shadow_s - umbra_s < 0.02 * period


def test_vectorised_shapes_and_broadcasting():
    sats = _ring(7000.0, np.linspace(0.0, 2.0 * math.pi, 7))
    assert isinstance(sunlit_fraction(sats[0], SUN_X, RE), float)
    assert sunlit_fraction(sats, SUN_X, RE).shape == (7,)
    assert sunlit_fraction(sats, np.tile(SUN_X, (7, 1)), RE).shape == (7,)
    assert in_cylindrical_shadow(sats, SUN_X, RE).shape == (7,)
    assert isinstance(in_cylindrical_shadow(sats[0], SUN_X, RE), bool)
    assert shadow_state(np.array([0.0, 0.5, 1.0])).tolist() == ["umbra", "penumbra", "sunlight"]


def test_bad_inputs_raise():
    with pytest.raises(ValueError, match="not above"):
        sunlit_fraction([RE - 1.0, 0.0, 0.0], SUN_X, RE)
    with pytest.raises(ValueError, match="finite"):
        sunlit_fraction([np.nan, 0.0, 0.0], SUN_X, RE)
    with pytest.raises(ValueError, match="shape"):
        sunlit_fraction([1.0, 2.0], SUN_X, RE)
    with pytest.raises(ValueError, match="radius"):
        sunlit_fraction([7000.0, 0.0, 0.0], SUN_X, 0.0)
    with pytest.raises(ValueError, match="pair"):
        sunlit_fraction(np.ones((3, 3)) * 7000.0, np.ones((2, 3)) * AU_KM, RE)
    with pytest.raises(ValueError, match=r"\[0, 1\]"):
        shadow_state(1.5)
    with pytest.raises(ValueError, match="centre"):
        in_cylindrical_shadow([7000.0, 0.0, 0.0], [0.0, 0.0, 0.0], RE)


@settings(max_examples=100, deadline=None)
@given(st.floats(0.0, 1.0))
def test_partial_fraction_with_the_body_smaller_than_the_sun(where):
    # Beyond the umbra's tip (3e6 km behind the Earth) the Earth's disc is smaller than the
    # Sun's; the lens area is checked against scipy quad as above.
    offset = (where - 0.5) * 2.0 * 30000.0
    sat = np.array([[-3.0e6, offset, 0.0]])
    a, b, c = (float(x[0]) for x in disc_angles_rad(sat, SUN_X, RE))
    fraction = float(sunlit_fraction(sat, SUN_X, RE)[0])
    if not (a - b < c < a + b):
        return
    expected = 1.0 - _overlap_area_quad(a, b, c) / (math.pi * a * a)
    assert fraction == pytest.approx(expected, abs=1e-13)
