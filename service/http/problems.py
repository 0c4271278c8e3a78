"""RFC 9457 problem documents: the one shape every error response of the API takes.

Each problem carries ``type`` (a stable URN of ours), ``title`` (fixed per type),
``status``, ``detail`` (this occurrence, in words), and for 422 ``errors``
mapping field paths to messages. Nothing internal (exception text of an
unexpected error, a traceback, a file path) ever reaches a client: the 500
handler logs the traceback and answers with a fixed generic document.
"""

from __future__ import annotations

import logging

from flask import Flask, Response, current_app, request
from werkzeug.exceptions import (
    HTTPException,
    MethodNotAllowed,
    NotAcceptable,
    NotFound,
    RequestEntityTooLarge,
)

from service.ccsds.convert import PlanFailed
from service.engine.errors import ComputeBudgetExceeded, EngineNotReady, PlanInvalid
from service.engine.render import to_json_bytes
from service.schemas import MalformedJson

PROBLEM_MEDIA_TYPE = "application/problem+json"
_URN = "urn:burnproof:problem:"

# status -> (type slug, title) for the problems an HTTP status alone describes.
_BY_STATUS: dict[int, tuple[str, str]] = {
    400: ("bad-request", "Bad request"),
    401: ("unauthorized", "Authentication required"),
    404: ("not-found", "Not found"),
    405: ("method-not-allowed", "Method not allowed"),
    406: ("not-acceptable", "Not acceptable"),
    413: ("body-too-large", "Request body too large"),
    415: ("unsupported-media-type", "Unsupported media type"),
    422: ("invalid-plan", "Invalid plan"),
    500: ("internal-error", "Internal server error"),
    503: ("not-ready", "Service not ready"),
}
MALFORMED_JSON = ("malformed-json", "Malformed JSON")
COMPUTE_BUDGET_EXCEEDED = ("compute-budget-exceeded", "Compute budget exceeded")
PLAN_FAILED = ("plan-failed", "Plan failed validation")
# the response types of the validation endpoints, listed in a 406 (service.http.routes)
ACCEPTABLE = ("application/json", "text/x.ccsds-opm-kvn")
# RFC 6750 section 3.1 error codes, as problem kinds of their own
INVALID_TOKEN = ("invalid-token", "Invalid bearer token")
INVALID_AUTH_REQUEST = ("invalid-authorization", "Malformed Authorization header")

logger = logging.getLogger(__name__)


def encode_json(data: dict) -> bytes:
    """The byte form of every JSON body the API sends: the one the command line prints.

    UTF-8, indented by two, keys in the producer's order, a trailing newline, no NaN
    (``service.engine.render.to_json_bytes``), so a report fetched over HTTP and one
    written by ``burnproof validate`` are the same bytes.
    """
    return to_json_bytes(data)


def problem_type(slug: str) -> str:
    """The ``type`` URI of a problem: ``urn:burnproof:problem:<slug>``."""
    return _URN + slug


def problem(
    status: int,
    detail: str,
    *,
    kind: tuple[str, str] | None = None,
    headers: dict[str, str] | None = None,
    **extensions: object,
) -> Response:
    """A problem response; ``kind`` is (slug, title), by default the one for ``status``."""
    slug, title = kind or _BY_STATUS.get(status, (f"http-{status}", f"HTTP {status}"))
    body: dict[str, object] = {
        "type": problem_type(slug),
        "title": title,
        "status": status,
        "detail": detail,
    }
    body.update(extensions)
    response = Response(encode_json(body), status=status, mimetype=PROBLEM_MEDIA_TYPE)
    for name, value in (headers or {}).items():
        response.headers[name] = value
    return response


def _http_exception(error: HTTPException) -> Response | HTTPException:
    if error.code is None or error.code < 400:
        return error  # redirects and the like are not problems
    headers = {
        name: value
        for name, value in error.get_headers()
        if name.lower() not in ("content-type", "content-length")
    }
    detail = error.description or error.name
    # Werkzeug's stock wording is for browsers; say what happened to this request instead.
    if isinstance(error, MethodNotAllowed) and error.valid_methods:
        allowed = ", ".join(sorted(error.valid_methods))
        headers["Allow"] = allowed
        detail = f"{request.method} is not allowed on {request.path}; allowed: {allowed}"
    elif isinstance(error, NotFound) and detail == NotFound.description:
        detail = f"there is no resource at {request.path}"
    elif isinstance(error, NotAcceptable):
        return problem(406, detail, headers=headers, acceptable=list(ACCEPTABLE))
    elif isinstance(error, RequestEntityTooLarge):
        limit = current_app.config.get("MAX_CONTENT_LENGTH")
        detail = f"the request body is over the {limit}-byte limit"
    return problem(error.code, detail, headers=headers)


def _malformed_json(error: MalformedJson) -> Response:
    return problem(400, str(error) or "the body is not valid JSON", kind=MALFORMED_JSON)


def _plan_invalid(error: PlanInvalid) -> Response:
    return problem(422, error.detail, errors=error.errors)


def _plan_failed(error: PlanFailed) -> Response:
    """409: the plan is valid but failed, so it is not written in the exchange format asked."""
    return problem(
        409, error.detail, kind=PLAN_FAILED, verdict=error.verdict, summary=error.summary
    )


def _engine_not_ready(error: EngineNotReady) -> Response:
    return problem(
        503, "the service is not ready: " + str(error), ready=False, problems=error.problems
    )


def _compute_budget_exceeded(error: ComputeBudgetExceeded) -> Response:
    return problem(503, str(error), kind=COMPUTE_BUDGET_EXCEEDED, compute_budget_s=error.budget_s)


def _unexpected(error: Exception) -> Response:
    logger.exception("unhandled error while answering a request")
    return problem(500, "the service failed to answer this request; the failure has been logged")


def register_error_handlers(app: Flask) -> None:
    """Turn every error, expected or not, into a problem document."""
    app.register_error_handler(HTTPException, _http_exception)
    app.register_error_handler(MalformedJson, _malformed_json)
    app.register_error_handler(PlanInvalid, _plan_invalid)
    app.register_error_handler(PlanFailed, _plan_failed)
    app.register_error_handler(EngineNotReady, _engine_not_ready)
    app.register_error_handler(ComputeBudgetExceeded, _compute_budget_exceeded)
    app.register_error_handler(Exception, _unexpected)
