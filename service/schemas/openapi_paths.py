"""The OpenAPI paths of the API: every operation with every response it can give.

Each response, success or problem, carries the ``X-Request-ID`` header. Problem
documents are ``application/problem+json`` with the ``ProblemDetails`` schema; a 401
also carries ``WWW-Authenticate`` (RFC 6750 section 3). The ``/v1/*`` operations
require the ``bearerAuth`` scheme when the service runs with ``BURNPROOF_AUTH=bearer``;
``/metrics`` requires it only with ``BURNPROOF_METRICS_AUTH=bearer`` (documented as
optional); ``/healthz``, ``/readyz`` and ``/openapi.json`` are always open.
"""

from __future__ import annotations

from service.schemas.openapi_bodies import (
    CHECK,
    HEALTHY,
    OPEN_OBJECT,
    OPM_TEXT,
    PROFILE,
    READY,
    SCHEMA_REF,
)

PROBLEM_MEDIA_TYPE = "application/problem+json"
OPM_MEDIA_TYPE = "text/x.ccsds-opm-kvn"
BEARER = "bearerAuth"
SECURITY_SCHEMES = {
    BEARER: {
        "type": "http",
        "scheme": "bearer",
        "description": "RFC 6750 bearer token: Authorization: Bearer <token>. Required on "
        "/v1/* when the service runs with BURNPROOF_AUTH=bearer (the container and "
        "Kubernetes default) and on /metrics with BURNPROOF_METRICS_AUTH=bearer. The service "
        "stores only SHA-256 digests of the tokens it accepts.",
    }
}
_REQUEST_ID = {
    "description": "The request's id: the client's own X-Request-ID when it sent a usable one, "
    "else one made by the service; the request's log line carries the same id.",
    "required": True,
    "schema": {"type": "string", "minLength": 1},
}
_CHALLENGE = {
    "description": 'Bearer realm="burnproof", with error="invalid_request" for a malformed '
    'Authorization header and error="invalid_token" for a token that is not accepted '
    "(RFC 6750 section 3)",
    "required": True,
    "schema": {"type": "string", "pattern": '^Bearer realm="burnproof"'},
}
_ALLOW = {
    "description": "the methods the path does serve",
    "required": True,
    "schema": {"type": "string", "minLength": 1},
}
# The problems every operation of a kind can give, with what each means there.
_PROBLEMS = {
    400: "the body is not one strict UTF-8 JSON document: malformed, a byte order mark, "
    "repeated keys, nesting deeper than 32, an integer of over 1000 digits",
    401: "a bearer token is needed and the Authorization header is missing, malformed or "
    "carries a token that is not accepted",
    404: "there is no resource at this path",
    406: "the Accept header allows neither application/json (the report) nor "
    "text/x.ccsds-opm-kvn (the validated plan as a CCSDS OPM); acceptable lists the two",
    409: "text/x.ccsds-opm-kvn was asked for and the plan's verdict is fail: a failed plan is "
    "not written as an OPM (type urn:burnproof:problem:plan-failed; verdict and summary say "
    "why); ask for application/json to get the report",
    413: "the body is larger than 1 MiB (with or without Content-Length)",
    415: "the body is not application/json (utf-8, unencoded)",
    422: "the plan breaks the schema (NaN, Infinity and overflowing numbers among it), names "
    "an unknown profile, or loosens a rule it may not; errors maps dotted field paths to "
    "messages",
    500: "the service failed unexpectedly; the body is a fixed problem and the failure is "
    "logged (never a stack trace)",
    503: "the service is not ready (a plugin or profile failed to load, a setting is wrong), "
    "or the validation would run past the per-request compute budget",
}
METHOD_NOT_ALLOWED = {
    "description": "any method a path does not list (405): a problem document, with the "
    "Allow header naming the methods there are",
    "headers": {"Allow": _ALLOW, "X-Request-ID": _REQUEST_ID},
    "content": {PROBLEM_MEDIA_TYPE: {"schema": {"$ref": SCHEMA_REF + "ProblemDetails"}}},
}


