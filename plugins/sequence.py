"""burn-sequence: burns in a flyable order, with lead time, spacing and a plan horizon.

Each burn needs time before it for uplink and attitude slew, and time after
the previous burn for settling, attitude change and a look at the result; the
impulsive model also assumes burns never overlap. The horizon bounds how far a
two-body prediction is trusted. Defaults are common practice for small
spacecraft, not a standard: operators set their own in a profile.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from itertools import pairwise

from service.dynamics.epochs import format_utc, seconds_between
from service.plugin_api import Check, Context, Finding, Parameter, Status, hookimpl


class BurnSequence(Check):
    id = "burn-sequence"
    version = "1"
    summary = "ignitions after the plan epoch with lead time, no overlap, minimum spacing, horizon"
    parameters = {
        "min_lead_time_s": Parameter(
            60.0, "s", "higher", "first ignition at least this long after the plan epoch"
        ),
        "min_spacing_s": Parameter(
            300.0, "s", "higher", "from one burn's cutoff to the next burn's ignition"
        ),
        "max_horizon_s": Parameter(
            7.0 * 86400.0, "s", "lower", "from the plan epoch to the last burn's cutoff"
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        burns = context.trajectory.maneuvers
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns to sequence")
            return
        epoch = context.trajectory.epoch
        lead_s = float(params["min_lead_time_s"])
        spacing_s = float(params["min_spacing_s"])
        horizon_s = float(params["max_horizon_s"])
        first = burns[0]
        lead = float(seconds_between(epoch, first.ignition))
        if lead < 0.0:
            message = (
                f"ignition {format_utc(first.ignition)} is {-lead:.1f} s before the plan epoch "
                f"{format_utc(epoch)}"
            )
            yield Finding(Status.FAIL, message, lead, lead_s, "s", maneuver=first.id)
        elif lead < lead_s:
            message = (
                f"ignition is {lead:.1f} s after the plan epoch, {lead_s - lead:.1f} s short of "
                f"the {lead_s:.1f} s minimum lead time"
            )
            yield Finding(Status.FAIL, message, lead, lead_s, "s", maneuver=first.id)
        else:
            message = f"ignition {lead:.1f} s after the plan epoch meets the {lead_s:.1f} s lead"
            yield Finding(Status.PASS, message, lead, lead_s, "s", maneuver=first.id)
        for previous, burn in pairwise(burns):
            gap = float(seconds_between(previous.cutoff, burn.ignition))
            if gap < 0.0:
                message = (
                    f"ignition overlaps burn {previous.id!r}, which runs until "
                    f"{format_utc(previous.cutoff)} ({-gap:.1f} s of overlap); the minimum "
                    f"spacing is {spacing_s:.1f} s"
                )
                yield Finding(Status.FAIL, message, gap, spacing_s, "s", maneuver=burn.id)
            elif gap < spacing_s:
                message = (
                    f"ignition {gap:.1f} s after burn {previous.id!r} ends is {spacing_s - gap:.1f}"
                    f" s short of the {spacing_s:.1f} s minimum spacing"
                )
                yield Finding(Status.FAIL, message, gap, spacing_s, "s", maneuver=burn.id)
            else:
                message = (
                    f"{gap:.1f} s after burn {previous.id!r} ends meets the {spacing_s:.1f} s "
                    "minimum spacing"
                )
                yield Finding(Status.PASS, message, gap, spacing_s, "s", maneuver=burn.id)
        span = float(seconds_between(epoch, burns[-1].cutoff))
        if span > horizon_s:
            message = (
                f"the last burn ends {span / 3600.0:.2f} h after the plan epoch, "
                f"{(span - horizon_s) / 3600.0:.2f} h beyond the {horizon_s / 3600.0:.2f} h horizon"
            )
            yield Finding(Status.FAIL, message, span, horizon_s, "s")
        else:
            message = (
                f"the last burn ends {span / 3600.0:.2f} h after the plan epoch, within the "
                f"{horizon_s / 3600.0:.2f} h horizon"
            )
            yield Finding(Status.PASS, message, span, horizon_s, "s")


@hookimpl
def register_checks() -> list[Check]:
    return [BurnSequence()]
