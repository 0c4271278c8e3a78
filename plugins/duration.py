"""burn-duration: each burn within its engine's on-time limits and short enough to be impulsive.

The plan models every burn as an impulse at its mid-point. That holds while the
burn sweeps a small angle of the orbit; the finite-burn loss grows with the
square of that angle (Robbins 1966, from memory), and the core reports both the
angle swept and the loss against a finite-thrust integration. Separately, an
engine has a longest qualified firing and a shortest pulse it can deliver.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping

from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl


def _s(seconds: float) -> str:
    """Seconds to 0.1 s, or to the millisecond for the short pulses where that matters."""
    return f"{seconds:.1f}" if abs(seconds) >= 10.0 else f"{seconds:.3f}"


def _max_on_time(burn: BurnResult, engine_id: str, max_s: float | None, fraction: float):
    duration = burn.duration_s
    if max_s is None:
        message = f"engine {engine_id!r} declares no maximum burn time; on-time not judged"
        return Finding(Status.SKIPPED, message, maneuver=burn.id)
    max_s = float(max_s)
    if duration > max_s:
        status = Status.FAIL
        message = (
            f"burn of {_s(duration)} s is {_s(duration - max_s)} s longer than the "
            f"{_s(max_s)} s maximum on-time of engine {engine_id!r}"
        )
    elif duration > fraction * max_s:
        status = Status.WARN
        message = (
            f"burn of {_s(duration)} s uses {100.0 * duration / max_s:.1f}% of the "
            f"{_s(max_s)} s maximum on-time of engine {engine_id!r}, above the "
            f"{100.0 * fraction:.1f}% warning level"
        )
    else:
        status = Status.PASS
        message = (
            f"burn of {_s(duration)} s uses {100.0 * duration / max_s:.1f}% of the "
            f"{_s(max_s)} s maximum on-time of engine {engine_id!r}"
        )
    return Finding(status, message, duration, max_s, "s", maneuver=burn.id)


def _min_pulse(burn: BurnResult, engine_id: str, min_s: float | None) -> Finding:
    duration = burn.duration_s
    if min_s is None:
        message = f"engine {engine_id!r} declares no minimum burn time; pulse length not judged"
        return Finding(Status.SKIPPED, message, maneuver=burn.id)
    min_s = float(min_s)
    if duration < min_s:
        status = Status.FAIL
        message = (
            f"burn of {_s(duration)} s is {_s(min_s - duration)} s shorter than the "
            f"{_s(min_s)} s minimum pulse engine {engine_id!r} can deliver"
        )
    else:
        status = Status.PASS
        message = (
            f"burn of {_s(duration)} s is no shorter than the {_s(min_s)} s minimum pulse of "
            f"engine {engine_id!r}"
        )
    return Finding(status, message, duration, min_s, "s", maneuver=burn.id)


def _burn_arc(burn: BurnResult, max_deg: float, warn_deg: float) -> Finding:
    arc_deg = math.degrees(burn.burn_arc_rad)
    if arc_deg > max_deg:
        status = Status.FAIL
        message = (
            f"burn sweeps {arc_deg:.2f} deg of orbit, {arc_deg - max_deg:.2f} deg beyond the "
            f"{max_deg:.2f} deg limit of the impulsive approximation"
        )
    elif arc_deg > warn_deg:
        status = Status.WARN
        message = (
            f"burn sweeps {arc_deg:.2f} deg of orbit, above the {warn_deg:.2f} deg warning "
            f"level (limit {max_deg:.2f} deg): the impulsive approximation is getting coarse"
        )
    else:
        status = Status.PASS
        message = (
            f"burn sweeps {arc_deg:.2f} deg of orbit, within the {warn_deg:.2f} deg warning "
            "level of the impulsive approximation"
        )
    return Finding(status, message, arc_deg, max_deg, "deg", maneuver=burn.id)


def _loss(burn: BurnResult, max_loss: float) -> Finding:
    finite = burn.finite_burn
    if finite is None:
        why = burn.finite_burn_skipped or "no finite-burn comparison was computed for this burn"
        message = f"{why}; loss not judged"
        return Finding(Status.SKIPPED, message, maneuver=burn.id)
    if finite.loss_m_s is None:
        why = finite.note or "the finite-burn loss is undefined"
        return Finding(Status.SKIPPED, f"finite-burn loss not judged: {why}", maneuver=burn.id)
    loss = float(finite.loss_m_s)
    percent = 100.0 * loss / burn.delta_v_m_s
    described = (
        f"finite-burn loss {loss:.3f} m/s ({percent:.2f}% of the {burn.delta_v_m_s:.3f} m/s burn)"
    )
    # A negative loss (the finite burn doing more than the impulse) misplaces the orbit just
    # as much, so the size of the difference is judged.
    if abs(loss) > max_loss:
        status = Status.WARN
        if loss > 0.0:
            message = f"{described} exceeds the {max_loss:.3f} m/s limit"
        else:
            message = (
                f"{described}: the finite burn does {-loss:.3f} m/s more than the impulse, "
                f"beyond the {max_loss:.3f} m/s limit"
            )
    else:
        status = Status.PASS
        message = f"{described} is within the {max_loss:.3f} m/s limit"
    if finite.note:
        message += f"; note: {finite.note}"
    return Finding(status, message, loss, max_loss, "m/s", maneuver=burn.id)


class BurnDuration(Check):
    id = "burn-duration"
    version = "1"
    summary = "each burn within its engine's on-time limits and short enough to be impulsive"
    parameters = {
        "max_burn_arc_deg": Parameter(
            30.0,
            "deg",
            "lower",
            "orbit angle swept during a burn above which the impulsive approximation is not "
            "credible; the finite-burn loss grows with its square (common practice; Robbins "
            "1966, from memory)",
        ),
        "warn_burn_arc_deg": Parameter(
            15.0, "deg", "lower", "warn when a burn sweeps more orbit than this (common practice)"
        ),
        "max_finite_burn_loss_m_s": Parameter(
            1.0,
            "m/s",
            "lower",
            "warn when the finite-burn loss against the impulsive model exceeds this "
            "(common practice)",
        ),
        "warn_fraction_of_max_burn": Parameter(
            0.9,
            "fraction",
            "lower",
            "warn when a burn uses more than this fraction of its engine's maximum on-time "
            "(common practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        burns = context.trajectory.maneuvers
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns to time")
            return
        max_arc = float(params["max_burn_arc_deg"])
        warn_arc = float(params["warn_burn_arc_deg"])
        max_loss = float(params["max_finite_burn_loss_m_s"])
        fraction = float(params["warn_fraction_of_max_burn"])
        for burn in burns:
            engine = context.plan.spacecraft.engine(burn.engine_id)
            yield _max_on_time(burn, engine.id, engine.max_burn_s, fraction)
            yield _min_pulse(burn, engine.id, engine.min_burn_s)
            yield _burn_arc(burn, max_arc, warn_arc)
            yield _loss(burn, max_loss)


@hookimpl
def register_checks() -> list[Check]:
    return [BurnDuration()]
