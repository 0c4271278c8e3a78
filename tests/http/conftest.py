"""Fixtures for the HTTP tests: the invented spacecraft plover-1, an app, a client, test engines.

plover-1 is a made-up 204 kg smallsat in a 500 km circular equatorial orbit
(a = 6378.137 + 500 = 6878.137 km; v = sqrt(398600.4418 / a) = 7.61268 km/s, WGS-84
radius and EGM96 mu) with two small along-track (TNW) burns half an orbit apart.
"""

from __future__ import annotations

import copy
import json
from collections.abc import Callable

import pytest
from flask import Flask
from flask.testing import FlaskClient

from service.app import create_app
from service.engine import build_engine

PLOVER_1: dict = {
    "plan_id": "plover-1-raise-01",
    "central_body": "earth",
    "epoch": "2032-03-14T06:00:00Z",
    "initial_state": {
        "frame": "GCRF",
        "position_km": [6878.137, 0.0, 0.0],
        "velocity_km_s": [0.0, 7.61268, 0.0],
    },
    "spacecraft": {
        "dry_mass_kg": 180.0,
        "propellant_kg": 24.0,
        "engines": [{"id": "thruster-a", "thrust_n": 22.0, "isp_s": 220.0, "max_burn_s": 600.0}],
    },
    "maneuvers": [
        {
            "id": "raise-1",
            "ignition": "2032-03-14T06:30:00Z",
            "engine": "thruster-a",
            "frame": "TNW",
            "delta_v_m_s": [2.5, 0.0, 0.0],
        },
        {
            "id": "circularise-1",
            "ignition": "2032-03-14T07:17:00Z",
            "engine": "thruster-a",
            "frame": "TNW",
            "delta_v_m_s": [2.4, 0.0, 0.0],
        },
    ],
    "profile": "default",
}

PROBLEM_MEDIA_TYPE = "application/problem+json"


@pytest.fixture
def plan() -> dict:
    """A fresh copy of the plover-1 plan, free to mutate."""
    return copy.deepcopy(PLOVER_1)


@pytest.fixture(scope="session")
def engine():
    """One real engine for the session: built-in checks from the entry points."""
    return build_engine()


@pytest.fixture
def app(engine) -> Flask:
    return create_app({"TESTING": True}, engine=engine)


@pytest.fixture
def client(app: Flask) -> FlaskClient:
    return app.test_client()


@pytest.fixture
def post_plan(client: FlaskClient) -> Callable:
    """POST a plan (dict, or raw bytes) to /v1/validations as application/json."""

    def post(body, *, content_type: str | None = "application/json", query: str = ""):
        data = body if isinstance(body, bytes) else json.dumps(body).encode()
        headers = {} if content_type is None else {"Content-Type": content_type}
        return client.post("/v1/validations" + query, data=data, headers=headers)

    return post


def assert_problem(response, status: int) -> dict:
    """The response is an RFC 9457 problem with ``status``; returns its body."""
    assert response.status_code == status, response.get_data(as_text=True)[:500]
    assert response.mimetype == PROBLEM_MEDIA_TYPE
    body = json.loads(response.get_data())
    assert body["status"] == status
    assert body["type"].startswith("urn:burnproof:problem:")
    assert isinstance(body["title"], str) and body["title"]
    assert isinstance(body["detail"], str) and body["detail"]
    assert "Traceback" not in response.get_data(as_text=True)
    return body


class StubEngine:
    """A stand-in with the Engine face, for outcomes the real engine should never produce."""

    def __init__(self, *, ready: bool = True, problems=(), fail_with: Exception | None = None):
        self.ready = ready
        self.problems = list(problems)
        self.fail_with = fail_with

    def validate(self, plan, *, profile=None, **options) -> dict:  # budget, observer: unused
        if self.fail_with is not None:
            raise self.fail_with
        return {"plan_id": plan.plan_id}

    def checks_catalogue(self) -> list[dict]:
        if self.fail_with is not None:
            raise self.fail_with
        return []

    def profiles_catalogue(self) -> list[dict]:
        return []

    def profile_document(self, name: str) -> dict | None:
        return None
