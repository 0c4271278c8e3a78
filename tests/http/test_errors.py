"""Error mapping: every failure is an RFC 9457 problem, never HTML, never a stack trace."""

from __future__ import annotations

import io
import json
import logging

import pytest
from werkzeug.test import EnvironBuilder, run_wsgi_app

from service.app import create_app
from service.engine.errors import EngineNotReady
from service.engine.render import to_json_bytes
from tests.http.conftest import StubEngine, assert_problem

LIMIT = 1024 * 1024


def test_unknown_route_is_404_problem(client):
    body = assert_problem(client.get("/v2/nothing-here"), 404)
    assert body["type"] == "urn:burnproof:problem:not-found"


@pytest.mark.parametrize(
    ("method", "path", "allowed"),
    [
        ("get", "/v1/validations", "POST"),
        ("put", "/v1/validations", "POST"),
        ("delete", "/v1/checks", "GET"),
        ("post", "/v1/profiles", "GET"),
        ("post", "/healthz", "GET"),
        ("patch", "/openapi.json", "GET"),
    ],
)
def test_wrong_method_is_405_with_allow(client, method, path, allowed):
    response = getattr(client, method)(path)
    body = assert_problem(response, 405)
    assert body["type"] == "urn:burnproof:problem:method-not-allowed"
    assert allowed in [m.strip() for m in response.headers["Allow"].split(",")]


def test_body_over_the_limit_with_content_length_is_413(post_plan):
    body = assert_problem(post_plan(b" " * (LIMIT + 1)), 413)
    assert body["type"] == "urn:burnproof:problem:body-too-large"


def test_body_at_the_limit_is_read(post_plan, plan):
    raw = json.dumps(plan).encode()
    padded = raw + b" " * (LIMIT - len(raw))
    assert len(padded) == LIMIT
    assert post_plan(padded).status_code == 200


class _CountingStream(io.RawIOBase):
    """A body of ``size`` bytes (endless if None) that counts what the app reads from it."""

    def __init__(self, data: bytes = b"", size: int | None = None) -> None:
        self.data = data
        self.size = size
        self.read_bytes = 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        count = len(buffer)
        if self.size is not None:
            count = min(count, self.size - self.read_bytes)
        chunk = self.data[self.read_bytes : self.read_bytes + count]
        chunk += b" " * (count - len(chunk))
        buffer[:count] = chunk
        self.read_bytes += count
        return count


def _post_chunked(app, stream: io.RawIOBase):
    """POST as a de-chunking server hands it over: no Content-Length, wsgi.input_terminated set."""
    environ = EnvironBuilder(
        path="/v1/validations", method="POST", headers={"Content-Type": "application/json"}
    ).get_environ()
    environ.pop("CONTENT_LENGTH", None)
    environ["HTTP_TRANSFER_ENCODING"] = "chunked"
    environ["wsgi.input"] = stream
    environ["wsgi.input_terminated"] = True
    body, status, headers = run_wsgi_app(app, environ, buffered=True)
    return app.response_class(b"".join(body), status=status, headers=headers)


def test_chunked_body_without_length_is_cut_off_at_the_limit(app):
    stream = _CountingStream()  # endless
    assert_problem(_post_chunked(app, stream), 413)
    assert stream.read_bytes <= LIMIT + 128 * 1024  # refused early, not read to the end


def test_chunked_body_under_the_limit_is_accepted(app, plan):
    raw = json.dumps(plan).encode()
    response = _post_chunked(app, _CountingStream(raw, size=len(raw)))
    assert response.status_code == 200, response.get_data(as_text=True)


@pytest.mark.parametrize(
    "content_type",
    [
        None,
        "",
        "text/plain",
        "text/json",
        "application/x-www-form-urlencoded",
        "multipart/form-data; boundary=x",
        "application/merge-patch+json",
        "application/problem+json",
        "application/json; charset=latin-1",
        "application/json; charset=utf-16",
        "application/jsonx",
    ],
)
def test_unsupported_media_type_is_415(post_plan, plan, content_type):
    body = assert_problem(post_plan(plan, content_type=content_type), 415)
    assert body["type"] == "urn:burnproof:problem:unsupported-media-type"


def test_compressed_body_is_415(client):
    response = client.post(
        "/v1/validations",
        data=b"\x1f\x8b\x08\x00",
        headers={"Content-Type": "application/json", "Content-Encoding": "gzip"},
    )
    assert_problem(response, 415)


def test_malformed_json_is_400(post_plan):
    body = assert_problem(post_plan(b'{"plan_id": '), 400)
    assert body["type"] == "urn:burnproof:problem:malformed-json"


def test_engine_not_ready_is_503(post_plan, plan):
    stub = StubEngine(ready=False, fail_with=EngineNotReady(["duplicate check id 'x'"]))
    client = create_app(engine=stub).test_client()
    response = client.post("/v1/validations", json=plan)
    body = assert_problem(response, 503)
    assert body["type"] == "urn:burnproof:problem:not-ready"
    assert body["problems"] == ["duplicate check id 'x'"]


@pytest.mark.parametrize("testing", [True, False])
def test_unexpected_exception_is_a_generic_500(plan, caplog, testing):
    secret = "/srv/internal/path.py line 42: KeyError('password')"
    client = create_app({"TESTING": testing}, engine=StubEngine(fail_with=KeyError(secret)))
    with caplog.at_level(logging.ERROR):
        response = client.test_client().post("/v1/validations", json=plan)
        also = client.test_client().get("/v1/checks")
    for answer in (response, also):
        body = assert_problem(answer, 500)
        assert body["type"] == "urn:burnproof:problem:internal-error"
        assert secret not in answer.get_data(as_text=True)
        assert "KeyError" not in answer.get_data(as_text=True)
    tracebacks = [r for r in caplog.records if r.exc_info and r.levelno == logging.ERROR]
    assert len(tracebacks) == 2
    assert isinstance(tracebacks[0].exc_info[1], KeyError)


def test_problems_have_a_deterministic_byte_form(client):
    first = client.get("/v2/nothing-here").get_data()
    assert first == client.get("/v2/nothing-here").get_data()
    assert first == to_json_bytes(json.loads(first))  # the one byte form of every body


def test_head_and_options_are_not_errors(client):
    assert client.head("/healthz").status_code == 200
    response = client.options("/v1/validations")
    assert response.status_code == 200
    assert "POST" in response.headers["Allow"]
