"""The names a plugin author imports.

``hookimpl``, ``Check``, ``Parameter``, ``Finding``, ``Status`` and ``Context``.

A plugin module exposes ``register_checks()`` marked with ``hookimpl`` and
returns check objects; it is found through the ``burnproof`` entry-point group.
A check's ``evaluate(context, params)`` returns findings; the engine fills in
the check id, catches anything the check raises, and judges the verdict.

Compatibility: ``API_VERSION`` follows semantic versioning. Within a major
version, names here are only added, hooks only gain keyword arguments, and the
context only gains attributes.
"""

from __future__ import annotations

import enum
import types
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Literal

import pluggy

from service.dynamics.bodies import Body
from service.dynamics.trajectory import Arc, BurnResult, Trajectory
from service.engine.hookspecs import PROJECT
from service.engine.plan import GroundStation, Plan

# 1.1 added Parameter.choices, Context.ground_stations, GroundStation;
# 1.2 added Parameter.minimum and Parameter.maximum, Context.thresholds and Context.seed.
API_VERSION = "1.2"

hookimpl = pluggy.HookimplMarker(PROJECT)

__all__ = [
    "API_VERSION",
    "Arc",
    "BurnResult",
    "Check",
    "Context",
    "Finding",
    "GroundStation",
    "Parameter",
    "Status",
    "hookimpl",
]


class Status(enum.StrEnum):
    """A finding's status. ``error``: the check broke; ``skipped``: not applicable, says why."""

    # bandit B105 reads PASS as a password; it is a finding's status word
    PASS = "pass"  # nosec B105
    WARN = "warn"
    FAIL = "fail"
    ERROR = "error"
    SKIPPED = "skipped"


@dataclass(frozen=True)
class Finding:
    """One judgement of one check, with the number, the limit and its unit.

    ``maneuver`` names the burn it concerns, or ``arc`` the coast arc index
    (0 = before the first burn); neither for a plan-wide finding. ``check``
    is filled in by the engine.
    """

    status: Status
    message: str
    value: float | None = None
    limit: float | None = None
    unit: str | None = None
    maneuver: str | None = None
    arc: int | None = None
    check: str | None = None


@dataclass(frozen=True)
class Parameter:
    """A check's threshold: default value, unit, and which direction makes the rule stricter.

    ``stricter`` is ``"higher"`` when a larger value is stricter (a floor),
    ``"lower"`` when a smaller one is (a ceiling), or ``None`` when any change
    from the profile counts as loosening (choices, switches).

    ``choices`` lists the allowed values of a string parameter (added in 1.1,
    optional): profiles and requests that give any other value are refused
    naming the allowed ones. ``None`` means any string of the default's kind.

    ``minimum`` and ``maximum`` (added in 1.2, optional, inclusive) bound a
    numeric parameter: start-up refuses a check whose default lies outside them,
    and profiles and requests that give a value outside them are refused naming
    the field and the bounds. ``None`` means unbounded on that side.
    """

    default: float | bool | str | None
    unit: str
    stricter: Literal["higher", "lower"] | None
    description: str
    choices: tuple[str, ...] | None = None
    minimum: float | None = None
    maximum: float | None = None


@dataclass(frozen=True)
class Context:
    """What a check sees: the plan, the central body, and the trajectory built once by the core.

    ``ground_stations`` (added in 1.1) is the network in force for this request:
    the profile's stations first, then the plan's own (ids are unique across both).

    ``thresholds`` (added in 1.2) holds every enabled check's resolved thresholds
    for this request, check id -> parameter -> value, read-only: a check that
    builds on another's rule (a floor, a limit) reads it here. ``seed`` (added in
    1.2) is this request's random seed, derived from the plan digest and the
    profile digest (``request_seed``): the same request gets the same seed, so a
    check that samples gives the same report every time.
    """

    plan: Plan
    body: Body
    trajectory: Trajectory
    profile: str
    ground_stations: tuple[GroundStation, ...] = ()
    thresholds: Mapping[str, Mapping[str, object]] = field(
        default_factory=lambda: types.MappingProxyType({})
    )
    seed: int = 0

    def burn(self, maneuver_id: str) -> BurnResult:
        for burn in self.trajectory.maneuvers:
            if burn.id == maneuver_id:
                return burn
        raise KeyError(maneuver_id)


class Check:
    """Base class for a flight-rule check. Subclasses set the class attributes and ``evaluate``.

    ``id`` is kebab-case and unique across all plugins; ``version`` a string;
    ``summary`` one line; ``parameters`` maps names (units in the name) to
    ``Parameter``.
    """

    id: str = ""
    version: str = "1"
    summary: str = ""
    parameters: Mapping[str, Parameter] = {}

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterable[Finding]:
        raise NotImplementedError
