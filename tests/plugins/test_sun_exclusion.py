"""sun-exclusion: the thrust axis's angle to the Sun at ignition and cutoff against a keep-out cone.

'lumen-4' (tests/plugins/sun_plans.py) sits on the Earth-Sun line at the plan epoch and fires
small inertial (GCRF) burns at a chosen angle from the Sun. Every angle judged is recomputed
here with numpy, arccos of the dot product of unit vectors, from the core's Sun vector less the
spacecraft's position at ignition and cutoff (``BurnResult.r_ignition_km``, ``r_cutoff_km``) and
the burn's inertial delta-v. The worst case over a protected axis's cone is the spherical
triangle inequality: an axis at angle theta from the thrust axis is at least alpha - theta and
at most alpha + theta from the Sun, both reached at some roll.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from plugins import sun_exclusion
from plugins.sun_exclusion import SunExclusion
from service.dynamics.sun import sun_position_from_body_km, sun_position_km
from service.engine.plan import CartesianState, Engine, Maneuver, Spacecraft
from tests.plugins.conftest import context_for, make_plan, validate_with
from tests.plugins.sun_plans import EPOCH, MEAN_MOTION_RAD_S, burn, sun_axes, zero_beta_plan

CHECK = "sun-exclusion"
DV_M_S = 0.01  # a 0.27 s burn: the Sun's direction cannot change within it


def _toward(gamma_deg: float) -> tuple[float, float, float]:
    """A delta-v ``gamma_deg`` from the Sun's direction at the plan epoch, out of the plane."""
    s, _, n = sun_axes()
    gamma = math.radians(gamma_deg)
    return tuple(DV_M_S * (math.cos(gamma) * s + math.sin(gamma) * n))


def _plan(gamma_deg: float, offset_deg: float | None = None, **changes):
    spacecraft = Spacecraft(
        540.0,
        62.0,
        (Engine("main", 22.0, 228.0, 1200.0, 0.1),),
        protected_axis_offset_deg=offset_deg,
    )
    burns = [burn("slew-burn", 60.0, _toward(gamma_deg), frame="GCRF")]
    return zero_beta_plan(0.0, burns, spacecraft=spacecraft, **changes)


def _angles_by_hand(plan, body_name: str = "earth") -> tuple[float, float]:
    """(ignition, cutoff) angles between the thrust axis and the Sun from the spacecraft, deg."""
    (flown,) = context_for(plan).trajectory.maneuvers
    thrust = flown.delta_v_inertial_m_s / np.linalg.norm(flown.delta_v_inertial_m_s)
    angles = []
    for epoch, r_km in ((flown.ignition, flown.r_ignition_km), (flown.cutoff, flown.r_cutoff_km)):
        to_sun = sun_position_from_body_km(body_name, epoch) - r_km
        cosine = np.dot(thrust, to_sun) / np.linalg.norm(to_sun)
        angles.append(math.degrees(math.acos(float(np.clip(cosine, -1.0, 1.0)))))
    return angles[0], angles[1]


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in SunExclusion.parameters.items()}
    values.update(changes)
    return values


def _evaluate(plan, **changes) -> list:
    return list(SunExclusion().evaluate(context_for(plan), _params(**changes)))


def _findings(plan) -> list[dict]:
    return [f for f in validate_with(sun_exclusion, plan)["findings"] if f["check"] == CHECK]


def test_the_burn_really_points_where_the_test_aims_it():
    at_ignition, at_cutoff = _angles_by_hand(_plan(40.0))
    assert at_ignition == pytest.approx(40.0, abs=0.01)  # parallax and the Sun's motion: tiny
    assert at_cutoff == pytest.approx(at_ignition, abs=1e-4)


# --- keep-out 30 deg, warn margin 5 deg (the default profile) -------------------------------


