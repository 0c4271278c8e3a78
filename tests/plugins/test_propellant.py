"""propellant-budget: propellant used vs loaded, remaining vs reserve, delta-v capacity and budgets.

Reference values come from the rocket equation written out by hand here
(Tsiolkovsky; Curtis, Orbital Mechanics for Engineering Students, 3rd ed., eq. 11.30;
Sutton & Biblarz, Rocket Propulsion Elements, 9th ed., eq. 4-6), never from the
service's own rocket module, with g0 = 9.80665 m/s^2 (3rd CGPM, 1901, exact).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from plugins import propellant
from plugins.propellant import PropellantBudget, find_shortfall
from service.engine import PlanInvalid
from service.engine.plan import Engine, Maneuver, Spacecraft
from tests.plugins.conftest import context_for, make_plan, validate_with

G0_M_S2 = 9.80665  # standard gravity, exact: 3rd CGPM (1901)
EPOCH = np.datetime64("2031-05-02T00:00:00", "ms")
MAIN = Engine("main", 22.0, 228.0, 1200.0, 0.1)
TRIM = Engine("trim", 5.0, 70.0)
CHECK = "propellant-budget"


def _propellant_kg(m0_kg: float, dv_m_s: float, isp_s: float) -> float:
    """mp = m0 (1 - exp(-dv / (Isp g0))): Tsiolkovsky, Curtis 3rd ed. eq. 11.30."""
    return m0_kg * (1.0 - math.exp(-dv_m_s / (isp_s * G0_M_S2)))


def _delta_v_m_s(m0_kg: float, mp_kg: float, isp_s: float) -> float:
    """dv = Isp g0 ln(m0 / (m0 - mp)): Tsiolkovsky, Curtis 3rd ed. eq. 11.30."""
    return isp_s * G0_M_S2 * math.log(m0_kg / (m0_kg - mp_kg))


def _burn(name: str, hours: float, dv_m_s: float, engine: str = "main") -> Maneuver:
    ignition = EPOCH + np.timedelta64(round(hours * 3_600_000), "ms")
    return Maneuver(name, ignition, engine, "TNW", (dv_m_s, 0.0, 0.0))


def _plan(burns, *, dry_kg=540.0, propellant_kg=62.0, engines=(MAIN,), rules=None):
    """An invented smallsat, 'tern-4', in a 400 km circular orbit."""
    return make_plan(
        plan_id="tern-4-budget-01",
        spacecraft=Spacecraft(dry_kg, propellant_kg, tuple(engines)),
        maneuvers=tuple(burns),
        rules=rules or {},
    )


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in PropellantBudget.parameters.items()}
    values.update(changes)
    return values


def _evaluate(plan, **changes) -> list:
    """Findings straight from the check on the context the engine would give it."""
    return list(PropellantBudget().evaluate(context_for(plan), _params(**changes)))


def _report_findings(plan) -> list[dict]:
    report = validate_with(propellant, plan)
    return [f for f in report["findings"] if f["check"] == CHECK]


def _dv_for_remaining(m0_kg: float, load_kg: float, remaining_kg: float, isp_s: float) -> float:
    """The delta-v of one burn that leaves ``remaining_kg`` of ``load_kg`` (rocket equation)."""
    return _delta_v_m_s(m0_kg, load_kg - remaining_kg, isp_s)


# --- propellant needed vs loaded -------------------------------------------------------------


def test_contract_example_needs_3_36_kg_and_passes():
    # CONTRACT.md section 2: 602 kg, 12.5 m/s on Isp 228 s -> 3.36 kg, 58.64 kg remaining.
    needed = _propellant_kg(602.0, 12.5, 228.0)
    assert round(needed, 2) == 3.36
    usage, reserve, capacity = _report_findings(_plan([_burn("raise-1", 1.0, 12.5)]))
    assert usage["status"] == "pass"
    assert usage["value"] == pytest.approx(needed, abs=1e-6)
    assert usage["limit"] == 62.0
    assert usage["unit"] == "kg"
    assert usage["message"] == "the plan uses 3.356 kg of the 62.000 kg loaded"
    assert reserve["status"] == "pass"
    assert reserve["value"] == pytest.approx(62.0 - needed, abs=1e-6)
    assert round(reserve["value"], 2) == 58.64
    assert reserve["limit"] == pytest.approx(0.05 * 62.0)
    assert capacity["status"] == "pass"
    final = 602.0 - needed
    assert capacity["value"] == pytest.approx(_delta_v_m_s(final, 62.0 - needed, 228.0), abs=1e-6)
    assert capacity["limit"] == 10.0


def test_published_example_about_1291_kg_for_3_0522_km_s():
    # Curtis, Orbital Mechanics for Engineering Students, 3rd ed., Example 6.1 (from memory):
    # a 2000 kg spacecraft with Isp 300 s and a total delta-v of 3.0522 km/s needs about
    # 1291 kg of propellant. Checked by hand: 2000 (1 - exp(-3052.2 / (300 g0))) = 1291.29 kg.
    hand = _propellant_kg(2000.0, 3052.2, 300.0)
    assert hand == pytest.approx(1291.0, abs=0.5)
    heavy = Engine("main", 2000.0, 300.0)
    plan = _plan(
        [_burn("leg-1", 1.0, 1500.0), _burn("leg-2", 4.0, 1552.2)],
        dry_kg=700.0,
        propellant_kg=1300.0,
        engines=(heavy,),
    )
    usage = _evaluate(plan)[0]
    assert usage.status == "pass"
    # Two burns on one engine need what one burn of the sum needs.
    assert usage.value == pytest.approx(hand, rel=1e-12)
    assert usage.limit == 1300.0


def test_short_of_propellant_names_the_dry_burn_and_the_missing_delta_v():
    # 3 kg loaded; burn-2 on the 70 s trim engine needs more than is left after burn-1.
    plan = _plan(
        [_burn("burn-1", 1.0, 5.0), _burn("burn-2", 3.0, 10.0, "trim"), _burn("burn-3", 5.0, 4.0)],
        propellant_kg=3.0,
        engines=(MAIN, TRIM),
    )
    p1 = _propellant_kg(543.0, 5.0, 228.0)
    m1 = 543.0 - p1
    p2 = _propellant_kg(m1, 10.0, 70.0)
    p3 = _propellant_kg(m1 - p2, 4.0, 228.0)
    needed = p1 + p2 + p3
    left = 3.0 - p1
    assert 0.0 < left < p2
    delivered = _delta_v_m_s(m1, left, 70.0)  # burn-2's own mass and engine
    missing = (10.0 - delivered) + 4.0  # burn-3 is lost in full
    usage, reserve, capacity = _evaluate(plan)
    assert usage.status == "fail"
    assert usage.value == pytest.approx(needed, rel=1e-12)
    assert usage.limit == 3.0
    assert usage.unit == "kg"
    assert f"{needed - 3.0:.3f} kg more than the 3.000 kg loaded" in usage.message
    assert f"during burn 'burn-2' after {delivered:.2f} m/s" in usage.message
    assert f"leaving {missing:.2f} m/s of the plan's 19.00 m/s undelivered" in usage.message
    shortfall = find_shortfall(
        context_for(plan).trajectory.maneuvers, 3.0, {"main": 228.0, "trim": 70.0}
    )
    assert shortfall.burn_id == "burn-2"
    assert shortfall.delivered_m_s == pytest.approx(delivered, rel=1e-12)
    assert shortfall.missing_m_s == pytest.approx(missing, rel=1e-12)
    # Remaining and capacity are still reported, and fail.
    assert reserve.status == "fail"
    assert reserve.value == pytest.approx(3.0 - needed, rel=1e-12)
    assert reserve.value < 0.0
    assert reserve.limit == pytest.approx(0.15)
    assert capacity.status == "fail"
    assert capacity.value == 0.0
    assert capacity.limit == 10.0
    assert "with no propellant left is 10.00 m/s below the 10.00 m/s reserve" in capacity.message


def test_running_dry_in_the_first_burn_loses_every_later_burn():
    plan = _plan([_burn("big", 1.0, 400.0), _burn("after", 3.0, 7.0)], propellant_kg=62.0)
    delivered = _delta_v_m_s(602.0, 62.0, 228.0)
    report = _report_findings(plan)
    assert report[0]["status"] == "fail"
    assert f"during burn 'big' after {delivered:.2f} m/s" in report[0]["message"]
    assert f"leaving {400.0 - delivered + 7.0:.2f} m/s" in report[0]["message"]
    assert [f["status"] for f in report] == ["fail", "fail", "fail"]


def test_a_plan_without_burns_uses_nothing_and_passes():
    usage, reserve, capacity = _report_findings(_plan([]))
    assert (usage["status"], usage["value"], usage["limit"]) == ("pass", 0.0, 62.0)
    assert (reserve["status"], reserve["value"]) == ("pass", 62.0)
    assert capacity["status"] == "pass"
    assert capacity["value"] == pytest.approx(_delta_v_m_s(602.0, 62.0, 228.0), abs=1e-6)


# --- remaining vs reserve --------------------------------------------------------------------
# 20 kg loaded on a 540 kg dry spacecraft: the 5 % reserve is 1.0 kg, the 10 % margin 2.0 kg.


def _reserve_plan(remaining_kg: float):
    dv = _dv_for_remaining(560.0, 20.0, remaining_kg, 228.0)
    return _plan([_burn("trim-1", 1.0, dv)], propellant_kg=20.0)


@pytest.mark.parametrize(
    ("remaining_kg", "status"),
    [
        (2.5, "pass"),
        (2.0 + 1e-3, "pass"),  # just above the warning margin
        (2.0 - 1e-3, "warn"),  # just below it
        (1.5, "warn"),
        (1.0 + 1e-3, "warn"),  # just above the reserve
        (1.0 - 1e-3, "fail"),  # just below it
        (0.5, "fail"),
    ],
)
def test_remaining_against_the_reserve_and_warning_margin(remaining_kg, status):
    reserve = _report_findings(_reserve_plan(remaining_kg))[1]
    assert reserve["status"] == status
    assert reserve["value"] == pytest.approx(remaining_kg, abs=1e-6)
    assert reserve["limit"] == pytest.approx(1.0)
    assert reserve["unit"] == "kg"


def test_reserve_messages_say_by_how_much():
    fail = _report_findings(_reserve_plan(0.5))[1]["message"]
    assert fail == (
        "remaining propellant 0.500 kg is 0.500 kg below the 1.000 kg reserve "
        "(5.0 % of the 20.000 kg load)"
    )
    warn = _report_findings(_reserve_plan(1.5))[1]["message"]
    assert "is 0.500 kg below the 2.000 kg warning margin (10.0 % of the load)" in warn


@pytest.mark.parametrize(("remaining_kg", "status"), [(1.5 + 1e-3, "warn"), (1.5 - 1e-3, "fail")])
def test_absolute_reserve_governs_when_larger(remaining_kg, status):
    reserve = _evaluate(_reserve_plan(remaining_kg), reserve_kg=1.5)[1]
    assert reserve.status == status
    assert reserve.value == pytest.approx(remaining_kg, abs=1e-9)
    assert reserve.limit == 1.5
    assert "the 1.500 kg absolute reserve" in reserve.message


def test_tightening_reserve_fraction_in_the_plan_rules_flips_pass_to_fail():
    burns = [_burn("raise-1", 1.0, 12.5)]
    remaining = 62.0 - _propellant_kg(602.0, 12.5, 228.0)  # 58.644 kg, 94.6 % of the load
    assert _report_findings(_plan(burns))[1]["status"] == "pass"
    strict = _plan(burns, rules={CHECK: {"reserve_fraction": 0.95}})
    reserve = _report_findings(strict)[1]
    assert reserve["status"] == "fail"
    assert reserve["value"] == pytest.approx(remaining, abs=1e-6)
    assert reserve["limit"] == pytest.approx(0.95 * 62.0)


def test_loosening_the_reserve_is_refused_by_the_default_profile():
    loose = _plan([_burn("raise-1", 1.0, 12.5)], rules={CHECK: {"reserve_fraction": 0.01}})
    with pytest.raises(PlanInvalid):
        validate_with(propellant, loose)


# --- remaining delta-v capacity --------------------------------------------------------------


def test_capacity_uses_the_lowest_isp_engine_and_names_it():
    plan = _plan([_burn("raise-1", 1.0, 12.5)], engines=(MAIN, TRIM))
    needed = _propellant_kg(602.0, 12.5, 228.0)
    hand = _delta_v_m_s(602.0 - needed, 62.0 - needed, 70.0)  # trim: 70 s is lowest
    capacity = _evaluate(plan)[2]
    assert capacity.status == "pass"
    assert capacity.value == pytest.approx(hand, rel=1e-12)
    assert capacity.limit == 10.0
    assert capacity.unit == "m/s"
    assert "engine 'trim' (Isp 70.0 s, the lowest aboard)" in capacity.message


@pytest.mark.parametrize(("offset_m_s", "status"), [(-1e-6, "pass"), (0.0, "pass"), (1e-6, "fail")])
def test_capacity_boundary(offset_m_s, status):
    plan = _reserve_plan(2.5)
    hand = _delta_v_m_s(542.5, 2.5, 228.0)  # final mass 540 + 2.5 kg
    computed = _evaluate(plan)[2].value
    capacity = _evaluate(plan, reserve_delta_v_m_s=computed + offset_m_s)[2]
    assert capacity.status == status
    assert capacity.value == pytest.approx(hand, rel=1e-9)
    assert capacity.limit == computed + offset_m_s


def test_capacity_below_the_default_reserve_fails():
    # 1.5 kg left at 541.5 kg on Isp 228 s gives 6.20 m/s, under the 10 m/s reserve.
    capacity = _report_findings(_reserve_plan(1.5))[2]
    hand = _delta_v_m_s(541.5, 1.5, 228.0)
    assert capacity["status"] == "fail"
    assert capacity["value"] == pytest.approx(hand, abs=1e-6)
    assert capacity["message"] == (
        f"remaining delta-v capacity {hand:.2f} m/s on engine 'main' (Isp 228.0 s, the only "
        f"engine) from a final mass of 541.500 kg is {10.0 - hand:.2f} m/s below the 10.00 m/s "
        "reserve"
    )


# --- optional delta-v budgets ----------------------------------------------------------------


def test_budgets_are_silent_when_unset():
    findings = _report_findings(_plan([_burn("raise-1", 1.0, 12.5)]))
    assert len(findings) == 3


@pytest.mark.parametrize(("budget", "status"), [(12.6, "pass"), (12.5, "pass"), (12.4, "fail")])
def test_total_delta_v_budget(budget, status):
    burns = [_burn("raise-1", 1.0, 5.0), _burn("raise-2", 3.0, 7.5)]
    plan = _plan(burns, rules={CHECK: {"max_total_delta_v_m_s": budget}})
    total = _report_findings(plan)[3]
    assert total["maneuver"] is None
    assert (total["status"], total["value"], total["limit"]) == (status, 12.5, budget)
    assert total["unit"] == "m/s"


def test_per_burn_budget_judges_each_burn():
    burns = [_burn("raise-1", 1.0, 5.0), _burn("raise-2", 3.0, 7.5)]
    plan = _plan(burns, rules={CHECK: {"max_burn_delta_v_m_s": 6.0}})
    per_burn = [f for f in _report_findings(plan) if f["maneuver"] is not None]
    assert [(f["maneuver"], f["status"], f["value"], f["limit"]) for f in per_burn] == [
        ("raise-1", "pass", 5.0, 6.0),
        ("raise-2", "fail", 7.5, 6.0),
    ]
    assert per_burn[1]["message"] == (
        "burn delta-v 7.50 m/s is 1.50 m/s over the 6.00 m/s burn budget"
    )
