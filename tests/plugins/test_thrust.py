"""thrust-to-weight: acceleration at cutoff under the structural limit, at ignition over the floor.

Reference values are hand formulas: a = F / m (Newton's second law), thrust-to-weight
F / (m g0) with g0 = 9.80665 m/s^2 (3rd CGPM, 1901, exact), and the mass at cutoff
m0 exp(-dv / (Isp g0)) from the rocket equation (Tsiolkovsky; Curtis, Orbital Mechanics
for Engineering Students, 3rd ed., eq. 11.30; Sutton & Biblarz, 9th ed., eq. 4-6).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from plugins import thrust
from plugins.thrust import ThrustToWeight
from service.engine.plan import Engine, Maneuver, Spacecraft
from tests.plugins.conftest import context_for, make_plan, validate_with

G0_M_S2 = 9.80665  # standard gravity, exact: 3rd CGPM (1901)
EPOCH = np.datetime64("2031-05-02T00:00:00", "ms")
CHECK = "thrust-to-weight"
WET_KG = 602.0  # 540 kg dry + 62 kg propellant
ISP_S = 228.0


def _mass_after_kg(m0_kg: float, dv_m_s: float, isp_s: float = ISP_S) -> float:
    """m1 = m0 exp(-dv / (Isp g0)): Tsiolkovsky, Curtis 3rd ed. eq. 11.30."""
    return m0_kg * math.exp(-dv_m_s / (isp_s * G0_M_S2))


def _burn(name: str, hours: float, dv_m_s: float, engine: str = "main") -> Maneuver:
    ignition = EPOCH + np.timedelta64(round(hours * 3_600_000), "ms")
    return Maneuver(name, ignition, engine, "TNW", (dv_m_s, 0.0, 0.0))


def _plan(burns, engines):
    """An invented smallsat, 'plover-6', in a 400 km circular orbit."""
    return make_plan(
        plan_id="plover-6-accel-01",
        spacecraft=Spacecraft(540.0, 62.0, tuple(engines)),
        maneuvers=tuple(burns),
    )


def _one_burn(thrust_n: float, dv_m_s: float = 12.5):
    return _plan([_burn("kick-1", 1.0, dv_m_s)], [Engine("main", thrust_n, ISP_S)])


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in ThrustToWeight.parameters.items()}
    values.update(changes)
    return values


def _evaluate(plan, **changes) -> list:
    """Findings straight from the check on the context the engine would give it."""
    return list(ThrustToWeight().evaluate(context_for(plan), _params(**changes)))


def _report_findings(plan) -> list[dict]:
    report = validate_with(thrust, plan)
    return [f for f in report["findings"] if f["check"] == CHECK]


# --- acceleration at cutoff vs the structural limit (0.5 m/s^2, warn above 0.45) --------------


@pytest.mark.parametrize(("accel_m_s2", "status"), [(0.30, "pass"), (0.47, "warn"), (0.60, "fail")])
def test_cutoff_acceleration_pass_warn_fail(accel_m_s2, status):
    m1 = _mass_after_kg(WET_KG, 12.5)
    thrust_n = accel_m_s2 * m1
    cutoff, _ = _report_findings(_one_burn(thrust_n))
    assert cutoff["maneuver"] == "kick-1"
    assert cutoff["status"] == status
    assert cutoff["value"] == pytest.approx(thrust_n / m1, abs=1e-6)
    assert cutoff["limit"] == 0.5
    assert cutoff["unit"] == "m/s^2"


def test_cutoff_message_gives_thrust_to_weight():
    thrust_n = 22.0
    m1 = _mass_after_kg(WET_KG, 12.5)
    accel = thrust_n / m1  # a = F / m
    ratio = thrust_n / (m1 * G0_M_S2)  # F / (m g0)
    assert ratio == pytest.approx(accel / 9.80665)
    cutoff = _evaluate(_one_burn(thrust_n))[0]
    assert cutoff.status == "pass"
    assert cutoff.value == pytest.approx(accel, rel=1e-12)
    assert cutoff.message == (
        f"acceleration {accel:.4f} m/s^2 at cutoff (22.000 N on {m1:.3f} kg, thrust-to-weight "
        f"{ratio:.3e}) stays within the 0.5000 m/s^2 structural limit"
    )


def test_cutoff_fail_message_says_by_how_much():
    m1 = _mass_after_kg(WET_KG, 12.5)
    cutoff = _evaluate(_one_burn(0.6 * m1))[0]
    assert "is 0.1000 m/s^2 above the 0.5000 m/s^2 structural limit" in cutoff.message


@pytest.mark.parametrize(
    ("accel_m_s2", "status"),
    [
        (0.45 * (1.0 - 1e-9), "pass"),  # just inside the warning level
        (0.45 * (1.0 + 1e-9), "warn"),  # just outside it
        (0.5 * (1.0 - 1e-9), "warn"),  # just inside the structural limit
        (0.5 * (1.0 + 1e-9), "fail"),  # just outside it
    ],
)
def test_cutoff_boundaries(accel_m_s2, status):
    m1 = _mass_after_kg(WET_KG, 12.5)
    cutoff = _evaluate(_one_burn(accel_m_s2 * m1))[0]
    assert cutoff.status == status
    assert cutoff.value == pytest.approx(accel_m_s2, rel=1e-12)
    assert cutoff.limit == 0.5


def test_cutoff_is_judged_at_the_lowest_mass():
    # Between the accelerations at ignition and cutoff: passes at ignition, fails at cutoff.
    m1 = _mass_after_kg(WET_KG, 200.0)
    thrust_n = 0.5 * (WET_KG + m1) / 2.0  # 0.5 m/s^2 on the mean mass
    assert thrust_n / WET_KG < 0.5 < thrust_n / m1
    cutoff, ignition = _evaluate(_one_burn(thrust_n, 200.0))
    assert cutoff.status == "fail"
    assert cutoff.value == pytest.approx(thrust_n / m1, rel=1e-12)
    assert ignition.value == pytest.approx(thrust_n / WET_KG, rel=1e-12)


def test_tighter_structural_limit_from_the_plan_rules():
    thrust_n = 22.0  # 0.0368 m/s^2 at cutoff: passes 0.5, fails 0.03
    plan = make_plan(
        plan_id="plover-6-accel-02",
        spacecraft=Spacecraft(540.0, 62.0, (Engine("main", thrust_n, ISP_S),)),
        maneuvers=(_burn("kick-1", 1.0, 12.5),),
        rules={CHECK: {"max_acceleration_m_s2": 0.03}},
    )
    cutoff, _ = _report_findings(plan)
    assert cutoff["status"] == "fail"
    assert cutoff["limit"] == 0.03
    assert cutoff["value"] == pytest.approx(thrust_n / _mass_after_kg(WET_KG, 12.5), abs=1e-6)


# --- acceleration at ignition vs the impulsive-model floor (1e-3 m/s^2, warn below 2e-3) ------


@pytest.mark.parametrize(
    ("accel_m_s2", "status"), [(3.0e-3, "pass"), (1.5e-3, "warn"), (5.0e-4, "fail")]
)
def test_ignition_acceleration_pass_warn_fail(accel_m_s2, status):
    thrust_n = accel_m_s2 * WET_KG
    _, ignition = _report_findings(_one_burn(thrust_n, 0.5))
    assert ignition["maneuver"] == "kick-1"
    assert ignition["status"] == status
    assert ignition["value"] == pytest.approx(thrust_n / WET_KG, abs=1e-9)
    assert ignition["limit"] == 1.0e-3
    assert ignition["unit"] == "m/s^2"


def test_ignition_fail_says_the_impulsive_model_is_not_credible():
    ignition = _evaluate(_one_burn(5.0e-4 * WET_KG, 0.5))[1]
    assert ignition.message == (
        "acceleration 5.000e-04 m/s^2 at ignition (0.301 N on 602.000 kg) is 5.000e-04 m/s^2 "
        "below the 1.000e-03 m/s^2 floor: a low-thrust spiral, the impulsive model is not "
        "credible"
    )


@pytest.mark.parametrize(
    ("accel_m_s2", "status"),
    [
        (2.0e-3 * (1.0 + 1e-9), "pass"),  # just outside the warning band
        (2.0e-3 * (1.0 - 1e-9), "warn"),  # just inside it
        (1.0e-3 * (1.0 + 1e-9), "warn"),  # just above the floor
        (1.0e-3 * (1.0 - 1e-9), "fail"),  # just below it
    ],
)
def test_ignition_boundaries(accel_m_s2, status):
    ignition = _evaluate(_one_burn(accel_m_s2 * WET_KG, 0.5))[1]
    assert ignition.status == status
    assert ignition.value == pytest.approx(accel_m_s2, rel=1e-12)
    assert ignition.limit == 1.0e-3


# --- several engines, no burns ---------------------------------------------------------------


def test_each_burn_uses_its_own_engine_thrust():
    engines = [Engine("main", 250.0, ISP_S), Engine("trim", 0.9, 70.0)]
    burns = [_burn("raise-1", 1.0, 12.5), _burn("trim-1", 3.0, 0.4, "trim")]
    m1 = _mass_after_kg(WET_KG, 12.5)  # main, 228 s
    m2 = _mass_after_kg(m1, 0.4, 70.0)  # trim, 70 s
    findings = _report_findings(_plan(burns, engines))
    summary = [(f["maneuver"], f["status"], f["value"]) for f in findings]
    assert summary == [
        ("raise-1", "pass", pytest.approx(250.0 / m1, abs=1e-6)),
        ("raise-1", "pass", pytest.approx(250.0 / WET_KG, abs=1e-6)),
        ("trim-1", "pass", pytest.approx(0.9 / m2, abs=1e-6)),
        ("trim-1", "warn", pytest.approx(0.9 / m1, abs=1e-6)),
    ]
    assert "(250.000 N on" in findings[0]["message"]
    assert "(0.900 N on" in findings[3]["message"]


def test_a_plan_without_burns_is_skipped_with_the_reason():
    findings = _report_findings(_plan([], [Engine("main", 22.0, ISP_S)]))
    assert [(f["status"], f["message"]) for f in findings] == [
        ("skipped", "the plan has no burns to judge")
    ]