@pytest.mark.parametrize(
    ("gamma_deg", "status"),
    [
        (10.0, "fail"),
        (29.99, "fail"),  # just inside the cone
        (30.01, "warn"),  # just outside it, inside the margin
        (32.0, "warn"),
        (34.99, "warn"),
        (35.01, "pass"),  # just beyond the margin
        (60.0, "pass"),
        (180.0, "pass"),  # thrusting straight away from the Sun
    ],
)
def test_keep_out_pass_warn_fail_and_its_edges(gamma_deg, status):
    plan = _plan(gamma_deg)
    (finding,) = _findings(plan)
    expected = min(_angles_by_hand(plan))
    assert finding["status"] == status
    assert finding["maneuver"] == "slew-burn"
    assert finding["value"] == pytest.approx(expected, abs=1e-6)
    assert finding["limit"] == 30.0
    assert finding["unit"] == "deg"
    assert "keep-out cone" in finding["message"]


def test_the_fail_message_says_by_how_much_and_gives_both_instants():
    plan = _plan(10.0)
    (finding,) = _evaluate(plan)
    at_ignition, at_cutoff = _angles_by_hand(plan)
    assert finding.message.startswith(
        f"the thrust axis comes within {min(at_ignition, at_cutoff):.2f} deg of the Sun, "
        f"{30.0 - min(at_ignition, at_cutoff):.2f} deg inside the 30.00 deg keep-out cone"
    )
    assert f"{at_ignition:.2f} deg from the Sun at ignition" in finding.message
    assert f"{at_cutoff:.2f} deg at cutoff" in finding.message


def test_an_along_track_burn_is_at_right_angles_to_the_sun_plus_the_phase_flown():
    # Under the Sun at zero beta the velocity is perpendicular to the Sun's direction; the
    # impulse's direction is the velocity at the burn's centre, turned by the phase flown to it.
    plan = zero_beta_plan(0.0, [burn("raise-1", 60.0, (5.0, 0.0, 0.0))])
    context = context_for(plan)
    (flown,) = context.trajectory.maneuvers
    centre_s = float((flown.centre - EPOCH) / np.timedelta64(1, "ms")) / 1000.0
    (finding,) = SunExclusion().evaluate(context, _params())
    assert finding.status == "pass"
    turned_deg = math.degrees(MEAN_MOTION_RAD_S * centre_s)
    assert finding.value == pytest.approx(90.0 + turned_deg, abs=0.05)
    assert finding.value == pytest.approx(min(_angles_by_hand(plan)), abs=1e-6)


def test_a_request_may_widen_the_cone():
    plan = _plan(40.0, rules={CHECK: {"keep_out_half_angle_deg": 45.0}})
    (finding,) = _findings(plan)
    assert (finding["status"], finding["limit"]) == ("fail", 45.0)


# --- the protected axis: worst case over its cone ------------------------------------------


@pytest.mark.parametrize(
    ("gamma_deg", "offset_deg", "status"),
    [
        (85.0, 45.0, "pass"),  # the axis can come to 40 deg
        (77.0, 45.0, "warn"),  # 32 deg
        (60.0, 45.0, "fail"),  # 15 deg
        (10.0, 45.0, "fail"),  # the cone holds the Sun: 0 deg
        (40.0, 0.0, "pass"),  # no offset: the thrust axis itself
    ],
)
def test_a_protected_axis_is_judged_at_its_worst_roll(gamma_deg, offset_deg, status):
    plan = _plan(gamma_deg, offset_deg)
    (finding,) = _evaluate(plan)
    expected = max(0.0, min(_angles_by_hand(plan)) - offset_deg)
    assert finding.status == status
    assert finding.value == pytest.approx(expected, abs=1e-6)
    assert finding.limit == 30.0
    if offset_deg:
        assert f"the protected axis ({offset_deg:.1f} deg from the thrust axis" in finding.message


# --- keep-in maximum (off unless set) ------------------------------------------------------


