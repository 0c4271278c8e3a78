"""Site profiles through the HTTP face: BURNPROOF_PROFILE_DIR, readiness and ?profile=.

The site profile belongs to an invented operator, "tern-ops", which runs two of
the built-in checks with a higher Earth floor than the built-in default.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from service.app import create_app
from tests.http.conftest import PLOVER_1, assert_problem

TERN_OPS = """\
name = "tern-ops"
description = "Tern operations: two checks and a higher floor; requests may only tighten."
enabled = ["periapsis-floor", "propellant-budget"]

[thresholds.periapsis-floor]
earth_min_altitude_km = { value = 300.0, unit = "km", reason = "operator rule" }
earth_margin_km = { value = 100.0, unit = "km", reason = "operator rule" }
"""

REPOSITORY = Path(__file__).resolve().parents[2]


def _client(monkeypatch, directory: Path | None):
    """A client for an app built from the environment, as ``burnproof serve`` and gunicorn do."""
    for name in ("BURNPROOF_PLUGINS_ALLOW", "BURNPROOF_PLUGINS_DENY"):
        monkeypatch.delenv(name, raising=False)
    if directory is None:
        monkeypatch.delenv("BURNPROOF_PROFILE_DIR", raising=False)
    else:
        monkeypatch.setenv("BURNPROOF_PROFILE_DIR", str(directory))
    return create_app({"TESTING": True}).test_client()


def _post(client, plan: dict, query: str = ""):
    return client.post(
        "/v1/validations" + query,
        data=json.dumps(plan).encode(),
        headers={"Content-Type": "application/json"},
    )


@pytest.fixture
def site(tmp_path: Path) -> Path:
    (tmp_path / "tern-ops.toml").write_text(TERN_OPS, encoding="utf-8")
    return tmp_path


def test_a_broken_profile_makes_the_service_not_ready_naming_the_file(monkeypatch, tmp_path):
    broken = tmp_path / "tern-ops.toml"
    broken.write_text(TERN_OPS.replace('unit = "km", reason', 'unit = "m", reason'), "utf-8")
    client = _client(monkeypatch, tmp_path)
    body = assert_problem(client.get("/readyz"), 503)
    assert body["ready"] is False
    expected = (
        f"profile {broken}: thresholds.periapsis-floor.earth_margin_km: "
        "unit 'm' does not match the check's unit 'km'"
    )
    assert expected in body["problems"]
    assert str(broken) in body["detail"]
    # Not ready means no verdicts at all, not verdicts under a half-read profile.
    assert _post(client, PLOVER_1).status_code == 503


def test_broken_toml_is_named_with_its_line(monkeypatch, tmp_path):
    broken = tmp_path / "tern-ops.toml"
    broken.write_text(TERN_OPS.replace("[thresholds.periapsis-floor]", "[thresholds"), "utf-8")
    body = assert_problem(_client(monkeypatch, tmp_path).get("/readyz"), 503)
    [problem] = body["problems"]
    assert problem.startswith(f"profile {broken}: not valid TOML: ")
    assert "line 5" in problem


def test_a_missing_profile_directory_makes_the_service_not_ready(monkeypatch, tmp_path):
    missing = tmp_path / "absent"
    body = assert_problem(_client(monkeypatch, missing).get("/readyz"), 503)
    assert body["problems"] == [f"profile directory {missing}: does not exist"]


def test_without_a_profile_directory_only_the_built_in_profile_is_served(monkeypatch):
    client = _client(monkeypatch, None)
    assert client.get("/readyz").status_code == 200
    names = [p["name"] for p in client.get("/v1/profiles").get_json()["profiles"]]
    assert names == ["default"]


def test_the_site_profile_is_listed_with_its_digest_and_used_by_request(monkeypatch, site):
    client = _client(monkeypatch, site)
    assert client.get("/readyz").get_json() == {"ready": True}
    listed = {p["name"]: p for p in client.get("/v1/profiles").get_json()["profiles"]}
    assert sorted(listed) == ["default", "tern-ops"]
    tern = listed["tern-ops"]
    assert tern["digest"].startswith("sha256:")
    assert tern["digest"] != listed["default"]["digest"]
    assert tern["source"] == str(site / "tern-ops.toml")
    assert listed["default"]["source"] == "built-in"
    assert tern["enabled"] == ["periapsis-floor", "propellant-budget"]
    assert tern["thresholds"]["periapsis-floor"]["earth_min_altitude_km"] == 300.0
    assert client.get("/v1/profiles/tern-ops").get_json() == tern

    response = _post(client, PLOVER_1, "?profile=tern-ops")
    assert response.status_code == 200, response.get_data(as_text=True)
    report = response.get_json()
    assert report["provenance"]["profile"] == "tern-ops"
    assert report["provenance"]["profile_digest"] == tern["digest"]
    assert {f["check"] for f in report["findings"]} == {"periapsis-floor", "propellant-budget"}
    floors = [f for f in report["findings"] if f["check"] == "periapsis-floor"]
    assert floors and all(f["limit"] == 300.0 for f in floors)
    # plover-1 flies at about 500 km, above the 300 km floor and its 100 km warn band.
    assert {f["status"] for f in floors} == {"pass"}


def test_the_plan_may_name_the_site_profile_itself(monkeypatch, site):
    client = _client(monkeypatch, site)
    plan = {**PLOVER_1, "profile": "tern-ops"}
    report = _post(client, plan).get_json()
    assert report["provenance"]["profile"] == "tern-ops"


def test_a_request_may_not_loosen_the_site_profile(monkeypatch, site):
    client = _client(monkeypatch, site)
    plan = {**PLOVER_1, "rules": {"periapsis-floor": {"earth_min_altitude_km": 250.0}}}
    body = assert_problem(_post(client, plan, "?profile=tern-ops"), 422)
    [message] = body["errors"]["rules.periapsis-floor.earth_min_altitude_km"]
    assert "profile 'tern-ops'" in message
    assert "profile value 300.0 km" in message
    assert "requested 250.0 km" in message


def test_the_example_site_profile_in_deploy_serves(monkeypatch):
    client = _client(monkeypatch, REPOSITORY / "deploy" / "profiles")
    assert client.get("/readyz").status_code == 200
    document = client.get("/v1/profiles/ops-conservative").get_json()
    assert document["allow_loosening"] is False
    report = _post(client, PLOVER_1, "?profile=ops-conservative").get_json()
    assert report["provenance"]["profile_digest"] == document["digest"]
