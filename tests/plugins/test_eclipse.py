"""eclipse-at-burn: the shadow state at ignition, centre and cutoff against the profile's rule.

The invented 'lumen-4' flies a circular 400 km orbit whose plane holds the Sun (beta angle
zero; tests/plugins/sun_plans.py). Sunlit fractions are recomputed here by hand with the two-disc
overlap (Montenbruck & Gill, Satellite Orbits, 2000, eqs. 3.85-3.87) from the spacecraft's
circular motion and the core's Sun vector; shadow entry is also compared with the closed-form
cylindrical-shadow entry at zero beta (Vallado 4th ed., section 5.3). eclipse-at-burn has no
warn status: a burn meets its rule or breaks it.
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from plugins import eclipse
from plugins.eclipse import EclipseAtBurn
from service.engine import PlanInvalid, build_engine
from service.engine.plan import CartesianState, Maneuver
from tests.plugins.conftest import context_for, make_plan, validate_with
from tests.plugins.sun_plans import (
    A_KM,
    EPOCH,
    burn,
    cylindrical_entry_s,
    fraction_at,
    penumbra_edge_s,
    sun_axes,
    umbra_edge_s,
    zero_beta_plan,
)

CHECK = "eclipse-at-burn"
SHORT_BURN = (0.01, 0.0, 0.0)  # 0.01 m/s on 22 N and 602 kg: about 0.27 s (m0 dv / F)


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in EclipseAtBurn.parameters.items()}
    values.update(changes)
    return values


def _evaluate(plan, **changes) -> list:
    return list(EclipseAtBurn().evaluate(context_for(plan), _params(**changes)))


def _seconds(epoch: np.datetime64) -> float:
    return float((epoch - EPOCH) / np.timedelta64(1, "ms")) / 1000.0


def _next_change_s(message: str) -> float:
    return float(re.search(r"next changes ([0-9.]+) s after ignition", message).group(1))


# Phase 100 deg is 9.8 deg (about 150 s) before the cylindrical shadow edge at 109.8 deg.
START_DEG = 100.0
T_PENUMBRA_S = penumbra_edge_s(START_DEG, 0.0, 400.0)
T_UMBRA_S = umbra_edge_s(START_DEG, T_PENUMBRA_S, T_PENUMBRA_S + 120.0)


def test_the_hand_shadow_edges_agree_with_the_cylindrical_closed_form():
    # The penumbra begins a few seconds before the cylinder's edge, the umbra a few after.
    cylinder = cylindrical_entry_s(START_DEG)
    assert T_PENUMBRA_S < cylinder < T_UMBRA_S
    assert cylinder - T_PENUMBRA_S < 15.0 and T_UMBRA_S - cylinder < 15.0


# --- sunlight and umbra against each rule ------------------------------------------------


@pytest.mark.parametrize(
    ("phase_deg", "rule", "status", "fraction", "limit"),
    [
        (0.0, "sunlight-only", "pass", 1.0, 1.0),  # under the Sun
        (180.0, "sunlight-only", "fail", 0.0, 1.0),  # straight behind the Earth
        (180.0, "shadow-only", "pass", 0.0, 0.0),
        (0.0, "shadow-only", "fail", 1.0, 0.0),
        (0.0, "any", "pass", 1.0, None),
        (180.0, "any", "pass", 0.0, None),
    ],
)
def test_sunlight_and_umbra_against_each_rule(phase_deg, rule, status, fraction, limit):
    assert fraction_at(phase_deg, 60.0) == fraction  # the hand model agrees on the state
    plan = zero_beta_plan(phase_deg, [burn("trim-1", 60.0, SHORT_BURN)], rules={})
    (finding,) = _evaluate(plan, rule=rule)
    assert finding.status == status
    assert finding.maneuver == "trim-1"
    assert finding.value == fraction
    assert finding.limit == limit
    assert finding.unit == "fraction"
    state = "sunlight" if fraction == 1.0 else "umbra"
    assert f"{state} at ignition, centre and cutoff" in finding.message
    if status == "fail":
        assert f"breaks the {rule} rule" in finding.message


def test_the_engine_runs_the_check_under_a_rule_given_by_the_profile(tmp_path):
    plan = zero_beta_plan(180.0, [burn("trim-1", 60.0, SHORT_BURN)])
    (tmp_path / "dawn-ops.toml").write_text(
        'name = "dawn-ops"\ndescription = "burns in sunlight only"\n'
        '[thresholds.eclipse-at-burn]\nrule = "sunlight-only"\n',
        encoding="utf-8",
    )
    engine = build_engine(extra_plugins=[eclipse], entry_points=False, profile_dir=str(tmp_path))
    assert engine.ready, engine.problems
    report = engine.validate(plan, profile="dawn-ops")
    (finding,) = [f for f in report["findings"] if f["check"] == CHECK]
    assert (finding["status"], finding["value"], finding["limit"]) == ("fail", 0.0, 1.0)
    assert report["verdict"] == "fail"


# --- penumbra: which side of the rule it counts on -----------------------------------------


@pytest.mark.parametrize(
    ("rule", "penumbra_counts_as", "status", "limit"),
    [
        ("sunlight-only", "shadow", "fail", 1.0),
        ("sunlight-only", "sunlight", "pass", 1.0),
        ("shadow-only", "shadow", "pass", 0.0),
        ("shadow-only", "sunlight", "fail", 0.0),
    ],
)
def test_a_burn_in_penumbra_counts_as_the_profile_says(rule, penumbra_counts_as, status, limit):
    middle_s = round((T_PENUMBRA_S + T_UMBRA_S) / 2.0, 3)
    plan = zero_beta_plan(START_DEG, [burn("trim-1", middle_s, SHORT_BURN)])
    context = context_for(plan)
    (flown,) = context.trajectory.maneuvers
    by_hand = [
        fraction_at(START_DEG, _seconds(epoch))
        for epoch in (flown.ignition, flown.centre, flown.cutoff)
    ]
    assert all(0.0 < f < 1.0 for f in by_hand)
    params = _params(rule=rule, penumbra_counts_as=penumbra_counts_as)
    (finding,) = EclipseAtBurn().evaluate(context, params)
    assert finding.status == status
    assert finding.limit == limit
    # sunlight-only is judged on the darkest instant, shadow-only on the brightest.
    expected = min(by_hand) if rule == "sunlight-only" else max(by_hand)
    assert finding.value == pytest.approx(expected, abs=1e-5)
    assert "penumbra (" in finding.message and "of the Sun's disc visible" in finding.message
    assert f"penumbra counts as {penumbra_counts_as}" in finding.message


# --- the boundary: the shadow's edge --------------------------------------------------------


def test_a_burn_that_ends_just_before_the_penumbra_passes_and_reports_the_entry():
    ignition_s = round(T_PENUMBRA_S - 1.0, 3)  # a 0.27 s burn ends 0.73 s before the edge
    plan = zero_beta_plan(START_DEG, [burn("trim-1", ignition_s, SHORT_BURN)])
    (finding,) = _evaluate(plan, rule="sunlight-only")
    assert finding.status == "pass"
    assert (finding.value, finding.limit) == (1.0, 1.0)
    assert "to penumbra" in finding.message
    # The time to the next change is the hand penumbra entry less the ignition time.
    assert _next_change_s(finding.message) == pytest.approx(T_PENUMBRA_S - ignition_s, abs=0.06)


def test_a_burn_that_ends_just_inside_the_penumbra_fails_at_cutoff():
    # The 0.274 s burn is centred 0.063 s before the edge and cuts off 0.074 s past it.
    ignition_s = round(T_PENUMBRA_S - 0.2, 3)
    plan = zero_beta_plan(START_DEG, [burn("trim-1", ignition_s, SHORT_BURN)])
    context = context_for(plan)
    (flown,) = context.trajectory.maneuvers
    by_hand = fraction_at(START_DEG, _seconds(flown.cutoff))
    assert 0.99 < by_hand < 1.0
    (finding,) = EclipseAtBurn().evaluate(context, _params(rule="sunlight-only"))
    assert finding.status == "fail"
    assert finding.value == pytest.approx(by_hand, abs=1e-5)
    assert finding.limit == 1.0
    assert "the burn is in shadow at cutoff," in finding.message
    assert "sunlight at ignition, sunlight at centre, penumbra (" in finding.message


def test_a_long_burn_that_runs_into_umbra_names_the_instants_in_shadow():
    # 5 m/s on 22 N and 602 kg lasts about 137 s: ignition 30 s before the penumbra,
    # centre and cutoff beyond the umbra's edge (about 9 s after the penumbra's).
    ignition_s = round(T_PENUMBRA_S - 30.0, 3)
    plan = zero_beta_plan(START_DEG, [burn("raise-1", ignition_s, (5.0, 0.0, 0.0))])
    (finding,) = _evaluate(plan, rule="sunlight-only")
    assert finding.status == "fail"
    assert finding.value == 0.0
    assert "the burn is in shadow at centre and cutoff" in finding.message
    assert "sunlight at ignition, umbra at centre, umbra at cutoff" in finding.message
    assert _next_change_s(finding.message) == pytest.approx(30.0, abs=0.06)


def test_the_next_change_from_the_subsolar_point_is_the_penumbra_entry():
    plan = zero_beta_plan(0.0, [burn("trim-1", 60.0, SHORT_BURN)])
    (finding,) = _evaluate(plan)
    entry_s = penumbra_edge_s(0.0, 1000.0, 2000.0)
    assert _next_change_s(finding.message) == pytest.approx(entry_s - 60.0, abs=0.06)
    # and, loosely, the cylindrical model's edge (the penumbra begins a few seconds earlier)
    assert _next_change_s(finding.message) == pytest.approx(cylindrical_entry_s(0.0) - 60.0, abs=15)


def test_burns_minutes_apart_each_get_their_own_time_to_the_next_change():
    burns = [burn(f"pulse-{k}", 60.0 + 120.0 * k, SHORT_BURN) for k in range(4)]
    plan = zero_beta_plan(0.0, burns)
    findings = _evaluate(plan)
    entry_s = penumbra_edge_s(0.0, 1000.0, 2000.0)
    for k, finding in enumerate(findings):
        assert finding.maneuver == f"pulse-{k}"
        expected = entry_s - (60.0 + 120.0 * k)
        assert _next_change_s(finding.message) == pytest.approx(expected, abs=0.06)


def test_from_inside_the_umbra_the_next_change_is_the_exit_to_penumbra():
    plan = zero_beta_plan(180.0, [burn("trim-1", 60.0, SHORT_BURN)])
    (finding,) = _evaluate(plan)
    assert finding.value == 0.0
    assert "to penumbra" in finding.message
    exit_s = umbra_edge_s(180.0, 60.0, 1500.0)  # about 70 deg of phase after 180 deg
    assert _next_change_s(finding.message) == pytest.approx(exit_s - 60.0, abs=0.06)


def test_on_an_unbound_arc_the_search_for_a_change_runs_three_hours():
    # Leaving the Earth from under the Sun at 12 km/s, 25 deg off straight up (escape speed
    # at 6778 km is sqrt(2 mu / r) = 10.8 km/s): never in shadow, and the arc has no period.
    s, t, _ = sun_axes()
    up, ahead = np.cos(np.radians(25.0)), np.sin(np.radians(25.0))
    plan = make_plan(
        plan_id="lumen-4-depart-01",
        initial_state=CartesianState("GCRF", tuple(A_KM * s), tuple(12.0 * (up * s + ahead * t))),
        maneuvers=(burn("depart-1", 60.0, SHORT_BURN),),
    )
    assert context_for(plan).trajectory.arcs[0].period_s is None
    (finding,) = _evaluate(plan, rule="sunlight-only")
    assert finding.status == "pass"
    assert finding.value == 1.0
    assert "the shadow state does not change within 10800 s of ignition" in finding.message


# --- not applicable, and refused parameters ------------------------------------------------


def test_a_plan_without_burns_is_skipped():
    (finding,) = _evaluate(zero_beta_plan(0.0, []))
    assert finding.status == "skipped"
    assert "no burns" in finding.message


def test_a_plan_beyond_the_sun_models_years_is_skipped_saying_why():
    late = np.datetime64("2061-05-02T00:00:00", "ms")
    plan = zero_beta_plan(
        0.0,
        [Maneuver("trim-1", late + np.timedelta64(60, "s"), "main", "TNW", SHORT_BURN)],
        epoch=late,
    )
    (finding,) = _evaluate(plan)
    assert finding.status == "skipped"
    assert "1950 to 2050" in finding.message and "2061-05-02T00:01:00Z" in finding.message


def test_a_rule_that_is_not_one_of_the_choices_is_refused_naming_them():
    plan = zero_beta_plan(
        0.0, [burn("trim-1", 60.0, SHORT_BURN)], rules={CHECK: {"rule": "mostly-sunlight"}}
    )
    with pytest.raises(PlanInvalid) as refused:
        validate_with(eclipse, plan)
    (message,) = refused.value.errors["rules.eclipse-at-burn.rule"]
    assert "'mostly-sunlight' is not an allowed value" in message
    assert "'sunlight-only', 'shadow-only', 'any'" in message


def test_the_parameters_declare_their_choices():
    spec = EclipseAtBurn.parameters
    assert spec["rule"].choices == ("sunlight-only", "shadow-only", "any")
    assert spec["penumbra_counts_as"].choices == ("shadow", "sunlight")
    assert {name: (p.default, p.unit, p.stricter) for name, p in spec.items()} == {
        "rule": ("any", "choice", None),
        "penumbra_counts_as": ("shadow", "choice", None),
    }
