"""burn-duration: on-time against the engine's limits, burn arc and finite-burn loss."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from plugins import duration
from service.engine.plan import Engine, Maneuver, Spacecraft
from service.plugin_api import Context, Status
from tests.plugins.conftest import context_for, make_plan, validate_with

# EGM96 GM (NIMA TR8350.2, 3rd ed., table 3.1); g0 exact by the 3rd CGPM (1901).
MU_EARTH = 398600.4418
G0 = 9.80665
R_ORBIT = 6778.137  # make_plan's 400 km circular orbit
MASS = 602.0  # make_plan's spacecraft: 540 kg dry + 62 kg propellant
ISP = 228.0


def _duration_s(dv_m_s: float, thrust_n: float, mass_kg: float = MASS, isp_s: float = ISP):
    """Constant-thrust burn time t = m0 c / F (1 - exp(-dv / c)), c = Isp g0 (rocket-equation
    propellant burned at F / c: Curtis 3rd ed. chapter 11; Sutton & Biblarz 9th ed. chapter 4)."""
    c = isp_s * G0
    return mass_kg * c / thrust_n * (1.0 - math.exp(-dv_m_s / c))


def _burn_arc_deg(dv_m_s: float, thrust_n: float) -> float:
    """Angle swept by a prograde burn on the circular orbit: the angular rate v / r is the mean
    motion n = sqrt(mu / r^3) before the mid-point impulse (Vallado 4th ed. chapter 2) and
    (v + dv) / r after it, where the point has become the new periapsis."""
    t = _duration_s(dv_m_s, thrust_n)
    n = math.sqrt(MU_EARTH / R_ORBIT**3)
    return math.degrees(n * t + dv_m_s / 1000.0 * t / (2.0 * R_ORBIT))


def _robbins_loss_m_s(dv_m_s: float, arc_rad: float) -> float:
    """Finite-burn loss of a tangential burn from a circular orbit, dv * arc^2 / 24
    (Robbins, AIAA Journal 4(8), 1966, from memory): second order in the arc."""
    return dv_m_s * arc_rad**2 / 24.0


def _plan(dv_m_s: float, thrust_n: float = 22.0, *, max_s=1200.0, min_s=0.1, rules=None):
    engine = Engine("main", thrust_n, ISP, max_s, min_s)
    burn = Maneuver(
        "trim", np.datetime64("2031-05-02T01:00:00", "ms"), "main", "TNW", (dv_m_s, 0, 0)
    )
    return make_plan(
        spacecraft=Spacecraft(540.0, 62.0, (engine,)), maneuvers=(burn,), rules=rules or {}
    )


def _findings(plan) -> list[dict]:
    """The four findings of the one burn: max on-time, min pulse, burn arc, loss."""
    found = [f for f in validate_with(duration, plan)["findings"] if f["check"] == "burn-duration"]
    assert [f["maneuver"] for f in found] == ["trim"] * 4
    return found


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in duration.BurnDuration.parameters.items()}
    values.update(changes)
    return values


def test_parameters_are_the_documented_ones():
    assert duration.BurnDuration.id == "burn-duration"
    assert {
        name: (p.default, p.unit, p.stricter)
        for name, p in duration.BurnDuration.parameters.items()
    } == {
        "max_burn_arc_deg": (30.0, "deg", "lower"),
        "warn_burn_arc_deg": (15.0, "deg", "lower"),
        "max_finite_burn_loss_m_s": (1.0, "m/s", "lower"),
        "warn_fraction_of_max_burn": (0.9, "fraction", "lower"),
    }


def test_a_short_burn_passes_everything_with_the_closed_form_duration():
    expected_s = _duration_s(5.0, 22.0)
    on_time, pulse, arc, loss = _findings(_plan(5.0))
    assert 130.0 < expected_s < 140.0
    assert (on_time["status"], on_time["limit"], on_time["unit"]) == ("pass", 1200.0, "s")
    assert on_time["value"] == pytest.approx(expected_s, abs=1e-6)
    assert on_time["message"] == (
        f"burn of {expected_s:.1f} s uses {100 * expected_s / 1200:.1f}% of the 1200.0 s "
        "maximum on-time of engine 'main'"
    )
    assert (pulse["status"], pulse["limit"]) == ("pass", 0.1)
    assert pulse["value"] == pytest.approx(expected_s, abs=1e-6)
    assert (arc["status"], arc["limit"], arc["unit"]) == ("pass", 30.0, "deg")
    assert arc["value"] == pytest.approx(_burn_arc_deg(5.0, 22.0), rel=5e-4)
    assert (loss["status"], loss["limit"], loss["unit"]) == ("pass", 1.0, "m/s")
    assert loss["value"] == pytest.approx(
        _robbins_loss_m_s(5.0, math.radians(arc["value"])), rel=0.01
    )


# (max_burn_s as a multiple of the burn time, status): 90% warning level, then the maximum.
@pytest.mark.parametrize(
    ("max_over_t", "status"),
    [
        (1 / 0.85, "pass"),
        (1 / 0.9 * (1 + 1e-6), "pass"),  # just under 90% of the maximum
        (1 / 0.9 * (1 - 1e-6), "warn"),  # just over 90%
        (1 / 0.95, "warn"),
        (1 + 1e-6, "warn"),  # just inside the maximum
        (1 - 1e-6, "fail"),  # just over it
        (0.8, "fail"),
    ],
)
def test_on_time_against_the_engine_maximum(max_over_t, status):
    expected_s = _duration_s(12.0, 22.0)
    max_s = expected_s * max_over_t
    on_time = _findings(_plan(12.0, max_s=max_s))[0]
    assert on_time["status"] == status
    assert on_time["value"] == pytest.approx(expected_s, abs=1e-6)
    assert on_time["limit"] == pytest.approx(max_s, abs=1e-6)
    if status == "fail":
        assert on_time["message"].startswith(f"burn of {expected_s:.1f} s is ")
        assert "s longer than the" in on_time["message"]
    if max_over_t == 0.8:
        assert on_time["message"] == (
            f"burn of {expected_s:.1f} s is {expected_s - max_s:.1f} s longer than the "
            f"{max_s:.1f} s maximum on-time of engine 'main'"
        )
    if status == "warn":
        assert "warning level" in on_time["message"]


def test_a_tighter_warning_fraction_may_be_requested():
    expected_s = _duration_s(12.0, 22.0)  # about 27% of 1200 s
    rules = {"burn-duration": {"warn_fraction_of_max_burn": 0.25}}
    on_time = _findings(_plan(12.0, rules=rules))[0]
    assert on_time["status"] == "warn"
    assert on_time["message"] == (
        f"burn of {expected_s:.1f} s uses {100 * expected_s / 1200:.1f}% of the 1200.0 s "
        "maximum on-time of engine 'main', above the 25.0% warning level"
    )


@pytest.mark.parametrize(
    ("min_over_t", "status"), [(1 - 1e-6, "pass"), (1 + 1e-6, "fail"), (0.5, "pass")]
)
def test_a_pulse_against_the_engine_minimum(min_over_t, status):
    expected_s = _duration_s(0.001, 22.0)  # 1 mm/s: a few hundredths of a second
    min_s = expected_s * min_over_t
    pulse = _findings(_plan(0.001, min_s=min_s))[1]
    assert pulse["status"] == status
    assert pulse["value"] == pytest.approx(expected_s, abs=1e-6)
    assert pulse["limit"] == pytest.approx(min_s, abs=1e-6)


def test_a_pulse_shorter_than_the_engine_delivers_fails_with_the_shortfall():
    expected_s = _duration_s(0.001, 22.0)
    pulse = _findings(_plan(0.001))[1]
    assert pulse["status"] == "fail"
    assert pulse["message"] == (
        f"burn of {expected_s:.3f} s is {0.1 - expected_s:.3f} s shorter than the 0.100 s "
        "minimum pulse engine 'main' can deliver"
    )


def test_engines_without_on_time_limits_are_skipped_with_the_reason():
    on_time, pulse, _, _ = _findings(_plan(5.0, max_s=None, min_s=None))
    assert on_time["status"] == pulse["status"] == "skipped"
    assert on_time["message"] == ("engine 'main' declares no maximum burn time; on-time not judged")
    assert "declares no minimum burn time" in pulse["message"]


@pytest.mark.parametrize(
    ("dv_m_s", "status"),
    [(5.0, "pass"), (12.0, "warn"), (25.0, "fail")],  # about 9, 21 and 44 deg of a LEO orbit
)
def test_burn_arc_against_mean_motion_times_duration(dv_m_s, status):
    arc = _findings(_plan(dv_m_s, max_s=None))[2]
    expected = _burn_arc_deg(dv_m_s, 22.0)
    assert arc["status"] == status
    assert arc["value"] == pytest.approx(expected, rel=5e-4)
    assert arc["limit"] == 30.0
    if status == "fail":
        assert arc["message"] == (
            f"burn sweeps {arc['value']:.2f} deg of orbit, {arc['value'] - 30:.2f} deg beyond "
            "the 30.00 deg limit of the impulsive approximation"
        )


@pytest.mark.parametrize(
    ("rule", "offset_deg", "status"),
    [
        ("max_burn_arc_deg", 1e-4, "warn"),  # just inside a tightened maximum (arc > 15 deg)
        ("max_burn_arc_deg", -1e-4, "fail"),  # just outside it
        ("warn_burn_arc_deg", 1e-4, "pass"),
        ("warn_burn_arc_deg", -1e-4, "warn"),
    ],
)
def test_burn_arc_boundaries(rule, offset_deg, status):
    dv_m_s = 12.0 if rule == "max_burn_arc_deg" else 5.0
    swept = math.degrees(context_for(_plan(dv_m_s)).trajectory.maneuvers[0].burn_arc_rad)
    limit = swept + offset_deg
    arc = _findings(_plan(dv_m_s, rules={"burn-duration": {rule: limit}}))[2]
    assert arc["status"] == status
    assert arc["value"] == pytest.approx(swept, abs=1e-6)
    expected_limit = limit if rule == "max_burn_arc_deg" else 30.0
    assert arc["limit"] == pytest.approx(expected_limit, abs=1e-6)


def test_a_long_low_thrust_burn_warns_of_its_finite_burn_loss():
    # 12 m/s from 5 N: about 24 minutes, a quarter of the orbit.
    loss = _findings(_plan(12.0, 5.0, max_s=None))[3]
    context = context_for(_plan(12.0, 5.0, max_s=None))
    swept_rad = context.trajectory.maneuvers[0].burn_arc_rad
    assert math.degrees(swept_rad) == pytest.approx(_burn_arc_deg(12.0, 5.0), rel=5e-4)
    assert loss["status"] == "warn"
    assert loss["value"] == pytest.approx(_robbins_loss_m_s(12.0, swept_rad), rel=0.05)
    assert loss["value"] > 1.0
    assert loss["limit"] == 1.0
    assert loss["message"] == (
        f"finite-burn loss {loss['value']:.3f} m/s ({100 * loss['value'] / 12:.2f}% of the "
        "12.000 m/s burn) exceeds the 1.000 m/s limit"
    )


@pytest.fixture(scope="module")
def long_burn() -> Context:
    return context_for(_plan(12.0, 5.0, max_s=None))


@pytest.mark.parametrize(("offset", "status"), [(1e-6, "pass"), (-1e-6, "warn")])
def test_finite_burn_loss_boundary(long_burn, offset, status):
    value = long_burn.trajectory.maneuvers[0].finite_burn.loss_m_s
    params = _params(max_finite_burn_loss_m_s=value + offset)
    loss = list(duration.BurnDuration().evaluate(long_burn, params))[3]
    assert loss.status is Status(status)
    assert loss.value == value
    assert loss.limit == value + offset


def _with_finite_burn(context: Context, finite) -> Context:
    burn = replace(context.trajectory.maneuvers[0], finite_burn=finite)
    return replace(context, trajectory=replace(context.trajectory, maneuvers=(burn,)))


def test_a_missing_finite_burn_loss_is_skipped_with_the_reason(long_burn):
    check = duration.BurnDuration()
    none = _with_finite_burn(long_burn, None)
    loss = list(check.evaluate(none, _params()))[3]
    assert loss.status is Status.SKIPPED
    assert "no finite-burn comparison" in loss.message
    note = "burn nearly perpendicular to the velocity; finite-burn loss undefined"
    finite = replace(long_burn.trajectory.maneuvers[0].finite_burn, loss_m_s=None, note=note)
    loss = list(check.evaluate(_with_finite_burn(long_burn, finite), _params()))[3]
    assert loss.status is Status.SKIPPED
    assert loss.message == f"finite-burn loss not judged: {note}"


def test_a_plan_without_burns_is_skipped():
    plan = make_plan(maneuvers=())
    [finding] = [f for f in validate_with(duration, plan)["findings"]]
    assert finding["status"] == "skipped"
    assert finding["message"] == "the plan has no burns to time"
