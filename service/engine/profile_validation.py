"""Reads one profile document against the installed checks' declared parameters.

Every fault becomes a problem naming the profile's file and the key path
(``thresholds.periapsis-floor.earth_min_altitude_km``): unknown keys, checks and
parameters, a unit that differs from the check's, a value of the wrong kind, not
finite or outside the parameter's declared bounds, a missing name or description.
``service.engine.profiles`` builds the ``Profile`` from what this reads.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from service.engine.plan import (
    DEFAULT_MIN_ELEVATION_DEG,
    HEIGHT_RANGE_KM,
    LATITUDE_RANGE_DEG,
    LONGITUDE_RANGE_DEG,
    MAX_GROUND_STATIONS,
    MIN_ELEVATION_RANGE_DEG,
    STATION_ID_MAX_CHARS,
    GroundStation,
)
from service.engine.registry import Registry, bounds_text
from service.plugin_api import Parameter

Thresholds = dict[str, dict[str, object]]

ENTRY_KEYS = ("reason", "unit", "value")
# [[stations]] keys: (name, unit, (low, high), high end included); None range: the id.
STATION_KEYS = {
    "id": None,
    "latitude_deg": ("deg", LATITUDE_RANGE_DEG, True),
    "longitude_deg": ("deg", LONGITUDE_RANGE_DEG, False),
    "height_km": ("km", HEIGHT_RANGE_KM, True),
    "min_elevation_deg": ("deg", MIN_ELEVATION_RANGE_DEG, False),
}


class ProfileError(ValueError):
    """A profile that cannot be used; ``problems`` name the file and the key of each fault."""

    def __init__(self, problems: list[str]) -> None:
        self.problems = list(problems)
        super().__init__("; ".join(self.problems))


def _kind(value: object) -> str:
    if isinstance(value, bool):
        return "a boolean"
    if isinstance(value, int):
        return "an integer"
    if isinstance(value, float):
        return "a number"
    if isinstance(value, str):
        return "a string"
    if isinstance(value, list):
        return "an array"
    if isinstance(value, Mapping):
        return "a table"
    return f"a {type(value).__name__}"


def _shown(value: object) -> str:
    """``value`` as it would be written in TOML, for a message."""
    if isinstance(value, bool):
        return "true" if value else "false"
    return repr(value)


def _not(value: object) -> str:
    return f"not {_kind(value)} ({_shown(value)})"


def is_number(value: object, unit: str = "") -> str | None:
    """None for a finite int or float (never a bool), else what is wrong with it."""
    what = f"a number in {unit}" if unit else "a number"
    if isinstance(value, bool) or not isinstance(value, int | float):
        return f"must be {what}, {_not(value)}"
    if not math.isfinite(value):
        return f"must be a finite number, not {_shown(value)}"
    return None


def choices_fault(spec: Parameter, value: object) -> str | None:
    """None when ``spec`` has no ``choices`` or ``value`` is one of them, else the refusal."""
    if spec.choices is None or value in spec.choices:
        return None
    allowed = ", ".join(repr(choice) for choice in spec.choices)
    return f"{_shown(value)} is not an allowed value; allowed: {allowed}"


def bounds_fault(spec: Parameter, value: object) -> str | None:
    """None when ``value`` lies within the parameter's ``minimum``/``maximum``, else the refusal.

    Only numbers are judged (their kind is checked first, elsewhere).
    """
    if isinstance(value, bool) or not isinstance(value, int | float):
        return None
    low, high = spec.minimum, spec.maximum
    if (low is not None and value < low) or (high is not None and value > high):
        return f"must be {bounds_text(spec)}, not {_shown(value)}"
    return None


def _coerce(spec: Parameter, value: object) -> tuple[object, str | None]:
    """The value in the parameter's own type, or what is wrong with it."""
    value, fault = _coerce_kind(spec, value)
    if fault is None:
        fault = choices_fault(spec, value) or bounds_fault(spec, value)
    return (None, fault) if fault else (value, None)


