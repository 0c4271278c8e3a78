"""Per-request bookkeeping: clock, request id, compute budget, metrics and the request log line.

The first request hook of the app (whatever is registered later, auth among them) starts
the clocks and settles the request id; the last response hook counts the request, echoes
``X-Request-ID`` on every response (problem documents included) and logs the one request
line. The validation route asks ``validation_options()`` for the compute budget (started
with the request, so reading and parsing the body count against it) and the engine's
check observer, and tells ``note_validation()`` the report it got.
"""

from __future__ import annotations

import os
import time

from flask import Flask, Response, current_app, g, request

from service.engine.budget import (
    DEFAULT_COMPUTE_BUDGET_S,
    ENVIRONMENT_VARIABLE,
    ComputeBudget,
    parse_budget_s,
)
from service.engine.observe import CheckRun
from service.http.logs import (
    FORMAT_VARIABLE,
    LEVEL_VARIABLE,
    REQUEST_ID_HEADER,
    configure_logging,
    log_check_problem,
    log_request,
    request_id_from,
)
from service.http.metrics import UNMATCHED_ROUTE, metrics_of

BUDGET_EXTENSION = "burnproof.compute_budget_s"


def _setting(app: Flask, name: str) -> object:
    """A setting from the app's config (tests), else from the environment, else None."""
    value = app.config.get(name)
    return value if value is not None else os.environ.get(name) or None


def register_observation(app: Flask) -> None:
    """Configure logging and the compute budget, and add the first and last request hooks.

    Bad settings (``BURNPROOF_COMPUTE_BUDGET_S``, ``BURNPROOF_LOG_LEVEL``,
    ``BURNPROOF_LOG_FORMAT``) stop the app from being built, with a ValueError naming them.
    """
    budget = _setting(app, ENVIRONMENT_VARIABLE)
    app.extensions[BUDGET_EXTENSION] = (
        DEFAULT_COMPUTE_BUDGET_S if budget is None else parse_budget_s(budget)
    )
    configure_logging({name: _setting(app, name) for name in (LEVEL_VARIABLE, FORMAT_VARIABLE)})
    # Flask runs request hooks in registration order and response hooks in reverse: put ours
    # first and last so the clock and the id cover every other hook's work and answers.
    app.before_request_funcs.setdefault(None, []).insert(0, _begin)
    app.after_request_funcs.setdefault(None, []).insert(0, _finish)


def _begin() -> None:
    g.burnproof_started_s = time.perf_counter()
    g.burnproof_started_monotonic_s = time.monotonic()
    g.burnproof_request_id, g.burnproof_request_id_refused = request_id_from(
        request.headers.get(REQUEST_ID_HEADER)
    )


def _finish(response: Response) -> Response:
    started_s = g.get("burnproof_started_s")
    seconds = 0.0 if started_s is None else time.perf_counter() - started_s
    request_id = g.get("burnproof_request_id")
    if request_id is None:  # the first hook did not run: make the id here
        request_id, g.burnproof_request_id_refused = request_id_from(
            request.headers.get(REQUEST_ID_HEADER)
        )
    route = request.url_rule.rule if request.url_rule is not None else UNMATCHED_ROUTE
    metrics_of(current_app).observe_request(request.method, route, response.status_code, seconds)
    response.headers[REQUEST_ID_HEADER] = request_id
    fields: dict[str, object] = {
        "request_id": request_id,
        "method": request.method,
        "route": route,
        "path": request.path,
        "status": response.status_code,
        "duration_ms": round(1000.0 * seconds, 3),
        "remote_addr": request.remote_addr,
    }
    if g.get("burnproof_request_id_refused"):
        fields["request_id_refused"] = True
    if "burnproof_verdict" in g:
        fields["verdict"] = g.burnproof_verdict
        fields["plan_digest"] = g.get("burnproof_plan_digest")
    check_errors = g.get("burnproof_check_errors")
    if check_errors:
        fields["check_errors"] = check_errors
    log_request(fields, request.content_length)
    return response


def _observe_check(run: CheckRun) -> None:
    """The engine's observer for a request: metrics, and a log line for a check that broke."""
    metrics_of(current_app).observe_check(run)
    if run.outcome != "ok":
        g.setdefault("burnproof_check_errors", {})[run.check_id] = run.outcome
        log_check_problem(run, g.get("burnproof_request_id"))


def validation_options() -> dict[str, object]:
    """The keyword arguments the validation route passes to ``Engine.validate``."""
    started = g.get("burnproof_started_monotonic_s")
    seconds = current_app.extensions[BUDGET_EXTENSION]
    budget = ComputeBudget.start(seconds) if started is None else ComputeBudget(seconds, started)
    return {"budget": budget, "observer": _observe_check}


def note_validation(report: dict) -> None:
    """Count the report's verdict and keep its verdict and plan digest for the request line."""
    verdict = report.get("verdict")
    metrics_of(current_app).observe_validation(str(verdict))
    g.burnproof_verdict = verdict
    g.burnproof_plan_digest = (report.get("provenance") or {}).get("plan_digest")