def _content(media_type: str, schema: dict) -> dict:
    return {media_type: {"schema": schema}}


def _problem(status: int, description: str | None = None, schema: str = "ProblemDetails") -> dict:
    headers = {"X-Request-ID": _REQUEST_ID}
    if status == 401:
        headers["WWW-Authenticate"] = _CHALLENGE
    return {
        "description": description or _PROBLEMS[status],
        "headers": headers,
        "content": _content(PROBLEM_MEDIA_TYPE, {"$ref": SCHEMA_REF + schema}),
    }


def _responses(ok: dict, *statuses: int, **described: str) -> dict:
    """200 ``ok`` and a problem for each status (500 always), described by default or by name."""
    responses = {"200": {**ok, "headers": {"X-Request-ID": _REQUEST_ID}}}
    for status in sorted({*statuses, 500}):
        responses[str(status)] = _problem(status, described.get(f"s{status}"))
    return responses


def _ok(description: str, schema: dict, media_type: str = "application/json") -> dict:
    return {"description": description, "content": _content(media_type, schema)}


def _listing(key: str, item: dict) -> dict:
    return {
        "type": "object",
        "required": [key],
        "properties": {key: {"type": "array", "items": item}},
    }


def _get(operation_id: str, summary: str, responses: dict, **extra: object) -> dict:
    operation = {"operationId": operation_id, "summary": summary, "responses": responses}
    return {"get": {**operation, **extra}}


_PROTECTED = {"security": [{BEARER: []}]}
_PROFILE_QUERY = {
    "name": "profile",
    "in": "query",
    "required": False,
    "description": "the profile to validate against, instead of the plan's own profile field",
    "schema": {"type": "string", "minLength": 1},
}
# An invented smallsat's single along-track raise in a 400 km circular orbit
# (v = sqrt(398600.4418 / 6778.137) = 7.6686 km/s, EGM96 mu): a plan the service accepts.
PLAN_EXAMPLE = {
    "plan_id": "wren-3-raise-01",
    "central_body": "earth",
    "epoch": "2031-05-02T00:00:00Z",
    "initial_state": {
        "frame": "GCRF",
        "position_km": [6778.137, 0.0, 0.0],
        "velocity_km_s": [0.0, 7.6686, 0.0],
    },
    "spacecraft": {
        "dry_mass_kg": 540.0,
        "propellant_kg": 62.0,
        "engines": [{"id": "main", "thrust_n": 22.0, "isp_s": 228.0, "max_burn_s": 1200.0}],
    },
    "maneuvers": [
        {
            "id": "raise-1",
            "ignition": "2031-05-02T01:00:00Z",
            "engine": "main",
            "frame": "TNW",
            "delta_v_m_s": [12.5, 0.0, 0.0],
        }
    ],
    "profile": "default",
}
_NAME = {"name": "name", "in": "path", "required": True, "schema": {"type": "string"}}


def _validated(description: str) -> dict:
    """The 200 of a validation endpoint: the report, or the validated plan as an OPM."""
    return {
        "description": description + ", negotiated by Accept (Vary: Accept): application/json "
        "(the default; also no Accept, */* or application/*) gives the report whatever its "
        "verdict; text/x.ccsds-opm-kvn gives the validated plan (verdict pass or warn) as a "
        "CCSDS OPM in KVN, US-ASCII, with the computed MAN_DURATION and MAN_DELTA_MASS",
        "content": {
            "application/json": {"schema": {"$ref": SCHEMA_REF + "Report"}},
            OPM_MEDIA_TYPE: {"schema": OPM_TEXT},
        },
    }


_VARY = {
    "description": "always Accept: the response depends on it",
    "required": True,
    "schema": {"type": "string", "pattern": "Accept"},
}


