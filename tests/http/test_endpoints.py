"""Every endpoint of CONTRACT.md section 3 through Flask's test client."""

from __future__ import annotations

import json

from service.app import MAX_BODY_BYTES, create_app
from tests.http.conftest import StubEngine, assert_problem


def test_validation_returns_the_report(post_plan, plan):
    response = post_plan(plan)
    assert response.status_code == 200, response.get_data(as_text=True)
    assert response.mimetype == "application/json"
    report = response.get_json()
    assert report["plan_id"] == "plover-1-raise-01"
    assert report["verdict"] in ("pass", "warn", "fail")
    assert [m["id"] for m in report["maneuvers"]] == ["raise-1", "circularise-1"]
    assert len(report["arcs"]) == 3
    assert report["provenance"]["plan_digest"].startswith("sha256:")
    assert report["provenance"]["profile"] == "default"
    assert report["cautions"]


def test_a_failing_plan_is_still_200(post_plan, plan):
    # the second burn lights one second after the first: overlapping burns fail burn-sequence
    plan["maneuvers"][1]["ignition"] = "2032-03-14T06:30:01Z"
    response = post_plan(plan)
    assert response.status_code == 200, response.get_data(as_text=True)
    assert response.get_json()["verdict"] == "fail"


def test_charset_utf8_is_accepted(post_plan, plan):
    for content_type in ("application/json; charset=utf-8", "Application/JSON; charset=UTF-8"):
        assert post_plan(plan, content_type=content_type).status_code == 200


def test_profile_query_parameter_overrides_the_plan(post_plan, plan):
    plan["profile"] = "no-such-profile"
    response = post_plan(plan, query="?profile=default")
    assert response.status_code == 200, response.get_data(as_text=True)
    assert response.get_json()["provenance"]["profile"] == "default"


def test_unknown_profile_in_query_is_422(post_plan, plan):
    body = assert_problem(post_plan(plan, query="?profile=no-such-profile"), 422)
    assert "profile" in body["errors"]


def test_empty_or_repeated_profile_query_is_422(post_plan, plan):
    for query in ("?profile=", "?profile=default&profile=default"):
        body = assert_problem(post_plan(plan, query=query), 422)
        assert list(body["errors"]) == ["profile"]


def test_checks_catalogue(client, engine):
    response = client.get("/v1/checks")
    assert response.status_code == 200
    assert response.mimetype == "application/json"
    checks = response.get_json()["checks"]
    assert checks == json.loads(json.dumps(engine.checks_catalogue()))
    assert checks, "the built-in checks are registered"
    for check in checks:
        assert {"id", "version", "source", "summary", "parameters"} <= set(check)


def test_profiles(client):
    response = client.get("/v1/profiles")
    assert response.status_code == 200
    profiles = response.get_json()["profiles"]
    assert "default" in [p["name"] for p in profiles]


def test_one_profile(client):
    response = client.get("/v1/profiles/default")
    assert response.status_code == 200
    assert response.mimetype == "application/json"
    assert response.get_json()["name"] == "default"


def test_unknown_profile_is_404(client):
    body = assert_problem(client.get("/v1/profiles/no-such-profile"), 404)
    assert "no-such-profile" in body["detail"]


def test_openapi_document(client):
    response = client.get("/openapi.json")
    assert response.status_code == 200
    assert response.mimetype == "application/json"
    document = response.get_json()
    assert document["openapi"].startswith("3.")
    assert "/v1/validations" in document["paths"]


def test_healthz(client):
    response = client.get("/healthz")
    assert response.status_code == 200
    assert response.get_json() == {"status": "ok"}


def test_healthz_even_when_not_ready():
    client = create_app(engine=StubEngine(ready=False, problems=["x"])).test_client()
    assert client.get("/healthz").status_code == 200


def test_readyz_ready(client):
    response = client.get("/readyz")
    assert response.status_code == 200
    assert response.get_json() == {"ready": True}


def test_readyz_not_ready_names_the_problems():
    problems = ["plugin 'broken-plugin' failed to import: ModuleNotFoundError"]
    client = create_app(engine=StubEngine(ready=False, problems=problems)).test_client()
    body = assert_problem(client.get("/readyz"), 503)
    assert body["ready"] is False
    assert body["problems"] == problems


def test_default_app_builds_its_own_engine():
    app = create_app({"TESTING": True})
    assert app.extensions["burnproof"].ready
    assert app.config["MAX_CONTENT_LENGTH"] == MAX_BODY_BYTES == 1024 * 1024
    assert app.test_client().get("/readyz").status_code == 200


def test_every_route_is_in_the_openapi_document(app, client):
    documented = set(client.get("/openapi.json").get_json()["paths"])
    for rule in app.url_map.iter_rules():
        if rule.endpoint == "static":
            continue
        path = rule.rule.replace("<name>", "{name}")
        assert path in documented, path


def test_wsgi_module_exposes_the_app():
    import importlib

    module = importlib.import_module("service.wsgi")
    assert module.app.extensions["burnproof"].ready
    assert module.app.test_client().get("/healthz").status_code == 200
