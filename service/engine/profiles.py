"""Flight-rule profiles: which checks run, with which thresholds,
and how a request may change them.

A request's ``rules`` may only tighten the profile's thresholds unless the
profile sets ``allow_loosening``; a loosening that is not allowed is refused
with the parameter, the profile value and the requested value named.
"""

from __future__ import annotations

import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib.resources import files

from service.engine.errors import PlanInvalid
from service.engine.plan import plan_digest
from service.engine.registry import Registry
from service.plugin_api import Parameter

Thresholds = dict[str, dict[str, object]]


@dataclass(frozen=True)
class Profile:
    """A named set of flight rules. ``enabled`` None means every registered check."""

    name: str
    description: str
    thresholds: Thresholds = field(default_factory=dict)
    enabled: tuple[str, ...] | None = None
    allow_loosening: bool = False
    reasons: dict[str, dict[str, str]] = field(default_factory=dict)

    def document(self) -> dict:
        return {
            "name": self.name,
            "description": self.description,
            "allow_loosening": self.allow_loosening,
            "enabled": None if self.enabled is None else list(self.enabled),
            "thresholds": {
                check: dict(sorted(p.items())) for check, p in sorted(self.thresholds.items())
            },
            "reasons": {
                check: dict(sorted(r.items())) for check, r in sorted(self.reasons.items())
            },
        }

    @property
    def digest(self) -> str:
        return plan_digest(self.document())

    def enabled_checks(self, registry: Registry) -> list[str]:
        ids = sorted(registry.checks) if self.enabled is None else sorted(self.enabled)
        return [check_id for check_id in ids if check_id in registry.checks]


def _split_entries(table: Mapping[str, object]) -> tuple[dict, dict]:
    """``name = value`` or ``name = { value = ..., reason = "..." }`` -> (values, reasons)."""
    values, reasons = {}, {}
    for name, entry in table.items():
        if isinstance(entry, Mapping):
            values[name] = entry["value"]
            if "reason" in entry:
                reasons[name] = str(entry["reason"])
        else:
            values[name] = entry
    return values, reasons


def default_profile(registry: Registry) -> Profile:
    """The built-in profile: ``default_profile.toml`` over each check's declared defaults.

    Checks the file does not mention (third-party plugins) run at their declared
    defaults; entries for checks that are not installed are left out.
    """
    text = files("service.engine").joinpath("default_profile.toml").read_text("utf-8")
    document = tomllib.loads(text)
    thresholds: Thresholds = {}
    reasons: dict[str, dict[str, str]] = {}
    for check_id, entry in sorted(registry.checks.items()):
        values, why = _split_entries(document.get("thresholds", {}).get(check_id, {}))
        declared = {name: spec.default for name, spec in entry.parameters.items()}
        thresholds[check_id] = {**declared, **values}
        reasons[check_id] = {
            name: why.get(name, spec.description) for name, spec in entry.parameters.items()
        }
    return Profile(
        name=document["name"],
        description=document["description"],
        thresholds=thresholds,
        allow_loosening=bool(document.get("allow_loosening", False)),
        reasons=reasons,
    )


def _same_kind(spec: Parameter, value: object) -> bool:
    if isinstance(spec.default, bool) or isinstance(value, bool):
        return isinstance(spec.default, bool) and isinstance(value, bool)
    if isinstance(spec.default, int | float) or (spec.default is None and spec.stricter):
        return isinstance(value, int | float)
    return isinstance(value, type(spec.default)) if spec.default is not None else True


def _loosens(spec: Parameter, profile_value: object, requested: object) -> bool:
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