@pytest.mark.parametrize(
    ("gamma_deg", "offset_deg", "status"),
    [(40.0, None, "pass"), (49.99, None, "pass"), (50.01, None, "fail"), (40.0, 20.0, "fail")],
)
def test_a_keep_in_maximum_set_by_the_request(gamma_deg, offset_deg, status):
    plan = _plan(gamma_deg, offset_deg, rules={CHECK: {"keep_in_max_deg": 50.0}})
    keep_out, keep_in = _findings(plan)
    expected = min(180.0, max(_angles_by_hand(plan)) + (offset_deg or 0.0))
    assert keep_out["limit"] == 30.0
    assert keep_in["status"] == status
    assert keep_in["value"] == pytest.approx(expected, abs=1e-6)
    assert keep_in["limit"] == 50.0
    assert "keep-in maximum" in keep_in["message"]


def test_without_a_keep_in_maximum_there_is_one_finding_per_burn():
    burns = [burn(f"slew-{k}", 60.0 + 600.0 * k, _toward(90.0), frame="GCRF") for k in range(3)]
    findings = _evaluate(zero_beta_plan(0.0, burns))
    assert [f.maneuver for f in findings] == ["slew-0", "slew-1", "slew-2"]


# --- other bodies, and not applicable -------------------------------------------------------


def test_around_mars_the_sun_is_seen_from_mars():
    # 2032-05-02: a year after opposition, the Sun seen from Mars and from the Earth differ.
    epoch = np.datetime64("2032-05-02T00:00:00", "ms")
    ignition = epoch + np.timedelta64(60, "s")
    r_km = 3396.19 + 400.0  # 400 km above the IAU WG 2009 equatorial radius
    to_sun = sun_position_from_body_km("mars", ignition)
    dv = tuple(DV_M_S * to_sun / np.linalg.norm(to_sun))  # straight at the Sun
    plan = make_plan(
        plan_id="ochre-2-trim-01",
        central_body="mars",
        epoch=epoch,
        initial_state=CartesianState(
            "GCRF", (r_km, 0.0, 0.0), (0.0, math.sqrt(42828.375214 / r_km), 0.0)
        ),
        maneuvers=(Maneuver("trim-1", ignition, "main", "GCRF", dv),),
    )
    (finding,) = _evaluate(plan)
    assert finding.status == "fail"
    assert finding.value == pytest.approx(min(_angles_by_hand(plan, "mars")), abs=1e-6)
    assert finding.value < 0.01
    # The Earth's Sun direction is far from this one: the check used the right body.
    earth_sun = sun_position_km(ignition)
    cosine = np.dot(earth_sun, to_sun) / np.linalg.norm(earth_sun) / np.linalg.norm(to_sun)
    assert math.degrees(math.acos(cosine)) > 10.0


def test_a_plan_without_burns_is_skipped():
    (finding,) = _evaluate(zero_beta_plan(0.0, []))
    assert finding.status == "skipped"


def test_a_plan_beyond_the_sun_models_years_is_skipped_saying_why():
    late = np.datetime64("2061-05-02T00:00:00", "ms")
    plan = zero_beta_plan(
        0.0,
        [Maneuver("trim-1", late + np.timedelta64(60, "s"), "main", "TNW", (1.0, 0, 0))],
        epoch=late,
    )
    (finding,) = _evaluate(plan)
    assert finding.status == "skipped"
    assert "1950 to 2050" in finding.message


@pytest.mark.parametrize(
    ("changes", "words"),
    [
        ({"keep_out_half_angle_deg": 181.0}, "keep_out_half_angle_deg"),
        ({"warn_margin_deg": -1.0}, "warn_margin_deg"),
        ({"keep_in_max_deg": -5.0}, "keep_in_max_deg"),
    ],
)
def test_parameters_out_of_range_are_an_error_of_the_check(changes, words):
    with pytest.raises(ValueError, match=words):
        _evaluate(_plan(40.0), **changes)


def test_the_parameters_and_their_directions():
    spec = SunExclusion.parameters
    assert {name: (p.default, p.unit, p.stricter) for name, p in spec.items()} == {
        "keep_out_half_angle_deg": (30.0, "deg", "higher"),
        "warn_margin_deg": (5.0, "deg", "higher"),
        "keep_in_max_deg": (None, "deg", "lower"),
    }
