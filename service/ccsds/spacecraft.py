"""The spacecraft description: what a plan needs beside an OPM that an OPM cannot carry.

A CCSDS Orbit Parameter Message (CCSDS 502.0-B-2, November 2009; 502.0-B-3, April 2023)
gives the state, the mass and the maneuvers, but no engines, no flight-rule profile and
no target. The description, a JSON or TOML document, gives them:

- ``spacecraft`` (required): exactly the plan's spacecraft block (CONTRACT.md section 1,
  ``service.schemas.plan.SpacecraftSchema``), except that ``propellant_kg`` may be left
  out: it is then the OPM's ``MASS`` minus ``dry_mass_kg``, taken in ``Decimal`` from the
  two texts so it is exact. When both are given, ``MASS`` must equal dry + propellant within
  1 g, or the description is refused naming both;
- optional plan fields: ``plan_id``, ``profile``, ``rules``, ``target_orbit``,
  ``ground_stations``, ``end_of_life`` (checked by the plan schema once the plan is built);
- ``maneuvers``: the OPM's maneuvers in their order, each ``{"id": ..., "engine": ...}``
  (``engine`` optional), and/or ``default_engine`` for every burn without one. A spacecraft
  with exactly one engine needs neither.

Errors are ``DescriptionInvalid`` (a ``PlanInvalid``): dotted field paths such as
``spacecraft.engines.0.isp_s`` or ``maneuvers.2.engine``, each with a message.
"""

from __future__ import annotations

import functools
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from decimal import Decimal

from marshmallow import ValidationError

from service.engine.errors import PlanInvalid
from service.schemas.fields import FiniteNumber, describe_value
from service.schemas.json_body import MalformedJson, parse_json_bytes
from service.schemas.plan import SpacecraftSchema, flatten_errors

PLAN_FIELDS = ("plan_id", "profile", "rules", "target_orbit", "ground_stations", "end_of_life")
TOP_LEVEL = ("spacecraft", *PLAN_FIELDS, "maneuvers", "default_engine")
MASS_TOLERANCE_KG = Decimal("0.001")  # 1 g: MASS and dry + propellant must agree within it
_ID_MAX_CHARS = 64


class DescriptionInvalid(PlanInvalid):
    """The spacecraft description is unusable; ``errors`` maps its field paths to messages."""


class _DescribedSpacecraftSchema(SpacecraftSchema):
    """The plan's spacecraft block with ``propellant_kg`` optional (then from the OPM's MASS)."""

    propellant_kg = FiniteNumber(load_default=None, ge=0)


@functools.cache
def _spacecraft_schema() -> _DescribedSpacecraftSchema:
    return _DescribedSpacecraftSchema()


@dataclass(frozen=True)
class ManeuverLink:
    """The plan id and engine of the OPM's maneuver at this position (``engine`` None: default)."""

    id: str | None
    engine: str | None


@dataclass(frozen=True)
class SpacecraftDescription:
    """A checked description. ``spacecraft`` is the block as given (JSON values), ``plan``
    the optional plan fields given, ``maneuvers`` None when the description lists none."""

    spacecraft: Mapping
    plan: Mapping
    maneuvers: tuple[ManeuverLink, ...] | None
    default_engine: str | None  # explicit default_engine, or the only engine
    default_engine_explicit: bool

    @property
    def engine_ids(self) -> tuple[str, ...]:
        return tuple(engine["id"] for engine in self.spacecraft["engines"])


def _is_id(value: object) -> bool:
    return isinstance(value, str) and 0 < len(value) <= _ID_MAX_CHARS and bool(value.strip())


def _maneuver_links(
    value: object, engines: tuple[str, ...], errors: dict[str, list[str]]
) -> tuple[ManeuverLink, ...] | None:
    if value is None:
        return None
    if not isinstance(value, list):
        errors["maneuvers"] = [
            "maneuvers must be a list of {id, engine} objects in the OPM's maneuver order; "
            f"got {describe_value(value)}"
        ]
        return None
    links = []
    seen: dict[str, int] = {}
    for index, item in enumerate(value):
        path = f"maneuvers.{index}"
        if not isinstance(item, Mapping):
            errors[path] = [
                f"each maneuver must be an object {{id, engine}}; got {describe_value(item)}"
            ]
            continue
        unknown = sorted(set(item) - {"id", "engine"})
        if unknown:
            errors[path] = [f"unknown field {unknown[0]!r}; allowed here: engine, id"]
        maneuver_id, engine = item.get("id"), item.get("engine")
        if maneuver_id is not None and not _is_id(maneuver_id):
            errors[f"{path}.id"] = [
                f"id must be a string of 1 to {_ID_MAX_CHARS} characters, not only white "
                f"space; got {describe_value(maneuver_id)}"
            ]
        elif isinstance(maneuver_id, str):
            if maneuver_id in seen:
                errors[f"{path}.id"] = [
                    f"id {maneuver_id!r} is already used by maneuvers.{seen[maneuver_id]}; each "
                    "maneuver needs a unique id"
                ]
            seen.setdefault(maneuver_id, index)
        if engine is not None and (not isinstance(engine, str) or engine not in engines):
            errors[f"{path}.engine"] = [
                f"unknown engine {describe_value(engine)}; known: {', '.join(engines)}"
            ]
        links.append(ManeuverLink(maneuver_id, engine))
    return tuple(links)


