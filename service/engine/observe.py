"""What the runner tells an observer about each check it ran: for metrics, never for the report.

An observer is any callable taking one ``CheckRun``; ``Engine.validate`` and
``run_checks`` accept one as ``observer=``. The time is measured on the worker thread
that ran the check (``time.perf_counter``), from just before ``evaluate`` to just after
its findings were checked against the contract. The runner calls the observer on the
caller's thread once every check has an outcome, in check-id order; an observer that
raises is logged and ignored, so the report is the same with or without one. Without an
observer the runner measures nothing.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from typing import Literal

from service.plugin_api import Finding

Outcome = Literal["ok", "error", "timeout", "not_run"]


@dataclass(frozen=True)
class CheckRun:
    """One check's run in one validation.

    ``outcome``: ``ok`` the check returned findings that meet the contract (whatever
    their status); ``error`` it raised or broke the contract; ``timeout`` it overran
    its time budget and was abandoned; ``not_run`` the request's budget had run out
    before it could start. ``seconds`` is the time it ran (for ``timeout`` the time
    waited before giving up on it, a lower bound; 0 for ``not_run``). ``findings``
    counts the findings it contributed to the report by status value. For any outcome
    but ``ok``, ``message`` is the message of its ``error`` finding, and ``error`` the
    exception when the check raised one (for a log line with its traceback; it never
    reaches the report).
    """

    check_id: str
    seconds: float
    outcome: Outcome
    findings: Mapping[str, int]
    message: str | None = None
    error: BaseException | None = field(default=None, compare=False, repr=False)


CheckObserver = Callable[[CheckRun], None]


def count_by_status(findings: Iterable[Finding]) -> dict[str, int]:
    """Findings counted by their status value (``"pass"``, ``"error"``, ...)."""
    return dict(Counter(str(finding.status) for finding in findings))
