"""POST /v1/opm-validations and Accept negotiation on both validation endpoints."""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import pytest

from service.ccsds.opm import parse_opm
from service.cli import main
from tests.http.conftest import assert_problem

EXAMPLES = Path(__file__).resolve().parents[2] / "schemas" / "examples"
OPM = (EXAMPLES / "wagtail-5.opm").read_text()
DESCRIPTION = tomllib.loads((EXAMPLES / "wagtail-5.spacecraft.toml").read_text())
KESTREL = json.loads((EXAMPLES / "kestrel-2-raise.json").read_text())
TERN = json.loads((EXAMPLES / "tern-4-bad.json").read_text())
OPM_TYPE = "text/x.ccsds-opm-kvn"


def _post_opm(client, body, **headers):
    return client.post("/v1/opm-validations", json=body, headers=headers)


def test_the_demo_opm_gets_the_same_report_as_the_cli(client, capsys) -> None:
    response = _post_opm(client, {"opm": OPM, "spacecraft": DESCRIPTION})
    assert response.status_code == 200 and response.mimetype == "application/json"
    assert response.headers["Vary"] == "Accept"
    report = json.loads(response.get_data())
    assert report["plan_id"] == "wagtail-5-raise-02" and report["verdict"] == "pass"
    declared = [f for f in report["findings"] if f["check"] == "declared-burn-agreement"]
    assert [f["status"] for f in declared] == ["pass"] * 4
    code = main(
        [
            "validate",
            str(EXAMPLES / "wagtail-5.opm"),
            "--spacecraft",
            str(EXAMPLES / "wagtail-5.spacecraft.toml"),
        ]
    )
    assert code == 0
    assert capsys.readouterr().out.encode() == response.get_data()


@pytest.mark.parametrize(
    ("accept", "media_type"),
    [
        (None, "application/json"),
        ("*/*", "application/json"),
        ("application/*", "application/json"),
        ("application/json", "application/json"),
        (OPM_TYPE, OPM_TYPE),
        ("text/*", OPM_TYPE),
        (f"application/json;q=0.5, {OPM_TYPE}", OPM_TYPE),
    ],
)
def test_accept_negotiation(client, accept, media_type) -> None:
    headers = {} if accept is None else {"Accept": accept}
    for response in (
        client.post("/v1/validations", json=KESTREL, headers=headers),
        _post_opm(client, {"opm": OPM, "spacecraft": DESCRIPTION}, **headers),
    ):
        assert response.status_code == 200
        assert response.mimetype == media_type
        assert response.headers["Vary"] == "Accept"
        if media_type == OPM_TYPE:
            assert response.headers["Content-Type"] == f"{OPM_TYPE}; charset=us-ascii"
            message = parse_opm(response.get_data().decode("ascii"))
            assert len(message.maneuvers) in (2, 3)


@pytest.mark.parametrize("accept", ["text/html", "application/xml", "application/problem+json"])
def test_an_accept_neither_type_meets_is_406(client, accept) -> None:
    for response in (
        client.post("/v1/validations", json=KESTREL, headers={"Accept": accept}),
        _post_opm(client, {"opm": OPM, "spacecraft": DESCRIPTION}, Accept=accept),
    ):
        body = assert_problem(response, 406)
        assert body["type"] == "urn:burnproof:problem:not-acceptable"
        assert body["acceptable"] == ["application/json", OPM_TYPE]
        assert response.headers["Vary"] == "Accept"


def test_a_failed_plan_asked_for_as_opm_is_409(client) -> None:
    response = client.post("/v1/validations", json=TERN, headers={"Accept": OPM_TYPE})
    body = assert_problem(response, 409)
    assert body["type"] == "urn:burnproof:problem:plan-failed"
    assert body["verdict"] == "fail" and body["summary"]["fail"] > 0
    report = client.post("/v1/validations", json=TERN)  # the report is still there for JSON
    assert report.status_code == 200 and json.loads(report.get_data())["verdict"] == "fail"


def test_opm_errors_are_422_keyed_by_line_and_keyword(client) -> None:
    text = OPM.replace("REF_FRAME = EME2000", "REF_FRAME = TEME")
    body = assert_problem(_post_opm(client, {"opm": text, "spacecraft": DESCRIPTION}), 422)
    assert list(body["errors"]) == ["opm.line.11.REF_FRAME"]
    assert "'TEME'" in body["errors"]["opm.line.11.REF_FRAME"][0]
    text = OPM.replace("X = -3429.068 [km]", "X = -3429.068 [m]")
    body = assert_problem(_post_opm(client, {"opm": text, "spacecraft": DESCRIPTION}), 422)
    assert list(body["errors"]) == ["opm.line.16.X"]


def test_description_and_envelope_errors_name_their_fields(client) -> None:
    description = json.loads(json.dumps(DESCRIPTION))
    description["spacecraft"]["engines"][0]["isp_s"] = 0
    body = assert_problem(_post_opm(client, {"opm": OPM, "spacecraft": description}), 422)
    assert list(body["errors"]) == ["spacecraft.engines.0.isp_s"]
    body = assert_problem(_post_opm(client, {"opm": 7, "craft": {}}), 422)
    assert set(body["errors"]) == {"opm", "spacecraft", "craft"}
    body = assert_problem(_post_opm(client, ["not", "an", "object"]), 422)
    assert "plan" in body["errors"]


def test_faults_of_the_message_and_the_description_come_in_one_answer(client) -> None:
    description = json.loads(json.dumps(DESCRIPTION))
    description["spacecraft"]["engines"][0]["isp_s"] = 0
    text = OPM.replace("REF_FRAME = EME2000", "REF_FRAME = EME2000\u00e9")
    body = assert_problem(_post_opm(client, {"opm": text, "spacecraft": description}), 422)
    assert set(body["errors"]) == {"opm.line.11.REF_FRAME", "spacecraft.engines.0.isp_s"}


def test_an_opm_that_is_not_text_is_named_as_such(client) -> None:
    body = assert_problem(_post_opm(client, {"opm": 7, "spacecraft": DESCRIPTION}), 422)
    assert body["errors"]["opm"] == [
        "opm must be the Orbit Parameter Message: non-empty KVN text, a string"
    ]
    body = assert_problem(_post_opm(client, {"spacecraft": DESCRIPTION}), 422)
    assert body["errors"]["opm"][0].startswith("opm is required")


def test_the_new_endpoint_keeps_the_body_rules(client) -> None:
    response = client.post("/v1/opm-validations", data=OPM, headers={"Content-Type": "text/plain"})
    assert_problem(response, 415)
    response = client.post(
        "/v1/opm-validations", data=b"{", headers={"Content-Type": "application/json"}
    )
    assert_problem(response, 400)
