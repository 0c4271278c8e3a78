"""The engine: plugin isolation, fail-closed verdict, ordering, profiles and rules."""

import math
import types

import pytest

from service.engine import EngineNotReady, PlanInvalid, build_engine
from service.engine.report import CAUTIONS, verdict
from service.plugin_api import Check, Finding, Parameter, Status, hookimpl
from tests.engine.conftest import make_plan


class _Fixed(Check):
    version = "1"
    summary = "test check"
    parameters = {"limit_km": Parameter(100.0, "km", "higher", "a floor")}

    def __init__(self, check_id, produce):
        self.id = check_id
        self._produce = produce

    def evaluate(self, context, params):
        return self._produce(context, params)


def _plugin(*checks):
    module = types.SimpleNamespace()

    @hookimpl
    def register_checks():
        return list(checks)

    module.register_checks = register_checks
    return module


def _ok(context, params):
    return [Finding(Status.PASS, "fine", 1.0, params["limit_km"], "km")]


def _raises(context, params):
    raise ZeroDivisionError("boom")


def _engine(*checks):
    return build_engine(extra_plugins=[_plugin(*checks)], entry_points=False)


def test_a_broken_check_becomes_one_error_and_the_verdict_fails(plan):
    engine = _engine(_Fixed("good-one", _ok), _Fixed("broken-one", _raises))
    report = engine.validate(plan)
    broken = [f for f in report["findings"] if f["check"] == "broken-one"]
    assert len(broken) == 1
    assert broken[0]["status"] == "error"
    assert "ZeroDivisionError: boom" in broken[0]["message"]
    assert [f["status"] for f in report["findings"] if f["check"] == "good-one"] == ["pass"]
    assert report["verdict"] == "fail"
    assert report["summary"] == {"pass": 1, "warn": 0, "fail": 0, "error": 1, "skipped": 0}


@pytest.mark.parametrize(
    ("produce", "words"),
    [
        (lambda c, p: 42, "TypeError"),
        (lambda c, p: ["not a finding"], "returned str where a Finding was expected"),
        (lambda c, p: [Finding(Status.PASS, "x", math.nan)], "not a finite number"),
        (lambda c, p: [Finding(Status.PASS, "x", limit=math.inf)], "not a finite number"),
        (lambda c, p: [Finding("pass", "x")], "not a Status"),
        (lambda c, p: [Finding(Status.PASS, "")], "without a message"),
        (lambda c, p: [Finding(Status.PASS, "x", maneuver="ghost")], "unknown maneuver"),
        (lambda c, p: [Finding(Status.PASS, "x", arc=99)], "unknown arc"),
        (lambda c, p: [Finding(Status.PASS, "x", value="3")], "not a number"),
    ],
)
def test_garbage_from_a_check_is_an_error_finding(plan, produce, words):
    report = _engine(_Fixed("odd-one", produce), _Fixed("good-one", _ok)).validate(plan)
    odd = [f for f in report["findings"] if f["check"] == "odd-one"]
    assert [f["status"] for f in odd] == ["error"]
    assert words in odd[0]["message"]
    assert report["verdict"] == "fail"
    assert any(f["check"] == "good-one" and f["status"] == "pass" for f in report["findings"])


def test_duplicate_check_ids_stop_readiness_with_both_sources(plan):
    engine = build_engine(
        extra_plugins=[_plugin(_Fixed("same-id", _ok)), _plugin(_Fixed("same-id", _ok))],
        entry_points=False,
    )
    assert not engine.ready
    assert any("duplicate check id 'same-id'" in problem for problem in engine.problems)
    with pytest.raises(EngineNotReady):
        engine.validate(plan)


def test_malformed_check_objects_and_failing_hooks_are_named():
    class NoId:
        version = "1"
        summary = "x"

        def evaluate(self, context, params):
            return []

    module = types.SimpleNamespace()

    @hookimpl
    def register_checks():
        raise ImportError("missing dependency")

    module.register_checks = register_checks
    engine = build_engine(extra_plugins=[_plugin(NoId()), module], entry_points=False)
    assert any("not kebab-case" in problem for problem in engine.problems)
    assert any("register_checks failed: ImportError" in problem for problem in engine.problems)
    assert not engine.ready


def test_no_checks_is_not_ready(plan):
    engine = build_engine(entry_points=False)
    assert not engine.ready
    with pytest.raises(EngineNotReady, match="no checks"):
        engine.validate(plan)


def test_built_in_checks_come_through_the_entry_point_group():
    engine = build_engine()
    assert engine.ready, engine.problems
    catalogue = {entry["id"]: entry for entry in engine.checks_catalogue()}
    assert catalogue["burn-sequence"]["source"] == "plugins.sequence"
    assert catalogue["burn-sequence"]["distribution"] == "burnproof"
    assert catalogue["burn-sequence"]["profiles"] == ["default"]


