"""declared-burn-agreement: declared duration and propellant against what the engine gives.

Reference values are the rocket equation worked by hand (Tsiolkovsky; Curtis 3rd ed.
eq. 11.30, from memory) with standard gravity g0 = 9.80665 m/s^2 (CGPM 1901).
"""

from __future__ import annotations

import copy
import json
import math
from pathlib import Path
from types import SimpleNamespace

import pytest

from plugins import declared_burns
from plugins.declared_burns import DeclaredBurnAgreement, tolerance
from service.engine import build_engine
from service.plugin_api import Status
from service.schemas import load_plan

KESTREL = Path(__file__).resolve().parents[2] / "schemas" / "examples" / "kestrel-2-raise.json"
DEFAULTS = {name: p.default for name, p in DeclaredBurnAgreement.parameters.items()}

# kestrel-2's first burn worked by hand: engine 100 N, Isp 290 s, 410 kg at ignition
# (392 dry + 18 propellant), delta-v 39.266 m/s.
VE_M_S = 290.0 * 9.80665  # 2843.9285 m/s effective exhaust velocity
PROPELLANT_KG = 410.0 * (1.0 - math.exp(-39.266 / VE_M_S))  # 5.62195 kg
DURATION_S = PROPELLANT_KG * VE_M_S / 100.0  # mdot = F / ve, so t = mp ve / F = 159.884 s


def _kestrel(**declared_by_index) -> dict:
    plan = json.loads(KESTREL.read_text())
    for index, fields in declared_by_index.items():
        plan["maneuvers"][int(index[1:])].update(fields)
    return plan


def _report(plan: dict) -> dict:
    engine = build_engine(extra_plugins=[declared_burns], entry_points=False)
    assert engine.problems == []
    return engine.validate(load_plan(plan))


def _findings(report: dict, maneuver: str | None = "raise-1") -> list[dict]:
    return [f for f in report["findings"] if f["maneuver"] == maneuver]


def test_the_hand_worked_rocket_equation_matches_the_trajectory() -> None:
    assert PROPELLANT_KG == pytest.approx(5.621952, abs=1e-6)
    assert DURATION_S == pytest.approx(159.884, abs=1e-3)
    report = _report(_kestrel())
    burn = report["maneuvers"][0]
    assert burn["propellant_kg"] == pytest.approx(PROPELLANT_KG, abs=1e-6)
    assert burn["duration_s"] == pytest.approx(DURATION_S, abs=1e-3)


def test_no_declared_values_is_one_skipped_finding() -> None:
    report = _report(_kestrel())
    [finding] = report["findings"]
    assert finding["status"] == "skipped"
    assert finding["maneuver"] is None
    assert "no burn declares a duration or propellant" in finding["message"]


def test_declared_values_that_agree_pass() -> None:
    report = _report(_kestrel(m0={"declared_duration_s": 159.9, "declared_propellant_kg": 5.62}))
    duration, propellant = _findings(report)
    assert duration["status"] == propellant["status"] == "pass"
    assert duration["unit"] == "s" and propellant["unit"] == "kg"
    assert duration["value"] == pytest.approx(abs(159.9 - DURATION_S), abs=1e-3)
    # tolerance: max(1 s, 2 % of 159.884 s) = 3.198 s; max(0.01 kg, 2 % of 5.622 kg) = 0.112 kg
    assert duration["limit"] == pytest.approx(0.02 * DURATION_S, abs=1e-3)
    assert propellant["limit"] == pytest.approx(0.02 * PROPELLANT_KG, abs=1e-6)
    # the other burns declare nothing: each comparison is skipped, saying so
    later = [f for f in report["findings"] if f["maneuver"] in ("circ-1", "circ-2")]
    assert {f["status"] for f in later} == {"skipped"}
    assert any("declares no duration" in f["message"] for f in later)


def test_a_planner_with_another_isp_fails_with_the_likely_cause() -> None:
    # the planner took Isp 250 s instead of 290 s: mp = 410 (1 - exp(-39.266 / (250 g0)))
    planner_kg = 410.0 * (1.0 - math.exp(-39.266 / (250.0 * 9.80665)))  # 6.5146 kg
    report = _report(_kestrel(m0={"declared_propellant_kg": round(planner_kg, 4)}))
    [skipped, propellant] = _findings(report)
    assert skipped["status"] == "skipped"
    assert propellant["status"] == "fail"
    assert report["verdict"] == "fail"
    message = propellant["message"]
    assert "thrust, Isp or mass" in message
    assert f"{abs(round(planner_kg, 4) - PROPELLANT_KG):.4f} kg" in message  # by how much
    assert "beyond the 0.1124 kg tolerance" in message


