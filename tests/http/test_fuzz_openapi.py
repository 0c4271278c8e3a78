"""Property-based fuzzing of the whole API from its own OpenAPI document (schemathesis, in-process).

The app is built as production builds it (``create_app()`` reading the environment: the
built-in checks from the entry points, the built-in ``default`` profile) with bearer auth
on and one known token, which the fuzzer sends as the ``bearerAuth`` scheme so the
``/v1`` operations are exercised beyond their 401. Every built-in schemathesis check runs
on every response, among them: not_a_server_error, status_code_conformance,
content_type_conformance, response_schema_conformance, response_headers_conformance,
negative_data_rejection, positive_data_acceptance, ignored_auth (which also resends
without the token and with a wrong one and expects a 401), unsupported_method and
allow_header_conformance.

Examples per operation are bounded (``MAX_EXAMPLES``) so the run stays well inside CI
time; under ``CI`` the hypothesis profile of tests/conftest.py derandomises it.
"""

from __future__ import annotations

import hashlib

import pytest
import schemathesis
from hypothesis import HealthCheck, settings

from service.app import create_app

TOKEN = "fuzz-ops-ground-7f3c2a"  # an invented token; the app stores only its SHA-256
MAX_EXAMPLES = 40
# schemathesis' default for positive_data_acceptance, plus 422 (see CONFIG)
POSITIVE_STATUSES = ["2xx", "3xx", "401", "403", "404", "409", "422", "429", "5xx"]
_SETTINGS_VARIABLES = (
    "BURNPROOF_PROFILE_DIR",
    "BURNPROOF_PLUGINS_ALLOW",
    "BURNPROOF_PLUGINS_DENY",
    "BURNPROOF_TOKEN_FILE",
    "BURNPROOF_DRAIN_FILE",
    "PROMETHEUS_MULTIPROC_DIR",
)


def _production_app():
    """The production app with bearer auth on, one known token, /metrics left open.

    Built at collection: schemathesis' lazy ``from_fixture`` loader does not run under this
    pytest (it sets a private node attribute pytest 9 no longer has), so the schema is
    loaded when the module is, and the environment is restored straight after.
    """
    with pytest.MonkeyPatch.context() as patch:
        for name in _SETTINGS_VARIABLES:
            patch.delenv(name, raising=False)
        patch.setenv("BURNPROOF_AUTH", "bearer")
        patch.setenv("BURNPROOF_METRICS_AUTH", "open")
        patch.setenv("BURNPROOF_TOKEN_SHA256", hashlib.sha256(TOKEN.encode()).hexdigest())
        return create_app()


APP = _production_app()
CONFIG = schemathesis.Config.from_dict(
    {
        "auth": {"openapi": {"bearerAuth": {"bearer": TOKEN}}},
        "generation": {"max-examples": MAX_EXAMPLES},
        "operations": [
            {
                # The Plan schema cannot say everything the service checks (unique ids, engine
                # references, the profile named; its description says so), so a schema-valid
                # plan may rightly get a 422. Every other status still fails this check.
                "include-operation-id": "createValidation",
                "checks": {"positive_data_acceptance": {"expected-statuses": POSITIVE_STATUSES}},
            },
            {
                # Likewise a schema-valid envelope: its opm is any string and its description's
                # spacecraft any object, which the service reads and may rightly refuse.
                "include-operation-id": "createOpmValidation",
                "checks": {"positive_data_acceptance": {"expected-statuses": POSITIVE_STATUSES}},
            },
        ],
    }
)
schema = schemathesis.openapi.from_wsgi("/openapi.json", APP, config=CONFIG)


def test_the_fuzzed_app_is_ready_and_guarded():
    client = APP.test_client()
    assert client.get("/readyz").status_code == 200
    assert client.get("/v1/checks").status_code == 401
    assert client.get("/v1/checks", headers={"Authorization": f"Bearer {TOKEN}"}).status_code == 200


@schema.parametrize()
@settings(max_examples=MAX_EXAMPLES, deadline=None, suppress_health_check=list(HealthCheck))
def test_the_api_conforms_to_its_openapi_document(case):
    case.call_and_validate()
