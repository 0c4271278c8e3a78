"""max-burns-per-day: no more than N ignitions in any rolling 24 h.

Harbourlight Orbital's operations team reviews every burn's telemetry before
the next one is commanded, and a shift can review only so many in a day. The
rule counts ignitions in every 24 h window; the busiest window always starts
at an ignition, so only those windows need counting. A window is half-open,
``[ignition, ignition + 24 h)``: two ignitions exactly 24 h apart fall in
different windows. Operator practice, not a standard: a site profile sets its
own limit.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence

import numpy as np

from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl

WINDOW = np.timedelta64(24 * 3600 * 1000, "ms")
WINDOW_H = 24


def _utc(epoch: np.datetime64) -> str:
    """ISO 8601 UTC with a ``Z``, whole seconds when the milliseconds are zero."""
    text = np.datetime_as_string(np.datetime64(epoch, "ms"), unit="ms")
    return (text[:-4] if text.endswith(".000") else text) + "Z"


def _limit(value: object) -> int:
    """The parameter as a whole number of burns; anything else is the caller's mistake."""
    number = float(value)  # type: ignore[arg-type]
    if not np.isfinite(number) or number < 0.0 or number != int(number):
        raise ValueError(f"max_burns_per_day must be a whole number of burns >= 0, got {value!r}")
    return int(number)


def window_ends(ignitions: np.ndarray) -> np.ndarray:
    """For each ignition (sorted ``datetime64[ms]``), the index one past the last in its window.

    ``ends[i] - i`` is the number of burns igniting in ``[ignitions[i], ignitions[i] + 24 h)``.
    """
    return np.searchsorted(ignitions, ignitions + WINDOW, side="left")


def _breach(burns: Sequence[BurnResult], start: int, end: int, limit: int) -> Finding:
    count = end - start
    names = ", ".join(repr(burn.id) for burn in burns[start:end])
    message = (
        f"{count} burns ignite in the {WINDOW_H} h from {_utc(burns[start].ignition)} "
        f"({names}), {count - limit} more than the limit of {limit}"
    )
    # The finding belongs to the first burn past the limit: the one to move or drop.
    first_over = burns[start + limit]
    return Finding(Status.FAIL, message, count, limit, "count", maneuver=first_over.id)


class MaxBurnsPerDay(Check):
    """Counts ignitions in every rolling 24 h window against ``max_burns_per_day``."""

    id = "max-burns-per-day"
    version = "1"
    summary = "no more burns in any rolling 24 h than operations can review"
    parameters = {
        "max_burns_per_day": Parameter(
            4,
            "count",
            "lower",
            "ignitions allowed in any rolling 24 h window (Harbourlight operations practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        """A ``fail`` per distinct busy window, else one plan-wide ``pass``; no burns: ``skipped``.

        Windows are anchored at each ignition. A window whose burns are all in
        the last reported breach adds nothing new and is not reported again.
        """
        limit = _limit(params["max_burns_per_day"])
        burns = context.trajectory.maneuvers  # already in ignition order
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns to count")
            return
        ignitions = np.array([burn.ignition for burn in burns], dtype="datetime64[ms]")
        ends = window_ends(ignitions)
        counts = ends - np.arange(len(burns))
        reported_end = 0
        for start in np.flatnonzero(counts > limit):
            end = int(ends[start])
            if end > reported_end:
                yield _breach(burns, int(start), end, limit)
                reported_end = end
        if reported_end:
            return
        busiest = int(np.argmax(counts))  # the first of the busiest windows
        count = int(counts[busiest])
        message = (
            f"the busiest {WINDOW_H} h, from {_utc(ignitions[busiest])}, has {count} "
            f"burn{'s' if count != 1 else ''}, within the limit of {limit}"
        )
        yield Finding(Status.PASS, message, count, limit, "count")


@hookimpl
def register_checks() -> list[Check]:
    """The hook burnproof calls (with keywords) to collect this module's checks."""
    return [MaxBurnsPerDay()]
