"""eclipse-at-burn: each burn's shadow state at ignition, centre and cutoff against a rule.

Power and thermal rules say whether an engine may fire in shadow: a spacecraft on batteries
may have no margin for heaters and valve drivers in eclipse (``sunlight-only``), while one
whose sensors are blinded by the Sun may burn only in the body's shadow (``shadow-only``).
The shadow is the conical umbra and penumbra of the central body (Montenbruck & Gill,
Satellite Orbits, 2000, section 3.4.2) with the Sun from a low-precision solar model
(``service.dynamics.sun``); ``penumbra_counts_as`` says which side of a rule a partly
covered Sun is on. Every finding gives the time from ignition to the next shadow entry or
exit, so that an operator can shift a burn that breaks the rule.

One finding per burn: fail when any of the three instants breaks the rule, else pass. Its
value is the sunlit fraction of the instant that decides the rule: the darkest of the three
under ``sunlight-only`` (limit 1, fully lit) and ``any`` (no limit), the brightest under
``shadow-only`` (limit 0, fully dark). The default profile sets ``any``: the check reports,
and a mission's own profile sets its rule.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

import numpy as np

from plugins._sun_window import sun_model_gap
from service.dynamics.illumination import (
    ShadowSamples,
    next_shadow_change,
    shadow_survey,
    sunlit_fraction_on,
)
from service.dynamics.shadow import shadow_state
from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl

RULES = ("sunlight-only", "shadow-only", "any")
PENUMBRA_SIDES = ("shadow", "sunlight")
INSTANTS = ("ignition", "centre", "cutoff")
# Horizon for the next shadow change when the arc before the burn is unbound (no period).
UNBOUND_HORIZON_S = 3.0 * 3600.0


def _describe(state: str, fraction: float) -> str:
    if state == "penumbra":
        return f"penumbra ({fraction:.3f} of the Sun's disc visible)"
    return state


def _in_shadow(state: str, penumbra_counts_as: str) -> bool:
    return state == "umbra" or (state == "penumbra" and penumbra_counts_as == "shadow")


class EclipseAtBurn(Check):
    id = "eclipse-at-burn"
    version = "1"
    summary = "shadow state (sunlight, penumbra, umbra) at each burn's ignition, centre and cutoff"
    parameters = {
        "rule": Parameter(
            "any",
            "choice",
            None,
            "where a burn may happen; any only reports (the mission's power and thermal rules)",
            choices=RULES,
        ),
        "penumbra_counts_as": Parameter(
            "shadow",
            "choice",
            None,
            "which side of the rule a partly covered Sun is on; shadow is the cautious choice "
            "for power (common practice)",
            choices=PENUMBRA_SIDES,
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        rule = str(params["rule"])
        penumbra = str(params["penumbra_counts_as"])
        if rule not in RULES:
            raise ValueError(f"rule must be one of {', '.join(RULES)}, not {rule!r}")
        if penumbra not in PENUMBRA_SIDES:
            raise ValueError(
                f"penumbra_counts_as must be one of {', '.join(PENUMBRA_SIDES)}, not {penumbra!r}"
            )
        trajectory = context.trajectory
        burns = trajectory.maneuvers
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns to judge for shadow")
            return
        epochs = np.array(
            [[b.ignition, b.centre, b.cutoff] for b in burns], dtype="datetime64[ms]"
        ).reshape(-1)
        horizons_s = [_horizon_s(context, index) for index in range(len(burns))]
        ends = [
            b.ignition + np.timedelta64(round(h * 1000.0), "ms")
            for b, h in zip(burns, horizons_s, strict=True)
        ]
        gap = sun_model_gap(np.concatenate([epochs, np.array(ends, dtype="datetime64[ms]")]))
        if gap:
            yield Finding(Status.SKIPPED, gap)
            return
        fractions, sampled = _survey(context, epochs, burns, horizons_s)
        fractions = fractions.reshape(len(burns), 3)
        states = np.atleast_1d(shadow_state(fractions.reshape(-1))).reshape(len(burns), 3)
        known: tuple[np.datetime64, str, str] | None = None  # (epoch, from state, to state)
        for index, burn in enumerate(burns):
            shown = [str(state) for state in states[index]]
            samples = None if sampled is None else sampled[index]
            change, known = _next_change(context, burn, horizons_s[index], shown[0], known, samples)
            yield _judge(burn, shown, fractions[index], rule, penumbra, change)


def _survey(
    context: Context, epochs: np.ndarray, burns: tuple[BurnResult, ...], horizons_s: list[float]
) -> tuple[np.ndarray, list[ShadowSamples] | None]:
    """The sunlit fraction at every burn's three instants and every burn's sampling pass for
    the next shadow change, made together in one call.

    When that cannot be done, the fractions come on their own (raising what they always
    raised) and each search samples for itself and says what failed.
    """
    trajectory = context.trajectory
    try:
        survey = shadow_survey(trajectory, epochs, [b.ignition for b in burns], horizons_s)
    except (ValueError, ArithmeticError, RuntimeError):
        survey = None
    if survey is not None:
        return survey
    return np.atleast_1d(sunlit_fraction_on(trajectory, epochs)), None


def _horizon_s(context: Context, index: int) -> float:
    """One orbit period of the arc before burn ``index``, or 3 h when that arc is unbound."""
    period_s = context.trajectory.arcs[index].period_s
    return float(period_s) if period_s is not None else UNBOUND_HORIZON_S


def _next_change(
    context: Context,
    burn: BurnResult,
    horizon_s: float,
    state: str,
    known: tuple[np.datetime64, str, str] | None,
    samples: ShadowSamples | None = None,
) -> tuple[str, tuple[np.datetime64, str, str] | None]:
    """The time from ignition to the next shadow entry or exit within ``horizon_s``, said.

    ``known`` is the last change found for an earlier burn: when this ignition falls before it
    in the same state, no change lies between them (it was the first one after the earlier
    ignition), so it is this burn's next change too and is not searched for again. Burns a few
    minutes apart then cost one search per shadow passage rather than one each.
    """
    if known is not None and burn.ignition < known[0] and state == known[1]:
        seconds = float((known[0] - burn.ignition) / np.timedelta64(1, "ms")) / 1000.0
        found: tuple[float, str] | None = (seconds, known[2]) if seconds <= horizon_s else None
    else:
        found = next_shadow_change(context.trajectory, burn.ignition, horizon_s, samples=samples)
        if found is not None:
            at = burn.ignition + np.timedelta64(round(float(found[0]) * 1000.0), "ms")
            known = (at, state, str(found[1]))
    if found is None:
        return f"the shadow state does not change within {horizon_s:.0f} s of ignition", known
    seconds, new_state = found
    return (
        f"the shadow state next changes {float(seconds):.1f} s after ignition, to {new_state}",
        known,
    )


def _judge(
    burn: BurnResult,
    states: list[str],
    fractions: np.ndarray,
    rule: str,
    penumbra: str,
    change: str,
) -> Finding:
    described = [_describe(state, float(f)) for state, f in zip(states, fractions, strict=True)]
    if len(set(described)) == 1:
        shown = f"{described[0]} at ignition, centre and cutoff"
    else:
        shown = ", ".join(f"{d} at {i}" for i, d in zip(INSTANTS, described, strict=True))
    shadowed = [_in_shadow(state, penumbra) for state in states]
    if rule == "sunlight-only":
        broken = [i for i, dark in zip(INSTANTS, shadowed, strict=True) if dark]
        value, limit = float(np.min(fractions)), 1.0
    elif rule == "shadow-only":
        broken = [i for i, dark in zip(INSTANTS, shadowed, strict=True) if not dark]
        value, limit = float(np.max(fractions)), 0.0
    else:
        broken = []
        value, limit = float(np.min(fractions)), None
    counted = f"penumbra counts as {penumbra}"
    if broken:
        side = "shadow" if rule == "sunlight-only" else "sunlight"
        message = (
            f"the burn is in {side} at {' and '.join(broken)}, which breaks the {rule} rule "
            f"({counted}): {shown}; {change}"
        )
        return Finding(Status.FAIL, message, value, limit, "fraction", maneuver=burn.id)
    if rule == "any":
        message = f"{shown}; the rule is any, so shadow is reported, not judged; {change}"
    else:
        message = f"{shown} meets the {rule} rule ({counted}); {change}"
    return Finding(Status.PASS, message, value, limit, "fraction", maneuver=burn.id)


@hookimpl
def register_checks() -> list[Check]:
    return [EclipseAtBurn()]