def test_findings_are_ordered_by_plan_position_then_check_id(plan):
    def per_burn(context, params):
        return [
            Finding(Status.PASS, "b", maneuver=b.id) for b in reversed(context.trajectory.maneuvers)
        ] + [Finding(Status.PASS, "plan-wide")]

    report = _engine(_Fixed("zeta", per_burn), _Fixed("alpha", per_burn)).validate(plan)
    order = [(f["maneuver"], f["check"]) for f in report["findings"]]
    assert order == [
        (None, "alpha"),
        (None, "zeta"),
        ("raise-1", "alpha"),
        ("raise-1", "zeta"),
        ("raise-2", "alpha"),
        ("raise-2", "zeta"),
    ]


def test_same_plan_same_report(plan):
    engine = build_engine()
    assert engine.validate(plan) == engine.validate(make_plan())


def test_rules_may_tighten_but_not_loosen(plan):
    engine = _engine(_Fixed("floor-check", _ok))
    tightened = engine.validate(make_plan(rules={"floor-check": {"limit_km": 150.0}}))
    assert tightened["findings"][0]["limit"] == 150.0
    assert tightened["provenance"]["thresholds"]["floor-check"] == {"limit_km": 150.0}
    with pytest.raises(PlanInvalid) as refused:
        engine.validate(make_plan(rules={"floor-check": {"limit_km": 50.0}}))
    (message,) = refused.value.errors["rules.floor-check.limit_km"]
    assert "profile value 100.0" in message and "requested 50.0" in message


@pytest.mark.parametrize(
    ("rules", "path"),
    [
        ({"no-such-check": {"x": 1.0}}, "rules.no-such-check"),
        ({"floor-check": {"nope_km": 1.0}}, "rules.floor-check.nope_km"),
        ({"floor-check": {"limit_km": "high"}}, "rules.floor-check.limit_km"),
        ({"floor-check": {"limit_km": True}}, "rules.floor-check.limit_km"),
    ],
)
def test_bad_rules_name_the_field(rules, path):
    with pytest.raises(PlanInvalid) as refused:
        _engine(_Fixed("floor-check", _ok)).validate(make_plan(rules=rules))
    assert path in refused.value.errors


def test_unknown_profile_is_refused(plan):
    with pytest.raises(PlanInvalid) as refused:
        build_engine().validate(plan, profile="nobody")
    assert "profile" in refused.value.errors


def test_a_plan_the_model_cannot_fly_is_invalid_not_a_crash():
    from service.engine.plan import CartesianState

    radial = CartesianState("GCRF", (7000.0, 0.0, 0.0), (1.0, 0.0, 0.0))
    with pytest.raises(PlanInvalid) as refused:
        build_engine().validate(make_plan(initial_state=radial))
    assert "trajectory cannot be computed" in refused.value.errors["plan"][0]


def test_verdict_is_fail_closed():
    # CONTRACT.md section 2: fail on any fail or error, else warn on any warn, else pass.
    f = lambda s: Finding(s, "m")  # noqa: E731
    assert verdict([f(Status.PASS), f(Status.SKIPPED)]) == "pass"
    assert verdict([f(Status.PASS), f(Status.WARN)]) == "warn"
    assert verdict([f(Status.WARN), f(Status.ERROR)]) == "fail"
    assert verdict([f(Status.FAIL)]) == "fail"


def test_every_report_carries_the_cautions(plan):
    report = build_engine().validate(plan)
    assert report["cautions"] == list(CAUTIONS)
    assert "never replaces" in report["cautions"][0]


def test_a_plugin_can_import_the_plugin_api_first():
    # A third-party plugin's own tests import service.plugin_api before anything else.
    import subprocess
    import sys

    result = subprocess.run(
        [sys.executable, "-c", "import service.plugin_api, plugins.sequence"],
        capture_output=True,
        text=True,
        check=False,
    )
    assert result.returncode == 0, result.stderr


def test_a_whole_number_parameter_takes_whole_numbers_only():
    class Counted(_Fixed):
        parameters = {"max_count": Parameter(4, "count", "lower", "a ceiling on a count")}

    engine = _engine(Counted("counted-check", lambda c, p: [Finding(Status.PASS, "ok")]))
    assert (
        engine.validate(make_plan(rules={"counted-check": {"max_count": 3}}))["verdict"] == "pass"
    )
    assert engine.validate(make_plan(rules={"counted-check": {"max_count": 3.0}}))
    with pytest.raises(PlanInvalid) as refused:
        engine.validate(make_plan(rules={"counted-check": {"max_count": 2.5}}))
    assert "rules.counted-check.max_count" in refused.value.errors
