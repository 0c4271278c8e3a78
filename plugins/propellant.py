"""propellant-budget: enough propellant for the plan, a reserve left over, delta-v within budget.

The tanks must hold what the rocket equation says the burns consume, and what
is left must cover residuals, gauging error and contingency (a reserve, as a
fraction of the load or an absolute mass) plus a last delta-v capacity for
collision avoidance or disposal. When the plan asks for more than is loaded,
the finding says by how many kilograms and how much of the planned delta-v is
never delivered: the burn during which the tanks run dry gives only what the
rest of the propellant can, and every later burn is lost in full. Defaults are
common practice, not a standard: operators set their own in a profile.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass

from service.dynamics.rocket import delta_v_for_propellant_m_s
from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl


@dataclass(frozen=True)
class Shortfall:
    """Where the tanks run dry: the burn, the delta-v it still gets and all that is missing, m/s."""

    burn_id: str
    delivered_m_s: float
    missing_m_s: float


def find_shortfall(
    burns: tuple[BurnResult, ...], loaded_kg: float, isp_s: Mapping[str, float]
) -> Shortfall | None:
    """Walk the burns in order with ``loaded_kg``; None when every burn is fed in full.

    The burn that empties the tanks delivers Isp g0 ln(m0 / (m0 - mp_left)) (Tsiolkovsky;
    Curtis, 3rd ed., eq. 11.30) with its own mass before ignition and engine; every later
    burn is missing in full. ``isp_s`` maps engine id to specific impulse, s.
    """
    used_kg = 0.0
    for index, burn in enumerate(burns):
        if used_kg + burn.propellant_kg <= loaded_kg:
            used_kg += burn.propellant_kg
            continue
        left_kg = max(loaded_kg - used_kg, 0.0)
        delivered = float(
            delta_v_for_propellant_m_s(burn.mass_before_kg, left_kg, isp_s[burn.engine_id])
        )
        later = sum(other.delta_v_m_s for other in burns[index + 1 :])
        return Shortfall(burn.id, delivered, burn.delta_v_m_s - delivered + later)
    return None


class PropellantBudget(Check):
    id = "propellant-budget"
    version = "1"
    summary = "propellant used vs loaded, remaining vs reserve and delta-v capacity, delta-v budget"
    parameters = {
        "reserve_fraction": Parameter(
            0.05,
            "fraction of load",
            "higher",
            "fail when less than this fraction of the load remains: residuals, gauging error "
            "and contingency (common practice)",
        ),
        "warn_reserve_fraction": Parameter(
            0.10,
            "fraction of load",
            "higher",
            "warn when less than this fraction of the load remains (common practice)",
        ),
        "reserve_kg": Parameter(
            0.0,
            "kg",
            "higher",
            "absolute reserve; the fail reserve is the larger of this and the fraction of the "
            "load (common practice)",
        ),
        "reserve_delta_v_m_s": Parameter(
            10.0,
            "m/s",
            "higher",
            "delta-v the remaining propellant must still give on the lowest-Isp engine, for "
            "collision avoidance or disposal (common practice)",
        ),
        "max_total_delta_v_m_s": Parameter(
            None, "m/s", "lower", "optional budget for the plan's total delta-v (mission design)"
        ),
        "max_burn_delta_v_m_s": Parameter(
            None, "m/s", "lower", "optional budget for any single burn's delta-v (mission design)"
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        spacecraft = context.plan.spacecraft
        trajectory = context.trajectory
        loaded_kg = float(spacecraft.propellant_kg)
        needed_kg = trajectory.total_propellant_kg
        remaining_kg = loaded_kg - needed_kg
        yield self._usage(context, loaded_kg, needed_kg)
        yield self._reserve(loaded_kg, remaining_kg, params)
        yield self._capacity(context, remaining_kg, float(params["reserve_delta_v_m_s"]))
        yield from self._budgets(context, params)

    def _usage(self, context: Context, loaded_kg: float, needed_kg: float) -> Finding:
        burns = context.trajectory.maneuvers
        if not burns:
            message = f"the plan has no burns: 0.000 kg of the {loaded_kg:.3f} kg loaded is used"
            return Finding(Status.PASS, message, 0.0, loaded_kg, "kg")
        isp_s = {engine.id: engine.isp_s for engine in context.plan.spacecraft.engines}
        shortfall = find_shortfall(burns, loaded_kg, isp_s)
        if shortfall is None:
            message = f"the plan uses {needed_kg:.3f} kg of the {loaded_kg:.3f} kg loaded"
            return Finding(Status.PASS, message, needed_kg, loaded_kg, "kg")
        message = (
            f"the plan needs {needed_kg:.3f} kg of propellant, {needed_kg - loaded_kg:.3f} kg "
            f"more than the {loaded_kg:.3f} kg loaded: the tanks run dry during burn "
            f"{shortfall.burn_id!r} after {shortfall.delivered_m_s:.2f} m/s, leaving "
            f"{shortfall.missing_m_s:.2f} m/s of the plan's "
            f"{context.trajectory.total_delta_v_m_s:.2f} m/s undelivered"
        )
        return Finding(Status.FAIL, message, needed_kg, loaded_kg, "kg")

    def _reserve(
        self, loaded_kg: float, remaining_kg: float, params: Mapping[str, object]
    ) -> Finding:
        fraction = float(params["reserve_fraction"])
        absolute_kg = float(params["reserve_kg"])
        reserve_kg = max(fraction * loaded_kg, absolute_kg)
        if absolute_kg > fraction * loaded_kg:
            basis = f"the {absolute_kg:.3f} kg absolute reserve"
        else:
            basis = f"{fraction * 100.0:.1f} % of the {loaded_kg:.3f} kg load"
        warn_fraction = float(params["warn_reserve_fraction"])
        warn_kg = max(warn_fraction * loaded_kg, reserve_kg)
        if remaining_kg < 0.0:
            message = (
                f"the plan leaves no propellant ({-remaining_kg:.3f} kg short), "
                f"{reserve_kg - remaining_kg:.3f} kg below the {reserve_kg:.3f} kg reserve "
                f"({basis})"
            )
            return Finding(Status.FAIL, message, remaining_kg, reserve_kg, "kg")
        if remaining_kg < reserve_kg:
            message = (
                f"remaining propellant {remaining_kg:.3f} kg is {reserve_kg - remaining_kg:.3f} "
                f"kg below the {reserve_kg:.3f} kg reserve ({basis})"
            )
            return Finding(Status.FAIL, message, remaining_kg, reserve_kg, "kg")
        if remaining_kg < warn_kg:
            message = (
                f"remaining propellant {remaining_kg:.3f} kg meets the {reserve_kg:.3f} kg "
                f"reserve ({basis}) but is {warn_kg - remaining_kg:.3f} kg below the "
                f"{warn_kg:.3f} kg warning margin ({warn_fraction * 100.0:.1f} % of the load)"
            )
            return Finding(Status.WARN, message, remaining_kg, reserve_kg, "kg")
        message = (
            f"remaining propellant {remaining_kg:.3f} kg stays above the {reserve_kg:.3f} kg "
            f"reserve ({basis}) and the {warn_kg:.3f} kg warning margin"
        )
        return Finding(Status.PASS, message, remaining_kg, reserve_kg, "kg")

    def _capacity(self, context: Context, remaining_kg: float, reserve_m_s: float) -> Finding:
        # The lowest Isp gives the least delta-v per kilogram: the conservative choice.
        engines = context.plan.spacecraft.engines
        engine = min(engines, key=lambda item: (item.isp_s, item.id), default=None)
        if engine is None:
            return Finding(Status.SKIPPED, "the spacecraft lists no engines to judge capacity with")
        rank = "the lowest aboard" if len(engines) > 1 else "the only engine"
        using = f"on engine {engine.id!r} (Isp {engine.isp_s:.1f} s, {rank})"
        capacity = 0.0
        if remaining_kg > 0.0:
            final_kg = context.trajectory.final_mass_kg
            capacity = float(delta_v_for_propellant_m_s(final_kg, remaining_kg, engine.isp_s))
            using += f" from a final mass of {final_kg:.3f} kg"
        else:
            using += " with no propellant left"
        if capacity < reserve_m_s:
            message = (
                f"remaining delta-v capacity {capacity:.2f} m/s {using} is "
                f"{reserve_m_s - capacity:.2f} m/s below the {reserve_m_s:.2f} m/s reserve"
            )
            return Finding(Status.FAIL, message, capacity, reserve_m_s, "m/s")
        message = (
            f"remaining delta-v capacity {capacity:.2f} m/s {using} meets the "
            f"{reserve_m_s:.2f} m/s reserve"
        )
        return Finding(Status.PASS, message, capacity, reserve_m_s, "m/s")

    def _budgets(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        trajectory = context.trajectory
        total_budget = params.get("max_total_delta_v_m_s")
        if total_budget is not None:
            budget = float(total_budget)
            total = trajectory.total_delta_v_m_s
            if total > budget:
                message = (
                    f"total delta-v {total:.2f} m/s is {total - budget:.2f} m/s over the "
                    f"{budget:.2f} m/s budget"
                )
                yield Finding(Status.FAIL, message, total, budget, "m/s")
            else:
                message = f"total delta-v {total:.2f} m/s is within the {budget:.2f} m/s budget"
                yield Finding(Status.PASS, message, total, budget, "m/s")
        burn_budget = params.get("max_burn_delta_v_m_s")
        if burn_budget is None:
            return
        budget = float(burn_budget)
        for burn in trajectory.maneuvers:
            dv = burn.delta_v_m_s
            if dv > budget:
                message = (
                    f"burn delta-v {dv:.2f} m/s is {dv - budget:.2f} m/s over the "
                    f"{budget:.2f} m/s burn budget"
                )
                yield Finding(Status.FAIL, message, dv, budget, "m/s", maneuver=burn.id)
            else:
                message = f"burn delta-v {dv:.2f} m/s is within the {budget:.2f} m/s burn budget"
                yield Finding(Status.PASS, message, dv, budget, "m/s", maneuver=burn.id)


@hookimpl
def register_checks() -> list[Check]:
    return [PropellantBudget()]
