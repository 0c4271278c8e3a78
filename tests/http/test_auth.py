"""Bearer-token authentication (RFC 6750): who gets in, what a refusal says, what stays open.

Apps are built with ``create_app`` from a patched environment, as production builds them.
The tokens are invented; the app only ever sees their SHA-256 digests.
"""

from __future__ import annotations

import hashlib
import hmac
import io
import json

import pytest
from werkzeug.test import EnvironBuilder, run_wsgi_app

from service.app import create_app
from service.http import auth
from tests.http.conftest import assert_problem

OLD_TOKEN = "ops-ground-2026-autumn.Zk3q"
NEW_TOKEN = "ops-ground-2026-winter~Hx9w+/=="
CHALLENGE = 'Bearer realm="burnproof"'


def digest(token: str) -> str:
    return hashlib.sha256(token.encode()).hexdigest()


@pytest.fixture
def build(monkeypatch, engine):
    """Build an app from environment settings (unset: the variable is removed)."""

    def make(**settings: str | None):
        for name in ("BURNPROOF_AUTH", "BURNPROOF_METRICS_AUTH", "BURNPROOF_TOKEN_FILE"):
            monkeypatch.delenv(name, raising=False)
        monkeypatch.delenv("BURNPROOF_TOKEN_SHA256", raising=False)
        for name, value in settings.items():
            if value is not None:
                monkeypatch.setenv(name, value)
        return create_app({"TESTING": True}, engine=engine)

    return make


@pytest.fixture
def bearer_app(build):
    return build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_SHA256=digest(OLD_TOKEN))


def bearer(token: str) -> dict[str, str]:
    return {"Authorization": f"Bearer {token}"}


def _raw_get(app, path: str, authorization: bytes):
    """GET with the header's raw bytes as a WSGI server hands them over (decoded as latin-1)."""
    environ = EnvironBuilder(path=path, method="GET").get_environ()
    environ["HTTP_AUTHORIZATION"] = authorization.decode("latin-1")
    body, status, headers = run_wsgi_app(app, environ, buffered=True)
    return app.response_class(b"".join(body), status=status, headers=headers)


# --- refusals -------------------------------------------------------------------------------


@pytest.mark.parametrize("path", ["/v1/checks", "/v1/profiles", "/v1/profiles/default"])
def test_missing_token_is_401_with_a_bare_challenge(bearer_app, path):
    response = bearer_app.test_client().get(path)
    body = assert_problem(response, 401)
    assert body["type"] == "urn:burnproof:problem:unauthorized"
    assert response.headers["WWW-Authenticate"] == CHALLENGE


def test_wrong_token_is_invalid_token(bearer_app):
    response = bearer_app.test_client().get("/v1/checks", headers=bearer(NEW_TOKEN))
    body = assert_problem(response, 401)
    assert body["type"] == "urn:burnproof:problem:invalid-token"
    assert response.headers["WWW-Authenticate"] == CHALLENGE + ', error="invalid_token"'
    assert NEW_TOKEN not in response.get_data(as_text=True)


@pytest.mark.parametrize(
    "header",
    [
        "Basic b3BzOmdyb3VuZA==",  # another scheme
        "Bearer",  # no token
        "Bearer ",
        f"Bearer {OLD_TOKEN} extra",  # two tokens
        f"Bearer{OLD_TOKEN}",  # no space
        f"Bearer\t{OLD_TOKEN}",  # not SP
        "Bearer abc,def",  # a character outside b64token
        "Bearer =abc",  # padding first
        f"Token {OLD_TOKEN}",
    ],
)
def test_malformed_header_is_invalid_request(bearer_app, header):
    response = bearer_app.test_client().get("/v1/checks", headers={"Authorization": header})
    body = assert_problem(response, 401)
    assert body["type"] == "urn:burnproof:problem:invalid-authorization"
    assert response.headers["WWW-Authenticate"] == CHALLENGE + ', error="invalid_request"'


@pytest.mark.parametrize(
    "raw",
    [
        b"Bearer caf\xe9",  # latin-1 e-acute
        "Bearer café".encode(),  # its UTF-8 bytes, read as latin-1 by the server
        b"Bearer \xff\xfe",
        b"B\xe9arer token",
    ],
)
def test_non_ascii_header_is_invalid_request(bearer_app, raw):
    response = _raw_get(bearer_app, "/v1/checks", raw)
    assert_problem(response, 401)
    assert response.headers["WWW-Authenticate"] == CHALLENGE + ', error="invalid_request"'


# --- acceptance ---------------------------------------------------------------------------


@pytest.mark.parametrize("scheme", ["Bearer", "bearer", "BEARER", "bEaReR"])
def test_scheme_is_case_insensitive(bearer_app, scheme):
    client = bearer_app.test_client()
    response = client.get("/v1/checks", headers={"Authorization": f"{scheme} {OLD_TOKEN}"})
    assert response.status_code == 200
    assert json.loads(response.get_data())["checks"]


