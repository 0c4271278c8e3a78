"""Plugin isolation: time budgets per check and per request, allow and deny lists."""

import dataclasses

import pytest

from service.engine.registry import PluginPolicy
from service.engine.runner import run_checks
from service.plugin_api import Context, Status
from tests.engine.hanging import hangs, release_hung_checks  # noqa: F401 (autouse)
from tests.engine.test_engine import _engine, _Fixed, _ok


def _context(engine, plan):
    from service.dynamics.bodies import body_named
    from service.engine.core import fly

    body = body_named(plan.central_body)
    return Context(plan=plan, body=body, trajectory=fly(plan, body), profile="default")


def test_a_hanging_check_overruns_its_budget_and_the_rest_still_report(plan):
    engine = _engine(_Fixed("hangs-forever", hangs), _Fixed("good-one", _ok))
    entries = list(engine.registry.checks.values())
    thresholds = {entry.check.id: {"limit_km": 100.0} for entry in entries}
    findings = run_checks(entries, _context(engine, plan), thresholds, check_budget_s=0.2)
    by_check = {f.check: f for f in findings}
    assert by_check["hangs-forever"].status is Status.ERROR
    assert "did not finish within its 0.2 s time budget" in by_check["hangs-forever"].message
    assert by_check["good-one"].status is Status.PASS


def test_checks_left_without_request_time_are_errors_not_silence(plan):
    engine = _engine(_Fixed("a-hangs", hangs), _Fixed("b-good", _ok), _Fixed("c-good", _ok))
    entries = list(engine.registry.checks.values())
    thresholds = {entry.check.id: {"limit_km": 100.0} for entry in entries}
    ticks = iter([0.0, 0.0, 10.0, 10.0, 10.0])  # the clock jumps past the budget after check a
    findings = run_checks(
        entries,
        _context(engine, plan),
        thresholds,
        check_budget_s=0.1,
        request_budget_s=5.0,
        clock=lambda: next(ticks),
    )
    statuses = {f.check: (f.status, f.message) for f in findings}
    assert statuses["a-hangs"][0] is Status.ERROR
    for later in ("b-good", "c-good"):
        assert statuses[later][0] is Status.ERROR
        assert "request's 5 s time budget ran out" in statuses[later][1]


def test_the_profile_budget_reaches_the_runner_through_validate(plan):
    engine = _engine(_Fixed("hangs-forever", hangs), _Fixed("good-one", _ok))
    profile = engine.profiles["default"]
    engine.profiles["default"] = dataclasses.replace(
        profile, check_time_budget_s=0.2, request_time_budget_s=5.0
    )
    report = engine.validate(plan)
    assert report["verdict"] == "fail"
    hung = [f for f in report["findings"] if f["check"] == "hangs-forever"]
    assert [f["status"] for f in hung] == ["error"]
    assert any(f["check"] == "good-one" and f["status"] == "pass" for f in report["findings"])


@pytest.mark.parametrize(
    ("allow", "deny", "refused"),
    [
        (None, "burn-sequence", "denied by the site's plugin deny list"),
        ("someone-else", None, None),  # built-in checks are always allowed unless denied
        ("burnproof", "burnproof", "denied by the site's plugin deny list"),
    ],
)
def test_allow_and_deny_lists(allow, deny, refused):
    policy = PluginPolicy.from_text(allow, deny)
    assert policy.refusal("burn-sequence", "burnproof") == refused


def test_an_allow_list_refuses_an_unnamed_third_party_plugin():
    policy = PluginPolicy.from_text("harbourlight-burnproof-rules", None)
    assert policy.refusal("max-burns-per-day", "harbourlight-burnproof-rules") is None
    assert policy.refusal("rogue-check", "rogue-rules") == "not on the site's plugin allow list"


def test_a_denied_built_in_check_is_absent_and_named_as_refused():
    from service.engine import build_engine

    engine = build_engine(policy=PluginPolicy.from_text(None, "burn-sequence"))
    assert "burn-sequence" not in engine.registry.checks
    assert "periapsis-floor" in engine.registry.checks
    assert any("burn-sequence" in line for line in engine.registry.refused)
    assert engine.ready
