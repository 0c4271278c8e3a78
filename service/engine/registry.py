"""Finds the check plugins, asks each for its checks, and refuses duplicate or malformed ones.

Plugins come from the ``burnproof`` entry-point group (the built-in checks in
``plugins/`` included) plus any objects handed in directly (tests, embedding).
Each plugin's ``register_checks`` hook is called on its own, so one broken
plugin is named in the start-up problems instead of hiding the others.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from importlib.metadata import entry_points

import pluggy

from service.engine import hookspecs
from service.plugin_api import Check, Parameter

CHECK_ID = re.compile(r"^[a-z0-9]+(-[a-z0-9]+)*$")


@dataclass(frozen=True)
class RegisteredCheck:
    """A check with where it came from: the module that defines it and its distribution."""

    check: Check
    source: str
    distribution: str | None
    parameters: Mapping[str, Parameter]


@dataclass
class Registry:
    checks: dict[str, RegisteredCheck] = field(default_factory=dict)
    problems: list[str] = field(default_factory=list)


def _normalise_parameters(check: Check) -> dict[str, Parameter]:
    declared = getattr(check, "parameters", {}) or {}
    if not isinstance(declared, Mapping):
        raise TypeError("parameters must be a mapping of name -> Parameter")
    parameters: dict[str, Parameter] = {}
    for name, spec in declared.items():
        if isinstance(spec, Parameter):
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


def _add(registry: Registry, check: object, distribution: str | None, origin: str) -> None:
    fault = _describe(check)
    if fault:
        registry.problems.append(f"plugin {origin}: check rejected: {fault}")
        return
    try:
        parameters = _normalise_parameters(check)  # type: ignore[arg-type]
    except TypeError as error:
        registry.problems.append(f"plugin {origin}: check {check.id!r} rejected: {error}")  # type: ignore[attr-defined]
        return
    source = type(check).__module__
    entry = RegisteredCheck(check, source, distribution, parameters)  # type: ignore[arg-type]
    existing = registry.checks.get(entry.check.id)
    if existing is not None:
        registry.problems.append(
            f"duplicate check id {entry.check.id!r}: registered by {existing.source} "
            f"and by {source}; remove or rename one"
        )
        return
    registry.checks[entry.check.id] = entry


def build_registry(
    *, extra_plugins: Iterable[object] = (), entry_points_group: str | None = hookspecs.PROJECT
) -> Registry:
    """Load every plugin, collect its checks, and record each start-up problem in words."""
    registry = Registry()
    manager = _plugin_manager()
    origins: dict[int, tuple[str, str | None]] = {}
    if entry_points_group:
        for point in sorted(entry_points(group=entry_points_group), key=lambda p: p.name):
            distribution = point.dist.name if point.dist is not None else None
            try:
                plugin = point.load()
                manager.register(plugin, name=f"entry-point:{point.name}")
            except Exception as error:  # a plugin that cannot load must be named, not crash us
                registry.problems.append(
                    f"plugin {point.name} ({point.value}) failed to load: "
                    f"{type(error).__name__}: {error}"
                )
                continue
            origins[id(plugin)] = (point.value, distribution)
    for index, plugin in enumerate(extra_plugins):
        try:
            manager.register(plugin, name=f"extra:{index}")
        except Exception as error:
            registry.problems.append(f"plugin {plugin!r} could not be registered: {error}")
            continue
        origins[id(plugin)] = (getattr(plugin, "__name__", repr(plugin)), None)
    for impl in sorted(manager.hook.register_checks.get_hookimpls(), key=lambda i: i.plugin_name):
        origin, distribution = origins.get(id(impl.plugin), (impl.plugin_name, None))
        try:
            checks = list(impl.function())
        except Exception as error:
            registry.problems.append(
                f"plugin {origin}: register_checks failed: {type(error).__name__}: {error}"
            )
            continue
        for check in checks:
            _add(registry, check, distribution, origin)
    return registry
