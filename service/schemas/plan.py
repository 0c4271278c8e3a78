"""The plan schema: a JSON object in, ``service.engine.plan.Plan`` out, or every fault at once.

``load_plan(data)`` is the one entry: every violation becomes
``PlanInvalid(errors)`` with ``errors`` mapping a dotted field path
(``spacecraft.engines.0.thrust_n``, ``maneuvers.2.id``, ``initial_state``; ``plan``
for the body as a whole) to messages that name the field, say what is wrong and
what is allowed. All faults are collected, not just the first.

Rules beyond single fields (decided here, documented for clients):

* unknown fields are refused at every level (marshmallow ``RAISE``);
* ``null`` is accepted only for optional fields without a default
  (``target_orbit``, ``max_burn_s``, ``min_burn_s``, ``execution_errors`` and each of its
  fields, ``drag_area_m2``,
  ``drag_coefficient``, ``protected_axis_offset_deg``, ``srp_area_m2``,
  ``reflectivity_coefficient``, ``target_orbit.inclination_deg``,
  ``maneuvers[].declared_duration_s``, ``maneuvers[].declared_propellant_kg``) and means
  "not given";
* ``end_of_life`` is a JSON boolean only (``true``/``false``, never ``"yes"``, ``1`` or
  ``null``); it marks the plan as an end-of-life disposal for the ``disposal`` check;
* ``initial_state`` holds exactly one form: Cartesian (``frame``, ``position_km``,
  ``velocity_km_s``) or ``elements``;
* elements: e != 1 (a semi-major axis cannot describe a parabola), a > 0 when
  e < 1, a < 0 when e > 1, and for e > 1 the true anomaly strictly inside the
  asymptotes (1 + e cos nu > 0, i.e. |nu| < arccos(-1/e) after wrapping to
  [-180, 180));
* ``spacecraft.engines[].execution_errors``: the engine's own 1-sigma errors, each
  optional, finite and from 0 up to a maximum (magnitude fraction 0.5, fixed part
  100 m/s, pointing 30 deg, timing 3600 s);
* engine ids unique; maneuver ids unique (the error is on the later duplicate);
  each maneuver names an engine of the spacecraft; ``min_burn_s <= max_burn_s``;
  ``target_orbit.periapsis_altitude_km <= apoapsis_altitude_km``;
* ``ground_stations``: at most 64, ids unique within the plan (the engine also
  refuses an id the profile's network already has).

The plan's digest is ``plan_digest`` over the data exactly as received.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping

from marshmallow import RAISE, Schema, ValidationError, fields, post_load, validates_schema

from service.engine.errors import PlanInvalid
from service.engine.plan import (
    DEFAULT_MIN_ELEVATION_DEG,
    EXECUTION_ERROR_MAXIMA,
    HEIGHT_RANGE_KM,
    LATITUDE_RANGE_DEG,
    LONGITUDE_RANGE_DEG,
    MAX_GROUND_STATIONS,
    MIN_ELEVATION_RANGE_DEG,
    PROTECTED_AXIS_RANGE_DEG,
    REFLECTIVITY_COEFFICIENT_RANGE,
    STATION_ID_MAX_CHARS,
    CartesianState,
    ElementsState,
    Engine,
    ExecutionErrors,
    GroundStation,
    Maneuver,
    Plan,
    Spacecraft,
    TargetOrbit,
    plan_digest,
)
from service.schemas.fields import (
    BoundedList,
    Epoch,
    FiniteNumber,
    RuleValues,
    StrictNested,
    StrictString,
    Vector3,
    _Named,
    describe_value,
    show_number,
)

CENTRAL_BODIES = ("earth", "moon", "mars")
STATE_FRAMES = ("GCRF", "EME2000")
MANEUVER_FRAMES = ("RTN", "TNW", "GCRF", "EME2000")
MAX_ENGINES = 16
MAX_MANEUVERS = 500
UNKNOWN_FIELD = "unknown field"
_CARTESIAN_KEYS = ("frame", "position_km", "velocity_km_s")


class StrictSchema(Schema):
    """Unknown fields are errors; the message lists the fields that are allowed."""

    class Meta:
        unknown = RAISE

    def __init__(self, *args, **kwargs) -> None:
        super().__init__(*args, **kwargs)
        allowed = ", ".join(sorted(f.data_key or name for name, f in self.load_fields.items()))
        self.error_messages = {
            **self.error_messages,
            "unknown": f"{UNKNOWN_FIELD}; allowed here: {allowed}",
            "type": "must be a JSON object",
        }


def _optional_number(description: str | None = None, **limits) -> FiniteNumber:
    metadata = {"description": description} if description else {}
    return FiniteNumber(allow_none=True, load_default=None, metadata=metadata, **limits)


class _StrictBoolean(_Named, fields.Boolean):
    """A JSON ``true`` or ``false`` only: never ``"true"``, ``1`` or ``"yes"``."""

    def describe(self) -> str:
        return "true or false"

    def _deserialize(self, value, attr, data, **kwargs) -> bool:
        if not isinstance(value, bool):
            raise self.wrong(value)
        return value


def _ids(items: object) -> list[tuple[int, str]]:
    """(index, id) of the list items in the raw data that carry a string id."""
    if not isinstance(items, list | tuple):
        return []
    return [
        (index, item["id"])
        for index, item in enumerate(items)
        if isinstance(item, Mapping) and isinstance(item.get("id"), str)
    ]


def _duplicates(items: object, noun: str, path: str) -> dict[int, dict[str, list[str]]]:
    first: dict[str, int] = {}
    errors: dict[int, dict[str, list[str]]] = {}
    for index, item_id in _ids(items):
        if item_id in first:
            errors[index] = {
                "id": [
                    f"id {item_id!r} is already used by {path}.{first[item_id]}; each {noun} "
                    "needs a unique id"
                ]
            }
        else:
            first[item_id] = index
    return errors


_EXECUTION_ERROR_HELP = {
    "magnitude_fraction_1sigma": "1-sigma proportional error of the delivered delta-v "
    "magnitude, as a fraction (0.01 = 1 %)",
    "magnitude_fixed_m_s_1sigma": "1-sigma fixed error of the delivered delta-v magnitude, m/s",
    "pointing_1sigma_deg": "1-sigma pointing error of the thrust axis, deg (per axis, "
    "perpendicular to the planned direction)",
    "timing_1sigma_s": "1-sigma ignition timing error, s",
}


class ExecutionErrorsSchema(StrictSchema):
    """An engine's own 1-sigma execution errors; each field optional, the profile's otherwise."""

    magnitude_fraction_1sigma = _optional_number(
        _EXECUTION_ERROR_HELP["magnitude_fraction_1sigma"],
        ge=0,
        le=EXECUTION_ERROR_MAXIMA["magnitude_fraction_1sigma"],
    )
    magnitude_fixed_m_s_1sigma = _optional_number(
        _EXECUTION_ERROR_HELP["magnitude_fixed_m_s_1sigma"],
        ge=0,
        le=EXECUTION_ERROR_MAXIMA["magnitude_fixed_m_s_1sigma"],
    )
    pointing_1sigma_deg = _optional_number(
        _EXECUTION_ERROR_HELP["pointing_1sigma_deg"],
        ge=0,
        le=EXECUTION_ERROR_MAXIMA["pointing_1sigma_deg"],
    )
    timing_1sigma_s = _optional_number(
        _EXECUTION_ERROR_HELP["timing_1sigma_s"],
        ge=0,
        le=EXECUTION_ERROR_MAXIMA["timing_1sigma_s"],
    )

    @post_load
    def _make(self, data: dict, **kwargs) -> ExecutionErrors:
        return ExecutionErrors(**data)


class EngineSchema(StrictSchema):
    id = StrictString(required=True, min_length=1, max_length=64, allow_blank=False)
    thrust_n = FiniteNumber(required=True, gt=0)
    isp_s = FiniteNumber(required=True, gt=0)
    max_burn_s = _optional_number(gt=0)
    min_burn_s = _optional_number(ge=0)
    execution_errors = StrictNested(
        ExecutionErrorsSchema,
        allow_none=True,
        load_default=None,
        metadata={
            "description": "this engine's own 1-sigma execution errors, used by the "
            "execution-dispersion check for its burns in place of the profile's; each field "
            "optional (the profile's value where left out)"
        },
    )

    @validates_schema(skip_on_field_errors=False)
    def _on_time_limits(self, data: dict, **kwargs) -> None:
        low, high = data.get("min_burn_s"), data.get("max_burn_s")
        if low is not None and high is not None and low > high:
            raise ValidationError(
                f"min_burn_s {show_number(low)} exceeds max_burn_s {show_number(high)}; the "
                "minimum on-time must be at most the maximum",
                "min_burn_s",
            )

    @post_load
    def _make(self, data: dict, **kwargs) -> Engine:
        return Engine(**data)


class SpacecraftSchema(StrictSchema):
    """The spacecraft. Later issues add fields here (and to ``Spacecraft``) without a rename."""

    dry_mass_kg = FiniteNumber(required=True, gt=0)
    propellant_kg = FiniteNumber(required=True, ge=0)
    engines = BoundedList(
        StrictNested(EngineSchema),
        required=True,
        min_items=1,
        max_items=MAX_ENGINES,
        noun="engines",
    )
    drag_area_m2 = _optional_number(gt=0)
    drag_coefficient = _optional_number(gt=0)
    protected_axis_offset_deg = _optional_number(
        ge=PROTECTED_AXIS_RANGE_DEG[0], le=PROTECTED_AXIS_RANGE_DEG[1]
    )
    srp_area_m2 = _optional_number(
        "area exposed to sunlight for solar radiation pressure, m^2 (attitude-averaged); with "
        "reflectivity_coefficient and the mass after the last burn it gives the IADC "
        "geostationary graveyard minimum 235 km + 1000 CR A/m (IADC-02-01 section 5.3.1), "
        "which the disposal check needs for a spacecraft retired from the geostationary region",
        gt=0,
    )
    reflectivity_coefficient = _optional_number(
        "solar radiation pressure reflectivity coefficient CR: 1 for a body that absorbs all "
        "sunlight, 2 for one that reflects it all straight back (typically 1.2 to 1.5); used "
        "with srp_area_m2 by the disposal check's geostationary graveyard rule",
        ge=REFLECTIVITY_COEFFICIENT_RANGE[0],
        le=REFLECTIVITY_COEFFICIENT_RANGE[1],
    )

    @validates_schema(pass_original=True, skip_on_field_errors=False)
    def _unique_engines(self, data: dict, original_data: object, **kwargs) -> None:
        if isinstance(original_data, Mapping):
            errors = _duplicates(original_data.get("engines"), "engine", "spacecraft.engines")
            if errors:
                raise ValidationError({"engines": errors})

    @post_load
    def _make(self, data: dict, **kwargs) -> Spacecraft:
        return Spacecraft(**{**data, "engines": tuple(data["engines"])})


class ElementsSchema(StrictSchema):
    """Osculating classical elements at the plan epoch (degrees on the wire)."""

    semi_major_axis_km = FiniteNumber(required=True)
    eccentricity = FiniteNumber(required=True, ge=0)
    inclination_deg = FiniteNumber(required=True, ge=0, le=180)
    raan_deg = FiniteNumber(required=True, ge=-360, le=360)
    arg_periapsis_deg = FiniteNumber(required=True, ge=-360, le=360)
    true_anomaly_deg = FiniteNumber(required=True, ge=-360, le=360)

    @validates_schema(skip_on_field_errors=False)
    def _conic(self, data: dict, **kwargs) -> None:
        e, a = data.get("eccentricity"), data.get("semi_major_axis_km")
        if e is None:
            return
        if e == 1.0:
            raise ValidationError(
                "eccentricity 1 is a parabola, which a semi-major axis cannot describe (it is "
                "infinite); give e < 1 (ellipse, a > 0) or e > 1 (hyperbola, a < 0)",
                "eccentricity",
            )
        errors: dict[str, list[str]] = {}
        if a is not None and e < 1.0 and not a > 0.0:
            errors["semi_major_axis_km"] = [
                f"semi_major_axis_km must be greater than 0 for an ellipse (eccentricity "
                f"{show_number(e)} < 1); got {show_number(a)}"
            ]
        if a is not None and e > 1.0 and not a < 0.0:
            errors["semi_major_axis_km"] = [
                f"semi_major_axis_km must be less than 0 for a hyperbola (eccentricity "
                f"{show_number(e)} > 1); got {show_number(a)}"
            ]
        nu = data.get("true_anomaly_deg")
        if nu is not None and e > 1.0 and not 1.0 + e * math.cos(math.radians(nu)) > 0.0:
            limit = math.degrees(math.acos(-1.0 / e))
            errors["true_anomaly_deg"] = [
                f"true_anomaly_deg {show_number(nu)} is on or beyond the asymptotes of this "
                f"hyperbola (eccentricity {show_number(e)}); |true_anomaly_deg| must be less "
                f"than {limit:.6f} (arccos(-1/e)) after wrapping to [-180, 180)"
            ]
        if errors:
            raise ValidationError(errors)

    @post_load
    def _make(self, data: dict, **kwargs) -> ElementsState:
        return ElementsState(**data)


class InitialStateSchema(StrictSchema):
    """Exactly one of: Cartesian (frame, position_km, velocity_km_s) or ``elements``."""

    frame = StrictString(load_default="GCRF", choices=STATE_FRAMES)
    position_km = Vector3(nonzero="the spacecraft cannot be at the centre of the body")
    velocity_km_s = Vector3()
    elements = StrictNested(ElementsSchema)

    @validates_schema(pass_original=True, skip_on_field_errors=False)
    def _one_form(self, data: dict, original_data: object, **kwargs) -> None:
        if not isinstance(original_data, Mapping):
            return
        cartesian = [key for key in _CARTESIAN_KEYS if key in original_data]
        if "elements" in original_data and cartesian:
            raise ValidationError(
                "initial_state must hold exactly one form, Cartesian (frame, position_km, "
                "velocity_km_s) or elements; got elements together with " + ", ".join(cartesian)
            )
        if "elements" in original_data:
            return
        if not cartesian:
            raise ValidationError(
                "initial_state must hold exactly one form: Cartesian {frame, position_km, "
                "velocity_km_s} or {elements: {semi_major_axis_km, eccentricity, "
                "inclination_deg, raan_deg, arg_periapsis_deg, true_anomaly_deg}}; got neither"
            )
        missing = {
            key: [f"{key} is required in the Cartesian form: a list of exactly 3 finite numbers"]
            for key in ("position_km", "velocity_km_s")
            if key not in original_data
        }
        if missing:
            raise ValidationError(missing)

    @post_load
    def _make(self, data: dict, **kwargs) -> CartesianState | ElementsState:
        if "elements" in data:
            return data["elements"]
        return CartesianState(data["frame"], data["position_km"], data["velocity_km_s"])


class ManeuverSchema(StrictSchema):
    id = StrictString(required=True, min_length=1, max_length=64, allow_blank=False)
    ignition = Epoch(required=True)
    engine = StrictString(required=True, min_length=1, max_length=64)
    frame = StrictString(required=True, choices=MANEUVER_FRAMES)
    delta_v_m_s = Vector3(required=True, nonzero="a burn needs a non-zero delta-v")
    declared_duration_s = _optional_number(
        "the burn duration the planner declared, s (an OPM's MAN_DURATION; 0 for a burn the "
        "planner modelled as an impulse); the declared-burn-agreement check compares it with "
        "the duration burnproof computes from the engine",
        ge=0,
    )
    declared_propellant_kg = _optional_number(
        "the propellant the planner declared the burn uses, kg (minus an OPM's "
        "MAN_DELTA_MASS); the declared-burn-agreement check compares it with the propellant "
        "burnproof computes from the rocket equation",
        ge=0,
    )

    @post_load
    def _make(self, data: dict, **kwargs) -> Maneuver:
        return Maneuver(**data)


class TargetOrbitSchema(StrictSchema):
    periapsis_altitude_km = FiniteNumber(required=True)
    apoapsis_altitude_km = FiniteNumber(required=True)
    tolerance_km = FiniteNumber(load_default=5.0, gt=0)
    inclination_deg = _optional_number(ge=0, le=180)
    tolerance_deg = FiniteNumber(load_default=0.05, gt=0)

    @validates_schema(skip_on_field_errors=False)
    def _ordered(self, data: dict, **kwargs) -> None:
        low, high = data.get("periapsis_altitude_km"), data.get("apoapsis_altitude_km")
        if low is not None and high is not None and low > high:
            raise ValidationError(
                f"apoapsis_altitude_km {show_number(high)} is below periapsis_altitude_km "
                f"{show_number(low)}; the apoapsis altitude must be at least the periapsis one",
                "apoapsis_altitude_km",
            )

    @post_load
    def _make(self, data: dict, **kwargs) -> TargetOrbit:
        return TargetOrbit(**data)


class GroundStationSchema(StrictSchema):
    """A ground station: geodetic latitude, east longitude and height on WGS 84, and its mask."""

    id = StrictString(
        required=True, min_length=1, max_length=STATION_ID_MAX_CHARS, allow_blank=False
    )
    latitude_deg = FiniteNumber(required=True, ge=LATITUDE_RANGE_DEG[0], le=LATITUDE_RANGE_DEG[1])
    longitude_deg = FiniteNumber(
        required=True, ge=LONGITUDE_RANGE_DEG[0], lt=LONGITUDE_RANGE_DEG[1]
    )
    height_km = FiniteNumber(required=True, ge=HEIGHT_RANGE_KM[0], le=HEIGHT_RANGE_KM[1])
    min_elevation_deg = FiniteNumber(
        load_default=DEFAULT_MIN_ELEVATION_DEG,
        ge=MIN_ELEVATION_RANGE_DEG[0],
        lt=MIN_ELEVATION_RANGE_DEG[1],
    )

    @post_load
    def _make(self, data: dict, **kwargs) -> GroundStation:
        return GroundStation(**data)


class PlanSchema(StrictSchema):
    """The request body of ``POST /v1/validations`` (CONTRACT.md section 1)."""

    plan_id = StrictString(required=True, min_length=1, max_length=128, allow_blank=False)
    central_body = StrictString(load_default="earth", choices=CENTRAL_BODIES)
    epoch = Epoch(required=True)
    initial_state = StrictNested(InitialStateSchema, required=True)
    spacecraft = StrictNested(SpacecraftSchema, required=True)
    maneuvers = BoundedList(
        StrictNested(ManeuverSchema), load_default=list, max_items=MAX_MANEUVERS, noun="maneuvers"
    )
    target_orbit = StrictNested(TargetOrbitSchema, allow_none=True, load_default=None)
    profile = StrictString(load_default="default", min_length=1, max_length=128)
    rules = RuleValues(load_default=dict)
    ground_stations = BoundedList(
        StrictNested(GroundStationSchema),
        load_default=list,
        max_items=MAX_GROUND_STATIONS,
        noun="ground stations",
    )
    end_of_life = _StrictBoolean(
        load_default=False,
        metadata={
            "description": "true marks the plan as an end-of-life disposal: the disposal check "
            "then judges the final orbit against the IADC debris-mitigation guidelines "
            "(IADC-02-01): a geostationary spacecraft's graveyard perigee (needs "
            "spacecraft.srp_area_m2 and reflectivity_coefficient), or in low Earth orbit the "
            "estimated orbital lifetime (needs spacecraft.drag_area_m2 and drag_coefficient) or a "
            "controlled re-entry. false (the default): the check is skipped"
        },
    )

    @validates_schema(pass_original=True, skip_on_field_errors=False)
    def _references(self, data: dict, original_data: object, **kwargs) -> None:
        if not isinstance(original_data, Mapping):
            return
        maneuvers = original_data.get("maneuvers")
        errors: dict[int, dict[str, list[str]]] = _duplicates(maneuvers, "maneuver", "maneuvers")
        spacecraft = original_data.get("spacecraft")
        known = sorted(
            {engine_id for _, engine_id in _ids(spacecraft.get("engines"))}
            if isinstance(spacecraft, Mapping)
            else set()
        )
        if known and isinstance(maneuvers, list | tuple):
            for index, maneuver in enumerate(maneuvers):
                engine = maneuver.get("engine") if isinstance(maneuver, Mapping) else None
                if isinstance(engine, str) and engine not in known:
                    errors.setdefault(index, {})["engine"] = [
                        f"unknown engine {engine!r}; known: {', '.join(known)}"
                    ]
        stations = _duplicates(
            original_data.get("ground_stations"), "ground station", "ground_stations"
        )
        faults: dict[str, object] = {}
        if errors:
            faults["maneuvers"] = errors
        if stations:
            faults["ground_stations"] = stations
        if faults:
            raise ValidationError(faults)

    @post_load(pass_original=True)
    def _make(self, data: dict, original_data: object, **kwargs) -> Plan:
        return Plan(
            **{
                **data,
                "maneuvers": tuple(data["maneuvers"]),
                "ground_stations": tuple(data["ground_stations"]),
            },
            digest=plan_digest(original_data),
        )


def flatten_errors(messages: object) -> dict[str, list[str]]:
    """marshmallow's nested error dicts as {dotted path: [messages]}; ``_schema`` folds away."""
    flat: dict[str, list[str]] = {}

    def walk(node: object, path: tuple[str, ...]) -> None:
        if isinstance(node, Mapping):
            for key, value in node.items():
                walk(value, path if key == "_schema" else (*path, str(key)))
        elif isinstance(node, list | tuple):
            for item in node:
                walk(item, path)
        else:
            message = str(node)
            if message.startswith(UNKNOWN_FIELD + ";") and path:
                message = f"{UNKNOWN_FIELD} {path[-1]!r}" + message[len(UNKNOWN_FIELD) :]
            bucket = flat.setdefault(".".join(path) or "plan", [])
            if message not in bucket:
                bucket.append(message)

    walk(messages, ())
    return flat


@functools.cache
def _plan_schema() -> PlanSchema:
    return PlanSchema()  # built once; marshmallow schemas keep no state between loads


def load_plan(data: object) -> Plan:
    """The typed ``Plan`` for a parsed JSON body; raises ``PlanInvalid`` naming every fault.

    >>> load_plan([]).plan_id
    Traceback (most recent call last):
    ...
    service.engine.errors.PlanInvalid: plan: the plan must be a JSON object; got an array of 0 items
    """
    if not isinstance(data, Mapping):
        raise PlanInvalid({"plan": [f"the plan must be a JSON object; got {describe_value(data)}"]})
    try:
        return _plan_schema().load(data)
    except ValidationError as error:
        raise PlanInvalid(flatten_errors(error.messages)) from None
