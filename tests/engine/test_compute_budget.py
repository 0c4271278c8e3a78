"""The compute budget: checked around the trajectory build, capping the checks, in both faces."""

import json
import re

import pytest

from service.cli import main
from service.engine.budget import (
    ComputeBudget,
    budget_from_environment,
    parse_budget_s,
)
from service.engine.errors import ComputeBudgetExceeded
from service.engine.render import to_json_bytes
from tests.cli.helpers import gate_engine, plan_with
from tests.engine.hanging import hangs, release_hung_checks  # noqa: F401 (autouse)
from tests.engine.test_engine import _engine, _Fixed, _ok


def _clock(*readings):
    """A clock that gives ``readings`` in turn, then keeps giving the last one."""
    values = list(readings)

    def clock():
        return values.pop(0) if len(values) > 1 else values[0]

    return clock


@pytest.mark.parametrize(("text", "seconds"), [("20", 20.0), (" 0.5 ", 0.5), ("1e-6", 1e-6)])
def test_a_budget_setting_is_a_positive_number_of_seconds(text, seconds):
    assert parse_budget_s(text) == seconds


@pytest.mark.parametrize("text", ["0", "-1", "nan", "inf", "twenty", ""])
def test_a_bad_budget_setting_is_refused_naming_it(text):
    with pytest.raises(ValueError, match="BURNPROOF_COMPUTE_BUDGET_S"):
        parse_budget_s(text)


def test_the_environment_budget_is_optional():
    assert budget_from_environment({}) is None
    assert budget_from_environment({"BURNPROOF_COMPUTE_BUDGET_S": "  "}) is None
    assert budget_from_environment({"BURNPROOF_COMPUTE_BUDGET_S": "7.5"}) == 7.5


def test_require_gives_the_time_left_or_raises_with_the_budget():
    budget = ComputeBudget.start(2.0, clock=_clock(10.0, 10.5, 12.0))
    assert budget.require("first") == pytest.approx(1.5)
    with pytest.raises(ComputeBudgetExceeded) as caught:
        budget.require("the trajectory build ran past it")
    assert caught.value.budget_s == 2.0
    assert caught.value.elapsed_s == pytest.approx(2.0)
    assert str(caught.value) == (
        "validating this plan did not finish within the 2 s compute budget: "
        "the trajectory build ran past it (2 s elapsed)"
    )


def test_a_budget_spent_before_the_build_is_refused(plan):
    engine = _engine(_Fixed("a-good", _ok))
    budget = ComputeBudget.start(1e-6, clock=_clock(0.0, 1.0))
    with pytest.raises(ComputeBudgetExceeded, match="spent before the trajectory build"):
        engine.validate(plan, budget=budget)


def test_a_build_that_runs_past_the_budget_is_refused(plan):
    engine = _engine(_Fixed("a-good", _ok))
    # start 0, before the build 1 s (19 s left), after it 25 s: the build ran past 20 s.
    budget = ComputeBudget.start(20.0, clock=_clock(0.0, 1.0, 25.0))
    with pytest.raises(ComputeBudgetExceeded, match="the trajectory build ran past it") as caught:
        engine.validate(plan, budget=budget)
    assert caught.value.budget_s == 20.0


def test_what_is_left_caps_the_checks_and_an_overrun_is_an_error_finding(plan):
    engine = _engine(_Fixed("a-hangs", hangs), _Fixed("b-good", _ok))
    # 1 s budget, 0.7 s of it gone by the end of the build: the checks share the last 0.3 s.
    budget = ComputeBudget.start(1.0, clock=_clock(0.0, 0.0, 0.7))
    report = engine.validate(plan, budget=budget)
    statuses = {f["check"]: (f["status"], f["message"]) for f in report["findings"]}
    assert report["verdict"] == "fail"
    assert statuses["a-hangs"][0] == "error"
    # 0.3 s less the real time the runner took to start the check (0.299 s on a slow machine)
    assert re.fullmatch(
        r"check did not finish within its 0\.(3|29\d) s time budget "
        r"\(what was left of the request's 1 s compute budget\)",
        statuses["a-hangs"][1],
    )
    assert statuses["b-good"] == (
        "error",
        "check not run: the request's 1 s compute budget ran out",
    )


def test_a_normal_budget_gives_the_same_report_as_none(plan):
    from service.engine import build_engine

    engine = build_engine()
    expected = to_json_bytes(engine.validate(plan))
    assert to_json_bytes(engine.validate(plan, budget=ComputeBudget.start(20.0))) == expected


def _cli(argv, capsys, monkeypatch, budget=None):
    if budget is None:
        monkeypatch.delenv("BURNPROOF_COMPUTE_BUDGET_S", raising=False)
    else:
        monkeypatch.setenv("BURNPROOF_COMPUTE_BUDGET_S", budget)
    code = main(argv, engine=gate_engine)
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def test_the_command_line_exits_2_past_its_budget(tmp_path, capsys, monkeypatch):
    path = tmp_path / "plan.json"
    path.write_text(json.dumps(plan_with(12.5)))
    code, out, err = _cli(["validate", str(path)], capsys, monkeypatch, budget="1e-6")
    assert code == 2 and out == ""
    assert err.startswith(f"burnproof: {path}: validating this plan did not finish within the ")
    assert "1e-06 s compute budget" in err
    assert err.endswith("; raise BURNPROOF_COMPUTE_BUDGET_S to allow more\n")


def test_the_command_line_refuses_a_bad_budget_setting(tmp_path, capsys, monkeypatch):
    path = tmp_path / "plan.json"
    path.write_text(json.dumps(plan_with(12.5)))
    code, out, err = _cli(["validate", str(path)], capsys, monkeypatch, budget="soon")
    assert code == 2 and out == ""
    assert err == (
        "burnproof: BURNPROOF_COMPUTE_BUDGET_S must be a number of seconds, not 'soon'\n"
    )


def test_the_command_line_report_is_the_same_with_a_normal_budget(tmp_path, capsys, monkeypatch):
    path = tmp_path / "plan.json"
    path.write_text(json.dumps(plan_with(12.5)))
    code, without, _ = _cli(["validate", str(path)], capsys, monkeypatch)
    assert code == 0
    code, with_budget, _ = _cli(["validate", str(path)], capsys, monkeypatch, budget="20")
    assert code == 0
    assert with_budget == without
