"""Hostile input beyond test_bad_input.py and test_errors.py: what each gets, never a 500.

- non-finite numbers (NaN, +-Infinity, 1e400): 422 naming the field (CONTRACT.md section 1),
  never parsed into a plan; the app's Flask JSON provider refuses them outright;
- nesting 100,000 deep (arrays and objects): 400, never a RecursionError;
- bodies that are not UTF-8: 400 (415 when a charset other than utf-8 is declared);
- every route answers a method it does not serve with 405 and an ``Allow`` header that
  lists exactly its methods; OPTIONS and HEAD behave as HTTP says (RFC 9110 section 9.3).
"""

from __future__ import annotations

import json
import math

import pytest

from service.schemas import MalformedJson, parse_json_bytes
from tests.http.conftest import assert_problem

DEPTH = 100_000
_METHODS = ("GET", "POST", "PUT", "PATCH", "DELETE")


@pytest.mark.parametrize(
    "raw",
    [
        b"[" * DEPTH + b"]" * DEPTH,
        b'{"a":' * DEPTH + b"1" + b"}" * DEPTH,
        b'{"plan_id": "x", "rules": ' + b'{"a":' * DEPTH + b"{}" + b"}" * DEPTH + b"}",
        b'[{"a": [' * (DEPTH // 2) + b"]}]" * (DEPTH // 2),
    ],
    ids=["arrays", "objects", "inside-a-plan", "alternating"],
)
def test_deep_nesting_is_400_never_a_recursion_crash(post_plan, raw):
    body = assert_problem(post_plan(raw), 400)
    assert body["type"] == "urn:burnproof:problem:malformed-json"
    assert "more than 32 deep" in body["detail"]


@pytest.mark.parametrize(
    ("field", "text"),
    [
        ("spacecraft.dry_mass_kg", "1e400"),
        ("spacecraft.propellant_kg", "-1e400"),
        ("spacecraft.engines.0.isp_s", "NaN"),
        ("maneuvers.1.delta_v_m_s", "Infinity"),
        ("initial_state.position_km", "-Infinity"),
    ],
)
def test_non_finite_numbers_are_422_naming_the_field(post_plan, plan, field, text):
    node = plan
    *parents, last = field.split(".")
    for key in parents:
        node = node[int(key)] if isinstance(node, list) else node[key]
    if isinstance(node[last], list):
        node[last][0] = 12345.678
    else:
        node[last] = 12345.678
    raw = json.dumps(plan).replace("12345.678", text).encode()
    body = assert_problem(post_plan(raw), 422)
    assert any(path == field or path.startswith(field + ".") for path in body["errors"])


def test_a_non_finite_number_never_reaches_a_report(post_plan, plan):
    plan["spacecraft"]["dry_mass_kg"] = 12345.678
    raw = json.dumps(plan).replace("12345.678", "1e400").encode()
    response = post_plan(raw)
    body = assert_problem(response, 422)
    assert "verdict" not in body
    # the problem itself is strict JSON: no bare NaN or Infinity anywhere in it
    assert parse_json_bytes(response.get_data(), reject_non_finite=True) == body


@pytest.mark.parametrize(
    "raw",
    [b"[NaN]", b'{"a": Infinity}', b"[-Infinity]", b"[1e400]", b"[-1e400]", b'{"a": 1, "a": 2}'],
)
def test_the_flask_json_provider_refuses_what_the_plan_reader_refuses(app, raw):
    with pytest.raises(MalformedJson):
        app.json.loads(raw)
    with pytest.raises(MalformedJson):
        app.json.loads(raw.decode())


def test_the_flask_json_provider_refuses_deep_nesting_and_surrogates(app):
    with pytest.raises(MalformedJson, match="deep"):
        app.json.loads(b"[" * DEPTH + b"]" * DEPTH)
    with pytest.raises(MalformedJson, match="surrogate"):
        app.json.loads('["\ud800"]')


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf])
def test_the_flask_json_provider_never_writes_non_finite_numbers(app, value):
    with pytest.raises(ValueError):
        app.json.dumps({"value": value})
    assert app.json.loads(app.json.dumps({"value": 1.5})) == {"value": 1.5}


def test_get_json_through_the_provider_is_a_400_problem(app):
    @app.post("/test-only/echo")
    def echo():
        from flask import request

        return {"got": request.get_json()}

    client = app.test_client()
    ok = client.post("/test-only/echo", data=b'{"a": 1}', content_type="application/json")
    assert ok.get_json() == {"got": {"a": 1}}
    bad = client.post("/test-only/echo", data=b"[NaN]", content_type="application/json")
    assert_problem(bad, 400)


@pytest.mark.parametrize(
    ("raw", "content_type", "status"),
    [
        ('{"plan_id": "pétrel"}'.encode("latin-1"), "application/json", 400),
        ('{"plan_id": "pétrel"}'.encode("utf-16-le"), "application/json", 400),
        ('{"plan_id": "pétrel"}'.encode("utf-16"), "application/json; charset=utf-16", 415),
        (b"\xef\xbb\xbf{}", "application/json", 400),
        (b'{"plan_id": "\xed\xa0\x80"}', "application/json", 400),  # an encoded surrogate
        (b"\x00\x00\x00{", "application/json", 400),
    ],
    ids=["latin-1", "utf-16-undeclared", "utf-16-declared", "bom", "cesu-surrogate", "nul"],
)
def test_bodies_that_are_not_utf8(post_plan, raw, content_type, status):
    assert_problem(post_plan(raw, content_type=content_type), status)


def _routes(app) -> list[tuple[str, set[str]]]:
    rules = [rule for rule in app.url_map.iter_rules() if rule.endpoint != "static"]
    return [(rule.rule.replace("<name>", "default"), set(rule.methods)) for rule in rules]


def test_every_route_is_covered(app):
    paths = {path for path, _ in _routes(app)}
    assert {"/v1/validations", "/v1/checks", "/v1/profiles", "/healthz", "/metrics"} <= paths


def test_every_route_answers_other_methods_with_405_and_its_allow_header(app):
    client = app.test_client()
    for path, methods in _routes(app):
        for method in sorted(set(_METHODS) - methods):
            response = client.open(path, method=method)
            body = assert_problem(response, 405)
            allowed = {m.strip() for m in response.headers["Allow"].split(",")}
            assert allowed == methods, (method, path)
            assert method in body["detail"] and path in body["detail"]


def test_options_lists_the_methods_and_runs_no_view(app):
    client = app.test_client()
    for path, methods in _routes(app):
        response = client.open(path, method="OPTIONS")
        assert response.status_code == 200, path
        assert {m.strip() for m in response.headers["Allow"].split(",")} == methods
        assert response.get_data() == b""


def test_head_mirrors_get_without_a_body(app):
    client = app.test_client()
    for path, methods in _routes(app):
        if "GET" not in methods:
            continue
        head, get = client.head(path), client.get(path)
        assert head.status_code == get.status_code, path
        assert head.get_data() == b""
        assert head.headers["Content-Type"] == get.headers["Content-Type"]
    head = client.head("/v1/validations")
    assert head.status_code == 405 and head.get_data() == b""
    assert "POST" in head.headers["Allow"]


def test_an_unknown_method_is_a_405_problem(client):
    response = client.open("/v1/checks", method="BREW")
    assert_problem(response, 405)
    assert "GET" in response.headers["Allow"]
