"""The per-request compute budget over HTTP: a 503 problem naming it, never a killed worker."""

from __future__ import annotations

import json

import pytest

from service.app import create_app
from service.engine.budget import DEFAULT_COMPUTE_BUDGET_S
from service.engine.render import to_json_bytes
from service.http.observe import BUDGET_EXTENSION
from service.schemas import load_plan
from tests.http.conftest import assert_problem


def _post(app, plan: dict):
    return app.test_client().post(
        "/v1/validations", data=json.dumps(plan), headers={"Content-Type": "application/json"}
    )


def test_a_tiny_budget_is_a_503_problem_naming_the_budget(engine, plan):
    app = create_app({"TESTING": True, "BURNPROOF_COMPUTE_BUDGET_S": 1e-6}, engine=engine)
    response = _post(app, plan)
    body = assert_problem(response, 503)
    assert body["type"] == "urn:burnproof:problem:compute-budget-exceeded"
    assert body["title"] == "Compute budget exceeded"
    assert body["compute_budget_s"] == 1e-6
    assert "1e-06 s compute budget" in body["detail"]
    assert response.headers["X-Request-ID"]
    # The worker lives on: the same app answers the next request.
    assert app.test_client().get("/healthz").status_code == 200


def test_the_503_is_counted_by_route_and_status(engine, plan):
    app = create_app({"TESTING": True, "BURNPROOF_COMPUTE_BUDGET_S": "1e-6"}, engine=engine)
    _post(app, plan)
    text = app.test_client().get("/metrics").get_data(as_text=True)
    assert (
        'burnproof_http_requests_total{method="POST",route="/v1/validations",status="503"} 1.0'
        in text
    )


def test_a_normal_budget_gives_the_same_report_as_before(engine, plan, post_plan):
    relaxed = create_app({"TESTING": True, "BURNPROOF_COMPUTE_BUDGET_S": 600}, engine=engine)
    default = post_plan(plan)  # the fixture app: the default 20 s budget
    assert default.status_code == 200
    assert _post(relaxed, plan).get_data() == default.get_data()
    # The engine called with no budget at all gives the same bytes as well.
    assert to_json_bytes(engine.validate(load_plan(plan))) == default.get_data()


def test_the_default_budget_is_20_s_and_the_environment_can_change_it(engine, monkeypatch):
    monkeypatch.delenv("BURNPROOF_COMPUTE_BUDGET_S", raising=False)
    assert create_app(engine=engine).extensions[BUDGET_EXTENSION] == DEFAULT_COMPUTE_BUDGET_S
    assert DEFAULT_COMPUTE_BUDGET_S == 20.0
    monkeypatch.setenv("BURNPROOF_COMPUTE_BUDGET_S", "12.5")
    assert create_app(engine=engine).extensions[BUDGET_EXTENSION] == 12.5


@pytest.mark.parametrize("value", ["0", "-3", "nan", "soon"])
def test_a_bad_budget_setting_stops_the_app_naming_it(engine, monkeypatch, value):
    monkeypatch.setenv("BURNPROOF_COMPUTE_BUDGET_S", value)
    with pytest.raises(ValueError, match="BURNPROOF_COMPUTE_BUDGET_S"):
        create_app(engine=engine)
