"""Request and verdict counters in the Prometheus text exposition format (version 0.0.4).

Counters live in the process that served the request; behind a multi-worker
server each worker reports its own (the scraper sums them per pod).
"""

from __future__ import annotations

import threading
import time
from collections import defaultdict

from flask import Flask, Response, g, request

EXTENSION = "burnproof.metrics"
CONTENT_TYPE = "text/plain; version=0.0.4; charset=utf-8"


def _escape(value: str) -> str:
    return value.replace("\\", "\\\\").replace('"', '\\"').replace("\n", "\\n")


class Metrics:
    """Thread-safe counters: requests by route and status, time spent, verdicts given."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self.requests: dict[tuple[str, str, str], int] = defaultdict(int)
        self.seconds: dict[tuple[str, str], float] = defaultdict(float)
        self.verdicts: dict[str, int] = defaultdict(int)

    def observe(self, method: str, route: str, status: int, seconds: float) -> None:
        with self._lock:
            self.requests[(method, route, str(status))] += 1
            self.seconds[(method, route)] += seconds

    def verdict(self, verdict: str) -> None:
        with self._lock:
            self.verdicts[verdict] += 1

    def exposition(self) -> str:
        with self._lock:
            lines = [
                "# HELP burnproof_http_requests_total HTTP requests answered, by route and status.",
                "# TYPE burnproof_http_requests_total counter",
            ]
            for (method, route, status), count in sorted(self.requests.items()):
                lines.append(
                    f'burnproof_http_requests_total{{method="{method}",route="{_escape(route)}",'
                    f'status="{status}"}} {count}'
                )
            lines += [
                "# HELP burnproof_http_request_seconds_total Time spent answering, by route.",
                "# TYPE burnproof_http_request_seconds_total counter",
            ]
            for (method, route), seconds in sorted(self.seconds.items()):
                lines.append(
                    f'burnproof_http_request_seconds_total{{method="{method}",'
                    f'route="{_escape(route)}"}} {seconds:.6f}'
                )
            lines += [
                "# HELP burnproof_validations_total Plans validated, by verdict.",
                "# TYPE burnproof_validations_total counter",
            ]
            for verdict in ("pass", "warn", "fail"):
                lines.append(
                    f'burnproof_validations_total{{verdict="{verdict}"}} {self.verdicts[verdict]}'
                )
        return "\n".join(lines) + "\n"


def metrics_of(app: Flask) -> Metrics:
    return app.extensions[EXTENSION]


def register_metrics(app: Flask) -> None:
    """Count every request; unmatched paths share one route label so labels stay bounded."""
    app.extensions[EXTENSION] = Metrics()

    @app.before_request
    def _start_clock() -> None:
        g.burnproof_started = time.perf_counter()

    @app.after_request
    def _count(response: Response) -> Response:
        started = g.get("burnproof_started", time.perf_counter())
        route = request.url_rule.rule if request.url_rule is not None else "(unmatched)"
        metrics_of(app).observe(
            request.method, route, response.status_code, time.perf_counter() - started
        )
        return response

    @app.get("/metrics")
    def metrics() -> Response:
        return Response(metrics_of(app).exposition(), content_type=CONTENT_TYPE)
