"""The report schema: exactly the dict ``Engine.validate`` returns, for documentation.

The engine builds the report (``service.engine.report``); this schema describes
it for the generated JSON Schema and OpenAPI documents, and tests load real
reports through it (unknown fields refused) so the two cannot drift apart.
Every field is always present; ``null`` only where the schema allows it.
"""

from __future__ import annotations

from marshmallow import RAISE, Schema, ValidationError, fields, validate

STATUSES = ("pass", "warn", "fail", "error", "skipped")
VERDICTS = ("pass", "warn", "fail")
UTC_EPOCH_PATTERN = r"^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}(\.[0-9]{3})?Z$"
DIGEST_PATTERN = r"^sha256:[0-9a-f]{64}$"


class ScalarValue(fields.Raw):
    """A threshold value: number, boolean, string or null."""

    def __init__(self, **kwargs) -> None:
        super().__init__(allow_none=True, **kwargs)

    def _deserialize(self, value, attr, data, **kwargs):
        if not isinstance(value, int | float | str):  # bool is an int
            raise ValidationError("must be a number, a boolean, a string or null")
        return value


def _number(description: str | None = None, *, nullable: bool = False) -> fields.Float:
    meta = {"description": description} if description else {}
    return fields.Float(required=True, allow_none=nullable, metadata=meta)


def _epoch(description: str, *, nullable: bool = False) -> fields.String:
    return fields.String(
        required=True,
        allow_none=nullable,
        validate=validate.Regexp(UTC_EPOCH_PATTERN),
        metadata={
            "description": description + " (UTC, milliseconds only when non-zero)",
            "pattern": UTC_EPOCH_PATTERN,
        },
    )


def _text(description: str | None = None, *, nullable: bool = False) -> fields.String:
    meta = {"description": description} if description else {}
    return fields.String(required=True, allow_none=nullable, metadata=meta)


class _Closed(Schema):
    class Meta:
        unknown = RAISE


class SummarySchema(_Closed):
    """How many findings have each status."""

    pass_ = fields.Integer(required=True, data_key="pass", validate=validate.Range(min=0))
    warn = fields.Integer(required=True, validate=validate.Range(min=0))
    fail = fields.Integer(required=True, validate=validate.Range(min=0))
    error = fields.Integer(required=True, validate=validate.Range(min=0))
    skipped = fields.Integer(required=True, validate=validate.Range(min=0))


class FindingSchema(_Closed):
    """One judgement of one check."""

    check = _text("the check's id")
    status = fields.String(required=True, validate=validate.OneOf(STATUSES))
    maneuver = _text("the maneuver id it concerns, if any", nullable=True)
    arc = fields.Integer(
        required=True, allow_none=True, metadata={"description": "the coast arc index, if any"}
    )
    message = _text("what was found, with the number and the limit")
    value = _number("the number judged", nullable=True)
    limit = _number("the limit it was judged against", nullable=True)
    unit = _text("unit of value and limit", nullable=True)


class ManeuverReportSchema(_Closed):
    """A burn as flown by the model."""

    id = _text()
    engine = _text()
    frame = fields.String(required=True, validate=validate.OneOf(("RTN", "TNW", "GCRF", "EME2000")))
    delta_v_m_s = _number("magnitude of the planned delta-v")
    delta_v_inertial_m_s = fields.List(
        fields.Float(),
        required=True,
        validate=validate.Length(equal=3),
        metadata={"description": "the impulse in the inertial frame at the burn centre"},
    )
    propellant_kg = _number()
    duration_s = _number("constant-thrust burn time from the rocket equation")
    mass_before_kg = _number()
    mass_after_kg = _number()
    ignition = _epoch("engine start")
    centre = _epoch("ignition + duration / 2, where the impulse is applied")
    cutoff = _epoch("engine stop")
    finite_burn_loss_m_s = _number(
        "extra delta-v a finite burn needs over the impulse", nullable=True
    )


class ArcSchema(_Closed):
    """One coast arc: before the first burn, then after each burn; the last has no end."""

    index = fields.Integer(required=True, validate=validate.Range(min=0))
    after_maneuver = _text("the burn that starts this arc; null for the first", nullable=True)
    start = _epoch("start of the arc")
    end = _epoch("end of the arc; null for the last", nullable=True)
    semi_major_axis_km = _number(nullable=True)
    eccentricity = _number(nullable=True)
    inclination_deg = _number(nullable=True)
    raan_deg = _number(nullable=True)
    arg_periapsis_deg = _number(nullable=True)
    true_anomaly_deg = _number(nullable=True)
    periapsis_altitude_km = _number(nullable=True)
    apoapsis_altitude_km = _number("null for an unbound orbit", nullable=True)
    period_s = _number("null for an unbound orbit", nullable=True)
    lowest_altitude_km = _number("lowest altitude reached on the arc", nullable=True)
    lowest_altitude_epoch = _epoch("when the lowest altitude is reached")


class TotalsSchema(_Closed):
    delta_v_m_s = _number()
    propellant_kg = _number()
    propellant_remaining_kg = _number("loaded minus used; negative when the plan needs more")
    final_mass_kg = _number()


class CheckRefSchema(_Closed):
    id = _text()
    version = _text()
    source = _text("the module or distribution that registered it")


class ProvenanceSchema(_Closed):
    """What produced this report, so it can be reproduced."""

    plan_digest = fields.String(
        required=True,
        validate=validate.Regexp(DIGEST_PATTERN),
        metadata={
            "description": "SHA-256 of the plan's canonical JSON (sorted keys, no white space)",
            "pattern": DIGEST_PATTERN,
        },
    )
    profile = _text()
    profile_digest = fields.String(
        required=True,
        validate=validate.Regexp(DIGEST_PATTERN),
        metadata={"pattern": DIGEST_PATTERN},
    )
    service_version = _text()
    plugin_api_version = _text()
    coast_model = _text("the coast model the arcs were propagated with")
    checks = fields.List(fields.Nested(CheckRefSchema), required=True)
    thresholds = fields.Dict(
        keys=fields.String(),
        values=fields.Dict(keys=fields.String(), values=ScalarValue()),
        required=True,
        metadata={"description": "check id -> parameter -> the value applied"},
    )


class ReportSchema(_Closed):
    """The 200 body of ``POST /v1/validations`` (CONTRACT.md section 2)."""

    plan_id = _text()
    verdict = fields.String(
        required=True,
        validate=validate.OneOf(VERDICTS),
        metadata={"description": "fail-closed: fail on any fail or error, else warn, else pass"},
    )
    summary = fields.Nested(SummarySchema, required=True)
    findings = fields.List(fields.Nested(FindingSchema), required=True)
    maneuvers = fields.List(fields.Nested(ManeuverReportSchema), required=True)
    arcs = fields.List(fields.Nested(ArcSchema), required=True)
    totals = fields.Nested(TotalsSchema, required=True)
    provenance = fields.Nested(ProvenanceSchema, required=True)
    cautions = fields.List(
        fields.String(),
        required=True,
        metadata={
            "description": "always includes the advisory that results support, never "
            "replace, the operator's own flight rules and approval process"
        },
    )
