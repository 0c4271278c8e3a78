"""Prometheus metrics of one app, served at ``GET /metrics`` (prometheus_client text format).

Names follow the Prometheus naming best practices: one prefix ``burnproof_``, base units
(seconds), ``_total`` on counters, and only bounded labels (no plan ids, no raw paths):

- ``burnproof_http_requests_total{method,route,status}`` and
  ``burnproof_http_request_duration_seconds{method,route}`` (histogram): ``route`` is the
  URL rule template (``/v1/profiles/<name>``), ``(unmatched)`` for any path no rule
  matched; ``method`` is one of the standard methods or ``OTHER``;
- ``burnproof_validations_total{verdict}``: reports given, by verdict;
- ``burnproof_findings_total{check,status}``: findings in those reports;
- ``burnproof_check_duration_seconds{check}`` (histogram) and
  ``burnproof_check_errors_total{check,kind}``: ``kind`` is ``error`` (the check raised
  or broke its contract) or ``timeout`` (it overran its budget, or the request's budget
  ran out before it could start).

Each app has its own ``CollectorRegistry`` (tests build many apps in one process; the
library's global default registry is never used). When ``PROMETHEUS_MULTIPROC_DIR`` is
set, prometheus_client keeps every value in files in that directory, one set per
process, and ``/metrics`` serves a ``MultiProcessCollector`` over them, so any gunicorn
worker answers with the sum over all workers (prometheus_client docs, "Multiprocess
Mode"). The directory must be set before the process imports prometheus_client and be
emptied when the server starts (``deploy/gunicorn.conf.py`` does both). There are no
gauges here, so no ``multiprocess_mode`` is needed.
"""

from __future__ import annotations

import os

from flask import Flask, Response
from prometheus_client import CONTENT_TYPE_LATEST, CollectorRegistry, Counter, Histogram
from prometheus_client import values as prometheus_values
from prometheus_client.exposition import generate_latest
from prometheus_client.multiprocess import MultiProcessCollector

from service.engine.observe import CheckRun

EXTENSION = "burnproof.metrics"
MULTIPROCESS_VARIABLE = "PROMETHEUS_MULTIPROC_DIR"
UNMATCHED_ROUTE = "(unmatched)"
# RFC 9110 section 9 methods plus PATCH (RFC 5789); any other token is counted as OTHER, so a
# client cannot mint label values.
KNOWN_METHODS = frozenset(
    {"GET", "HEAD", "POST", "PUT", "DELETE", "CONNECT", "OPTIONS", "TRACE", "PATCH"}
)
VERDICTS = ("pass", "warn", "fail")

# Requests: a validation takes milliseconds (median about 5 ms without the Monte Carlo
# check), the Monte Carlo check tens to hundreds of ms, the compute budget 20 s and
# gunicorn's timeout 30 s: buckets from 1 ms to 30 s, with edges at both limits.
REQUEST_BUCKETS_S = (
    0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0, 20.0, 30.0
)  # fmt: skip
# Checks: most take from a few microseconds to a few ms, the Monte Carlo check longer, the
# default per-check budget is 5 s: buckets from 0.1 ms to 30 s.
CHECK_BUCKETS_S = (
    0.0001, 0.00025, 0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5,
    1.0, 2.5, 5.0, 10.0, 30.0,
)  # fmt: skip


class Metrics:
    """The app's metrics and the registry ``/metrics`` serves.

    ``multiprocess_dir`` is prometheus_client's multiprocess directory, or None for
    in-process values only.
    """

    def __init__(self, multiprocess_dir: str | None = None) -> None:
        self.registry = CollectorRegistry()
        self.requests = Counter(
            "burnproof_http_requests_total",
            "HTTP requests answered, by method, route template and status code.",
            ["method", "route", "status"],
            registry=self.registry,
        )
        self.request_seconds = Histogram(
            "burnproof_http_request_duration_seconds",
            "Time from the first request hook to the response, by method and route template.",
            ["method", "route"],
            buckets=REQUEST_BUCKETS_S,
            registry=self.registry,
        )
        self.validations = Counter(
            "burnproof_validations_total",
            "Plans validated, by the report's verdict.",
            ["verdict"],
            registry=self.registry,
        )
        self.findings = Counter(
            "burnproof_findings_total",
            "Findings in the reports given, by check id and status.",
            ["check", "status"],
            registry=self.registry,
        )
        self.check_seconds = Histogram(
            "burnproof_check_duration_seconds",
            "Time one check ran in one validation (for a time-out, the time waited for it).",
            ["check"],
            buckets=CHECK_BUCKETS_S,
            registry=self.registry,
        )
        self.check_errors = Counter(
            "burnproof_check_errors_total",
            "Checks that became an error finding: kind error (raised, broke the contract) "
            "or timeout (overran its budget, or the request's budget ran out first).",
            ["check", "kind"],
            registry=self.registry,
        )
        for verdict in VERDICTS:
            self.validations.labels(verdict)  # present at 0 before the first report
        self.exposed = self.registry
        if multiprocess_dir is not None:
            if prometheus_values.ValueClass is prometheus_values.MutexValue:
                raise RuntimeError(
                    f"{MULTIPROCESS_VARIABLE} was set after prometheus_client was imported; "
                    "set it in the environment before the process starts"
                )
            self.exposed = CollectorRegistry()
            MultiProcessCollector(self.exposed, path=multiprocess_dir)

    def observe_request(self, method: str, route: str, status: int, seconds: float) -> None:
        method = method if method in KNOWN_METHODS else "OTHER"
        self.requests.labels(method, route, str(status)).inc()
        self.request_seconds.labels(method, route).observe(seconds)

    def observe_validation(self, verdict: str) -> None:
        if verdict in VERDICTS:
            self.validations.labels(verdict).inc()

    def observe_check(self, run: CheckRun) -> None:
        """The engine's observer: one check's time, findings and error (``CheckRun``)."""
        if run.outcome != "not_run":
            self.check_seconds.labels(run.check_id).observe(run.seconds)
        for status, count in run.findings.items():
            self.findings.labels(run.check_id, status).inc(count)
        if run.outcome == "error":
            self.check_errors.labels(run.check_id, "error").inc()
        elif run.outcome in ("timeout", "not_run"):
            self.check_errors.labels(run.check_id, "timeout").inc()

    def exposition(self) -> bytes:
        return generate_latest(self.exposed)


def metrics_of(app: Flask) -> Metrics:
    return app.extensions[EXTENSION]


def register_metrics(app: Flask) -> None:
    """Give the app its metrics and the ``/metrics`` route (endpoint name ``metrics``).

    Requests are counted by ``service.http.observe``, validations and checks by the
    validation route through the engine's observer.
    """
    app.extensions[EXTENSION] = Metrics(os.environ.get(MULTIPROCESS_VARIABLE) or None)

    @app.get("/metrics")
    def metrics() -> Response:
        return Response(metrics_of(app).exposition(), content_type=CONTENT_TYPE_LATEST)
