"""declared-burn-agreement: the planner's declared burn duration and propellant against burnproof's.

A plan may say what its planner expects each burn to take: ``declared_duration_s`` and
``declared_propellant_kg`` (from a CCSDS OPM these are MAN_DURATION and -MAN_DELTA_MASS,
CCSDS 502.0-B-2 section 3.2.4 / 502.0-B-3, from memory). burnproof computes both from the
engine's thrust and Isp and the mass at ignition (the rocket equation and the exact
constant-thrust burn time, ``service.dynamics.rocket``). When the two disagree beyond a
tolerance, the planner and the spacecraft description almost always disagree about thrust,
Isp or mass, and every other finding about the burn rests on one of them being wrong.

The tolerance of each comparison is the larger of an absolute and a relative limit (the
relative one taken of burnproof's computed value); a difference above ``warn_fraction`` of
the tolerance warns, one beyond the tolerance fails. A declared duration of 0 s is the
planner's impulsive model of the burn: the duration comparison is skipped with that reason,
the propellant comparison still runs. Values are read from the trajectory, never recomputed.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl

_CAUSE = "the planner and the spacecraft description usually disagree about thrust, Isp or mass"


def tolerance(computed: float, absolute: float, fraction: float) -> float:
    """The larger of the absolute limit and ``fraction`` of the computed value's size."""
    return max(absolute, fraction * abs(computed))


def _engine_words(context: Context, burn: BurnResult) -> str:
    engine = context.plan.spacecraft.engine(burn.engine_id)
    return (
        f"engine {engine.id!r} ({engine.thrust_n:g} N, Isp {engine.isp_s:g} s) from "
        f"{burn.mass_before_kg:.3f} kg at ignition"
    )


def compare(
    *,
    quantity: str,
    unit: str,
    declared: float,
    computed: float,
    absolute: float,
    fraction: float,
    warn_fraction: float,
    basis: str,
    digits: int,
    maneuver: str,
) -> Finding:
    """One declared-against-computed finding: pass, warn (above ``warn_fraction`` of the
    tolerance) or fail (beyond it); value is the size of the difference, limit the tolerance."""
    limit = tolerance(computed, absolute, fraction)
    difference = abs(declared - computed)
    percent = 100.0 * difference / abs(computed) if computed else float("inf")
    share = "" if computed == 0.0 else f" ({percent:.2f} %)"
    head = (
        f"declared {quantity} {declared:.{digits}f} {unit} differs from the "
        f"{computed:.{digits}f} {unit} computed with {basis} by {difference:.{digits}f} "
        f"{unit}{share}"
    )
    rule = (
        f"the {limit:.{digits}f} {unit} tolerance (the larger of {absolute:g} {unit} and "
        f"{100.0 * fraction:g} % of the computed value)"
    )
    if difference > limit:
        status = Status.FAIL
        message = f"{head}, {difference - limit:.{digits}f} {unit} beyond {rule}: {_CAUSE}"
    elif difference > warn_fraction * limit:
        status = Status.WARN
        message = f"{head}, within {rule} but above {100.0 * warn_fraction:g} % of it: {_CAUSE}"
    else:
        status = Status.PASS
        message = f"{head}, within {rule}"
    return Finding(status, message, difference, limit, unit, maneuver=maneuver)


class DeclaredBurnAgreement(Check):
    id = "declared-burn-agreement"
    version = "1"
    summary = "each burn's declared duration and propellant agree with what the engine gives"
    parameters = {
        "max_duration_difference_s": Parameter(
            1.0,
            "s",
            "lower",
            "absolute part of the duration tolerance: about one second of ignition and cut-off "
            "timing (common practice)",
            minimum=0.0,
        ),
        "max_duration_difference_fraction": Parameter(
            0.02,
            "fraction",
            "lower",
            "relative part of the duration tolerance, of the computed duration: thrust is "
            "known to a few per cent (common practice)",
            minimum=0.0,
        ),
        "max_propellant_difference_kg": Parameter(
            0.01,
            "kg",
            "lower",
            "absolute part of the propellant tolerance: 10 g, below gauging error (common "
            "practice)",
            minimum=0.0,
        ),
        "max_propellant_difference_fraction": Parameter(
            0.02,
            "fraction",
            "lower",
            "relative part of the propellant tolerance, of the computed propellant: Isp is "
            "known to a few per cent (common practice)",
            minimum=0.0,
        ),
        "warn_fraction": Parameter(
            0.5,
            "fraction",
            "lower",
            "warn when a difference uses more than this fraction of its tolerance (common "
            "practice)",
            minimum=0.0,
            maximum=1.0,
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        burns = context.trajectory.maneuvers
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns whose declared values to compare")
            return
        planned = {maneuver.id: maneuver for maneuver in context.plan.maneuvers}
        if all(
            planned[burn.id].declared_duration_s is None
            and planned[burn.id].declared_propellant_kg is None
            for burn in burns
        ):
            yield Finding(
                Status.SKIPPED,
                "no burn declares a duration or propellant (declared_duration_s, "
                "declared_propellant_kg; an OPM's MAN_DURATION and MAN_DELTA_MASS): nothing to "
                "compare",
            )
            return
        warn = float(params["warn_fraction"])
        for burn in burns:
            maneuver = planned[burn.id]
            basis = _engine_words(context, burn)
            yield self._duration(burn, maneuver.declared_duration_s, basis, params, warn)
            yield self._propellant(burn, maneuver.declared_propellant_kg, basis, params, warn)

    def _duration(self, burn, declared, basis, params, warn) -> Finding:
        if declared is None:
            return Finding(
                Status.SKIPPED, "the burn declares no duration to compare", maneuver=burn.id
            )
        if float(declared) == 0.0:
            return Finding(
                Status.SKIPPED,
                "the planner modelled the burn as an impulse (declared duration 0 s): no "
                f"duration to compare with the {burn.duration_s:.3f} s computed",
                maneuver=burn.id,
            )
        return compare(
            quantity="duration",
            unit="s",
            declared=float(declared),
            computed=float(burn.duration_s),
            absolute=float(params["max_duration_difference_s"]),
            fraction=float(params["max_duration_difference_fraction"]),
            warn_fraction=warn,
            basis=basis,
            digits=3,
            maneuver=burn.id,
        )

    def _propellant(self, burn, declared, basis, params, warn) -> Finding:
        if declared is None:
            return Finding(
                Status.SKIPPED, "the burn declares no propellant to compare", maneuver=burn.id
            )
        return compare(
            quantity="propellant",
            unit="kg",
            declared=float(declared),
            computed=float(burn.propellant_kg),
            absolute=float(params["max_propellant_difference_kg"]),
            fraction=float(params["max_propellant_difference_fraction"]),
            warn_fraction=warn,
            basis=basis,
            digits=4,
            maneuver=burn.id,
        )


@hookimpl
def register_checks() -> list[Check]:
    return [DeclaredBurnAgreement()]
