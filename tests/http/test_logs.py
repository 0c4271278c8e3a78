"""Structured logs: one JSON line per request on stderr, request ids, no plan bodies, and the
tracebacks of broken checks with their check id."""

from __future__ import annotations

import json
import logging
import re

import pytest

from service.app import create_app
from service.http.logs import (
    LOGGER_NAMES,
    JsonFormatter,
    StderrHandler,
    configure_logging,
    request_id_from,
)
from tests.cli.helpers import gate_engine, plan_with
from tests.engine.test_engine import _engine, _Fixed, _ok, _raises
from tests.http.conftest import StubEngine

UTC_MS = re.compile(r"^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$")
HEX_32 = re.compile(r"^[0-9a-f]{32}$")
SECRET = "zz-plan-body-marker-7731"  # appears only in the plan body


@pytest.fixture(autouse=True)
def _default_logging():
    yield
    configure_logging({})  # logging is process-wide: leave it as every other test expects


def _lines(capsys) -> list[dict]:
    """The JSON lines written to stderr since the last read."""
    return [json.loads(line) for line in capsys.readouterr().err.splitlines() if line.strip()]


def _request_lines(capsys) -> list[dict]:
    return [line for line in _lines(capsys) if line.get("event") == "request"]


def _post(client, plan: dict, **headers):
    return client.post(
        "/v1/validations",
        data=json.dumps(plan),
        headers={"Content-Type": "application/json", **headers},
    )


def _client(engine=None, **config):
    return create_app({"TESTING": True, **config}, engine=engine or gate_engine()).test_client()


def test_a_validation_logs_one_json_line_with_every_field(capsys):
    client = _client()
    capsys.readouterr()
    response = _post(client, plan_with(12.5), **{"X-Request-ID": "ground-7f3a"})
    report = response.get_json()
    [line] = _request_lines(capsys)
    assert response.headers["X-Request-ID"] == "ground-7f3a"
    assert UTC_MS.match(line["time"]), line["time"]
    assert line["level"] == "INFO"
    assert line["logger"] == "burnproof.http"
    assert line["request_id"] == "ground-7f3a"
    assert line["method"] == "POST"
    assert line["route"] == "/v1/validations"
    assert line["path"] == "/v1/validations"
    assert line["status"] == 200
    assert isinstance(line["duration_ms"], float) and line["duration_ms"] >= 0.0
    assert line["verdict"] == report["verdict"] == "pass"
    assert line["plan_digest"] == report["provenance"]["plan_digest"]
    assert line["remote_addr"] == "127.0.0.1"
    assert "check_errors" not in line


def test_other_requests_log_their_route_template_and_no_verdict(capsys):
    client = _client()
    capsys.readouterr()
    client.get("/v1/profiles/default")
    client.get("/no/such/path")
    first, second = _request_lines(capsys)
    assert (first["route"], first["path"], first["status"]) == (
        "/v1/profiles/<name>",
        "/v1/profiles/default",
        200,
    )
    assert (second["route"], second["status"]) == ("(unmatched)", 404)
    assert "verdict" not in first and "plan_digest" not in first


def test_a_request_id_is_made_when_none_is_given(capsys):
    client = _client()
    capsys.readouterr()
    response = client.get("/healthz")
    [line] = _request_lines(capsys)
    assert HEX_32.match(response.headers["X-Request-ID"])
    assert line["request_id"] == response.headers["X-Request-ID"]
    assert "request_id_refused" not in line


@pytest.mark.parametrize(
    "given",
    ["", "has space", "x" * 129, "tab\there", "caf\u00e9", "quote\"ok'but\x7f"],
)
def test_a_bad_request_id_is_replaced_and_never_echoed(capsys, given):
    client = _client()
    capsys.readouterr()
    response = client.get("/healthz", headers={"X-Request-ID": given})
    [line] = _request_lines(capsys)
    assert HEX_32.match(response.headers["X-Request-ID"])
    assert response.headers["X-Request-ID"] != given
    assert line["request_id"] == response.headers["X-Request-ID"]
    assert line["request_id_refused"] is True


def test_the_longest_allowed_request_id_is_kept():
    given = "!" + "a" * 126 + "~"
    assert request_id_from(given) == (given, False)
    assert request_id_from(given + "b")[1] is True


