"""The API's routes: a thin face that reads a request, calls the engine once, and writes JSON.

Request body of ``POST /v1/validations``:

- media type ``application/json`` exactly (any letter case), optionally with
  ``charset=utf-8``; any other charset, any ``+json`` type (they name other
  document formats), a missing ``Content-Type`` and any ``Content-Encoding``
  but ``identity`` are a 415;
- at most ``MAX_CONTENT_LENGTH`` bytes (1 MiB): a declared ``Content-Length``
  over it is refused before a byte is read, and a body without one (chunked) is
  read in pieces and refused as soon as it passes the limit: 413;
- strict JSON (``service.schemas.parse_json_bytes``): 400 when malformed.

The query parameter ``?profile=NAME`` (an addition to the contract) overrides
the plan's own ``profile`` for this request.

``POST /v1/opm-validations`` takes the same kind of body, ``application/json``, holding a
CCSDS OPM in KVN and its spacecraft description: ``{"opm": "<KVN text>", "spacecraft":
<description>}`` (``service.ccsds``); it answers the same report.

Both validation endpoints negotiate the response (``Accept``, RFC 9110 section 12.5.1):
``application/json`` (also no ``Accept``, ``*/*``, ``application/*``) gives the report;
``text/x.ccsds-opm-kvn`` gives the validated plan as an OPM (``OPM_MEDIA_TYPE``), or a 409
problem when its verdict is ``fail``; an ``Accept`` that allows neither is a 406 problem
listing the two. Every answer of theirs carries ``Vary: Accept``.
"""

from __future__ import annotations

from functools import cache

from flask import Blueprint, Response, current_app, request
from werkzeug.exceptions import NotAcceptable, RequestEntityTooLarge, UnsupportedMediaType
from werkzeug.http import parse_options_header

from service.ccsds.convert import load_opm_plan, write_plan_opm
from service.engine.errors import PlanInvalid
from service.http.auth import auth_problems
from service.http.draining import draining_reason
from service.http.observe import note_validation, validation_options
from service.http.problems import encode_json, problem
from service.schemas import load_plan, parse_json_bytes

bp = Blueprint("api", __name__)

JSON_MEDIA_TYPE = "application/json"
OPM_MEDIA_TYPE = "text/x.ccsds-opm-kvn"  # sent with "; charset=us-ascii" (an OPM is ASCII)
RESPONSE_MEDIA_TYPES = (JSON_MEDIA_TYPE, OPM_MEDIA_TYPE)  # the first is the default
_NEGOTIATED = ("api.create_validation", "api.create_opm_validation")
_ENVELOPE_KEYS = ("opm", "spacecraft")
_READ_CHUNK_BYTES = 64 * 1024


def _engine():  # -> service.engine.Engine, typed loosely so a test double also fits
    return current_app.extensions["burnproof"]


def _json(data: object, status: int = 200) -> Response:
    return Response(encode_json(data), status=status, mimetype=JSON_MEDIA_TYPE)


def _require_json_body() -> None:
    """Refuse any body that is not plain, unencoded UTF-8 ``application/json`` with a 415."""
    header = request.headers.get("Content-Type")
    if not header:
        raise _unsupported("the request has no Content-Type; send application/json")
    mimetype, options = parse_options_header(header)
    if mimetype.lower() != JSON_MEDIA_TYPE:
        raise _unsupported(
            f"media type {mimetype or header!r} is not supported; send {JSON_MEDIA_TYPE}"
        )
    charset = options.get("charset")
    if charset is not None and charset.lower() != "utf-8":
        raise _unsupported(f"charset {charset!r} is not supported; JSON bodies are utf-8")
    encoding = request.headers.get("Content-Encoding", "identity").strip().lower()
    if encoding not in ("", "identity"):
        raise _unsupported(f"content encoding {encoding!r} is not supported; send it unencoded")


def _unsupported(detail: str) -> UnsupportedMediaType:
    return UnsupportedMediaType(description=detail)


def _read_body() -> bytes:
    """The whole body, or a 413 as soon as it passes ``MAX_CONTENT_LENGTH`` while being read."""
    limit = current_app.config["MAX_CONTENT_LENGTH"]
    if request.content_length is not None and request.content_length > limit:
        raise RequestEntityTooLarge()
    stream = request.stream  # werkzeug bounds it by Content-Length, or by the limit when chunked
    pieces: list[bytes] = []
    total = 0
    while True:
        piece = stream.read(_READ_CHUNK_BYTES)
        if not piece:
            return b"".join(pieces)
        total += len(piece)
        if total > limit:
            raise RequestEntityTooLarge()
        pieces.append(piece)


def _profile_override() -> str | None:
    values = request.args.getlist("profile")
    if not values:
        return None
    if len(values) > 1:
        raise PlanInvalid({"profile": ["give the profile query parameter at most once"]})
    if not values[0].strip():
        raise PlanInvalid({"profile": ["the profile query parameter must name a profile"]})
    return values[0]