def _coerce_kind(spec: Parameter, value: object) -> tuple[object, str | None]:
    default = spec.default
    if isinstance(default, bool):
        if isinstance(value, bool):
            return value, None
        return None, f"must be true or false, {_not(value)}"
    if isinstance(default, int | float) or (default is None and spec.stricter is not None):
        fault = is_number(value, spec.unit)
        if fault:
            return None, fault
        if isinstance(default, int):
            if isinstance(value, float) and not value.is_integer():
                return None, f"must be a whole number, not {value!r}"
            return int(value), None  # type: ignore[arg-type]
        return float(value), None  # type: ignore[arg-type]
    if isinstance(default, str):
        if isinstance(value, str):
            return value, None
        return None, f"must be a string, {_not(value)}"
    # An optional switch or choice with no default: any finite scalar.
    if isinstance(value, bool | str) or is_number(value) is None:
        return value, None
    return None, f"must be a finite number, a boolean or a string, not {_kind(value)}"


class Reader:
    """One profile document read against the registry; every fault becomes a problem."""

    def __init__(self, origin: str, registry: Registry, installed_only: bool) -> None:
        self.origin = origin
        self.registry = registry
        self.installed_only = installed_only
        self.problems: list[str] = []

    def fault(self, path: str, message: str) -> None:
        self.problems.append(f"profile {self.origin}: {path}: {message}")

    def text(self, document: Mapping, key: str) -> str:
        value = document.get(key)
        if value is None:
            self.fault(key, "is required")
        elif not isinstance(value, str):
            self.fault(key, f"must be a string, {_not(value)}")
        elif not value.strip():
            self.fault(key, "must not be empty")
        else:
            return value
        return ""

    def flag(self, document: Mapping, key: str, default: bool) -> bool:
        value = document.get(key, default)
        if isinstance(value, bool):
            return value
        self.fault(key, f"must be true or false, {_not(value)}")
        return default

    def seconds(self, document: Mapping, key: str, default: float) -> float:
        value = document.get(key, default)
        fault = is_number(value, "s")
        if fault is None and not value > 0.0:
            fault = f"must be a positive number of seconds, not {_shown(value)}"
        if fault:
            self.fault(key, fault)
            return default
        return float(value)

    def known(self, check_id: str, path: str) -> bool:
        if check_id in self.registry.checks:
            return True
        if not self.installed_only:
            known = ", ".join(sorted(self.registry.checks)) or "none"
            self.fault(path, f"unknown check {check_id!r}; installed: {known}")
        return False

    def enabled(self, value: object) -> tuple[str, ...] | None:
        if value is None:
            return None
        if not isinstance(value, list) or not value:
            self.fault("enabled", "must be a non-empty array of check ids (leave it out for all)")
            return None
        chosen: list[str] = []
        before = len(self.problems)
        for index, check_id in enumerate(value):
            path = f"enabled[{index}]"
            if not isinstance(check_id, str):
                self.fault(path, f"must be a check id, {_not(check_id)}")
            elif check_id in chosen:
                self.fault(path, f"check {check_id!r} is listed twice")
            elif self.known(check_id, path):
                chosen.append(check_id)
        if len(self.problems) > before:
            return None  # already refused; do not also flag every threshold as not enabled
        return tuple(sorted(chosen))

    def stations(self, value: object) -> tuple[GroundStation, ...]:
        """``[[stations]]``: a network of ground stations, each checked like a plan's own."""
        if value is None:
            return ()
        if not isinstance(value, list) or not all(isinstance(item, Mapping) for item in value):
            self.fault("stations", "must be an array of tables ([[stations]]), " + _not(value))
            return ()
        if len(value) > MAX_GROUND_STATIONS:
            self.fault(
                "stations", f"at most {MAX_GROUND_STATIONS} stations are allowed; got {len(value)}"
            )
            return ()
        network: list[GroundStation] = []
        first: dict[str, int] = {}
        for index, table in enumerate(value):
            station = self._station(table, f"stations[{index}]")
            if station is None:
                continue
            if station.id in first:
                self.fault(
                    f"stations[{index}].id",
                    f"station {station.id!r} is already defined at stations[{first[station.id]}]",
                )
                continue
            first[station.id] = index
            network.append(station)
        return tuple(network)

    def _station(self, table: Mapping, path: str) -> GroundStation | None:
        before = len(self.problems)
        for key in sorted(set(table) - set(STATION_KEYS)):
            self.fault(f"{path}.{key}", f"unknown key; known: {', '.join(STATION_KEYS)}")
        fields: dict[str, object] = {}
        for key, rule in STATION_KEYS.items():
            if key not in table:
                if key == "min_elevation_deg":
                    fields[key] = DEFAULT_MIN_ELEVATION_DEG
                else:
                    self.fault(f"{path}.{key}", "is required")
                continue
            value = table[key]
            if rule is None:
                if not isinstance(value, str):
                    self.fault(f"{path}.{key}", f"must be a string, {_not(value)}")
                elif not value.strip() or len(value) > STATION_ID_MAX_CHARS:
                    self.fault(
                        f"{path}.{key}",
                        f"must be 1 to {STATION_ID_MAX_CHARS} characters, not only white space",
                    )
                elif any(ord(c) < 0x20 or 0x7F <= ord(c) <= 0x9F for c in value):
                    self.fault(f"{path}.{key}", "must not hold control characters")
                else:
                    fields[key] = value
                continue
            unit, (low, high), high_included = rule
            fault = is_number(value, unit)
            if fault is None and not (
                low <= value and (value <= high if high_included else value < high)
            ):
                upper = f"at most {_shown(high)}" if high_included else f"less than {_shown(high)}"
                fault = f"must be at least {_shown(low)} and {upper} {unit}, not {_shown(value)}"
            if fault:
                self.fault(f"{path}.{key}", fault)
            else:
                fields[key] = float(value)
        if len(self.problems) > before:
            return None
        return GroundStation(**fields)  # type: ignore[arg-type]

    def entry(self, spec: Parameter, entry: object, path: str) -> tuple[object, str | None]:
        """``value`` or ``{value = ..., reason = "...", unit = "..."}`` -> (value, reason)."""
        reason = None
        if isinstance(entry, Mapping):
            for key in sorted(set(entry) - set(ENTRY_KEYS)):
                self.fault(f"{path}.{key}", "unknown key; an entry has value, reason and unit")
            reason = entry.get("reason")
            if reason is not None and (not isinstance(reason, str) or not reason.strip()):
                self.fault(f"{path}.reason", "must be a non-empty string")
                reason = None
            unit = entry.get("unit")
            if unit is not None and unit != spec.unit:
                self.fault(path, f"unit {unit!r} does not match the check's unit {spec.unit!r}")
            if "value" not in entry:
                self.fault(path, "the table has no value")
                return None, reason
            entry = entry["value"]
        value, fault = _coerce(spec, entry)
        if fault:
            self.fault(path, fault)
        return value, reason

    def thresholds(
        self, table: object, enabled: tuple[str, ...] | None
    ) -> tuple[Thresholds, dict[str, dict[str, str]]]:
        values: Thresholds = {}
        reasons: dict[str, dict[str, str]] = {}
        if not isinstance(table, Mapping):
            self.fault("thresholds", f"must be a table of check tables, not {_kind(table)}")
            return values, reasons
        for check_id, entries in sorted(table.items()):
            path = f"thresholds.{check_id}"
            if not self.known(check_id, path):
                continue
            if enabled is not None and check_id not in enabled:
                self.fault(path, f"check {check_id!r} is not in enabled; enable it or drop this")
                continue
            if not isinstance(entries, Mapping):
                self.fault(path, f"must be a table of parameters, not {_kind(entries)}")
                continue
            declared = self.registry.checks[check_id].parameters
            for name, entry in sorted(entries.items()):
                spec = declared.get(name)
                if spec is None:
                    known = ", ".join(sorted(declared)) or "none"
                    self.fault(
                        f"{path}.{name}", f"unknown parameter of {check_id!r}; known: {known}"
                    )
                    continue
                value, reason = self.entry(spec, entry, f"{path}.{name}")
                values.setdefault(check_id, {})[name] = value
                if reason is not None:
                    reasons.setdefault(check_id, {})[name] = reason
        return values, reasons
