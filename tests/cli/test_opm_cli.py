"""burnproof validate with an OPM (--spacecraft) and --format opm."""

from __future__ import annotations

import json
from pathlib import Path

from service.ccsds.opm import parse_opm
from service.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "schemas" / "examples"
OPM = str(EXAMPLES / "wagtail-5.opm")
DESCRIPTION = str(EXAMPLES / "wagtail-5.spacecraft.toml")


def test_an_opm_with_its_description_validates(capsys) -> None:
    assert main(["validate", OPM, "--spacecraft", DESCRIPTION, "--format", "text"]) == 0
    out = capsys.readouterr().out
    assert "burnproof report for plan wagtail-5-raise-02" in out
    assert "verdict: PASS" in out


def test_an_opm_without_a_description_is_refused(capsys) -> None:
    assert main(["validate", OPM]) == 2
    err = capsys.readouterr().err
    assert "is an OPM, which carries no engines" in err and "--spacecraft FILE" in err


def test_a_description_for_a_json_plan_is_refused(capsys) -> None:
    plan = str(EXAMPLES / "kestrel-2-raise.json")
    assert main(["validate", plan, "--spacecraft", DESCRIPTION]) == 2
    assert "--spacecraft is for an OPM plan" in capsys.readouterr().err


def test_format_opm_writes_the_validated_plan(tmp_path, capsys) -> None:
    out = tmp_path / "kestrel.opm"
    plan = str(EXAMPLES / "kestrel-2-raise.json")
    assert main(["validate", plan, "--format", "opm", "--output", str(out)]) == 0
    message = parse_opm(out.read_text())
    assert dict(message.user_defined)["BURNPROOF_PLAN_ID"] == "kestrel-2-raise-01"
    assert "the plan as an OPM written to" in capsys.readouterr().err
    assert main(["validate", OPM, "--spacecraft", DESCRIPTION, "--format", "opm"]) == 0
    assert len(parse_opm(capsys.readouterr().out).maneuvers) == 2


def test_a_failed_plan_is_not_written(tmp_path, capsys) -> None:
    out = tmp_path / "tern.opm"
    plan = str(EXAMPLES / "tern-4-bad.json")
    assert main(["validate", plan, "--format", "opm", "--output", str(out)]) == 1
    assert not out.exists()
    [line] = capsys.readouterr().err.splitlines()
    assert "failed validation" in line and "nothing written" in line


def test_opm_errors_are_one_line_each_with_line_and_keyword(tmp_path, capsys) -> None:
    text = Path(OPM).read_text()
    bad = text.replace("CENTER_NAME = EARTH", "CENTER_NAME = SUN").replace(
        "REF_FRAME = EME2000", "REF_FRAME = ITRF2000"
    )
    path = tmp_path / "bad.opm"
    path.write_text(bad)
    assert main(["validate", str(path), "--spacecraft", DESCRIPTION]) == 2
    lines = capsys.readouterr().err.splitlines()
    assert len(lines) == 2
    assert lines[0].startswith(f"{path}: line 10, CENTER_NAME: 'SUN'")
    assert lines[1].startswith(f"{path}: line 11, REF_FRAME: 'ITRF2000'")


def test_description_errors_name_the_field(tmp_path, capsys) -> None:
    description = tmp_path / "sc.json"
    description.write_text(
        json.dumps({"spacecraft": {"dry_mass_kg": 182.4, "engines": []}, "maneuvers": []})
    )
    assert main(["validate", OPM, "--spacecraft", str(description)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("spacecraft.engines: ")
    assert main(["validate", OPM, "--spacecraft", str(tmp_path / "missing.toml")]) == 2
    assert "cannot read" in capsys.readouterr().err
