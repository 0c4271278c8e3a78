"""Runs each enabled check in its own guard and turns what it returns into findings.

A check that raises, returns something that is not an iterable of findings,
gives a finding with a non-finite number, or runs past its time budget becomes
one ``error`` finding for that check; the other checks still run. Each check
runs in a thread of its own so that the request can answer when one hangs; a
thread that overruns is abandoned (Python cannot stop it) and finishes or
hangs on its own, which is why gunicorn recycles workers (``max_requests``).

Findings are ordered by plan position (plan-wide
first, then by burn, each arc with the burn that opened it), then check id, then the
order the check emitted them: never by plugin registration order.
"""

from __future__ import annotations

import math
import threading
import time
from collections.abc import Callable, Mapping

from service.engine.registry import RegisteredCheck
from service.plugin_api import Context, Finding, Status


def _error(check_id: str, message: str) -> Finding:
    return Finding(status=Status.ERROR, message=message, check=check_id)


def _finding_fault(item: object, maneuver_ids: set[str], arc_count: int) -> str | None:
    if not isinstance(item, Finding):
        return f"returned {type(item).__name__} where a Finding was expected"
    if not isinstance(item.status, Status):
        return f"returned a finding with status {item.status!r}, not a Status"
    if not isinstance(item.message, str) or not item.message:
        return "returned a finding without a message"
    for name in ("value", "limit"):
        number = getattr(item, name)
        if number is None:
            continue
        if isinstance(number, bool) or not isinstance(number, int | float):
            return f"returned a finding whose {name} is {type(number).__name__}, not a number"
        if not math.isfinite(number):
            return f"returned a finding whose {name} is {number!r}, not a finite number"
    if item.unit is not None and not isinstance(item.unit, str):
        return "returned a finding whose unit is not a string"
    if item.maneuver is not None and item.maneuver not in maneuver_ids:
        return f"returned a finding for unknown maneuver {item.maneuver!r}"
    if item.arc is not None and (
        isinstance(item.arc, bool) or not isinstance(item.arc, int) or not 0 <= item.arc < arc_count
    ):
        return f"returned a finding for unknown arc {item.arc!r}"
    return None


class _Overran(Exception):
    pass


def _within(budget_s: float, work: Callable[[], list]) -> list:
    """``work()`` in a daemon thread; ``_Overran`` if it has not returned after ``budget_s``."""
    outcome: dict[str, object] = {}

    def target() -> None:
        try:
            outcome["value"] = work()
        except BaseException as error:  # handed back to the caller's guard below
            outcome["error"] = error

    worker = threading.Thread(target=target, name="burnproof-check", daemon=True)
    worker.start()
    worker.join(budget_s if math.isfinite(budget_s) else None)
    if worker.is_alive():
        raise _Overran
    if "error" in outcome:
        raise outcome["error"]  # type: ignore[misc]
    return outcome["value"]  # type: ignore[return-value]


def run_check(
    entry: RegisteredCheck,
    context: Context,
    params: Mapping[str, object],
    budget_s: float = math.inf,
) -> list[Finding]:
    """One check's findings, or a single ``error`` finding saying how it broke."""
    check_id = entry.check.id
    try:
        items = _within(budget_s, lambda: list(entry.check.evaluate(context, dict(params))))
    except _Overran:
        return [_error(check_id, f"check did not finish within its {budget_s:.3g} s time budget")]
    except Exception as error:
        return [_error(check_id, f"check failed: {type(error).__name__}: {error}")]
    maneuver_ids = {burn.id for burn in context.trajectory.maneuvers}
    arc_count = len(context.trajectory.arcs)
    findings = []
    for item in items:
        fault = _finding_fault(item, maneuver_ids, arc_count)
        if fault:
            return [_error(check_id, f"check broke its contract: it {fault}")]
        findings.append(
            Finding(
                status=item.status,
                message=item.message,
                value=None if item.value is None else float(item.value),
                limit=None if item.limit is None else float(item.limit),
                unit=item.unit,
                maneuver=item.maneuver,
                arc=item.arc,
                check=check_id,
            )
        )
    if not findings:
        return [Finding(Status.SKIPPED, "check returned no findings", check=check_id)]
    return findings


def run_checks(
    entries: list[RegisteredCheck],
    context: Context,
    thresholds: Mapping[str, Mapping[str, object]],
    *,
    check_budget_s: float = math.inf,
    request_budget_s: float = math.inf,
    clock: Callable[[], float] = time.monotonic,
) -> list[Finding]:
    """Every check's findings in a deterministic order, within the request's time budget.

    Each check gets ``check_budget_s`` or what is left of ``request_budget_s``,
    whichever is less; a check left without time is an ``error`` finding saying so.
    """
    position = {burn.id: index + 1 for index, burn in enumerate(context.trajectory.maneuvers)}
    deadline = clock() + request_budget_s
    keyed = []
    for entry in sorted(entries, key=lambda e: e.check.id):
        left = deadline - clock()
        if left <= 0.0:
            message = f"check not run: the request's {request_budget_s:.3g} s time budget ran out"
            findings = [_error(entry.check.id, message)]
        else:
            budget = min(check_budget_s, left)
            findings = run_check(entry, context, thresholds[entry.check.id], budget)
        for sequence, finding in enumerate(findings):
            if finding.maneuver is not None:
                where = position[finding.maneuver]
            elif finding.arc is not None:
                where = finding.arc
            else:
                where = 0
            keyed.append(((where, finding.check, sequence), finding))
    return [finding for _, finding in sorted(keyed, key=lambda pair: pair[0])]
