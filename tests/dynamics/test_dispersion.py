"""The Monte Carlo kernel against the nominal plan and a closed-form tail probability."""

import math

import numpy as np
import pytest
from scipy.stats import norm

from service.dynamics.bodies import EARTH
from service.dynamics.dispersion import BurnErrors, disperse
from service.dynamics.elements import elements_from_semi_major_axis, elements_to_state
from service.dynamics.epochs import add_seconds, epoch
from service.dynamics.trajectory import BurnSpec, EngineSpec, build_trajectory

MU = EARTH.mu_km3_s2
RE = EARTH.equatorial_radius_km
EPOCH = epoch("2031-05-02T00:00:00")
MAIN = EngineSpec(id="main", thrust_n=22.0, isp_s=228.0)
NONE = BurnErrors(0.0, 0.0, 0.0, 0.0)


def _plan(burns, r0_km=RE + 400.0, inclination_rad=0.9):
    r, v = elements_to_state(
        elements_from_semi_major_axis(r0_km, 0.0, inclination_rad, 0.3, 0.0, 0.0), MU
    )
    return build_trajectory(EARTH, EPOCH, r, v, 602.0, burns, finite_burns=False)


def _burns():
    return [
        BurnSpec("a", add_seconds(EPOCH, 600.0), MAIN, "TNW", (-20.0, 0.0, 0.0)),
        BurnSpec("b", add_seconds(EPOCH, 3000.0), MAIN, "RTN", (3.0, 12.0, -4.0)),
        BurnSpec("c", add_seconds(EPOCH, 8000.0), MAIN, "GCRF", (5.0, -2.0, 1.0)),
    ]


def test_without_errors_every_sample_flies_the_nominal_plan():
    burns = _burns()
    trajectory = _plan(burns)
    result = disperse(trajectory, burns, [NONE] * 3, 50, np.random.default_rng(1))
    nominal = [arc.periapsis_altitude_km for arc in trajectory.arcs]
    np.testing.assert_allclose(
        result.periapsis_altitude_km,
        np.array(nominal)[:, None] + 0 * result.periapsis_altitude_km,
        atol=1e-6,
    )
    np.testing.assert_allclose(result.propellant_kg, trajectory.total_propellant_kg, rtol=1e-12)
    assert result.bound.all()


def test_magnitude_error_alone_matches_the_vis_viva_normal_tail():
    # A retrograde along-track burn from a circular orbit: the periapsis after it is a
    # monotonic function of |dv| (vis-viva, Vallado 4th ed. eq. 1-31 / Curtis 3rd ed. ch. 2),
    # so P(periapsis < floor) = P(dv > dv*) = 1 - Phi((dv* - dv) / (sigma dv)) exactly.
    r0 = RE + 400.0
    dv_nominal, sigma = 60.0, 0.02
    floor_alt = 183.0
    a_star = 0.5 * (r0 + RE + floor_alt)
    dv_star = 1000.0 * (math.sqrt(MU / r0) - math.sqrt(MU * (2.0 / r0 - 1.0 / a_star)))
    expected = 1.0 - norm.cdf((dv_star - dv_nominal) / (sigma * dv_nominal))
    burns = [BurnSpec("down", add_seconds(EPOCH, 600.0), MAIN, "TNW", (-dv_nominal, 0.0, 0.0))]
    trajectory = _plan(burns, inclination_rad=0.0)
    samples = 40_000
    result = disperse(
        trajectory, burns, [BurnErrors(sigma, 0.0, 0.0, 0.0)], samples, np.random.default_rng(7)
    )
    below = np.count_nonzero(result.periapsis_altitude_km[1] < floor_alt)
    estimate = below / samples
    half_width = 4.0 * math.sqrt(expected * (1.0 - expected) / samples)  # ~4 sigma binomial
    assert 0.01 < expected < 0.5
    assert estimate == pytest.approx(expected, abs=half_width)


def test_the_same_seed_gives_the_same_samples_and_another_seed_does_not():
    burns = _burns()
    trajectory = _plan(burns)
    errors = [BurnErrors(0.01, 0.01, math.radians(0.5), 1.0)] * 3
    one = disperse(trajectory, burns, errors, 500, np.random.default_rng(11))
    two = disperse(trajectory, burns, errors, 500, np.random.default_rng(11))
    three = disperse(trajectory, burns, errors, 500, np.random.default_rng(12))
    np.testing.assert_array_equal(one.periapsis_altitude_km, two.periapsis_altitude_km)
    assert not np.array_equal(one.periapsis_altitude_km, three.periapsis_altitude_km)


def test_pointing_error_follows_a_rayleigh_law():
    from service.dynamics.dispersion import _deflect

    sigma = math.radians(0.7)
    direction = np.tile([0.0, 0.0, 1.0], (200_000, 1))
    deflected = _deflect(direction, sigma, np.random.default_rng(3))
    np.testing.assert_allclose(np.linalg.norm(deflected, axis=1), 1.0, atol=1e-12)
    angle = np.arccos(np.clip(deflected[:, 2], -1.0, 1.0))
    # Rayleigh mean sigma sqrt(pi / 2) (any statistics text).
    assert angle.mean() == pytest.approx(sigma * math.sqrt(math.pi / 2.0), rel=0.01)


def test_bad_inputs_are_refused():
    burns = _burns()
    trajectory = _plan(burns)
    with pytest.raises(ValueError, match="samples"):
        disperse(trajectory, burns, [NONE] * 3, 0, np.random.default_rng(0))
    with pytest.raises(ValueError, match="one BurnSpec"):
        disperse(trajectory, burns[:2], [NONE] * 2, 5, np.random.default_rng(0))
    with pytest.raises(ValueError, match="pointing_rad"):
        BurnErrors(0.0, 0.0, -1.0, 0.0)
