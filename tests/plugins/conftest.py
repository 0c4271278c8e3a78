"""Shared helpers for the built-in check tests: invented plans and a one-check engine."""

from __future__ import annotations

from types import ModuleType

from service.dynamics.bodies import body_named
from service.engine import build_engine
from service.engine.core import fly
from service.engine.plan import Plan
from service.plugin_api import Context
from tests.engine.conftest import make_plan

__all__ = ["context_for", "make_plan", "validate_with"]


def validate_with(module: ModuleType, plan: Plan) -> dict:
    """The report of ``plan`` from the real engine with only ``module``'s checks loaded."""
    return build_engine(extra_plugins=[module], entry_points=False).validate(plan)


def context_for(plan: Plan) -> Context:
    """The context a check receives for ``plan``, flown once by the engine's core."""
    body = body_named(plan.central_body)
    return Context(plan=plan, body=body, trajectory=fly(plan, body), profile=plan.profile)
