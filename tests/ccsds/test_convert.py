"""OPM + description -> plan document, and plan + report -> OPM: values, frames, refusals."""

from __future__ import annotations

import json
import tomllib
from decimal import Decimal
from pathlib import Path

import pytest

from service.ccsds.convert import (
    OpmInvalid,
    PlanFailed,
    describe_key,
    is_opm,
    load_opm_plan,
    plan_to_opm,
    write_plan_opm,
)
from service.ccsds.opm import parse_opm
from service.ccsds.spacecraft import DescriptionInvalid
from service.engine import build_engine
from service.schemas import load_plan

EXAMPLES = Path(__file__).resolve().parents[2] / "schemas" / "examples"
DATA = Path(__file__).resolve().parent / "data"
WAGTAIL = (EXAMPLES / "wagtail-5.opm").read_text()
DESCRIPTION = tomllib.loads((EXAMPLES / "wagtail-5.spacecraft.toml").read_text())


@pytest.fixture(scope="module")
def engine():
    return build_engine()


def _refusal(text: str, description: dict | None = None) -> dict:
    with pytest.raises(OpmInvalid) as caught:
        load_opm_plan(text, description or DESCRIPTION)
    return caught.value.errors


def _line(text: str, starts: str) -> int:
    return next(n for n, line in enumerate(text.splitlines(), 1) if line.startswith(starts))


def test_the_demo_opm_becomes_the_plan_a_client_would_post() -> None:
    document, plan = load_opm_plan(WAGTAIL, DESCRIPTION)
    assert document["plan_id"] == "wagtail-5-raise-02"
    assert document["central_body"] == "earth"
    assert document["epoch"] == "2032-04-11T09:30:00Z"
    assert document["initial_state"] == {
        "frame": "EME2000",
        "position_km": [-3429.068, 5939.321, 0.0],
        "velocity_km_s": [-3.973374, -2.294029, 6.088558],
    }
    # MASS 196.75 - dry 182.4, in Decimal
    assert document["spacecraft"]["propellant_kg"] == 14.35
    first, second = document["maneuvers"]
    assert first == {
        "id": "raise-a",
        "ignition": "2032-04-11T10:05:00Z",
        "engine": "hpgp-1",
        "frame": "TNW",
        "delta_v_m_s": [8.314, 0.0, 0.0],  # 0.008314 km/s, scaled exactly
        "declared_duration_s": 74.2,
        "declared_propellant_kg": 0.7208,  # -MAN_DELTA_MASS
    }
    assert second["ignition"] == "2032-04-11T10:52:15.600Z"
    assert document["target_orbit"]["tolerance_km"] == 5.0
    assert plan.digest == load_plan(json.loads(json.dumps(document))).digest


def test_is_opm_looks_at_the_first_keyword() -> None:
    assert is_opm(b"\n  CCSDS_OPM_VERS = 3.0\n")
    assert not is_opm(b'{"plan_id": "CCSDS_OPM_VERS"}')
    assert not is_opm(b"")


@pytest.mark.parametrize(
    ("was", "now", "keyword", "words"),
    [
        ("REF_FRAME = EME2000", "REF_FRAME = TEME", "REF_FRAME", "precession and nutation"),
        ("REF_FRAME = EME2000", "REF_FRAME = ITRF2000", "REF_FRAME", "body-fixed rotating"),
        ("REF_FRAME = EME2000", "REF_FRAME = GRC", "REF_FRAME", "body-fixed rotating"),
        ("REF_FRAME = EME2000", "REF_FRAME = MCI", "REF_FRAME", "no orientation model"),
        ("CENTER_NAME = EARTH", "CENTER_NAME = SUN", "CENTER_NAME", "EARTH, MOON or MARS"),
    ],
)
def test_what_cannot_be_honestly_evaluated_is_refused_by_line_and_keyword(
    was, now, keyword, words
) -> None:
    text = WAGTAIL.replace(was, now)
    errors = _refusal(text)
    key = f"opm.line.{_line(text, now)}.{keyword}"
    assert list(errors) == [key]
    assert repr(now.split(" = ")[1]) in errors[key][0] and words in errors[key][0]
    assert describe_key(key) == f"line {_line(text, now)}, {keyword}"


