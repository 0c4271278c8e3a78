"""Plans and a test engine for the command-line tests.

The engine carries only checks defined here (entry points off), so an exit code
depends on the plan and never on which built-in checks happen to be installed.
"""

from __future__ import annotations

from service.engine import build_engine
from service.plugin_api import Check, Finding, Parameter, Status, hookimpl
from tests.plans import valid_plan

GATE_LIMIT_M_S = 100.0


class DeltaVGate(Check):
    """Fails a burn over the limit, warns over 80 % of it, passes the rest; one plan-wide pass."""

    id = "cli-delta-v-gate"
    version = "7"
    summary = "each burn's delta-v against a test limit"
    parameters = {
        "max_delta_v_m_s": Parameter(GATE_LIMIT_M_S, "m/s", "lower", "largest burn allowed"),
    }

    def evaluate(self, context, params):
        limit = params["max_delta_v_m_s"]
        yield Finding(Status.PASS, "the plan has a gate to pass")
        for burn in context.trajectory.maneuvers:
            dv = burn.delta_v_m_s
            if dv > limit:
                status, word = Status.FAIL, "is over"
            elif dv > 0.8 * limit:
                status, word = Status.WARN, "is close to"
            else:
                status, word = Status.PASS, "is within"
            message = f"delta-v {dv:.1f} m/s {word} the {limit:.1f} m/s limit"
            yield Finding(status, message, value=dv, limit=limit, unit="m/s", maneuver=burn.id)


class Broken(Check):
    id = "cli-broken"
    version = "1"
    summary = "always raises"
    parameters = {}

    def evaluate(self, context, params):
        raise RuntimeError("deliberately broken")


class GatePlugin:
    @hookimpl
    def register_checks(self):
        return [DeltaVGate()]


class BrokenPlugin:
    @hookimpl
    def register_checks(self):
        return [Broken()]


def gate_engine():
    return build_engine(extra_plugins=[GatePlugin()], entry_points=False)


def plan_with(delta_v_m_s: float = 12.5, **changes) -> dict:
    """The shared test plan cut to one burn of ``delta_v_m_s`` along track, without rules."""
    plan = valid_plan()
    del plan["rules"], plan["target_orbit"]
    plan["maneuvers"] = plan["maneuvers"][:1]
    plan["maneuvers"][0]["delta_v_m_s"] = [delta_v_m_s, 0.0, 0.0]
    plan.update(changes)
    return plan
