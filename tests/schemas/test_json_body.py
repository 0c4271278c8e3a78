"""Strict JSON body parsing: one unambiguous reading of the bytes, or MalformedJson saying why."""

from __future__ import annotations

import json
import math

import pytest

from service.engine.errors import PlanInvalid
from service.schemas import MalformedJson, load_plan, parse_json_bytes
from service.schemas.json_body import MAX_DEPTH
from tests.plans import valid_plan


def nested(depth: int) -> bytes:
    """``depth`` arrays inside one another, the innermost holding 1."""
    return b"[" * depth + b"1" + b"]" * depth


def test_a_plan_parses() -> None:
    data = valid_plan()
    assert parse_json_bytes(json.dumps(data).encode()) == data


def test_bytearray_and_memoryview_are_accepted() -> None:
    assert parse_json_bytes(bytearray(b'{"a": 1}')) == {"a": 1}
    assert parse_json_bytes(memoryview(b"[1.5]")) == [1.5]


def test_utf8_text_and_paired_surrogate_escapes_parse() -> None:
    assert parse_json_bytes('{"plan_id": "sélène-🚀"}'.encode()) == {"plan_id": "sélène-🚀"}
    assert parse_json_bytes(b'"\\ud83d\\ude80"') == "🚀"


@pytest.mark.parametrize(
    ("raw", "words"),
    [
        (b"", "empty"),
        (b" \r\n\t ", "empty"),
        (b"[" + b"9" * 1001 + b"]", "1001 digits is too large"),
        (b"[-" + b"9" * 1001 + b"]", "1001 digits is too large"),
        (b'{"a": 1, "a": 1}', "the key 'a' appears more than once"),
        (b'{"s": {"engines": [{"id": "x", "id": "y"}]}}', "'id' appears more than once"),
        (b"\xef\xbb\xbf{}", "byte order mark"),
        (b'{"plan_id": "\xff"}', "not valid UTF-8"),
        (b'{"plan_id": "\xc3"}', "not valid UTF-8"),
        ('{"a": 1}'.encode("utf-16"), "not valid UTF-8"),
        (b'{"plan_id": "\\ud800"}', "unpaired surrogate"),
        (b'{"\\udfff": 1}', "unpaired surrogate"),
        (b"{'a': 1}", "not valid JSON"),
        (b'{"a": 1,}', "not valid JSON"),
        (b'{"a": 1} {"b": 2}', "Extra data"),
        (b"[1, 2", "not valid JSON"),
        (nested(MAX_DEPTH + 1), f"more than {MAX_DEPTH} deep"),
        (b'{"a":' * 40 + b"1" + b"}" * 40, f"more than {MAX_DEPTH} deep"),
        (nested(200_000), f"more than {MAX_DEPTH} deep"),  # RecursionError inside json
    ],
    ids=lambda value: value if isinstance(value, str) else None,
)
def test_refused(raw: bytes, words: str) -> None:
    with pytest.raises(MalformedJson) as caught:
        parse_json_bytes(raw)
    assert words in str(caught.value)
    assert isinstance(caught.value, ValueError)


@pytest.mark.parametrize(
    ("raw", "words"),
    [
        (b'{"thrust_n": NaN}', "NaN is not allowed"),
        (b'{"thrust_n": Infinity}', "Infinity is not allowed"),
        (b'{"thrust_n": -Infinity}', "-Infinity is not allowed"),
        (b"[1e400]", "overflows a double"),
        (b"[-1e400]", "overflows a double"),
    ],
)
def test_non_finite_numbers_are_refused_on_request(raw: bytes, words: str) -> None:
    with pytest.raises(MalformedJson) as caught:
        parse_json_bytes(raw, reject_non_finite=True)
    assert words in str(caught.value)


def test_non_finite_numbers_are_kept_by_default_for_the_schema_to_name() -> None:
    """CONTRACT.md section 1: NaN and Infinity are a 422 naming the field, not a 400."""
    values = parse_json_bytes(b"[NaN, Infinity, -Infinity, 1e400, -1e400, 1.5]")
    assert math.isnan(values[0])
    assert values[1:5] == [math.inf, -math.inf, math.inf, -math.inf]
    assert values[5] == 1.5


def test_non_finite_numbers_become_field_errors_in_the_plan() -> None:
    text = json.dumps(valid_plan()).replace("7.6686", "NaN").replace("228.0", "1e999")
    with pytest.raises(PlanInvalid) as caught:
        load_plan(parse_json_bytes(text.encode()))
    assert caught.value.errors == {
        "initial_state.velocity_km_s.1": [
            "each component of velocity_km_s must be a finite number; got NaN"
        ],
        "spacecraft.engines.0.isp_s": [
            "isp_s must be a finite number greater than 0; got Infinity"
        ],
    }


def test_the_position_of_a_syntax_error_is_given() -> None:
    with pytest.raises(MalformedJson) as caught:
        parse_json_bytes(b'{\n  "plan_id": "x",\n  "epoch": ,\n}')
    error = caught.value
    assert (error.line, error.column) == (3, 12)
    assert "line 3, column 12" in str(error)


def test_nesting_up_to_the_limit_is_read() -> None:
    assert parse_json_bytes(nested(MAX_DEPTH)) is not None
    deep_object = b'{"a":' * MAX_DEPTH + b"1" + b"}" * MAX_DEPTH
    assert parse_json_bytes(deep_object) is not None


def test_scalars_parse_and_are_left_to_the_plan_schema() -> None:
    assert parse_json_bytes(b" 42 ") == 42
    assert parse_json_bytes(b"null") is None


def test_numbers_keep_their_json_type() -> None:
    assert parse_json_bytes(b"[22, 22.0, -0.0, 1e-3]") == [22, 22.0, -0.0, 0.001]
    assert [type(x) for x in parse_json_bytes(b"[22, 22.0]")] == [int, float]