def _negotiated(responses: dict) -> dict:
    """Every response of a negotiated operation carries Vary: Accept."""
    for response in responses.values():
        response["headers"] = {**response["headers"], "Vary": _VARY}
    return responses


def _validation_responses(**descriptions: str) -> dict:
    """The answers of both validation operations: the report or the OPM (by Accept) and the
    problems they can give; ``descriptions`` overrides a problem's wording (``s422=...``)."""
    statuses = (400, 401, 406, 409, 413, 415, 422, 503)
    validated = _validated("the report, or the validated plan as an OPM")
    return _negotiated(_responses(validated, *statuses, **descriptions))


def paths() -> dict[str, dict]:
    """Path -> OpenAPI path item, for every route of ``service.http``."""
    opm_validation = {
        "operationId": "createOpmValidation",
        "summary": "Validate the plan a CCSDS OPM (KVN) and its spacecraft description make; "
        "200 with the same report as /v1/validations",
        "parameters": [_PROFILE_QUERY],
        "requestBody": {
            "required": True,
            "content": {
                "application/json": {
                    "schema": {"$ref": SCHEMA_REF + "OpmValidationRequest"},
                }
            },
        },
        "responses": _validation_responses(
            s422="the envelope, the OPM or the description is unusable, or the plan they make "
            "breaks the plan rules: errors maps opm.line.<n>.<KEYWORD> (the message's line "
            "and keyword) or the description's dotted field path (spacecraft.engines.0.isp_s, "
            "maneuvers.2.engine) or the envelope's field (opm, spacecraft) to messages",
        ),
        **_PROTECTED,
    }
    validation = {
        "operationId": "createValidation",
        "summary": "Validate one plan; 200 with the report whatever the verdict",
        "parameters": [_PROFILE_QUERY],
        "requestBody": {
            "required": True,
            "content": {
                "application/json": {
                    "schema": {"$ref": SCHEMA_REF + "Plan"},
                    "examples": {"wren-3": {"summary": "one raise", "value": PLAN_EXAMPLE}},
                }
            },
        },
        "responses": _validation_responses(),
        **_PROTECTED,
    }
    ready = _responses(_ok("ready", READY))
    ready["503"] = _problem(
        503,
        "not ready: draining (about to stop), or start-up failed (a plugin, a profile, a "
        "setting); problems says which",
        schema="NotReady",
    )
    metrics_text = {"type": "string"}
    return {
        "/v1/validations": {"post": validation},
        "/v1/opm-validations": {"post": opm_validation},
        "/v1/checks": _get(
            "listChecks",
            "Every registered check",
            _responses(_ok("the checks", _listing("checks", CHECK)), 401),
            **_PROTECTED,
        ),
        "/v1/profiles": _get(
            "listProfiles",
            "The flight-rule profiles",
            _responses(_ok("the profiles", _listing("profiles", PROFILE)), 401),
            **_PROTECTED,
        ),
        "/v1/profiles/{name}": _get(
            "getProfile",
            "One profile and its thresholds",
            _responses(_ok("the profile", PROFILE), 401, 404, s404="no profile of that name"),
            parameters=[_NAME],
            **_PROTECTED,
        ),
        "/openapi.json": _get(
            "getOpenapi", "This document", _responses(_ok("OpenAPI 3.1", OPEN_OBJECT))
        ),
        "/healthz": _get(
            "healthz", "Liveness: the process answers", _responses(_ok("alive", HEALTHY))
        ),
        "/readyz": _get("readyz", "Readiness: plugins, profiles, settings, not draining", ready),
        "/metrics": _get(
            "metrics",
            "Prometheus text exposition format",
            _responses(_ok("the metrics", metrics_text, "text/plain"), 401),
            # {} first: no credentials needed unless BURNPROOF_METRICS_AUTH=bearer
            security=[{}, {BEARER: []}],
        ),
    }