def test_a_maneuver_frame_is_refused_on_its_own_line() -> None:
    lines = WAGTAIL.splitlines()
    second = [n for n, line in enumerate(lines, 1) if line.startswith("MAN_REF_FRAME")][1]
    lines[second - 1] = "MAN_REF_FRAME = TOD"
    errors = _refusal("\n".join(lines) + "\n")
    assert list(errors) == [f"opm.line.{second}.MAN_REF_FRAME"]


@pytest.mark.parametrize(
    ("state_frame", "maneuver_frame", "state", "maneuver"),
    [
        ("GCRF", "ICRF", "GCRF", "GCRF"),
        ("ICRF", "EME2000", "GCRF", "EME2000"),
        ("EME2000", "RSW", "EME2000", "RTN"),
    ],
)
def test_accepted_frames(state_frame, maneuver_frame, state, maneuver) -> None:
    text = WAGTAIL.replace("REF_FRAME = EME2000", f"REF_FRAME = {state_frame}").replace(
        "MAN_REF_FRAME = TNW", f"MAN_REF_FRAME = {maneuver_frame}"
    )
    document, _ = load_opm_plan(text, DESCRIPTION)
    assert document["initial_state"]["frame"] == state
    assert {m["frame"] for m in document["maneuvers"]} == {maneuver}


def test_plan_errors_on_opm_fields_keep_the_opm_line() -> None:
    text = WAGTAIL.replace("MAN_DV_1 = 0.008305 [km/s]", "MAN_DV_1 = 0.0 [km/s]")
    errors = _refusal(text)
    key = f"opm.line.{_line(text, 'MAN_DV_1 = 0.0 [km/s]')}.MAN_DV_1"
    assert list(errors) == [key]
    assert "non-zero delta-v" in errors[key][0] and "maneuvers.1.delta_v_m_s" in errors[key][0]


def test_reader_errors_are_keyed_by_line_and_keyword() -> None:
    text = WAGTAIL.replace("MAN_DELTA_MASS = -0.7174 [kg]", "MAN_DELTA_MASS = 0.7174 [kg]")
    errors = _refusal(text)
    assert list(errors) == [f"opm.line.{_line(text, 'MAN_DELTA_MASS = 0.7174')}.MAN_DELTA_MASS"]


def test_ids_and_engines_fall_back_to_the_opm_then_to_defaults() -> None:
    description = {"spacecraft": DESCRIPTION["spacecraft"]}
    document, _ = load_opm_plan(WAGTAIL, description)
    assert [m["id"] for m in document["maneuvers"]] == ["burn-1", "burn-2"]
    assert {m["engine"] for m in document["maneuvers"]} == {"hpgp-1"}  # the only engine
    assert document["plan_id"] == "WAGTAIL-5-2032-101-A"  # MESSAGE_ID
    assert "profile" not in document and "target_orbit" not in document
    without_id = WAGTAIL.replace("MESSAGE_ID = WAGTAIL-5-2032-101-A\n", "")
    assert load_opm_plan(without_id, description)[0]["plan_id"] == "WAGTAIL-5"  # OBJECT_NAME


def test_several_engines_need_the_description_to_say_which() -> None:
    spacecraft = dict(DESCRIPTION["spacecraft"])
    spacecraft["engines"] = [*spacecraft["engines"], {"id": "cold", "thrust_n": 1, "isp_s": 60}]
    with pytest.raises(DescriptionInvalid) as caught:
        load_opm_plan(WAGTAIL, {"spacecraft": spacecraft})
    assert set(caught.value.errors) == {"maneuvers.0.engine", "maneuvers.1.engine"}
    document, _ = load_opm_plan(WAGTAIL, {"spacecraft": spacecraft, "default_engine": "cold"})
    assert {m["engine"] for m in document["maneuvers"]} == {"cold"}
    listed = {"spacecraft": spacecraft, "maneuvers": [{"engine": "cold"}, {"id": "x"}]}
    with pytest.raises(DescriptionInvalid) as caught:
        load_opm_plan(WAGTAIL, listed)
    assert list(caught.value.errors) == ["maneuvers.1.engine"]


