"""The Flask application factory: one engine per app, built here and kept on the app."""

from __future__ import annotations

import os
from collections.abc import Mapping
from typing import Any

from flask import Flask

from service.engine.core import engine_from_environment
from service.http import register_http
from service.http.auth import register_auth
from service.http.json_provider import StrictJSONProvider

MAX_BODY_BYTES = 1024 * 1024  # CONTRACT.md section 1: a plan body is at most 1 MiB


def create_app(config: Mapping[str, Any] | None = None, *, engine: Any = None) -> Flask:
    """Build the app; pass ``engine`` (anything with the ``service.engine.Engine`` face) in tests.

    Without one the engine is built from the environment: the built-in checks and every
    allowed plugin of the ``burnproof`` entry-point group, the built-in ``default``
    profile and the site's profiles in ``BURNPROOF_PROFILE_DIR``, with the plugin allow
    and deny lists ``BURNPROOF_PLUGINS_ALLOW`` and ``BURNPROOF_PLUGINS_DENY``.
    It lives in ``app.extensions["burnproof"]``. ``config`` overrides Flask settings,
    ``MAX_CONTENT_LENGTH`` (default 1 MiB) among them.
    """
    app = Flask(__name__)
    app.json = StrictJSONProvider(app)
    app.config["MAX_CONTENT_LENGTH"] = MAX_BODY_BYTES
    if config:
        app.config.update(config)
    if engine is None:
        engine = engine_from_environment(os.environ)
    app.extensions["burnproof"] = engine
    register_http(app)
    register_auth(app, os.environ)  # after the other hooks, so a 401 is still counted and logged
    return app
