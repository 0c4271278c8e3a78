"""JSON Schemas of the API's non-plan bodies: catalogues, health, readiness, problem documents.

Hand-written (they mirror ``service.engine.core`` catalogues and ``service.http``), kept
beside the generated plan and report components by ``service.schemas.export``.
"""

from __future__ import annotations

SCHEMA_REF = "#/components/schemas/"

PROBLEM_DETAILS = {
    "type": "object",
    "description": "RFC 9457 problem details (media type application/problem+json). type is a "
    "URN urn:burnproof:problem:<slug>; title is fixed per type; detail is this occurrence. "
    "Extension members: errors (422), acceptable (406), verdict and summary (409 "
    "plan-failed), ready, draining and problems (503 from /readyz and "
    "when the engine is not ready), compute_budget_s (503 compute-budget-exceeded); more "
    "may be added, so clients ignore members they do "
    "not know (RFC 9457 section 3.2).",
    "required": ["type", "title", "status", "detail"],
    "properties": {
        "type": {"type": "string", "format": "uri-reference", "pattern": "^urn:burnproof:problem:"},
        "title": {"type": "string", "minLength": 1},
        "status": {"type": "integer", "minimum": 400, "maximum": 599},
        "detail": {"type": "string", "minLength": 1},
        "errors": {
            "type": "object",
            "description": "422 only: dotted field path -> messages",
            "additionalProperties": {"type": "array", "items": {"type": "string"}},
        },
        "ready": {"type": "boolean", "description": "503 only: always false"},
        "acceptable": {
            "type": "array",
            "items": {"type": "string"},
            "description": "406 only: the response media types the endpoint can give",
        },
        "verdict": {
            "type": "string",
            "description": "409 plan-failed only: the plan's verdict (fail)",
        },
        "summary": {
            "type": "object",
            "description": "409 plan-failed only: the report's count of findings by status",
            "additionalProperties": {"type": "integer", "minimum": 0},
        },
        "draining": {
            "type": "boolean",
            "description": "503 from /readyz: whether the process is draining (about to stop)",
        },
        "compute_budget_s": {
            "type": "number",
            "exclusiveMinimum": 0,
            "description": "503 compute-budget-exceeded only: the per-request budget in seconds",
        },
        "problems": {
            "type": "array",
            "items": {"type": "string"},
            "description": "503 only: each reason the service is not ready, in words",
        },
    },
}
NOT_READY = {
    "description": "The readiness problem: the reasons, and whether the process is draining.",
    "allOf": [
        {"$ref": SCHEMA_REF + "ProblemDetails"},
        {
            "type": "object",
            "required": ["ready", "draining", "problems"],
            "properties": {"status": {"const": 503}, "ready": {"const": False}},
        },
    ],
}
READY = {
    "type": "object",
    "required": ["ready"],
    "properties": {"ready": {"const": True}, "draining": {"const": False}},
}
OPM_TEXT = {
    "type": "string",
    "description": "A CCSDS Orbit Parameter Message in KVN (CCSDS 502.0-B-3), US-ASCII, lines "
    "ending in LF; USER_DEFINED_BURNPROOF_* parameters carry the plan id, profile, maneuver "
    "ids and engines, and COMMENT lines the verdict, plan digest, profile and cautions.",
    "pattern": "^\\s*CCSDS_OPM_VERS",
}
OPM_VALIDATION_REQUEST = {
    "type": "object",
    "description": "POST /v1/opm-validations: an OPM and the spacecraft description that gives "
    "what an OPM cannot carry. Unknown fields are refused.",
    "required": ["opm", "spacecraft"],
    "additionalProperties": False,
    "properties": {
        "opm": {
            "type": "string",
            "minLength": 1,
            "description": "the Orbit Parameter Message, KVN text (versions 2.0 and 3.0)",
        },
        "spacecraft": {"$ref": SCHEMA_REF + "SpacecraftDescription"},
    },
}
SPACECRAFT_DESCRIPTION = {
    "type": "object",
    "description": "The spacecraft description: the plan's spacecraft block (propellant_kg may "
    "be left out: it is then the OPM's MASS less dry_mass_kg), the maneuvers' ids and engines "
    "in OPM order (or default_engine; a spacecraft with one engine needs neither), and plan "
    "fields an OPM cannot carry. Unknown fields are refused.",
    "required": ["spacecraft"],
    "additionalProperties": False,
    "properties": {
        "spacecraft": {
            "type": "object",
            "description": "as Plan.spacecraft, with propellant_kg optional",
        },
        "plan_id": {"type": "string", "minLength": 1, "maxLength": 128},
        "profile": {"type": "string", "minLength": 1, "maxLength": 128},
        "rules": {"type": "object"},
        "target_orbit": {"$ref": SCHEMA_REF + "TargetOrbit"},
        "ground_stations": {"type": "array", "items": {"$ref": SCHEMA_REF + "GroundStation"}},
        "end_of_life": {"type": "boolean"},
        "default_engine": {"type": "string", "minLength": 1},
        "maneuvers": {
            "type": "array",
            "description": "one entry per OPM maneuver, in the OPM's order",
            "items": {
                "type": "object",
                "additionalProperties": False,
                "properties": {
                    "id": {"type": "string", "minLength": 1, "maxLength": 64},
                    "engine": {"type": "string", "minLength": 1},
                },
            },
        },
    },
}
HEALTHY = {"type": "object", "required": ["status"], "properties": {"status": {"const": "ok"}}}
OPEN_OBJECT = {"type": "object", "additionalProperties": True}
CHECK = {
    "type": "object",
    "required": ["id", "version", "source", "summary", "parameters"],
    "properties": {
        "id": {"type": "string"},
        "version": {"type": "string"},
        "source": {"type": "string", "description": "the module that defines the check"},
        "distribution": {
            "type": ["string", "null"],
            "description": "the installed package that provides it (null: registered in code)",
        },
        "distribution_version": {"type": ["string", "null"]},
        "summary": {"type": "string"},
        "profiles": {
            "type": "array",
            "items": {"type": "string"},
            "description": "the profiles that enable this check",
        },
        "parameters": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["name", "default", "unit"],
                "properties": {
                    "name": {"type": "string"},
                    "default": {"type": ["number", "boolean", "string", "null"]},
                    "unit": {"type": "string"},
                    "stricter": {"enum": ["higher", "lower", None]},
                    "description": {"type": "string"},
                    "choices": {
                        "type": ["array", "null"],
                        "items": {"type": "string"},
                        "description": "the allowed values of a string parameter (null: any)",
                    },
                    "minimum": {
                        "type": ["number", "null"],
                        "description": "the smallest value a profile or request may give "
                        "(inclusive; null: unbounded)",
                    },
                    "maximum": {
                        "type": ["number", "null"],
                        "description": "the largest value a profile or request may give "
                        "(inclusive; null: unbounded)",
                    },
                },
            },
        },
    },
}
PROFILE = {
    "type": "object",
    "required": ["name", "thresholds"],
    "properties": {
        "name": {"type": "string"},
        "description": {"type": "string"},
        "allow_loosening": {"type": "boolean"},
        "check_time_budget_s": {"type": "number", "exclusiveMinimum": 0},
        "request_time_budget_s": {"type": "number", "exclusiveMinimum": 0},
        "source": {"type": "string", "description": "the file it was read from, or built-in"},
        "enabled": {
            "type": ["array", "null"],
            "items": {"type": "string"},
            "description": "the checks this profile runs; null means every registered check",
        },
        "thresholds": {"type": "object", "description": "check id -> parameter -> value"},
        "reasons": {
            "type": "object",
            "description": "check id -> parameter -> why this threshold, with its source",
        },
        "stations": {
            "type": "array",
            "description": "the site's ground-station network, given to every check with the "
            "plan's own ground_stations",
            "items": {"$ref": SCHEMA_REF + "GroundStation"},
        },
        "digest": {"type": "string", "pattern": "^sha256:[0-9a-f]{64}$"},
    },
}
