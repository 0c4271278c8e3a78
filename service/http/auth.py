"""Bearer-token authentication (RFC 6750) for ``/v1/*`` and, when asked, ``/metrics``.

Settings (read once, when the app is built; a restart or a new pod picks up a rotation):

- ``BURNPROOF_AUTH``: ``off`` (default) or ``bearer``;
- ``BURNPROOF_METRICS_AUTH``: ``open`` (default) or ``bearer``;
- ``BURNPROOF_TOKEN_FILE``: a file of accepted token digests, one SHA-256 (64 hex digits) per
  line, ``#`` comments and blank lines ignored; ``BURNPROOF_TOKEN_SHA256``: the same digests
  comma-separated. Both may be given; every digest of either is a live token (rotation).

Only digests are stored, never tokens. A presented token's raw bytes are hashed with
SHA-256 and compared with every stored digest by ``hmac.compare_digest`` (no early exit,
so the time taken does not say which digest, if any, came close).

Fail closed: a setting that cannot be read (an unknown value, a missing file, a line that
is not a digest, ``bearer`` with no digest at all) makes the app not ready (``/readyz``
503 naming the setting, the file and the line, never the line's text) and the protected
routes refuse every token. The check runs before the body is read, so a 401 never parses
a plan.
"""

from __future__ import annotations

import hashlib
import hmac
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

from flask import Flask, Response, current_app, request

from service.http.problems import INVALID_AUTH_REQUEST, INVALID_TOKEN, problem

EXTENSION = "burnproof.auth"
REALM = "burnproof"
AUTH_MODES = ("off", "bearer")
METRICS_MODES = ("open", "bearer")
# RFC 6750 section 2.1: credentials = "Bearer" 1*SP b64token;
# b64token = 1*( ALPHA / DIGIT / "-" / "." / "_" / "~" / "+" / "/" ) *"="
_CREDENTIALS = re.compile(r"[Bb][Ee][Aa][Rr][Ee][Rr] +([A-Za-z0-9\-._~+/]+=*)")
_DIGEST = re.compile(r"[0-9a-fA-F]{64}")


@dataclass(frozen=True)
class AuthSettings:
    """What the app enforces: which routes need a token, the accepted digests, what is wrong."""

    v1_bearer: bool = False
    metrics_bearer: bool = False
    digests: tuple[bytes, ...] = ()  # raw 32-byte SHA-256 digests
    problems: tuple[str, ...] = field(default_factory=tuple)


def _mode(environ: Mapping[str, str], name: str, modes: tuple[str, ...]) -> tuple[bool, list]:
    """(token required?, problems) for one mode setting; an unknown value requires a token."""
    value = environ.get(name, modes[0]).strip().lower() or modes[0]
    if value not in modes:
        allowed = " or ".join(modes)
        wrong = f"{name} must be {allowed}, not {value[:20]!r}: every token is refused until fixed"
        return True, [wrong]
    return value == "bearer", []


def _digest_of(text: str) -> bytes | None:
    text = text.strip()
    return bytes.fromhex(text) if _DIGEST.fullmatch(text) else None


def _file_digests(path: str) -> tuple[list[bytes], list[str]]:
    """Digests of ``path`` and what is wrong with it, by line number (never the line's text)."""
    try:
        with open(path, encoding="utf-8") as handle:
            lines = handle.read().splitlines()
    except (OSError, UnicodeDecodeError) as error:
        reason = getattr(error, "strerror", None) or "not UTF-8 text"
        return [], [f"BURNPROOF_TOKEN_FILE {path} cannot be read: {reason}"]
    contents = (line.split("#", 1)[0] for line in lines)
    return _digests(contents, f"BURNPROOF_TOKEN_FILE {path} line")


def _env_digests(value: str) -> tuple[list[bytes], list[str]]:
    return _digests(value.split(","), "BURNPROOF_TOKEN_SHA256 item")


def _digests(items: Iterable[str], where: str) -> tuple[list[bytes], list[str]]:
    """The digests among ``items`` (blank ones skipped) and a problem for each that is not one,
    placed by ``where`` and its 1-based number (never its text: it might be a pasted token)."""
    digests, problems = [], []
    for number, item in enumerate(items, start=1):
        if not item.strip():
            continue
        digest = _digest_of(item)
        if digest is None:
            problems.append(f"{where} {number} is not a SHA-256 digest (64 hex digits)")
        else:
            digests.append(digest)
    return digests, problems