def load_description(data: object) -> SpacecraftDescription:
    """The checked description of a parsed JSON or TOML document; ``DescriptionInvalid`` names
    every fault found (the plan fields are checked again, in full, by the plan schema)."""
    if not isinstance(data, Mapping):
        raise DescriptionInvalid(
            {"spacecraft": [f"the description must be an object; got {describe_value(data)}"]}
        )
    errors: dict[str, list[str]] = {}
    for key in sorted(set(data) - set(TOP_LEVEL)):
        errors[key] = [f"unknown field {key!r}; allowed here: {', '.join(sorted(TOP_LEVEL))}"]
    spacecraft = data.get("spacecraft")
    engines: tuple[str, ...] = ()
    if spacecraft is None:
        errors["spacecraft"] = [
            "spacecraft is required: the plan's spacecraft block (dry_mass_kg, engines, ...; "
            "propellant_kg may be left out to take it from the OPM's MASS)"
        ]
    else:
        try:
            _spacecraft_schema().load(spacecraft)
        except ValidationError as error:
            errors.update(flatten_errors({"spacecraft": error.messages}))
        else:
            engines = tuple(engine["id"] for engine in spacecraft["engines"])
    plan_id = data.get("plan_id")
    if plan_id is not None and not isinstance(plan_id, str):
        errors["plan_id"] = [f"plan_id must be a string; got {describe_value(plan_id)}"]
    default_engine = data.get("default_engine")
    explicit = default_engine is not None
    if (
        explicit
        and engines
        and (not isinstance(default_engine, str) or default_engine not in engines)
    ):
        errors["default_engine"] = [
            f"unknown engine {describe_value(default_engine)}; known: {', '.join(engines)}"
        ]
    if not explicit and len(engines) == 1:
        default_engine = engines[0]
    links = _maneuver_links(data.get("maneuvers"), engines, errors) if engines else None
    if errors:
        raise DescriptionInvalid(errors)
    return SpacecraftDescription(
        spacecraft=spacecraft,
        plan={key: data[key] for key in PLAN_FIELDS if key in data},
        maneuvers=links,
        default_engine=default_engine,
        default_engine_explicit=explicit,
    )


def parse_description(raw: bytes, *, toml: bool | None = None) -> object:
    """A description document's data: TOML (``toml=True``, or a document not starting with
    ``{``) read with ``tomllib``, else strict JSON; ``DescriptionInvalid`` on bad syntax."""
    if toml is None:
        toml = not raw.lstrip().startswith(b"{")
    if not toml:
        try:
            return parse_json_bytes(raw, reject_non_finite=True)
        except MalformedJson as error:
            raise DescriptionInvalid(
                {"spacecraft": [f"the description is not JSON: {error}"]}
            ) from None
    try:
        return tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError as error:
        raise DescriptionInvalid(
            {
                "spacecraft": [
                    f"the description is not UTF-8 text: {error.reason} at byte {error.start}"
                ]
            }
        ) from None
    except tomllib.TOMLDecodeError as error:
        raise DescriptionInvalid(
            {"spacecraft": [f"the description is not TOML: {error}"]}
        ) from None


def propellant_kg(description: SpacecraftDescription, mass_kg: Decimal | None) -> float:
    """The propellant load: the description's, checked against the OPM's ``MASS`` within 1 g,
    or ``MASS`` - ``dry_mass_kg`` computed in Decimal from the two texts (exact)."""
    block = description.spacecraft
    dry = Decimal(repr(float(block["dry_mass_kg"])))
    given = block.get("propellant_kg")
    if given is not None:
        if mass_kg is not None:
            total = dry + Decimal(repr(float(given)))
            if abs(total - mass_kg) > MASS_TOLERANCE_KG:
                raise DescriptionInvalid(
                    {
                        "spacecraft.propellant_kg": [
                            f"the OPM's MASS {mass_kg} kg disagrees with the description's "
                            f"dry_mass_kg {dry} kg + propellant_kg {Decimal(repr(float(given)))} "
                            f"kg = {total} kg by {abs(total - mass_kg)} kg, more than 1 g; give "
                            "the same mass in both, or leave propellant_kg out to take it from "
                            "MASS"
                        ]
                    }
                )
        return float(given)
    if mass_kg is None:
        raise DescriptionInvalid(
            {
                "spacecraft.propellant_kg": [
                    "propellant_kg is required when the OPM gives no MASS: a finite number at "
                    "least 0"
                ]
            }
        )
    load = mass_kg - dry
    if load < 0:
        raise DescriptionInvalid(
            {
                "spacecraft.dry_mass_kg": [
                    f"dry_mass_kg {dry} kg is more than the OPM's MASS {mass_kg} kg, so the "
                    "propellant load MASS - dry_mass_kg would be negative"
                ]
            }
        )
    return float(str(load))
