"""The HTTP face of burnproof: routes and RFC 9457 problem documents."""

from __future__ import annotations

from flask import Flask

from service.http.metrics import register_metrics
from service.http.observe import register_observation
from service.http.problems import register_error_handlers
from service.http.routes import bp


def register_http(app: Flask) -> None:
    """Attach the API's routes, error handlers, metrics, logs and compute budget to ``app``."""
    app.register_blueprint(bp)
    register_error_handlers(app)
    register_metrics(app)
    register_observation(app)