def test_a_valid_token_reaches_the_validation(bearer_app, plan):
    response = bearer_app.test_client().post(
        "/v1/validations",
        data=json.dumps(plan),
        headers=bearer(OLD_TOKEN),
        content_type="application/json",
    )
    assert response.status_code == 200
    assert response.get_json()["plan_id"] == plan["plan_id"]


def test_rotation_both_tokens_live_then_the_old_one_removed(build, tmp_path):
    tokens = tmp_path / "tokens"
    tokens.write_text(
        f"# ground segment tokens\n{digest(OLD_TOKEN)}  # autumn\n\n{digest(NEW_TOKEN).upper()}\n"
    )
    both = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_FILE=str(tokens)).test_client()
    assert both.get("/v1/checks", headers=bearer(OLD_TOKEN)).status_code == 200
    assert both.get("/v1/checks", headers=bearer(NEW_TOKEN)).status_code == 200

    tokens.write_text(f"{digest(NEW_TOKEN)}\n")  # the old token retired
    # read once at app creation: the running app still has both ...
    assert both.get("/v1/checks", headers=bearer(OLD_TOKEN)).status_code == 200
    # ... and the rebuilt one (a restart, a new pod) only the new one
    rebuilt = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_FILE=str(tokens)).test_client()
    assert rebuilt.get("/v1/checks", headers=bearer(NEW_TOKEN)).status_code == 200
    assert_problem(rebuilt.get("/v1/checks", headers=bearer(OLD_TOKEN)), 401)


def test_file_and_environment_digests_are_united(build, tmp_path):
    tokens = tmp_path / "tokens"
    tokens.write_text(digest(OLD_TOKEN) + "\n")
    client = build(
        BURNPROOF_AUTH="bearer",
        BURNPROOF_TOKEN_FILE=str(tokens),
        BURNPROOF_TOKEN_SHA256=f" {digest(NEW_TOKEN)} ,",
    ).test_client()
    assert client.get("/readyz").status_code == 200
    for token in (OLD_TOKEN, NEW_TOKEN):
        assert client.get("/v1/checks", headers=bearer(token)).status_code == 200


# --- fail closed ------------------------------------------------------------------------


def _not_ready(client) -> list[str]:
    body = assert_problem(client.get("/readyz"), 503)
    assert body["ready"] is False
    return body["problems"]


def test_bearer_without_digests_refuses_everything_and_is_not_ready(build):
    client = build(BURNPROOF_AUTH="bearer").test_client()
    problems = _not_ready(client)
    assert any("BURNPROOF_TOKEN_FILE or BURNPROOF_TOKEN_SHA256" in p for p in problems)
    assert_problem(client.get("/v1/checks", headers=bearer(OLD_TOKEN)), 401)


def test_empty_token_file_is_not_ready(build, tmp_path):
    tokens = tmp_path / "tokens"
    tokens.write_text("# nothing yet\n\n")
    client = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_FILE=str(tokens)).test_client()
    assert any("no token digest is configured" in p for p in _not_ready(client))
    assert_problem(client.get("/v1/checks", headers=bearer(OLD_TOKEN)), 401)


def test_bad_digest_line_names_file_and_line_never_its_text(build, tmp_path):
    tokens = tmp_path / "tokens"
    secret_looking = "not-a-digest-but-maybe-a-pasted-token"
    tokens.write_text(f"{digest(OLD_TOKEN)}\n# next\n{secret_looking}\n")
    client = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_FILE=str(tokens)).test_client()
    response = client.get("/readyz")
    assert response.status_code == 503
    assert f"BURNPROOF_TOKEN_FILE {tokens} line 3" in response.get_data(as_text=True)
    assert secret_looking not in response.get_data(as_text=True)
    # the good line on line 1 is not enough: a half-read file accepts no token
    assert_problem(client.get("/v1/checks", headers=bearer(OLD_TOKEN)), 401)


@pytest.mark.parametrize("value", ["0" * 63, "g" * 64, "0" * 65, "sha256:" + "0" * 64])
def test_bad_environment_digest_is_not_ready(build, value):
    client = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_SHA256=value).test_client()
    problems = _not_ready(client)
    assert problems == ["BURNPROOF_TOKEN_SHA256 item 1 is not a SHA-256 digest (64 hex digits)"]


def test_unreadable_token_file_is_not_ready(build, tmp_path):
    missing = tmp_path / "absent"
    client = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_FILE=str(missing)).test_client()
    assert any(str(missing) in p and "cannot be read" in p for p in _not_ready(client))


@pytest.mark.parametrize(
    ("name", "value"), [("BURNPROOF_AUTH", "yes"), ("BURNPROOF_METRICS_AUTH", "on")]
)
def test_unknown_mode_is_not_ready_and_refuses_tokens(build, name, value):
    client = build(**{name: value}, BURNPROOF_TOKEN_SHA256=digest(OLD_TOKEN)).test_client()
    problems = _not_ready(client)
    assert any(name in p and repr(value) in p for p in problems)
    path = "/v1/checks" if name == "BURNPROOF_AUTH" else "/metrics"
    assert_problem(client.get(path, headers=bearer(OLD_TOKEN)), 401)


