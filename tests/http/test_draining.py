"""/readyz while draining: the drain file (BURNPROOF_DRAIN_FILE) or a worker's SIGTERM flag."""

from __future__ import annotations

import pytest

from service.app import create_app
from service.http import draining
from tests.http.conftest import StubEngine, assert_problem


@pytest.fixture(autouse=True)
def no_flag_and_no_drain_file(monkeypatch):
    monkeypatch.delenv("BURNPROOF_DRAIN_FILE", raising=False)
    draining.clear_draining()
    yield
    draining.clear_draining()


def test_ready_when_the_drain_file_is_named_but_absent(client, monkeypatch, tmp_path):
    monkeypatch.setenv("BURNPROOF_DRAIN_FILE", str(tmp_path / "draining"))
    response = client.get("/readyz")
    assert response.status_code == 200
    assert response.get_json() == {"ready": True}


def test_the_drain_file_makes_readyz_503_until_it_is_removed(client, monkeypatch, tmp_path):
    drain_file = tmp_path / "draining"
    monkeypatch.setenv("BURNPROOF_DRAIN_FILE", str(drain_file))
    drain_file.touch()  # what the preStop hook does
    body = assert_problem(client.get("/readyz"), 503)
    assert (body["ready"], body["draining"]) == (False, True)
    assert body["problems"] == ["draining: the drain file named by BURNPROOF_DRAIN_FILE exists"]
    assert body["type"] == "urn:burnproof:problem:not-ready"
    assert str(tmp_path) not in body["detail"]  # no file paths to clients

    drain_file.unlink()  # read on every request: taking it away puts the pod back
    assert client.get("/readyz").get_json() == {"ready": True}


def test_the_sigterm_flag_makes_readyz_503(client):
    draining.mark_draining()
    body = assert_problem(client.get("/readyz"), 503)
    assert (body["ready"], body["draining"]) == (False, True)
    assert body["problems"] == [
        "draining: this worker received SIGTERM and is finishing its last requests"
    ]


def test_healthz_stays_200_while_draining(client, monkeypatch, tmp_path):
    drain_file = tmp_path / "draining"
    drain_file.touch()
    monkeypatch.setenv("BURNPROOF_DRAIN_FILE", str(drain_file))
    draining.mark_draining()
    response = client.get("/healthz")
    assert response.status_code == 200
    assert response.get_json() == {"status": "ok"}


def test_draining_does_not_stop_validations_in_flight(client, plan, monkeypatch, tmp_path):
    # draining takes the pod out of the Service; a request that still arrives is answered
    drain_file = tmp_path / "draining"
    drain_file.touch()
    monkeypatch.setenv("BURNPROOF_DRAIN_FILE", str(drain_file))
    response = client.post("/v1/validations", json=plan)
    assert response.status_code == 200
    assert response.get_json()["plan_id"] == plan["plan_id"]


def test_not_ready_and_draining_names_both(monkeypatch, tmp_path):
    drain_file = tmp_path / "draining"
    drain_file.touch()
    monkeypatch.setenv("BURNPROOF_DRAIN_FILE", str(drain_file))
    problems = ["profile /etc/burnproof/x.toml: not valid TOML"]
    client = create_app(engine=StubEngine(ready=False, problems=problems)).test_client()
    body = assert_problem(client.get("/readyz"), 503)
    assert body["draining"] is True
    assert body["problems"] == [
        *problems,
        "draining: the drain file named by BURNPROOF_DRAIN_FILE exists",
    ]


def test_not_ready_without_draining_says_draining_false(monkeypatch):
    client = create_app(engine=StubEngine(ready=False, problems=["x"])).test_client()
    body = assert_problem(client.get("/readyz"), 503)
    assert (body["ready"], body["draining"], body["problems"]) == (False, False, ["x"])


def test_an_empty_drain_file_setting_means_no_drain_file(client, monkeypatch):
    monkeypatch.setenv("BURNPROOF_DRAIN_FILE", "")
    assert client.get("/readyz").status_code == 200
