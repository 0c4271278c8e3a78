"""The check observer: one CheckRun per check with the right outcome, and the same report."""

import dataclasses
import threading

import pytest

from service.engine import build_engine
from service.engine import runner as runner_module
from service.engine.observe import CheckRun, count_by_status
from service.engine.render import to_json_bytes
from service.plugin_api import Finding, Status
from tests.engine.test_engine import _engine, _Fixed, _ok, _raises

RELEASE = threading.Event()


def _hangs(context, params):
    RELEASE.wait(30.0)  # released by the fixture, so no thread outlives the test
    return [Finding(Status.PASS, "late")]


def _garbage(context, params):
    return ["not a finding"]


def _warns_twice(context, params):
    return [Finding(Status.WARN, "close"), Finding(Status.PASS, "fine")]


@pytest.fixture(autouse=True)
def _release_hung_checks():
    RELEASE.clear()
    yield
    RELEASE.set()


def _with_budgets(engine, check_budget_s, request_budget_s=30.0):
    profile = engine.profiles["default"]
    engine.profiles["default"] = dataclasses.replace(
        profile, check_time_budget_s=check_budget_s, request_time_budget_s=request_budget_s
    )
    return engine


def test_each_check_is_reported_once_with_its_outcome_and_findings(plan):
    engine = _engine(
        _Fixed("a-good", _ok),
        _Fixed("b-raises", _raises),
        _Fixed("c-garbage", _garbage),
        _Fixed("d-hangs", _hangs),
        _Fixed("e-warns", _warns_twice),
    )
    _with_budgets(engine, check_budget_s=0.2)
    runs: list[CheckRun] = []
    report = engine.validate(plan, observer=runs.append)
    assert [run.check_id for run in runs] == [
        "a-good",
        "b-raises",
        "c-garbage",
        "d-hangs",
        "e-warns",
    ]
    by_id = {run.check_id: run for run in runs}
    assert by_id["a-good"].outcome == "ok" and by_id["a-good"].findings == {"pass": 1}
    assert by_id["e-warns"].outcome == "ok" and by_id["e-warns"].findings == {"warn": 1, "pass": 1}
    raised = by_id["b-raises"]
    assert raised.outcome == "error" and raised.findings == {"error": 1}
    assert isinstance(raised.error, ZeroDivisionError)
    assert raised.message == "check failed: ZeroDivisionError: boom"
    garbage = by_id["c-garbage"]
    assert garbage.outcome == "error" and garbage.error is None
    assert "broke its contract" in garbage.message
    hung = by_id["d-hangs"]
    assert hung.outcome == "timeout" and hung.findings == {"error": 1}
    assert hung.seconds >= 0.2  # the time waited before giving up: at least the budget
    assert "did not finish within its 0.2 s time budget" in hung.message
    for run in runs:
        assert run.seconds >= 0.0
    # The counts agree with the report, check by check.
    for check_id, run in by_id.items():
        in_report = [f for f in report["findings"] if f["check"] == check_id]
        assert sum(run.findings.values()) == len(in_report)


def test_checks_left_without_request_time_are_not_run(plan):
    engine = _with_budgets(
        _engine(_Fixed("a-hangs", _hangs), _Fixed("b-good", _ok)),
        check_budget_s=0.2,
        request_budget_s=0.2,
    )
    runs: list[CheckRun] = []
    engine.validate(plan, observer=runs.append)
    assert [(run.check_id, run.outcome) for run in runs] == [
        ("a-hangs", "timeout"),
        ("b-good", "not_run"),
    ]
    assert runs[1].seconds == 0.0 and runs[1].findings == {"error": 1}
    assert "time budget ran out" in runs[1].message


def test_the_report_is_byte_identical_with_or_without_an_observer(plan):
    engine = build_engine()  # every installed check, the Monte Carlo one among them
    without = to_json_bytes(engine.validate(plan))
    runs: list[CheckRun] = []
    with_observer = to_json_bytes(engine.validate(plan, observer=runs.append))
    assert with_observer == without
    assert sorted(run.check_id for run in runs) == sorted(
        engine.profiles["default"].enabled_checks(engine.registry)
    )
    assert all(run.outcome == "ok" for run in runs)


def test_an_observer_that_raises_changes_nothing_in_the_report(plan, caplog):
    engine = _engine(_Fixed("a-good", _ok), _Fixed("b-raises", _raises))
    expected = to_json_bytes(engine.validate(plan))

    def broken_observer(run):
        raise RuntimeError("observer broke")

    assert to_json_bytes(engine.validate(plan, observer=broken_observer)) == expected
    failures = [r for r in caplog.records if r.name == "burnproof.engine"]
    assert [r.getMessage() for r in failures] == [
        "the check observer failed on a-good",
        "the check observer failed on b-raises",
    ]


def test_without_an_observer_nothing_is_timed(plan, monkeypatch):
    engine = _engine(_Fixed("a-good", _ok), _Fixed("b-raises", _raises))
    expected = to_json_bytes(engine.validate(plan))

    class NoClock:
        @staticmethod
        def perf_counter():
            raise AssertionError("the runner timed a check without an observer")

        monotonic = staticmethod(runner_module.time.monotonic)

    monkeypatch.setattr(runner_module, "time", NoClock)
    assert to_json_bytes(engine.validate(plan)) == expected
    with pytest.raises(AssertionError, match="timed a check"):
        engine.validate(plan, observer=lambda run: None)


def test_count_by_status_uses_the_status_values():
    findings = [Finding(Status.PASS, "a"), Finding(Status.PASS, "b"), Finding(Status.FAIL, "c")]
    assert count_by_status(findings) == {"pass": 2, "fail": 1}
