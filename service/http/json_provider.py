"""A Flask JSON provider as strict as the plan reader, so no other path through Flask is lenient.

The routes read plans with ``service.schemas.parse_json_bytes`` and write with
``service.http.problems.encode_json``; this provider covers whatever else may use
``app.json`` (``request.get_json``, ``jsonify``, the test client's ``json=``):

- ``loads`` is ``parse_json_bytes(..., reject_non_finite=True)``: NaN, +-Infinity and
  numbers overflowing a double (``1e400``), repeated keys, nesting deeper than
  ``MAX_DEPTH``, unpaired surrogates and non-UTF-8 bytes are refused with ``MalformedJson``
  (a ``ValueError``, which Flask's ``get_json`` turns into a 400);
- ``dumps`` never writes NaN or Infinity (``allow_nan=False`` raises ``ValueError``):
  those are not JSON (RFC 8259 section 6).
"""

from __future__ import annotations

from typing import Any

from flask.json.provider import DefaultJSONProvider

from service.schemas import MalformedJson, parse_json_bytes


class StrictJSONProvider(DefaultJSONProvider):
    """Flask's default provider with strict reading and NaN-free writing."""

    def dumps(self, obj: Any, **kwargs: Any) -> str:
        kwargs["allow_nan"] = False
        return super().dumps(obj, **kwargs)

    def loads(self, s: str | bytes, **kwargs: Any) -> Any:
        if isinstance(s, str):
            try:
                s = s.encode("utf-8")
            except UnicodeEncodeError:
                raise MalformedJson("the text holds an unpaired surrogate") from None
        return parse_json_bytes(s, reject_non_finite=True)
