"""Finds the check plugins, asks each for its checks, and refuses duplicate or malformed ones.

Plugins come from the ``burnproof`` entry-point group (the built-in checks in
``plugins/`` included) plus any objects handed in directly (tests, embedding).
Each plugin's ``register_checks`` hook is called on its own, so one broken
plugin is named in the start-up problems instead of hiding the others.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from importlib.metadata import entry_points

import pluggy

from service.engine import hookspecs
from service.plugin_api import Check, Parameter

CHECK_ID = re.compile(r"^[a-z0-9]+(-[a-z0-9]+)*$")


BUILT_IN_DISTRIBUTION = "burnproof"

# Keyword arguments of ``register_checks`` (none yet in plugin API 1.0).
HOOK_ARGUMENTS: dict[str, object] = {}


@dataclass(frozen=True)
class Origin:
    """Where a plugin came from: its entry point (or object name) and its installed distribution."""

    name: str
    distribution: str | None = None
    distribution_version: str | None = None


@dataclass(frozen=True)
class RegisteredCheck:
    """A check with where it came from: the module that defines it and its distribution."""

    check: Check
    source: str
    origin: Origin
    parameters: Mapping[str, Parameter]

    @property
    def distribution(self) -> str | None:
        return self.origin.distribution


@dataclass
class Registry:
    checks: dict[str, RegisteredCheck] = field(default_factory=dict)
    problems: list[str] = field(default_factory=list)
    refused: list[str] = field(default_factory=list)


@dataclass(frozen=True)
class PluginPolicy:
    """A site's allow and deny lists of plugin sources (entry-point or distribution names).

    Deny wins. With an allow list, an installed plugin it does not name is refused;
    burnproof's own checks are always allowed unless denied by name.
    """

    allow: frozenset[str] | None = None
    deny: frozenset[str] = frozenset()

    @classmethod
    def from_text(cls, allow: str | None, deny: str | None) -> PluginPolicy:
        def names(text: str | None) -> frozenset[str]:
            return frozenset(part.strip() for part in (text or "").split(",") if part.strip())

        return cls(allow=names(allow) if allow and allow.strip() else None, deny=names(deny))

    def refusal(self, entry_point: str, distribution: str | None) -> str | None:
        names = {entry_point, distribution} - {None}
        if names & self.deny:
            return "denied by the site's plugin deny list"
        if self.allow is None or distribution == BUILT_IN_DISTRIBUTION or names & self.allow:
            return None
        return "not on the site's plugin allow list"


def _check_choices(name: str, spec: Parameter) -> None:
    """``choices``, when given, is a non-empty tuple of strings that holds the default."""
    choices = getattr(spec, "choices", None)
    if choices is None:
        return
    if (
        not isinstance(choices, tuple)
        or not choices
        or not all(isinstance(choice, str) for choice in choices)
    ):
        raise TypeError(f"parameter {name!r}: choices must be a non-empty tuple of strings")
    if spec.default is not None and spec.default not in choices:
        raise TypeError(f"parameter {name!r}: default {spec.default!r} is not one of its choices")


def _check_bounds(name: str, spec: Parameter) -> None:
    """``minimum``/``maximum``, when given: finite numbers, in order, on a numeric parameter
    whose default (when it has one) lies between them."""
    low, high = getattr(spec, "minimum", None), getattr(spec, "maximum", None)
    if low is None and high is None:
        return
    for label, bound in (("minimum", low), ("maximum", high)):
        if bound is not None and (
            isinstance(bound, bool)
            or not isinstance(bound, int | float)
            or not math.isfinite(bound)
        ):
            raise TypeError(f"parameter {name!r}: {label} must be a finite number, not {bound!r}")
    numeric = (isinstance(spec.default, int | float) and not isinstance(spec.default, bool)) or (
        spec.default is None and spec.stricter is not None
    )
    if not numeric:
        raise TypeError(
            f"parameter {name!r}: minimum and maximum apply to numbers only, not to a default "
            f"of {spec.default!r}"
        )
    if low is not None and high is not None and low > high:
        raise TypeError(f"parameter {name!r}: minimum {low!r} exceeds maximum {high!r}")
    if spec.default is None:
        return
    if (low is not None and spec.default < low) or (high is not None and spec.default > high):
        raise TypeError(
            f"parameter {name!r}: default {spec.default!r} is outside its bounds "
            f"({bounds_text(spec)})"
        )


def bounds_text(spec: Parameter) -> str:
    """The bounds as a message gives them: ``from 100 to 100000 count``, ``at least 0 km``."""
    low, high = spec.minimum, spec.maximum
    unit = f" {spec.unit}" if spec.unit else ""
    if low is not None and high is not None:
        return f"from {low!r} to {high!r}{unit}"
    if low is not None:
        return f"at least {low!r}{unit}"
    return f"at most {high!r}{unit}"


def _normalise_parameters(check: Check) -> dict[str, Parameter]:
    declared = getattr(check, "parameters", {}) or {}
    if not isinstance(declared, Mapping):
        raise TypeError("parameters must be a mapping of name -> Parameter")
    parameters: dict[str, Parameter] = {}
    for name, spec in declared.items():
        if isinstance(spec, Parameter):
            _check_choices(str(name), spec)
            _check_bounds(str(name), spec)
            parameters[str(name)] = spec
        elif isinstance(spec, bool | int | float | str):
            # The contract allows a bare default; without a direction any change loosens.
            parameters[str(name)] = Parameter(spec, "", None, "")
        else:
            raise TypeError(f"parameter {name!r} must be a Parameter or a plain default")
    return parameters


def _describe(check: object) -> str:
    problems = []
    check_id = getattr(check, "id", None)
    if not isinstance(check_id, str) or not CHECK_ID.match(check_id):
        problems.append(f"id {check_id!r} is not kebab-case")
    for name in ("version", "summary"):
        if not isinstance(getattr(check, name, None), str):
            problems.append(f"{name} must be a string")
    if not callable(getattr(check, "evaluate", None)):
        problems.append("evaluate is not callable")
    return "; ".join(problems)


def _plugin_manager() -> pluggy.PluginManager:
    manager = pluggy.PluginManager(hookspecs.PROJECT)
    manager.add_hookspecs(hookspecs)
    return manager


def _add(registry: Registry, check: object, origin: Origin) -> None:
    fault = _describe(check)
    if fault:
        registry.problems.append(f"plugin {origin.name}: check rejected: {fault}")
        return
    try:
        parameters = _normalise_parameters(check)  # type: ignore[arg-type]
    except TypeError as error:
        check_id = check.id  # type: ignore[attr-defined]
        registry.problems.append(f"plugin {origin.name}: check {check_id!r} rejected: {error}")
        return
    source = type(check).__module__
    entry = RegisteredCheck(check, source, origin, parameters)  # type: ignore[arg-type]
    existing = registry.checks.get(entry.check.id)
    if existing is not None:
        registry.problems.append(
            f"duplicate check id {entry.check.id!r}: registered by {existing.source} "
            f"and by {source}; remove or rename one"
        )
        return
    registry.checks[entry.check.id] = entry


def build_registry(
    *,
    extra_plugins: Iterable[object] = (),
    entry_points_group: str | None = hookspecs.PROJECT,
    policy: PluginPolicy | None = None,
) -> Registry:
    """Load every allowed plugin, collect its checks, and record each start-up problem in words."""
    registry = Registry()
    policy = policy or PluginPolicy()
    manager = _plugin_manager()
    origins: dict[int, Origin] = {}
    if entry_points_group:
        for point in sorted(entry_points(group=entry_points_group), key=lambda p: p.name):
            dist = point.dist
            origin = Origin(
                point.value,
                dist.name if dist is not None else None,
                dist.version if dist is not None else None,
            )
            refusal = policy.refusal(point.name, origin.distribution)
            if refusal:
                registry.refused.append(f"plugin {point.name} ({origin.distribution}): {refusal}")
                continue
            try:
                plugin = point.load()
                manager.register(plugin, name=f"entry-point:{point.name}")
            except Exception as error:  # a plugin that cannot load must be named, not crash us
                registry.problems.append(
                    f"plugin {point.name} ({point.value}) failed to load: "
                    f"{type(error).__name__}: {error}"
                )
                continue
            origins[id(plugin)] = origin
    for index, plugin in enumerate(extra_plugins):
        try:
            manager.register(plugin, name=f"extra:{index}")
        except Exception as error:
            registry.problems.append(f"plugin {plugin!r} could not be registered: {error}")
            continue
        origins[id(plugin)] = Origin(getattr(plugin, "__name__", repr(plugin)))
    for impl in sorted(manager.hook.register_checks.get_hookimpls(), key=lambda i: i.plugin_name):
        origin = origins.get(id(impl.plugin), Origin(impl.plugin_name))
        try:
            # Each implementation gets only the hook arguments it declares, so hooks can
            # gain arguments without breaking plugins written before them.
            checks = list(impl.function(**{name: HOOK_ARGUMENTS[name] for name in impl.argnames}))
        except Exception as error:
            registry.problems.append(
                f"plugin {origin.name}: register_checks failed: {type(error).__name__}: {error}"
            )
            continue
        for check in checks:
            _add(registry, check, origin)
    return registry
