"""The API's documents, generated from the schemas: OpenAPI 3.1 and two JSON Schema (2020-12) files.

``openapi_document()`` is what ``GET /openapi.json`` serves.
``python -m service.schemas.export`` writes ``schemas/openapi.json``,
``schemas/plan.schema.json`` and ``schemas/report.schema.json``;
``--check`` writes nothing and exits 1 naming every file that differs from the code.

apispec's marshmallow plugin does the conversion; the strict fields of
``service.schemas.fields`` hold their limits as attributes, turned into JSON
Schema keywords by ``_strict_field_attributes``. What JSON Schema cannot say
(unique ids, engine references, the hyperbola's asymptotes, on-time order) is
written in each component's ``description``: a document that passes the JSON
Schema may still be refused by the service, never the other way round.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from apispec import APISpec
from apispec.ext.marshmallow import MarshmallowPlugin
from marshmallow import Schema, fields

from service import __version__
from service.schemas import plan as plan_schemas
from service.schemas import report as report_schemas
from service.schemas.fields import (
    EPOCH_PATTERN,
    BoundedList,
    Epoch,
    FiniteNumber,
    RuleValues,
    StrictString,
    Vector3,
)
from service.schemas.fields import NO_CONTROL_PATTERN as _NO_CONTROL
from service.schemas.openapi_bodies import (
    NOT_READY,
    OPM_VALIDATION_REQUEST,
    PROBLEM_DETAILS,
    SPACECRAFT_DESCRIPTION,
)
from service.schemas.openapi_paths import METHOD_NOT_ALLOWED, SECURITY_SCHEMES, paths
from service.schemas.report import ScalarValue

JSON_SCHEMA_DIALECT = "https://json-schema.org/draft/2020-12/schema"
_REF = "#/components/schemas/"
# No control characters and at least one character that is not white space.
_VISIBLE = "^(?=.*\\S)" + _NO_CONTROL[1:]
_ONE_INITIAL_STATE_FORM = [
    {"required": ["position_km", "velocity_km_s"], "not": {"required": ["elements"]}},
    {
        "required": ["elements"],
        "not": {
            "anyOf": [
                {"required": ["frame"]},
                {"required": ["position_km"]},
                {"required": ["velocity_km_s"]},
            ]
        },
    },
]
_CONIC_RULES = [
    {"not": {"properties": {"eccentricity": {"const": 1}}, "required": ["eccentricity"]}},
    {
        "if": {"properties": {"eccentricity": {"exclusiveMaximum": 1}}},
        "then": {"properties": {"semi_major_axis_km": {"exclusiveMinimum": 0}}},
        "else": {"properties": {"semi_major_axis_km": {"exclusiveMaximum": 0}}},
    },
]

# name -> (schema class, extra JSON Schema keywords). Referenced schemas come first.
PLAN_COMPONENTS: dict[str, tuple[type[Schema], dict]] = {
    "ExecutionErrors": (
        plan_schemas.ExecutionErrorsSchema,
        {
            "description": "An engine's own 1-sigma execution errors (Gaussian), used by the "
            "execution-dispersion check for this engine's burns in place of the profile's "
            "error model; a field left out or null keeps the profile's value."
        },
    ),
    "Engine": (
        plan_schemas.EngineSchema,
        {"description": "An engine. The service also requires min_burn_s <= max_burn_s."},
    ),
    "Spacecraft": (
        plan_schemas.SpacecraftSchema,
        {"description": "The spacecraft. The service also requires unique engine ids."},
    ),
    "Elements": (
        plan_schemas.ElementsSchema,
        {
            "description": "Osculating classical elements at the plan epoch (degrees). e != 1; "
            "a > 0 for e < 1 and a < 0 for e > 1; for e > 1 the service also requires the "
            "true anomaly strictly inside the asymptotes, 1 + e cos(nu) > 0.",
            "allOf": _CONIC_RULES,
        },
    ),
    "InitialState": (
        plan_schemas.InitialStateSchema,
        {
            "description": "Exactly one form: Cartesian body-centred inertial (frame, "
            "position_km, velocity_km_s; GCRF and EME2000 are one frame at this fidelity) or "
            "elements. The position must not be the zero vector.",
            "oneOf": _ONE_INITIAL_STATE_FORM,
        },
    ),
    "Maneuver": (
        plan_schemas.ManeuverSchema,
        {
            "description": "One burn: ignition is engine start. The service also requires a "
            "unique id, an engine of the spacecraft and a non-zero delta_v_m_s."
        },
    ),
    "TargetOrbit": (
        plan_schemas.TargetOrbitSchema,
        {
            "description": "The orbit the plan should reach. The service also requires "
            "periapsis_altitude_km <= apoapsis_altitude_km."
        },
    ),
    "GroundStation": (
        plan_schemas.GroundStationSchema,
        {
            "description": "A ground station: geodetic latitude, east longitude and height "
            "above the WGS 84 ellipsoid, and its elevation mask. The service also requires ids "
            "unique within the plan and not already in the profile's station network."
        },
    ),
    "Plan": (
        plan_schemas.PlanSchema,
        {
            "title": "burnproof plan",
            "description": "A maneuver plan (CONTRACT.md section 1). Unknown fields are "
            "refused at every level; epochs are UTC after any offset, rounded to the "
            "millisecond (halves up), in the years 1957 to 2200.",
        },
    ),
}
REPORT_COMPONENTS: dict[str, tuple[type[Schema], dict]] = {
    "Summary": (report_schemas.SummarySchema, {}),
    "Finding": (report_schemas.FindingSchema, {}),
    "ManeuverReport": (report_schemas.ManeuverReportSchema, {}),
    "Arc": (report_schemas.ArcSchema, {}),
    "Totals": (report_schemas.TotalsSchema, {}),
    "CheckRef": (report_schemas.CheckRefSchema, {}),
    "Provenance": (report_schemas.ProvenanceSchema, {}),
    "Report": (
        report_schemas.ReportSchema,
        {"title": "burnproof report", "description": "The report (CONTRACT.md section 2)."},
    ),
}


def _strict_field_attributes(self, field: fields.Field, **kwargs) -> dict:
    """JSON Schema keywords for the limits the strict fields hold as attributes."""
    out: dict = {}
    if isinstance(field, FiniteNumber):
        for attr, keyword in (
            ("gt", "exclusiveMinimum"),
            ("ge", "minimum"),
            ("lt", "exclusiveMaximum"),
            ("le", "maximum"),
        ):
            if getattr(field, attr) is not None:
                out[keyword] = getattr(field, attr)
    elif isinstance(field, StrictString):
        if field.choices:
            out["enum"] = list(field.choices)
        else:
            out["pattern"] = _NO_CONTROL if field.allow_blank else _VISIBLE
            if field.min_length is not None:
                out["minLength"] = field.min_length
            if field.max_length is not None:
                out["maxLength"] = field.max_length
    elif isinstance(field, Vector3):
        out.update(minItems=3, maxItems=3)
    elif isinstance(field, BoundedList):
        if field.min_items:
            out["minItems"] = field.min_items
        if field.max_items is not None:
            out["maxItems"] = field.max_items
    elif isinstance(field, Epoch):
        out.update(type="string", format="date-time", pattern=EPOCH_PATTERN)
    elif isinstance(field, RuleValues):
        out.update(
            type="object",
            description="check id -> parameter name -> value; may tighten the profile",
            additionalProperties={
                "type": "object",
                "additionalProperties": {"type": ["number", "boolean", "string"]},
            },
        )
    elif isinstance(field, ScalarValue):
        out["type"] = ["number", "boolean", "string", "null"]
    return out


def _sorted(document: dict) -> dict:
    return json.loads(json.dumps(document, sort_keys=True))


def openapi_document() -> dict:
    """The OpenAPI 3.1 document of the API (CONTRACT.md section 3), keys sorted."""
    plugin = MarshmallowPlugin()
    spec = APISpec(
        title="burnproof",
        version=__version__,
        openapi_version="3.1.0",
        plugins=[plugin],
        info={
            "description": "Checks a spacecraft's orbit-maneuver plan against flight rules "
            "before uplink. Results support, and never replace, the operator's own flight "
            "rules and approval process. A method a path does not list answers 405 "
            "(components.responses.MethodNotAllowed, with Allow); an unknown path 404."
        },
    )
    plugin.converter.add_attribute_function(_strict_field_attributes)
    for name, (schema, extra) in {**PLAN_COMPONENTS, **REPORT_COMPONENTS}.items():
        spec.components.schema(name, dict(extra), schema=schema)
    spec.components.schema("ProblemDetails", PROBLEM_DETAILS)
    # the name earlier documents gave it, kept so generated clients keep compiling
    spec.components.schema("Problem", {"$ref": _REF + "ProblemDetails"})
    spec.components.schema("NotReady", NOT_READY)
    spec.components.schema("SpacecraftDescription", SPACECRAFT_DESCRIPTION)
    spec.components.schema("OpmValidationRequest", OPM_VALIDATION_REQUEST)
    for name, scheme in SECURITY_SCHEMES.items():
        spec.components.security_scheme(name, scheme)
    spec.components.response("MethodNotAllowed", METHOD_NOT_ALLOWED)
    for path, operations in paths().items():
        spec.path(path=path, operations=operations)
    return _sorted(spec.to_dict())


def _reachable(components: dict, root: str) -> list[str]:
    seen, todo = [root], [root]
    while todo:
        text = json.dumps(components[todo.pop()])
        for name in components:
            if f'"{_REF}{name}"' in text and name not in seen:
                seen.append(name)
                todo.append(name)
    return seen


def json_schema(root: str, openapi: dict | None = None) -> dict:
    """A standalone JSON Schema (2020-12) for component ``root`` ("Plan" or "Report")."""
    components = (openapi or openapi_document())["components"]["schemas"]
    names = _reachable(components, root)
    text = json.dumps({name: components[name] for name in names}).replace(_REF, "#/$defs/")
    parts = json.loads(text)
    document = {"$schema": JSON_SCHEMA_DIALECT, **parts.pop(root)}
    if parts:
        document["$defs"] = parts
    return _sorted(document)


def render(document: dict) -> str:
    """The committed byte form: sorted keys, two-space indent, trailing newline."""
    return json.dumps(document, indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def documents() -> dict[str, str]:
    """File name (under schemas/) -> text of every generated document."""
    openapi = openapi_document()
    return {
        "openapi.json": render(openapi),
        "plan.schema.json": render(json_schema("Plan", openapi)),
        "report.schema.json": render(json_schema("Report", openapi)),
    }


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(
        prog="python -m service.schemas.export", description=__doc__.split("\n")[0]
    )
    parser.add_argument(
        "--check", action="store_true", help="write nothing; exit 1 if any file differs"
    )
    parser.add_argument(
        "--out",
        type=Path,
        default=Path(__file__).resolve().parents[2] / "schemas",
        help="directory of the documents (default: the repository's schemas/)",
    )
    args = parser.parse_args(argv)
    stale = []
    for name, text in documents().items():
        path = args.out / name
        current = path.read_text(encoding="utf-8") if path.exists() else None
        if current == text:
            continue
        stale.append(path)
        if not args.check:
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_text(text, encoding="utf-8")
    for path in stale:
        verb = (
            "differs from the code (run: python -m service.schemas.export)"
            if args.check
            else "written"
        )
        print(f"{path}: {verb}", file=sys.stderr if args.check else sys.stdout)
    return 1 if args.check and stale else 0


if __name__ == "__main__":
    sys.exit(main())
