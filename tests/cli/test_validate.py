"""``burnproof validate``: exit codes, inputs, outputs and the messages for plans it cannot use."""

from __future__ import annotations

import io
import json
import sys
import xml.etree.ElementTree as ET

import pytest

from service.app import create_app
from service.cli import main
from service.engine import build_engine
from service.plugin_api import hookimpl
from service.schemas import load_plan
from tests.cli.helpers import BrokenPlugin, GatePlugin, gate_engine, plan_with


def run(argv, capsys, engine=gate_engine):
    code = main(argv, engine=engine)
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


@pytest.mark.parametrize(
    ("delta_v_m_s", "verdict", "code"),
    [(12.5, "pass", 0), (90.0, "warn", 0), (150.0, "fail", 1)],
)
def test_exit_code_follows_the_verdict(write_plan, capsys, delta_v_m_s, verdict, code):
    path = write_plan(plan_with(delta_v_m_s))
    exit_code, out, _ = run(["validate", path], capsys)
    report = json.loads(out)
    assert report["verdict"] == verdict
    assert exit_code == code


def test_json_on_stdout_is_the_engine_report(write_plan, capsys):
    plan = plan_with(12.5)
    code, out, err = run(["validate", write_plan(plan)], capsys)
    assert code == 0 and err == ""
    expected = gate_engine().validate(load_plan(plan))
    assert json.loads(out) == expected
    assert out.endswith("}\n")


def test_rules_in_the_plan_tighten_and_fail(write_plan, capsys):
    plan = plan_with(12.5, rules={"cli-delta-v-gate": {"max_delta_v_m_s": 10.0}})
    code, out, _ = run(["validate", write_plan(plan)], capsys)
    assert code == 1
    assert json.loads(out)["verdict"] == "fail"


def test_an_error_finding_fails_closed(write_plan, capsys):
    def engine():
        return build_engine(extra_plugins=[GatePlugin(), BrokenPlugin()], entry_points=False)

    code, out, _ = run(["validate", write_plan(plan_with(12.5))], capsys, engine=engine)
    report = json.loads(out)
    assert report["summary"]["error"] == 1
    assert report["verdict"] == "fail"
    assert code == 1


def test_reads_the_plan_from_stdin(monkeypatch, capsys):
    raw = json.dumps(plan_with(150.0)).encode()
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(raw)))
    code, out, _ = run(["validate", "-"], capsys)
    assert code == 1
    assert json.loads(out)["plan_id"] == "aurora-7-raise-03"


def test_output_writes_the_file_and_keeps_stdout_empty(write_plan, tmp_path, capsys):
    target = tmp_path / "out" / "report.json"
    target.parent.mkdir()
    code, out, err = run(["validate", write_plan(plan_with(90.0)), "--output", str(target)], capsys)
    assert code == 0
    assert out == ""
    assert json.loads(target.read_bytes())["verdict"] == "warn"
    assert "aurora-7-raise-03: warn" in err and str(target) in err


def test_output_to_an_unwritable_place_exits_2(write_plan, tmp_path, capsys):
    target = tmp_path / "missing-dir" / "report.json"
    code, _, err = run(["validate", write_plan(plan_with()), "--output", str(target)], capsys)
    assert code == 2
    assert err.startswith("burnproof: cannot write")


def test_text_format_has_the_verdict_and_every_finding_message(write_plan, capsys):
    path = write_plan(plan_with(150.0))
    code, out, _ = run(["validate", path, "--format", "text"], capsys)
    assert code == 1
    report = gate_engine().validate(load_plan(plan_with(150.0)))
    assert "verdict: FAIL" in out
    for finding in report["findings"]:
        assert finding["message"] in out
    out.encode("ascii")


def test_junit_format_has_one_testcase_per_finding(write_plan, tmp_path, capsys):
    target = tmp_path / "junit.xml"
    path = write_plan(plan_with(150.0))
    code, _, _ = run(["validate", path, "--format", "junit", "--output", str(target)], capsys)
    assert code == 1
    suite = ET.parse(target).getroot()
    report = gate_engine().validate(load_plan(plan_with(150.0)))
    assert len(suite.findall("testcase")) == len(report["findings"]) == int(suite.get("tests"))
    assert int(suite.get("failures")) == report["summary"]["fail"] == 1
    assert int(suite.get("errors")) == report["summary"]["error"]
    assert int(suite.get("skipped")) == report["summary"]["skipped"]


def test_profile_option_picks_the_profile(write_plan, capsys):
    code, out, _ = run(["validate", write_plan(plan_with()), "--profile", "default"], capsys)
    assert code == 0
    assert json.loads(out)["provenance"]["profile"] == "default"


