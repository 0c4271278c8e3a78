"""Strict JSON body parsing: one unambiguous reading of the bytes, or ``MalformedJson``.

Python's ``json`` module is lenient where a flight plan must not be. Here:

* the body is UTF-8 (RFC 8259 section 8.1). A byte order mark is REFUSED, not
  stripped: RFC 8259 forbids senders to add one, and refusing keeps one byte
  form per document;
* ``NaN``, ``Infinity``, ``-Infinity`` and numbers that overflow a double
  (``1e400``) are NOT refused here by default: CONTRACT.md section 1 makes them
  a 422 naming the field, so they are read as the float NaN or +-infinity and
  the plan schema refuses them where they stand (every field of the plan
  refuses a non-finite number, and ``load_plan`` never digests one).
  ``reject_non_finite=True`` refuses them here instead, as ``MalformedJson``;
* an integer of more than ``MAX_INTEGER_DIGITS`` digits is refused (a reading
  limit, below Python's own);
* a key repeated inside one object is refused: which value would count is
  ambiguous, so the plan is not read at all;
* nesting deeper than ``MAX_DEPTH`` arrays/objects is refused;
* a string holding an unpaired surrogate escape (``"\\ud800"``) is refused,
  since it has no UTF-8 form (and so no digest);
* an empty body, or one of only white space, is refused.

Messages give the line and column when the JSON decoder knows them.
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping

MAX_DEPTH = 32
MAX_INTEGER_DIGITS = 1000


class MalformedJson(ValueError):
    """The body is not one strict JSON document; ``str(error)`` says why, for a person."""

    def __init__(self, message: str, *, line: int | None = None, column: int | None = None):
        super().__init__(message)
        self.message = message
        self.line = line
        self.column = column


def _refuse_constant(name: str) -> object:
    raise MalformedJson(f"{name} is not allowed: JSON numbers must be finite")


def _refuse_overflow(text: str) -> float:
    value = float(text)
    if not math.isfinite(value):
        raise MalformedJson(f"the number {text[:40]} is too large: it overflows a double")
    return value


def _int(text: str) -> int:
    if len(text.lstrip("-")) > MAX_INTEGER_DIGITS:
        raise MalformedJson(
            f"an integer of {len(text.lstrip('-'))} digits is too large (at most "
            f"{MAX_INTEGER_DIGITS})"
        )
    return int(text)


def _object(pairs: list[tuple[str, object]]) -> dict[str, object]:
    result: dict[str, object] = {}
    for key, value in pairs:
        if key in result:
            raise MalformedJson(
                f"the key {key[:40]!r} appears more than once in one object; a document with "
                "repeated keys is ambiguous and is not read"
            )
        result[key] = value
    return result


def _check_strings_and_depth(document: object) -> None:
    """Refuse nesting deeper than MAX_DEPTH and strings without a UTF-8 form (iteratively)."""
    stack: list[tuple[object, int]] = [(document, 0)]
    while stack:
        node, depth = stack.pop()
        if isinstance(node, str):
            _utf8(node)
        elif isinstance(node, Mapping | list):
            depth += 1
            if depth > MAX_DEPTH:
                raise _too_deep()
            if isinstance(node, Mapping):
                for key, value in node.items():
                    _utf8(key)
                    stack.append((value, depth))
            else:
                stack.extend((item, depth) for item in node)


def _utf8(text: str) -> None:
    try:
        text.encode("utf-8")
    except UnicodeEncodeError as error:
        code = f"U+{ord(text[error.start]):04X}"
        raise MalformedJson(
            f"a string holds the unpaired surrogate escape {code}, which is not a character; "
            "send valid Unicode"
        ) from None


def _too_deep() -> MalformedJson:
    return MalformedJson(f"the JSON nests arrays and objects more than {MAX_DEPTH} deep")


def parse_json_bytes(raw: bytes, *, reject_non_finite: bool = False) -> object:
    """The JSON value in ``raw`` (UTF-8), read strictly (module docstring); raises MalformedJson.

    ``reject_non_finite``: refuse NaN, +-Infinity and overflowing numbers here instead of
    passing them on as non-finite floats for the plan schema to refuse by field.

    >>> parse_json_bytes(b'{"plan_id": "kestrel-2"}')
    {'plan_id': 'kestrel-2'}
    """
    data = bytes(raw)
    if data.startswith(b"\xef\xbb\xbf"):
        raise MalformedJson(
            "the body starts with a byte order mark; send UTF-8 JSON without one "
            "(RFC 8259 section 8.1)"
        )
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as error:
        raise MalformedJson(
            f"the body is not valid UTF-8: {error.reason} at byte {error.start}"
        ) from None
    if not text.strip(" \t\r\n"):
        raise MalformedJson("the body is empty; send a JSON object")
    try:
        document = json.loads(
            text,
            parse_constant=_refuse_constant if reject_non_finite else float,
            parse_float=_refuse_overflow if reject_non_finite else float,
            parse_int=_int,
            object_pairs_hook=_object,
        )
    except json.JSONDecodeError as error:
        raise MalformedJson(
            f"the body is not valid JSON: {error.msg} at line {error.lineno}, column {error.colno}",
            line=error.lineno,
            column=error.colno,
        ) from None
    except RecursionError:
        raise _too_deep() from None
    except MalformedJson:
        raise
    except ValueError as error:  # e.g. a limit of the int parser
        raise MalformedJson(f"the body is not valid JSON: {error}") from None
    _check_strings_and_depth(document)
    return document
