"""The Flask application factory: one engine per app, built here and kept on the app."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from flask import Flask

from service.engine import build_engine
from service.http import register_http

MAX_BODY_BYTES = 1024 * 1024  # CONTRACT.md section 1: a plan body is at most 1 MiB


def create_app(config: Mapping[str, Any] | None = None, *, engine: Any = None) -> Flask:
    """Build the app; pass ``engine`` (anything with the ``service.engine.Engine`` face) in tests.

    Without one the engine comes from ``service.engine.build_engine()``: the built-in
    checks and every plugin installed under the ``burnproof`` entry-point group.
    It lives in ``app.extensions["burnproof"]``. ``config`` overrides Flask settings,
    ``MAX_CONTENT_LENGTH`` (default 1 MiB) among them.
    """
    app = Flask(__name__)
    app.config["MAX_CONTENT_LENGTH"] = MAX_BODY_BYTES
    if config:
        app.config.update(config)
    app.extensions["burnproof"] = engine if engine is not None else build_engine()
    register_http(app)
    return app