def test_unknown_profile_exits_2_naming_the_field(write_plan, capsys):
    code, out, err = run(["validate", write_plan(plan_with()), "--profile", "no-such"], capsys)
    assert code == 2 and out == ""
    assert err.startswith("profile: unknown profile 'no-such'")


def test_a_loosening_rule_exits_2_naming_the_parameter(write_plan, capsys):
    plan = plan_with(rules={"cli-delta-v-gate": {"max_delta_v_m_s": 500.0}})
    code, _, err = run(["validate", write_plan(plan)], capsys)
    assert code == 2
    assert err.startswith("rules.cli-delta-v-gate.max_delta_v_m_s: would loosen")


def test_missing_file_exits_2(tmp_path, capsys):
    code, out, err = run(["validate", str(tmp_path / "absent.json")], capsys)
    assert code == 2 and out == ""
    assert "cannot read" in err and "absent.json" in err


def test_malformed_json_exits_2(write_plan, capsys):
    code, out, err = run(["validate", write_plan(b'{"plan_id": "x",')], capsys)
    assert code == 2 and out == ""
    assert "not valid JSON" in err


def _api_errors(plan: dict) -> dict:
    client = create_app(engine=gate_engine()).test_client()
    response = client.post("/v1/validations", json=plan)
    assert response.status_code == 422
    return response.get_json()["errors"]


def _api_lines(errors: dict) -> list[str]:
    lines = []
    for path, messages in errors.items():
        for message in [messages] if isinstance(messages, str) else messages:
            lines.append(f"{path}: {message}")
    return lines


@pytest.mark.parametrize(
    "breakage",
    [
        lambda p: p["spacecraft"].update(dry_mass_kg=-1.0),
        lambda p: p["maneuvers"][0].update(engine="no-such-engine"),
        lambda p: p.update(epoch="yesterday", surprise=1),
        lambda p: p["initial_state"].update(position_km=[1.0, 2.0]),
    ],
)
def test_invalid_plan_prints_the_api_field_messages_and_exits_2(write_plan, capsys, breakage):
    plan = plan_with()
    breakage(plan)
    code, out, err = run(["validate", write_plan(plan)], capsys)
    assert code == 2 and out == ""
    lines = err.splitlines()
    assert lines, "no message at all"
    assert sorted(lines) == sorted(_api_lines(_api_errors(plan)))
    assert all(": " in line and not line.startswith("burnproof") for line in lines)


def test_a_negative_mass_names_its_field(write_plan, capsys):
    plan = plan_with()
    plan["spacecraft"]["dry_mass_kg"] = -1.0
    _, _, err = run(["validate", write_plan(plan)], capsys)
    assert any(line.startswith("spacecraft.dry_mass_kg: ") for line in err.splitlines())


def test_an_engine_that_is_not_ready_exits_2_with_its_problems(write_plan, capsys):
    def empty():
        return build_engine(entry_points=False)

    code, out, err = run(["validate", write_plan(plan_with())], capsys, engine=empty)
    assert code == 2 and out == ""
    assert err.startswith("burnproof: not ready: ")


def test_a_rejected_plugin_is_named(write_plan, capsys):
    class Duplicate:
        @hookimpl
        def register_checks(self):
            return [GatePlugin().register_checks()[0]]

    def engine():
        return build_engine(extra_plugins=[GatePlugin(), Duplicate()], entry_points=False)

    code, _, err = run(["validate", write_plan(plan_with())], capsys, engine=engine)
    assert code == 2
    assert "duplicate check id 'cli-delta-v-gate'" in err


def test_an_engine_object_may_be_passed_instead_of_a_factory(write_plan, capsys):
    code, _, _ = run(["validate", write_plan(plan_with(150.0))], capsys, engine=gate_engine())
    assert code == 1


def test_an_unexpected_crash_is_one_line_not_a_traceback(write_plan, capsys):
    class Exploding:
        ready = True
        problems: list[str] = []

        def validate(self, plan, *, profile=None):
            raise KeyError("boom")

    code, out, err = run(["validate", write_plan(plan_with())], capsys, engine=Exploding())
    assert code == 2 and out == ""
    assert err == "burnproof: internal error: KeyError: 'boom'\n"


def test_usage_errors_exit_2_and_help_exits_0(capsys):
    assert main([]) == 2
    assert main(["validate"]) == 2
    assert main(["validate", "x.json", "--format", "yaml"]) == 2
    assert main(["serve", "--port", "99999"]) == 2
    capsys.readouterr()
    assert main(["--help"]) == 0
    assert "validate" in capsys.readouterr().out
    assert main(["serve", "--help"]) == 0
    assert "gunicorn" in capsys.readouterr().out