@pytest.mark.parametrize(
    ("engine", "request_", "status"),
    [
        (None, ("get", "/no/such/path", {}), 404),
        (None, ("post", "/v1/validations", {"data": b"{}", "content_type": "text/csv"}), 415),
        (None, ("post", "/v1/validations", {"json": {"plan_id": "x"}}), 422),
        (
            None,
            ("post", "/v1/validations", {"data": b"{", "content_type": "application/json"}),
            400,
        ),
        (StubEngine(ready=False, problems=["plugin x failed"]), ("get", "/readyz", {}), 503),
    ],
)
def test_problem_documents_carry_the_request_id_too(capsys, engine, request_, status):
    client = _client(engine)
    method, path, options = request_
    response = getattr(client, method)(path, headers={"X-Request-ID": "abc.123"}, **options)
    assert response.status_code == status
    assert response.mimetype == "application/problem+json"
    assert response.headers["X-Request-ID"] == "abc.123"
    assert [line["status"] for line in _request_lines(capsys)] == [status]


def test_the_plan_body_never_reaches_the_log_even_at_debug(capsys):
    client = _client(BURNPROOF_LOG_LEVEL="DEBUG")
    plan = plan_with(12.5, plan_id=SECRET)
    plan["maneuvers"][0]["id"] = SECRET + "-burn"
    body = json.dumps(plan).encode()
    capsys.readouterr()
    response = client.post(
        "/v1/validations", data=body, headers={"Content-Type": "application/json"}
    )
    assert response.status_code == 200 and SECRET in response.get_data(as_text=True)
    err = capsys.readouterr().err
    assert SECRET not in err
    lines = [json.loads(line) for line in err.splitlines()]
    [size] = [line for line in lines if line["event"] == "request_body"]
    assert size["level"] == "DEBUG"
    assert size["body_bytes"] == len(body)
    assert size["request_id"] == response.headers["X-Request-ID"]


def test_at_info_there_is_no_body_line_and_at_warning_no_request_line(capsys):
    client = _client()
    capsys.readouterr()
    _post(client, plan_with(12.5))
    assert [line["event"] for line in _lines(capsys)] == ["request"]
    quiet = _client(BURNPROOF_LOG_LEVEL="warning")
    capsys.readouterr()
    _post(quiet, plan_with(12.5))
    assert _lines(capsys) == []


def test_a_broken_check_is_logged_with_its_id_and_traceback(capsys):
    client = _client(_engine(_Fixed("good-one", _ok), _Fixed("broken-one", _raises)))
    capsys.readouterr()
    response = _post(client, plan_with(12.5), **{"X-Request-ID": "ops-991"})
    assert response.status_code == 200
    assert "Traceback" not in response.get_data(as_text=True)  # the client sees a finding only
    lines = _lines(capsys)
    [broken] = [line for line in lines if line["logger"] == "burnproof.checks"]
    assert broken["level"] == "ERROR"
    assert broken["event"] == "check_error"
    assert broken["check_id"] == "broken-one"
    assert broken["request_id"] == "ops-991"
    assert broken["traceback"].startswith("Traceback (most recent call last):")
    assert broken["traceback"].rstrip().endswith("ZeroDivisionError: boom")
    assert "_raises" in broken["traceback"]  # the check's own frame is in it
    [request_line] = [line for line in lines if line.get("event") == "request"]
    assert request_line["check_errors"] == {"broken-one": "error"}
    assert request_line["verdict"] == "fail"


def test_the_text_format_is_one_readable_line(capsys):
    client = _client(BURNPROOF_LOG_FORMAT="text")
    capsys.readouterr()
    client.get("/healthz", headers={"X-Request-ID": "txt-1"})
    [line] = capsys.readouterr().err.splitlines()
    assert " INFO burnproof.http GET /healthz 200 " in line
    assert 'request_id="txt-1"' in line and "status=200" in line


def test_configuring_again_keeps_one_handler_per_logger():
    for _ in range(5):
        create_app({"TESTING": True}, engine=gate_engine())
    for name in LOGGER_NAMES:
        handlers = [h for h in logging.getLogger(name).handlers if isinstance(h, StderrHandler)]
        assert len(handlers) == 1
        assert isinstance(handlers[0].formatter, JsonFormatter)


@pytest.mark.parametrize(
    ("setting", "value"),
    [("BURNPROOF_LOG_LEVEL", "LOUD"), ("BURNPROOF_LOG_FORMAT", "xml")],
)
def test_a_bad_log_setting_stops_the_app_naming_it(setting, value):
    with pytest.raises(ValueError, match=setting):
        create_app({"TESTING": True, setting: value}, engine=gate_engine())


def test_the_environment_sets_the_format(capsys, monkeypatch):
    monkeypatch.setenv("BURNPROOF_LOG_FORMAT", "text")
    client = create_app({"TESTING": True}, engine=gate_engine()).test_client()
    capsys.readouterr()
    client.get("/healthz")
    assert capsys.readouterr().err.split(" ", 1)[1].startswith("INFO burnproof.http GET /healthz")