def test_the_description_must_list_every_opm_maneuver() -> None:
    description = {**DESCRIPTION, "maneuvers": [{"id": "only-one"}]}
    with pytest.raises(DescriptionInvalid) as caught:
        load_opm_plan(WAGTAIL, description)
    assert "lists 1 maneuvers and the OPM has 2" in caught.value.errors["maneuvers"][0]


def test_the_standards_maneuver_example_is_refused_for_its_tod_frame() -> None:
    """CCSDS 502.0-B-2 figure 3-2 (test data of the reader): its state is in TOD, a true-of-date
    frame burnproof has no precession-nutation model to convert, so it names why it refuses."""
    text = (DATA / "b2_figure_3_2.opm").read_text()
    description = {
        "spacecraft": {"dry_mass_kg": 1500.0, "engines": [{"id": "lae", "thrust_n": 400.0,
                                                            "isp_s": 320.0}]}
    }  # fmt: skip
    errors = _refusal(text, description)
    assert list(errors) == [f"opm.line.{_line(text, 'REF_FRAME')}.REF_FRAME"]
    assert "'TOD'" in errors[f"opm.line.{_line(text, 'REF_FRAME')}.REF_FRAME"][0]


# ------------------------------------------------------------------------------- write side


def test_the_written_opm_carries_computed_values_ids_and_the_verdict(engine) -> None:
    _, plan = load_opm_plan(WAGTAIL, DESCRIPTION)
    report = engine.validate(plan)
    message = parse_opm(write_plan_opm(plan, report))
    burns = report["maneuvers"]
    assert [str(m.duration_s) for m in message.maneuvers] == [
        repr(burn["duration_s"]) for burn in burns
    ]
    assert [m.delta_mass_kg for m in message.maneuvers] == [
        -Decimal(repr(burn["propellant_kg"])) for burn in burns
    ]
    assert [str(m.dv_km_s[0]) for m in message.maneuvers] == ["0.008314", "0.008305"]
    assert str(message.spacecraft.mass_kg) == "196.75"
    user = dict(message.user_defined)
    assert user["BURNPROOF_MAN_1_ID"] == "raise-a" and user["BURNPROOF_MAN_2_ENGINE"] == "hpgp-1"
    assert user["BURNPROOF_MAN_VALUES"] == "COMPUTED"
    assert user["BURNPROOF_MAN_1_DECLARED_DURATION"] == "74.2"
    comments = " ".join(message.header.comments)
    assert "verdict pass" in comments
    assert report["provenance"]["plan_digest"] in comments
    assert "Profile default" in comments
    assert "never replaces" in comments  # the cautions travel with the file


def test_a_failed_plan_is_not_written(engine) -> None:
    plan = load_plan(json.loads((EXAMPLES / "tern-4-bad.json").read_text()))
    report = engine.validate(plan)
    assert report["verdict"] == "fail"
    with pytest.raises(PlanFailed) as caught:
        plan_to_opm(plan, report)
    assert caught.value.verdict == "fail" and caught.value.summary == report["summary"]


def test_ids_a_kvn_line_cannot_carry_are_left_to_the_description(engine) -> None:
    data = json.loads((EXAMPLES / "kestrel-2-raise.json").read_text())
    data["maneuvers"][0]["id"] = "relève-1"
    plan = load_plan(data)
    message = plan_to_opm(plan, engine.validate(plan))
    user = dict(message.user_defined)
    assert "BURNPROOF_MAN_1_ID" not in user and user["BURNPROOF_MAN_2_ID"] == "circ-1"
    assert any("MAN_1_ID" in line for line in message.header.comments)
    write_plan_opm(plan, engine.validate(plan)).encode("ascii")  # still pure ASCII