def _response_type() -> str:
    """The negotiated response media type; a 406 when the client accepts neither."""
    if not request.headers.get("Accept", "").strip():
        return JSON_MEDIA_TYPE  # no preference stated: the report
    chosen = request.accept_mimetypes.best_match(RESPONSE_MEDIA_TYPES)
    if chosen is None:
        raise NotAcceptable(
            description=f"the Accept header allows neither response type of this endpoint: "
            f"{', '.join(RESPONSE_MEDIA_TYPES)}"
        )
    return chosen


@bp.after_request
def _vary_on_accept(response: Response) -> Response:
    if request.endpoint in _NEGOTIATED:
        response.vary.add("Accept")
    return response


def _answer(plan, media_type: str) -> Response:
    """Validate ``plan`` and answer in ``media_type``: the report, or the plan as an OPM."""
    report = _engine().validate(plan, profile=_profile_override(), **validation_options())
    note_validation(report)
    if media_type == OPM_MEDIA_TYPE:
        text = write_plan_opm(plan, report)  # PlanFailed -> 409 problem
        return Response(
            text.encode("ascii"),
            mimetype=OPM_MEDIA_TYPE,
            content_type=(f"{OPM_MEDIA_TYPE}; charset=us-ascii"),
        )
    return _json(report)


@bp.post("/v1/validations")
def create_validation() -> Response:
    """Validate one plan: 200 with the report whatever its verdict; a problem otherwise."""
    media_type = _response_type()
    _require_json_body()
    data = parse_json_bytes(_read_body())
    plan = load_plan(data)
    return _answer(plan, media_type)


def _envelope(data: object) -> tuple[str, object]:
    """The OPM text and the description of a ``/v1/opm-validations`` body, or a 422."""
    if not isinstance(data, dict):
        raise PlanInvalid(
            {"plan": ['the body must be a JSON object {"opm": ..., "spacecraft": ...}']}
        )
    errors: dict[str, list[str]] = {}
    for key in sorted(set(data) - set(_ENVELOPE_KEYS)):
        errors[key] = [f"unknown field {key!r}; allowed here: opm, spacecraft"]
    text = data.get("opm")
    if "opm" not in data:
        errors["opm"] = ["opm is required: the Orbit Parameter Message, KVN text in a JSON string"]
    elif not isinstance(text, str) or not text.strip():
        errors["opm"] = ["opm must be the Orbit Parameter Message: non-empty KVN text, a string"]
    if not isinstance(data.get("spacecraft"), dict):
        errors["spacecraft"] = [
            "spacecraft is required: the spacecraft description object (its spacecraft block, "
            "maneuvers or default_engine, and optional plan fields)"
        ]
    if errors:
        raise PlanInvalid(errors)
    return text, data["spacecraft"]


@bp.post("/v1/opm-validations")
def create_opm_validation() -> Response:
    """Validate the plan an OPM and its spacecraft description make: as ``/v1/validations``."""
    media_type = _response_type()
    _require_json_body()
    text, description = _envelope(parse_json_bytes(_read_body()))
    _, plan = load_opm_plan(text, description)
    return _answer(plan, media_type)


@bp.get("/v1/checks")
def list_checks() -> Response:
    return _json({"checks": _engine().checks_catalogue()})


@bp.get("/v1/profiles")
def list_profiles() -> Response:
    return _json({"profiles": _engine().profiles_catalogue()})


@bp.get("/v1/profiles/<name>")
def get_profile(name: str) -> Response:
    document = _engine().profile_document(name)
    if document is None:
        return problem(404, f"there is no profile named {name!r}")
    return _json(document)


@cache
def _openapi_bytes() -> bytes:
    from service.schemas.export import openapi_document  # built on first request, not at import

    return encode_json(openapi_document())


@bp.get("/openapi.json")
def openapi() -> Response:
    return Response(_openapi_bytes(), mimetype=JSON_MEDIA_TYPE)


@bp.get("/healthz")
def healthz() -> Response:
    """Liveness: the process answers. Always 200."""
    return _json({"status": "ok"})


@bp.get("/readyz")
def readyz() -> Response:
    """Readiness: plugins loaded, profiles parsed, not draining; else a 503 problem saying why."""
    engine = _engine()
    draining = draining_reason()
    config_problems = auth_problems(current_app)  # the HTTP layer's own settings
    if engine.ready and draining is None and not config_problems:
        return _json({"ready": True})
    problems = list(engine.problems) if not engine.ready else []
    problems += config_problems
    if draining is not None:
        problems.append(draining)
    detail = "the service is not ready: " + ("; ".join(problems) or "start-up did not finish")
    return problem(503, detail, ready=False, draining=draining is not None, problems=problems)
