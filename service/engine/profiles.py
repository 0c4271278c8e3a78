"""Flight-rule profiles: which checks run, with which thresholds and time budgets,
and how a request may change them.

A request's ``rules`` may only tighten the profile's thresholds unless the
profile sets ``allow_loosening``; a loosening that is not allowed is refused
with the parameter, the profile value and the requested value named. A value
outside the parameter's declared ``minimum``/``maximum`` is refused whatever the
direction (tightening included), naming the bounds.

Profiles are TOML files, the built-in ``default_profile.toml`` and a site's
own, read by one loader and checked against the parameters the installed
checks declare::

    name = "ops-conservative"          # required; a site file must be <name>.toml
    description = "..."                # required
    allow_loosening = false            # optional, default false
    enabled = ["periapsis-floor"]      # optional; absent = every registered check
    check_time_budget_s = 5.0          # optional, seconds per check
    request_time_budget_s = 30.0       # optional, seconds for all checks of a request

    [thresholds.periapsis-floor]
    earth_min_altitude_km = 250.0
    earth_margin_km = { value = 75.0, unit = "km", reason = "why, and its source" }

    [[stations]]                       # optional: the site's ground-station network
    id = "north-1"                     # unique; a plan may add stations of its own
    latitude_deg = 67.86               # geodetic, WGS 84
    longitude_deg = 20.96              # east positive, [-180, 360)
    height_km = 0.4                    # above the ellipsoid, [-0.5, 9]
    min_elevation_deg = 5.0            # optional mask, default 5, [0, 90)

Each enabled check runs with its declared defaults overlaid with the
profile's values. A file with any problem is not loaded at all (never half
applied); its problems name the file and the key, and the service is not ready.
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from importlib.resources import files
from pathlib import Path

from service.engine.errors import PlanInvalid
from service.engine.plan import GroundStation, plan_digest
from service.engine.profile_validation import (
    ProfileError,
    Reader,
    bounds_fault,
    choices_fault,
    is_number,
)
from service.engine.registry import Registry
from service.plugin_api import Parameter

Thresholds = dict[str, dict[str, object]]

BUILT_IN = "built-in"
DEFAULT_PROFILE = "default"
PROFILE_NAME = re.compile(r"^[a-z0-9]+([._-][a-z0-9]+)*$")
TOP_LEVEL_KEYS = (
    "allow_loosening",
    "check_time_budget_s",
    "description",
    "enabled",
    "name",
    "request_time_budget_s",
    "stations",
    "thresholds",
)


@dataclass(frozen=True)
class Profile:
    """A named set of flight rules. ``enabled`` None means every registered check.

    ``check_time_budget_s`` bounds one check's run and ``request_time_budget_s``
    all checks of one request. ``stations`` is the site's ground-station network,
    given to every check with the plan's own stations. ``origin`` is the file the
    profile was read from, or ``"built-in"``; it is shown as ``source`` but is not
    part of the digest, which identifies the rules themselves wherever the file is
    deployed.
    """

    name: str
    description: str
    thresholds: Thresholds = field(default_factory=dict)
    enabled: tuple[str, ...] | None = None
    allow_loosening: bool = False
    reasons: dict[str, dict[str, str]] = field(default_factory=dict)
    check_time_budget_s: float = 5.0
    request_time_budget_s: float = 30.0
    origin: str = BUILT_IN
    stations: tuple[GroundStation, ...] = ()

    def __post_init__(self) -> None:
        for name in ("check_time_budget_s", "request_time_budget_s"):
            budget = getattr(self, name)
            if is_number(budget) is not None or not budget > 0.0:
                raise ValueError(f"{name} must be a positive finite number, not {budget!r}")

    def rules_document(self) -> dict:
        """Everything that decides a verdict; the digest is taken over this."""
        return {
            "name": self.name,
            "description": self.description,
            "allow_loosening": self.allow_loosening,
            "enabled": None if self.enabled is None else sorted(self.enabled),
            "check_time_budget_s": float(self.check_time_budget_s),
            "request_time_budget_s": float(self.request_time_budget_s),
            "thresholds": {
                check: dict(sorted(p.items())) for check, p in sorted(self.thresholds.items())
            },
            "reasons": {
                check: dict(sorted(r.items())) for check, r in sorted(self.reasons.items())
            },
            "stations": [station.document() for station in self.stations],
        }

    def document(self) -> dict:
        return {**self.rules_document(), "source": self.origin}

    @cached_property
    def digest(self) -> str:
        """Taken once: a profile is not changed after it is read (every request reads it)."""
        return plan_digest(self.rules_document())

    def enabled_checks(self, registry: Registry) -> list[str]:
        ids = sorted(registry.checks) if self.enabled is None else sorted(self.enabled)
        return [check_id for check_id in ids if check_id in registry.checks]


def load_profile_text(
    text: str, origin: str, registry: Registry, *, installed_only: bool = False
) -> Profile:
    """Read one profile document; ``ProfileError`` lists every problem, each naming ``origin``.

    ``installed_only`` (the built-in profile only) drops entries for checks that
    are not installed instead of refusing them; everything else is checked alike.
    """
    try:
        document = tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:  # the message carries the line and column
        raise ProfileError([f"profile {origin}: not valid TOML: {error}"]) from error
    reader = Reader(origin, registry, installed_only)
    for key in sorted(set(document) - set(TOP_LEVEL_KEYS)):
        reader.fault(key, f"unknown key; known: {', '.join(TOP_LEVEL_KEYS)}")
    name = reader.text(document, "name")
    if name and not PROFILE_NAME.match(name):
        reader.fault("name", f"{name!r} must be lower-case letters and digits joined by . _ or -")
    description = reader.text(document, "description")
    allow_loosening = reader.flag(document, "allow_loosening", False)
    check_budget_s = reader.seconds(document, "check_time_budget_s", 5.0)
    request_budget_s = reader.seconds(document, "request_time_budget_s", 30.0)
    enabled = reader.enabled(document.get("enabled"))
    values, why = reader.thresholds(document.get("thresholds", {}), enabled)
    stations = reader.stations(document.get("stations"))
    if reader.problems:
        raise ProfileError(reader.problems)
    thresholds: Thresholds = {}
    reasons: dict[str, dict[str, str]] = {}
    for check_id in sorted(registry.checks) if enabled is None else enabled:
        declared = registry.checks[check_id].parameters
        thresholds[check_id] = {
            **{name: spec.default for name, spec in declared.items()},
            **values.get(check_id, {}),
        }
        given = why.get(check_id, {})
        reasons[check_id] = {
            name: given.get(name, spec.description) for name, spec in declared.items()
        }
    return Profile(
        name=name,
        description=description,
        thresholds=thresholds,
        enabled=enabled,
        allow_loosening=allow_loosening,
        reasons=reasons,
        check_time_budget_s=check_budget_s,
        request_time_budget_s=request_budget_s,
        origin=origin,
        stations=stations,
    )


def default_profile(registry: Registry) -> Profile:
    """The built-in profile: ``default_profile.toml`` over each check's declared defaults.

    Read by the same loader as a site's files. Checks the file does not mention
    (third-party plugins) run at their declared defaults; entries for checks that
    are not installed are left out. Raises ``ProfileError`` if the file does not
    fit the installed checks (another check installed under a built-in id).
    """
    text = files("service.engine").joinpath("default_profile.toml").read_text("utf-8")
    return load_profile_text(text, BUILT_IN, registry, installed_only=True)


def _site_profile(path: Path, registry: Registry) -> tuple[Profile | None, list[str]]:
    try:
        text = path.read_text("utf-8")
    except (OSError, UnicodeDecodeError) as error:
        return None, [f"profile {path}: cannot be read: {error}"]
    try:
        profile = load_profile_text(text, str(path), registry)
    except ProfileError as error:
        return None, error.problems
    if profile.name != path.stem:
        return None, [
            f"profile {path}: name: {profile.name!r} differs from the file name; a site "
            f"profile is stored as <name>.toml, so name it {path.stem!r} or rename the file"
        ]
    if profile.name == DEFAULT_PROFILE:
        return None, [
            f"profile {path}: name: {DEFAULT_PROFILE!r} is the built-in profile, which a site "
            "may not replace; give the site's profile a name of its own"
        ]
    return profile, []


def load_profile_dir(directory: str, registry: Registry) -> tuple[dict[str, Profile], list[str]]:
    """Every ``*.toml`` profile in ``directory`` (sorted; hidden files skipped) and the problems.

    A file named ``<name>.toml`` must hold the profile ``name``, so two files can
    never claim one name; ``default`` is reserved for the built-in profile. A file
    with any problem is left out; a missing directory is a problem too.
    """
    root = Path(directory)
    if not root.is_dir():
        what = "is not a directory" if root.exists() else "does not exist"
        return {}, [f"profile directory {directory}: {what}"]
    try:
        paths = sorted(root.iterdir(), key=lambda p: p.name)
    except OSError as error:
        return {}, [f"profile directory {directory}: cannot be listed: {error}"]
    profiles: dict[str, Profile] = {}
    problems: list[str] = []
    for path in paths:
        if path.name.startswith(".") or path.suffix != ".toml":
            continue  # hidden files: editor locks, the ..data links of a mounted ConfigMap
        if not path.is_file():
            problems.append(f"profile {path}: is not a file")
            continue
        profile, faults = _site_profile(path, registry)
        problems.extend(faults)
        if profile is not None:
            profiles[profile.name] = profile
    return profiles, problems


def load_profiles(
    registry: Registry, directory: str | None
) -> tuple[dict[str, Profile], list[str]]:
    """The built-in ``default`` profile plus a site's profiles, and every problem found.

    ``directory`` is the site's profile directory, which the service and the command
    line take from the ``BURNPROOF_PROFILE_DIR`` environment variable; None or an
    empty string means the built-in profile only. Problems are returned, not raised:
    the engine reports them and is not ready while there is any, and a profile with a
    problem is never used, even in part.
    """
    profiles: dict[str, Profile] = {}
    problems: list[str] = []
    try:
        built_in = default_profile(registry)
        profiles[built_in.name] = built_in
    except ProfileError as error:
        problems.extend(error.problems)
    if directory:
        site, faults = load_profile_dir(directory, registry)
        problems.extend(faults)
        for name, profile in site.items():
            if name in profiles:
                problems.append(f"profile {profile.origin}: name: {name!r} is already taken")
            else:
                profiles[name] = profile
    return dict(sorted(profiles.items())), problems


def _same_kind(spec: Parameter, value: object) -> bool:
    if isinstance(spec.default, bool) or isinstance(value, bool):
        return isinstance(spec.default, bool) and isinstance(value, bool)
    if isinstance(spec.default, int | float) or (spec.default is None and spec.stricter):
        if not isinstance(value, int | float):
            return False
        # A whole-number parameter (a count) takes whole numbers only.
        return not isinstance(spec.default, int) or float(value).is_integer()
    return isinstance(value, type(spec.default)) if spec.default is not None else True


def _loosens(spec: Parameter, profile_value: object, requested: object) -> bool:
    if spec.stricter is None:
        return requested != profile_value
    if profile_value is None:
        # An optional limit the profile leaves unset: any value adds a rule, which tightens.
        return False
    if spec.stricter == "higher":
        return requested < profile_value  # type: ignore[operator]
    if spec.stricter == "lower":
        return requested > profile_value  # type: ignore[operator]
    return requested != profile_value


def resolve_thresholds(
    profile: Profile, registry: Registry, rules: Mapping[str, Mapping[str, object]]
) -> Thresholds:
    """The thresholds each enabled check runs with: declared default, then profile, then request."""
    enabled = profile.enabled_checks(registry)
    resolved: Thresholds = {}
    for check_id in enabled:
        entry = registry.checks[check_id]
        values = {name: spec.default for name, spec in entry.parameters.items()}
        values.update(profile.thresholds.get(check_id, {}))
        resolved[check_id] = values
    errors: dict[str, list[str]] = {}
    for check_id, overrides in sorted(rules.items()):
        if check_id not in registry.checks:
            known = ", ".join(sorted(registry.checks)) or "none"
            errors[f"rules.{check_id}"] = [f"unknown check {check_id!r}; known: {known}"]
            continue
        if check_id not in resolved:
            errors[f"rules.{check_id}"] = [
                f"check {check_id!r} is not enabled in profile {profile.name!r}"
            ]
            continue
        parameters = registry.checks[check_id].parameters
        for name, requested in sorted(overrides.items()):
            path = f"rules.{check_id}.{name}"
            spec = parameters.get(name)
            if spec is None:
                known = ", ".join(sorted(parameters)) or "none"
                errors[path] = [f"unknown parameter {name!r} of {check_id!r}; known: {known}"]
                continue
            if not _same_kind(spec, requested):
                errors[path] = [f"must be of the same kind as the default {spec.default!r}"]
                continue
            fault = choices_fault(spec, requested) or bounds_fault(spec, requested)
            if fault:
                errors[path] = [f"{name} {fault}"]
                continue
            current = resolved[check_id][name]
            if not profile.allow_loosening and _loosens(spec, current, requested):
                errors[path] = [
                    f"would loosen profile {profile.name!r}: profile value {current!r} "
                    f"{spec.unit}, requested {requested!r} {spec.unit}; this profile allows "
                    "only tightening"
                ]
                continue
            resolved[check_id][name] = requested
    if errors:
        raise PlanInvalid(errors)
    return resolved