def test_a_zero_declared_duration_is_the_planners_impulse() -> None:
    report = _report(_kestrel(m0={"declared_duration_s": 0.0, "declared_propellant_kg": 5.622}))
    duration, propellant = _findings(report)
    assert duration["status"] == "skipped"
    assert "impulse" in duration["message"] and "159.884 s" in duration["message"]
    assert propellant["status"] == "pass"  # the propellant comparison still runs


@pytest.mark.parametrize("bad", [-1.0, float("nan"), "5", True])
def test_the_declared_fields_are_refused_when_not_finite_non_negative_numbers(bad) -> None:
    from service.engine import PlanInvalid

    plan = _kestrel()
    plan["maneuvers"][1]["declared_propellant_kg"] = bad
    with pytest.raises(PlanInvalid) as caught:
        load_plan(plan)
    assert "maneuvers.1.declared_propellant_kg" in caught.value.errors


def test_a_plan_without_the_new_fields_keeps_its_digest() -> None:
    plan = _kestrel()
    assert load_plan(copy.deepcopy(plan)).digest == load_plan(plan).digest
    declared = _kestrel(m0={"declared_duration_s": 160.0})
    assert load_plan(declared).digest != load_plan(plan).digest
    assert load_plan(declared).maneuvers[0].declared_duration_s == 160.0
    assert load_plan(plan).maneuvers[0].declared_duration_s is None


# ----------------------------------------------------------- arithmetic on a stand-in context


def _context(declared_s: float | None, declared_kg: float | None, duration=100.0, kg=2.0):
    burn = SimpleNamespace(
        id="b1", engine_id="e", duration_s=duration, propellant_kg=kg, mass_before_kg=200.0
    )
    maneuver = SimpleNamespace(
        id="b1", declared_duration_s=declared_s, declared_propellant_kg=declared_kg
    )
    engine = SimpleNamespace(id="e", thrust_n=10.0, isp_s=220.0)
    spacecraft = SimpleNamespace(engine=lambda engine_id: engine)
    return SimpleNamespace(
        trajectory=SimpleNamespace(maneuvers=(burn,)),
        plan=SimpleNamespace(maneuvers=(maneuver,), spacecraft=spacecraft),
    )


def _statuses(declared_s, declared_kg, **params) -> list[Status]:
    findings = DeclaredBurnAgreement().evaluate(
        _context(declared_s, declared_kg), {**DEFAULTS, **params}
    )
    return [finding.status for finding in findings]


def test_the_tolerance_is_the_larger_of_absolute_and_relative() -> None:
    assert tolerance(100.0, 1.0, 0.02) == 2.0
    assert tolerance(10.0, 1.0, 0.02) == 1.0


@pytest.mark.parametrize(
    ("declared_s", "expected"),
    [
        (100.0, Status.PASS),
        (101.0, Status.PASS),  # exactly half the 2 s tolerance: not above it
        (101.001, Status.WARN),
        (102.0, Status.WARN),  # exactly at the tolerance: not beyond it
        (102.001, Status.FAIL),
        (97.9, Status.FAIL),  # either side
    ],
)
def test_duration_boundaries(declared_s, expected) -> None:
    assert _statuses(declared_s, None) == [expected, Status.SKIPPED]


@pytest.mark.parametrize(
    ("declared_kg", "expected"),
    [
        (2.0, Status.PASS),
        (2.25, Status.PASS),
        (2.26, Status.WARN),
        (2.5, Status.WARN),
        (2.51, Status.FAIL),
        (1.25, Status.FAIL),
    ],
)
def test_propellant_boundaries(declared_kg, expected) -> None:
    # tolerance max(0.01 kg, 25 % of 2 kg) = 0.5 kg, warn above 0.25 kg (binary-exact numbers)
    params = {"max_propellant_difference_fraction": 0.25}
    assert _statuses(None, declared_kg, **params) == [Status.SKIPPED, expected]


def test_a_separate_warn_fraction_and_a_tighter_request() -> None:
    assert _statuses(101.5, None, warn_fraction=0.9) == [Status.PASS, Status.SKIPPED]
    assert _statuses(101.5, None, max_duration_difference_fraction=0.01) == [
        Status.FAIL,
        Status.SKIPPED,
    ]


def test_the_check_is_registered_with_its_thresholds_in_the_default_profile() -> None:
    engine = build_engine()
    [entry] = [c for c in engine.checks_catalogue() if c["id"] == "declared-burn-agreement"]
    assert entry["source"] == "plugins.declared_burns"
    profile = engine.profile_document("default")
    assert set(profile["thresholds"]["declared-burn-agreement"]) == set(DEFAULTS)
    for name, reason in profile["reasons"]["declared-burn-agreement"].items():
        assert "common practice" in reason, name