def test_auth_off_by_default(build):
    client = build().test_client()
    assert client.get("/v1/checks").status_code == 200
    assert client.get("/readyz").status_code == 200


# --- open routes and /metrics ---------------------------------------------------------------


@pytest.mark.parametrize("path", ["/healthz", "/readyz", "/openapi.json"])
def test_probes_and_the_document_stay_open(bearer_app, path):
    assert bearer_app.test_client().get(path).status_code == 200


def test_metrics_open_by_default_and_gated_on_request(build):
    open_client = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_SHA256=digest(OLD_TOKEN))
    assert open_client.test_client().get("/metrics").status_code == 200
    gated = build(
        BURNPROOF_AUTH="bearer",
        BURNPROOF_METRICS_AUTH="bearer",
        BURNPROOF_TOKEN_SHA256=digest(OLD_TOKEN),
    ).test_client()
    response = gated.get("/metrics")
    assert_problem(response, 401)
    assert response.headers["WWW-Authenticate"] == CHALLENGE
    assert gated.get("/metrics", headers=bearer(OLD_TOKEN)).status_code == 200


def test_metrics_can_be_gated_while_v1_stays_open(build):
    client = build(
        BURNPROOF_METRICS_AUTH="bearer", BURNPROOF_TOKEN_SHA256=digest(OLD_TOKEN)
    ).test_client()
    assert client.get("/v1/checks").status_code == 200
    assert_problem(client.get("/metrics"), 401)


@pytest.mark.parametrize("path", ["//v1/checks", "/v1//profiles", "/v1/no-such-thing", "/v1"])
def test_odd_paths_under_v1_are_refused_before_routing(bearer_app, path):
    environ = EnvironBuilder(path="/", method="GET").get_environ()
    environ["PATH_INFO"] = (
        path  # as the server passes it: the test client would read //v1 as a host
    )
    body, status, _ = run_wsgi_app(bearer_app, environ, buffered=True)
    assert status.startswith("401"), status
    assert json.loads(b"".join(body))["status"] == 401


def test_wrong_method_under_v1_is_refused_before_the_405(bearer_app):
    assert_problem(bearer_app.test_client().delete("/v1/checks"), 401)
    response = bearer_app.test_client().delete("/v1/checks", headers=bearer(OLD_TOKEN))
    assert_problem(response, 405)
    assert "GET" in response.headers["Allow"]


# --- how tokens are compared ----------------------------------------------------------------


def test_every_stored_digest_is_compared_with_compare_digest(build, monkeypatch):
    stored = [digest(f"station-{n}") for n in range(5)]
    app = build(BURNPROOF_AUTH="bearer", BURNPROOF_TOKEN_SHA256=",".join(stored))
    calls: list[tuple[object, object]] = []
    real = hmac.compare_digest

    def counting(a, b):
        calls.append((a, b))
        return real(a, b)

    monkeypatch.setattr(auth.hmac, "compare_digest", counting)
    client = app.test_client()
    for token, status in (("station-0", 200), ("station-4", 200), ("intruder", 401)):
        calls.clear()
        assert client.get("/v1/checks", headers=bearer(token)).status_code == status
        assert len(calls) == len(stored)  # no early exit, matched or not
        assert all(isinstance(a, bytes) and isinstance(b, bytes) for a, b in calls)
        assert {b for _, b in calls} == {bytes.fromhex(d) for d in stored}
        assert all(a == hashlib.sha256(token.encode()).digest() for a, _ in calls)


def test_secrets_are_never_compared_with_equals():
    source = open(auth.__file__, encoding="utf-8").read()
    assert "compare_digest" in source
    assert "digest ==" not in source and "== digest" not in source
    assert "token ==" not in source and "== token" not in source


def test_token_matches_hashes_the_raw_bytes():
    digests = (hashlib.sha256(b"abc").digest(),)
    assert auth.token_matches("abc", digests)
    assert not auth.token_matches("abd", digests)
    assert not auth.token_matches("abc", ())


# --- a 401 never reads the body -------------------------------------------------------------


class _Untouchable(io.RawIOBase):
    """A request body that records any read."""

    def __init__(self) -> None:
        self.reads = 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        self.reads += 1
        return 0


@pytest.mark.parametrize("headers", [{}, {"Authorization": "Bearer wrong-token"}])
def test_the_plan_body_is_not_read_on_401(bearer_app, headers):
    stream = _Untouchable()
    environ = EnvironBuilder(
        path="/v1/validations",
        method="POST",
        headers={"Content-Type": "application/json", **headers},
    ).get_environ()
    environ["CONTENT_LENGTH"] = "1000"
    environ["wsgi.input"] = stream
    body, status, _ = run_wsgi_app(bearer_app, environ, buffered=True)
    assert status.startswith("401")
    assert stream.reads == 0
    assert json.loads(b"".join(body))["status"] == 401
