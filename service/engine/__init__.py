"""The engine: plugins and profiles found at start-up, one validation call for both faces."""

from service.engine.core import Engine, build_engine
from service.engine.errors import EngineNotReady, PlanInvalid

__all__ = ["Engine", "EngineNotReady", "PlanInvalid", "build_engine"]
