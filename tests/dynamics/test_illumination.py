"""Sunlight along a trajectory (service.dynamics.illumination) against sampling and closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest

from service.dynamics.bodies import EARTH, MARS
from service.dynamics.epochs import add_seconds, epoch
from service.dynamics.illumination import next_shadow_change, sunlit_fraction_on
from service.dynamics.shadow import shadow_state
from service.dynamics.sun import sun_position_from_body_km
from service.dynamics.trajectory import build_trajectory

EPOCH = epoch("2031-05-02T00:00:00")


def _zero_beta(body, altitude_km: float):
    """Circular orbit with the Sun in its plane, starting at the sub-solar point.

    Returns the trajectory (no burns), the radius and the period.
    """
    r = body.equatorial_radius_km + altitude_km
    sun = sun_position_from_body_km(body.name, EPOCH)
    s = sun / np.linalg.norm(sun)
    normal = np.cross(s, [0.0, 0.0, 1.0])
    normal /= np.linalg.norm(normal)
    speed = math.sqrt(body.mu_km3_s2 / r)
    trajectory = build_trajectory(body, EPOCH, r * s, speed * np.cross(normal, s), 500.0, [])
    return trajectory, r, 2.0 * math.pi * math.sqrt(r**3 / body.mu_km3_s2)


def _walk(trajectory, horizon_s: float, step_s: float = 30.0):
    """All shadow changes within the horizon, as (seconds from EPOCH, new state)."""
    events, offset = [], 0.0
    while True:
        found = next_shadow_change(
            trajectory, add_seconds(EPOCH, offset), horizon_s - offset, step_s
        )
        if found is None:
            return events
        offset += found[0]
        events.append((offset, found[1]))
        offset += 0.01  # step off the boundary


def test_leo_eclipse_entry_and_exit_match_the_cylindrical_closed_form():
    # Cylindrical shadow at beta = 0: T_ecl = (P / pi) asin(R / r) (Vallado 4th ed., section
    # 5.3; the common closed form), centred on the anti-solar point half an orbit after the
    # sub-solar start. The conical penumbra (Montenbruck & Gill 3.4.2) lasts ~8 s in LEO and
    # straddles each cylinder edge, so entry and exit agree to within that duration.
    trajectory, r, period = _zero_beta(EARTH, 500.0)
    events = _walk(trajectory, period)
    assert [state for _, state in events] == ["penumbra", "umbra", "penumbra", "sunlight"]
    (pen_in, _), (umbra_in, _), (umbra_out, _), (pen_out, _) = events
    half = 0.5 * period / math.pi * math.asin(EARTH.equatorial_radius_km / r)
    cylinder_in, cylinder_out = 0.5 * period - half, 0.5 * period + half
    entry_penumbra, exit_penumbra = umbra_in - pen_in, pen_out - umbra_out
    assert 5.0 < entry_penumbra < 15.0 and 5.0 < exit_penumbra < 15.0
    assert pen_in < cylinder_in < umbra_in
    assert umbra_out < cylinder_out < pen_out
    assert abs(pen_in - cylinder_in) < entry_penumbra
    assert abs(pen_out - cylinder_out) < exit_penumbra


def test_changes_agree_with_the_sampled_fraction():
    # Just before each change the old state holds and just after it the new one, and dense
    # sampling of sunlit_fraction_on (0.1 s) puts the same changes within a sample.
    trajectory, _, period = _zero_beta(EARTH, 500.0)
    events = _walk(trajectory, period)
    old = "sunlight"
    for seconds, new in events:
        around = np.array([add_seconds(EPOCH, seconds - 0.02), add_seconds(EPOCH, seconds + 0.02)])
        assert shadow_state(sunlit_fraction_on(trajectory, around)).tolist() == [old, new]
        old = new
    offsets = np.arange(events[0][0] - 20.0, events[-1][0] + 20.0, 0.1)
    times = EPOCH + np.rint(offsets * 1000.0).astype("timedelta64[ms]")
    states = shadow_state(sunlit_fraction_on(trajectory, times))
    changes = offsets[1:][states[1:] != states[:-1]]
    assert changes == pytest.approx([seconds for seconds, _ in events], abs=0.11)


def test_short_penumbra_between_samples_is_still_reported_first():
    # With 60 s samples the ~8 s penumbra falls between two samples; the change reported from
    # sunlight is still the entry into the penumbra, at the same instant.
    trajectory, _, period = _zero_beta(EARTH, 500.0)
    fine = next_shadow_change(trajectory, EPOCH, period, step_s=5.0)
    coarse = next_shadow_change(trajectory, EPOCH, period, step_s=60.0)
    assert coarse[1] == fine[1] == "penumbra"
    assert coarse[0] == pytest.approx(fine[0], abs=2e-3)


def test_no_change_within_a_short_horizon():
    trajectory, _, _ = _zero_beta(EARTH, 500.0)
    assert next_shadow_change(trajectory, EPOCH, 600.0) is None


def test_mars_orbit_eclipse():
    # Around Mars the Sun's disc is smaller (0.35 deg) and the orbit slower: the cylinder edge
    # still lies inside the penumbra (closed form as above).
    trajectory, r, period = _zero_beta(MARS, 400.0)
    events = _walk(trajectory, period)
    assert [state for _, state in events] == ["penumbra", "umbra", "penumbra", "sunlight"]
    half = 0.5 * period / math.pi * math.asin(MARS.equatorial_radius_km / r)
    assert events[0][0] < 0.5 * period - half < events[1][0]
    assert events[2][0] < 0.5 * period + half < events[3][0]


def test_fraction_shapes_and_bad_inputs():
    trajectory, _, _ = _zero_beta(EARTH, 500.0)
    assert sunlit_fraction_on(trajectory, EPOCH) == 1.0
    times = EPOCH + np.arange(3).astype("timedelta64[m]")
    assert sunlit_fraction_on(trajectory, times).shape == (3,)
    with pytest.raises(ValueError, match="horizon_s"):
        next_shadow_change(trajectory, EPOCH, 0.0)
    with pytest.raises(ValueError, match="step_s"):
        next_shadow_change(trajectory, EPOCH, 100.0, step_s=math.nan)
