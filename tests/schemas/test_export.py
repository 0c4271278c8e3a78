"""The generated documents: committed files match the code, and they are valid and complete."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from jsonschema import Draft202012Validator, ValidationError

from service.engine.errors import PlanInvalid
from service.schemas import load_plan
from service.schemas.export import documents, json_schema, main, openapi_document
from tests.plans import elements_plan, valid_plan, with_value

SCHEMAS_DIR = Path(__file__).resolve().parents[2] / "schemas"


@pytest.mark.parametrize("name", ["openapi.json", "plan.schema.json", "report.schema.json"])
def test_committed_documents_match_the_code(name: str) -> None:
    """Drift: run `python -m service.schemas.export` (make schemas) after changing a schema."""
    committed = (SCHEMAS_DIR / name).read_text(encoding="utf-8")
    assert committed == documents()[name]


def test_check_mode_passes_on_the_repository() -> None:
    assert main(["--check"]) == 0


def test_check_mode_names_stale_files_and_writes_nothing(tmp_path: Path, capsys) -> None:
    (tmp_path / "plan.schema.json").write_text("{}\n", encoding="utf-8")
    assert main(["--check", "--out", str(tmp_path)]) == 1
    stderr = capsys.readouterr().err
    for name in ("openapi.json", "plan.schema.json", "report.schema.json"):
        assert name in stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.schema.json"]


def test_write_then_check(tmp_path: Path) -> None:
    assert main(["--out", str(tmp_path)]) == 0
    assert main(["--check", "--out", str(tmp_path)]) == 0


def test_output_is_deterministic_and_formatted() -> None:
    first, second = documents(), documents()
    assert first == second
    for text in first.values():
        assert text.endswith("}\n") and not text.endswith("\n\n")
        assert (
            text
            == json.dumps(json.loads(text), indent=2, sort_keys=True, ensure_ascii=False) + "\n"
        )


@pytest.mark.parametrize("root", ["Plan", "Report"])
def test_json_schemas_are_valid_2020_12(root: str) -> None:
    schema = json_schema(root)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    Draft202012Validator.check_schema(schema)
    assert "#/components/" not in json.dumps(schema)


def _refs(node: object):
    if isinstance(node, dict):
        for key, value in node.items():
            if key == "$ref":
                yield value
            else:
                yield from _refs(value)
    elif isinstance(node, list):
        for item in node:
            yield from _refs(item)


def test_openapi_document_lists_the_contract_endpoints() -> None:
    document = openapi_document()
    assert document["openapi"] == "3.1.0"
    operations = {(method, path) for path, item in document["paths"].items() for method in item}
    assert operations == {
        ("post", "/v1/validations"),
        ("post", "/v1/opm-validations"),
        ("get", "/v1/checks"),
        ("get", "/v1/profiles"),
        ("get", "/v1/profiles/{name}"),
        ("get", "/openapi.json"),
        ("get", "/healthz"),
        ("get", "/readyz"),
        ("get", "/metrics"),
    }
    post = document["paths"]["/v1/validations"]["post"]
    assert post["requestBody"]["content"]["application/json"]["schema"] == {
        "$ref": "#/components/schemas/Plan"
    }
    responses = post["responses"]
    assert set(responses) == {
        "200", "400", "401", "406", "409", "413", "415", "422", "500", "503"
    }  # fmt: skip
    assert responses["200"]["content"]["application/json"]["schema"]["$ref"].endswith("/Report")
    assert "text/x.ccsds-opm-kvn" in responses["200"]["content"]
    for status in ("400", "401", "406", "409", "413", "415", "422", "500", "503"):
        schema = responses[status]["content"]["application/problem+json"]["schema"]
        assert schema == {"$ref": "#/components/schemas/ProblemDetails"}
    assert post["security"] == [{"bearerAuth": []}]


def test_every_response_is_documented_with_its_headers() -> None:
    document = openapi_document()
    assert document["components"]["securitySchemes"]["bearerAuth"] == {
        **document["components"]["securitySchemes"]["bearerAuth"],
        "type": "http",
        "scheme": "bearer",
    }
    for path, item in document["paths"].items():
        for method, operation in item.items():
            responses = operation["responses"]
            assert "500" in responses, (method, path)
            for status, response in responses.items():
                assert response["headers"]["X-Request-ID"]["required"] is True, (path, status)
                if status != "200":
                    assert list(response["content"]) == ["application/problem+json"]
            if path.startswith("/v1/"):
                assert operation["security"] == [{"bearerAuth": []}], path
                assert "WWW-Authenticate" in responses["401"]["headers"]
            elif path == "/metrics":
                assert operation["security"] == [{}, {"bearerAuth": []}]
                assert "401" in responses
            else:
                assert "security" not in operation and "401" not in responses, path
    readyz = document["paths"]["/readyz"]["get"]["responses"]
    assert readyz["503"]["content"]["application/problem+json"]["schema"]["$ref"].endswith(
        "/NotReady"
    )
    not_allowed = document["components"]["responses"]["MethodNotAllowed"]
    assert not_allowed["headers"]["Allow"]["required"] is True


def test_every_openapi_reference_resolves() -> None:
    document = openapi_document()
    components = document["components"]["schemas"]
    refs = set(_refs(document))
    assert refs
    for ref in refs:
        assert ref.startswith("#/components/schemas/")
        assert ref.rsplit("/", 1)[1] in components
    for schema in components.values():
        Draft202012Validator.check_schema(schema)


def test_openapi_document_is_json_ready() -> None:
    document = openapi_document()
    assert json.loads(json.dumps(document, allow_nan=False)) == document


@pytest.mark.parametrize(
    ("path", "value"),
    [
        ("colour", "red"),
        ("initial_state.elements", {"semi_major_axis_km": 7000.0}),
        ("spacecraft.engines", []),
        ("spacecraft.engines.0.thrust_n", 0),
        ("maneuvers.0.frame", "LVLH"),
        ("maneuvers.0.delta_v_m_s", [1.0, 2.0]),
        ("maneuvers.0.ignition", "2031-05-02T01:00:00"),
        ("epoch", "2031-05-02 00:00:00Z"),
        ("plan_id", "   "),
    ],
)
def test_the_plan_json_schema_refuses_what_the_loader_refuses(path: str, value: object) -> None:
    data = with_value(valid_plan(), path, value)
    with pytest.raises(PlanInvalid):
        load_plan(data)
    with pytest.raises(ValidationError):
        Draft202012Validator(json_schema("Plan")).validate(data)


@pytest.mark.parametrize(
    "elements",
    [
        {"eccentricity": 1.0},
        {"eccentricity": 0.5, "semi_major_axis_km": -7000.0},
        {"eccentricity": 1.5, "semi_major_axis_km": 7000.0},
    ],
)
def test_the_plan_json_schema_knows_the_conic_rules(elements: dict) -> None:
    validator = Draft202012Validator(json_schema("Plan"))
    validator.validate(elements_plan())
    with pytest.raises(ValidationError):
        validator.validate(elements_plan(**elements))
