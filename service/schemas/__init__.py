"""The edge where JSON becomes typed objects: strict body parsing, the plan schema, the report.

``parse_json_bytes(raw) -> object`` (raises ``MalformedJson``) and
``load_plan(data) -> Plan`` (raises ``service.engine.errors.PlanInvalid``) are
what the HTTP layer and the command line call. ``ReportSchema`` documents the
engine's report; ``service.schemas.export`` turns both into JSON Schema and
OpenAPI (``python -m service.schemas.export [--check]``).
"""

from service.schemas.json_body import MalformedJson, parse_json_bytes
from service.schemas.plan import PlanSchema, flatten_errors, load_plan
from service.schemas.report import ReportSchema

__all__ = [
    "MalformedJson",
    "PlanSchema",
    "ReportSchema",
    "flatten_errors",
    "load_plan",
    "parse_json_bytes",
]
