"""thrust-to-weight: each burn gentle enough for the structure, strong enough for an impulse.

Acceleration a = F / m grows as propellant burns away, so the structural limit
(deployed solar arrays, booms, appendages) is judged at cutoff, the lowest mass;
the message also gives the thrust-to-weight ratio F / (m g0). At the other end,
an engine too weak for the spacecraft's mass gives a long low-thrust spiral,
not an impulse, and the impulsive model behind every other finding is not
credible: that is judged at ignition, the highest mass. Defaults are common
practice, not a standard: operators set their own in a profile.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

from service.dynamics.bodies import G0_M_S2
from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl

# Below this many times the minimum acceleration at ignition, a burn warns.
_MIN_WARN_FACTOR = 2.0


class ThrustToWeight(Check):
    id = "thrust-to-weight"
    version = "1"
    summary = "acceleration at each burn within the structural limit and high enough for an impulse"
    parameters = {
        "max_acceleration_m_s2": Parameter(
            0.5,
            "m/s^2",
            "lower",
            "structural limit for deployed arrays and booms, judged at cutoff (common practice, "
            "about 0.05 g)",
        ),
        "warn_fraction": Parameter(
            0.9, "fraction", "lower", "warn above this fraction of the structural limit"
        ),
        "min_acceleration_m_s2": Parameter(
            1.0e-3,
            "m/s^2",
            "higher",
            "below this at ignition the burn is a low-thrust spiral, not an impulse; warn "
            "below twice it (common practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        burns = context.trajectory.maneuvers
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns to judge")
            return
        thrust_n = {engine.id: engine.thrust_n for engine in context.plan.spacecraft.engines}
        max_m_s2 = float(params["max_acceleration_m_s2"])
        warn_m_s2 = float(params["warn_fraction"]) * max_m_s2
        min_m_s2 = float(params["min_acceleration_m_s2"])
        for burn in burns:
            thrust = float(thrust_n[burn.engine_id])
            yield _at_cutoff(burn, thrust, max_m_s2, warn_m_s2)
            yield _at_ignition(burn, thrust, min_m_s2)


def _at_cutoff(burn: BurnResult, thrust_n: float, max_m_s2: float, warn_m_s2: float) -> Finding:
    """Acceleration F / m at cutoff against the structural ceiling and its warning band."""
    accel = thrust_n / burn.mass_after_kg
    ratio = accel / G0_M_S2
    at = (
        f"at cutoff ({thrust_n:.3f} N on {burn.mass_after_kg:.3f} kg, thrust-to-weight {ratio:.3e})"
    )
    if accel > max_m_s2:
        message = (
            f"acceleration {accel:.4f} m/s^2 {at} is {accel - max_m_s2:.4f} m/s^2 above the "
            f"{max_m_s2:.4f} m/s^2 structural limit"
        )
        status = Status.FAIL
    elif accel > warn_m_s2:
        message = (
            f"acceleration {accel:.4f} m/s^2 {at} is within the {max_m_s2:.4f} m/s^2 structural "
            f"limit but {accel - warn_m_s2:.4f} m/s^2 above the {warn_m_s2:.4f} m/s^2 warning "
            "level"
        )
        status = Status.WARN
    else:
        message = (
            f"acceleration {accel:.4f} m/s^2 {at} stays within the {max_m_s2:.4f} m/s^2 "
            "structural limit"
        )
        status = Status.PASS
    return Finding(status, message, accel, max_m_s2, "m/s^2", maneuver=burn.id)


def _at_ignition(burn: BurnResult, thrust_n: float, min_m_s2: float) -> Finding:
    """Acceleration F / m at ignition against the floor the impulsive model needs."""
    accel = thrust_n / burn.mass_before_kg
    warn_m_s2 = _MIN_WARN_FACTOR * min_m_s2
    at = f"at ignition ({thrust_n:.3f} N on {burn.mass_before_kg:.3f} kg)"
    if accel < min_m_s2:
        message = (
            f"acceleration {accel:.3e} m/s^2 {at} is {min_m_s2 - accel:.3e} m/s^2 below the "
            f"{min_m_s2:.3e} m/s^2 floor: a low-thrust spiral, the impulsive model is not credible"
        )
        status = Status.FAIL
    elif accel < warn_m_s2:
        message = (
            f"acceleration {accel:.3e} m/s^2 {at} meets the {min_m_s2:.3e} m/s^2 floor but is "
            f"below the {warn_m_s2:.3e} m/s^2 warning level: the impulsive model is marginal"
        )
        status = Status.WARN
    else:
        message = (
            f"acceleration {accel:.3e} m/s^2 {at} is above the {warn_m_s2:.3e} m/s^2 warning "
            f"level and the {min_m_s2:.3e} m/s^2 floor the impulsive model needs"
        )
        status = Status.PASS
    return Finding(status, message, accel, min_m_s2, "m/s^2", maneuver=burn.id)


@hookimpl
def register_checks() -> list[Check]:
    return [ThrustToWeight()]
