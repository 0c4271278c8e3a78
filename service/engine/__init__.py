"""The engine: plugins and profiles found at start-up, one validation call for both faces.

Names are loaded on first use so that ``service.plugin_api`` (which needs the
plan types from this package) can be imported first, as a plugin's own tests do.
"""

from __future__ import annotations

from importlib import import_module

_EXPORTS = {
    "Engine": "service.engine.core",
    "build_engine": "service.engine.core",
    "EngineNotReady": "service.engine.errors",
    "PlanInvalid": "service.engine.errors",
}

__all__ = sorted(_EXPORTS)


def __getattr__(name: str) -> object:
    if name not in _EXPORTS:
        raise AttributeError(f"module 'service.engine' has no attribute {name!r}")
    return getattr(import_module(_EXPORTS[name]), name)