def auth_settings_from_environment(environ: Mapping[str, str]) -> AuthSettings:
    """Read the auth settings (module docstring); never raises, reports problems instead."""
    v1_bearer, problems = _mode(environ, "BURNPROOF_AUTH", AUTH_MODES)
    metrics_bearer, metrics_problems = _mode(environ, "BURNPROOF_METRICS_AUTH", METRICS_MODES)
    problems += metrics_problems
    if not (v1_bearer or metrics_bearer):
        return AuthSettings(problems=tuple(problems))
    digests: list[bytes] = []
    path = environ.get("BURNPROOF_TOKEN_FILE", "").strip()
    if path:
        found, wrong = _file_digests(path)
        digests += found
        problems += wrong
    found, wrong = _env_digests(environ.get("BURNPROOF_TOKEN_SHA256", ""))
    digests += found
    problems += wrong
    if not digests and not problems:
        problems.append(
            "bearer authentication is on but no token digest is configured: set "
            "BURNPROOF_TOKEN_FILE or BURNPROOF_TOKEN_SHA256"
        )
    if problems:
        digests = []  # fail closed: a half-read configuration accepts no token at all
    return AuthSettings(v1_bearer, metrics_bearer, tuple(dict.fromkeys(digests)), tuple(problems))


def token_matches(token: str, digests: tuple[bytes, ...]) -> bool:
    """Whether ``token``'s SHA-256 equals one of ``digests``; compares with every one of them."""
    presented = hashlib.sha256(token.encode("ascii")).digest()
    matched = False
    for digest in digests:
        # no short-circuit: every digest is compared whatever the earlier ones gave
        matched = hmac.compare_digest(presented, digest) | matched
    return matched


def _challenge(error: str | None = None) -> dict[str, str]:
    value = f'Bearer realm="{REALM}"'
    if error is not None:
        value += f', error="{error}"'
    return {"WWW-Authenticate": value}


def _refusal(header: str | None, digests: tuple[bytes, ...]) -> Response | None:
    """The 401 for this Authorization header, or None when it carries an accepted token."""
    if header is None or not header.strip():
        return problem(
            401,
            "this resource needs an Authorization header: Bearer <token> (RFC 6750)",
            headers=_challenge(),
        )
    # WSGI hands header values over as latin-1 text: anything outside ASCII is malformed here.
    match = _CREDENTIALS.fullmatch(header) if header.isascii() else None
    if match is None:
        return problem(
            401,
            "the Authorization header is malformed: send Bearer, one space and one token of "
            "the RFC 6750 b64token characters",
            kind=INVALID_AUTH_REQUEST,
            headers=_challenge("invalid_request"),
        )
    if not token_matches(match.group(1), digests):
        return problem(
            401,
            "the bearer token is not accepted",
            kind=INVALID_TOKEN,
            headers=_challenge("invalid_token"),
        )
    return None


def auth_settings_of(app: Flask) -> AuthSettings:
    return app.extensions[EXTENSION]


def auth_problems(app: Flask) -> list[str]:
    """What is wrong with the auth settings; non-empty means the app is not ready."""
    settings = app.extensions.get(EXTENSION)
    return list(settings.problems) if settings is not None else []


def _protected(settings: AuthSettings) -> bool:
    """Whether this request needs a token: by its path with slashes merged, and by its route."""
    paths = {re.sub("/+", "/", request.path)}
    if request.url_rule is not None:
        paths.add(request.url_rule.rule)
    if settings.metrics_bearer and "/metrics" in paths:
        return True
    return settings.v1_bearer and any(p == "/v1" or p.startswith("/v1/") for p in paths)


def register_auth(app: Flask, environ: Mapping[str, str]) -> None:
    """Read the settings from ``environ`` once and check every request before its view runs."""
    app.extensions[EXTENSION] = auth_settings_from_environment(environ)

    @app.before_request
    def _authenticate() -> Response | None:
        settings = auth_settings_of(current_app)
        if not _protected(settings):
            return None
        return _refusal(request.headers.get("Authorization"), settings.digests)
