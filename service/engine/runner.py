"""Runs each enabled check in its own guard and turns what it returns into findings.

A check that raises, returns something that is not an iterable of findings, or
gives a finding with a non-finite number becomes one ``error`` finding for that
check; the other checks still run. Findings are ordered by plan position (plan-wide
first, then by burn, each arc with the burn that opened it), then check id, then the
order the check emitted them: never by plugin registration order.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

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


def run_check(
    entry: RegisteredCheck, context: Context, params: Mapping[str, object]
) -> list[Finding]:
    """One check's findings, or a single ``error`` finding saying how it broke."""
    check_id = entry.check.id
    try:
        returned = entry.check.evaluate(context, dict(params))
        items = list(returned)
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
    entries: list[RegisteredCheck], context: Context, thresholds: Mapping[str, Mapping[str, object]]
) -> list[Finding]:
    """Every check's findings in a deterministic order."""
    position = {burn.id: index + 1 for index, burn in enumerate(context.trajectory.maneuvers)}
    keyed = []
    for entry in sorted(entries, key=lambda e: e.check.id):
        for sequence, finding in enumerate(run_check(entry, context, thresholds[entry.check.id])):
            if finding.maneuver is not None:
                where = position[finding.maneuver]
            elif finding.arc is not None:
                where = finding.arc
            else:
                where = 0
            keyed.append(((where, finding.check, sequence), finding))
    return [finding for _, finding in sorted(keyed, key=lambda pair: pair[0])]
