"""The report: verdict (fail-closed), findings, the trajectory tables, provenance and cautions.

Numbers are rounded to fixed decimals (millimetres, mm/s, grams, milliseconds,
nano-degrees) so the same plan gives the same bytes on any machine.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

from service import __version__
from service.dynamics.epochs import format_utc
from service.dynamics.trajectory import Arc, BurnResult, Trajectory
from service.engine.plan import Plan
from service.engine.registry import RegisteredCheck
from service.plugin_api import API_VERSION, Finding, Status

CAUTIONS = (
    "burnproof supports, and never replaces, the operator's own flight rules, licensed "
    "judgement and plan approval process; a 'pass' is not an authorisation to uplink.",
    "Results come from a model: two-body coasts (J2 drift only where stated), impulses at "
    "burn mid-points, UTC treated as uniform, GCRF and EME2000 taken as one frame, a "
    "low-precision Sun (about 0.01 deg) and Earth rotation without nutation or polar motion "
    "(UT1 = UTC). Confirm critical numbers with the mission's own high-fidelity tools before "
    "commanding.",
    "A check that is disabled, skipped or missing judges nothing: review the findings list "
    "and the profile, not only the verdict.",
)

STATUS_ORDER = ("pass", "warn", "fail", "error", "skipped")


def verdict(findings: Iterable[Finding]) -> str:
    """Fail-closed: fail on any fail or error, else warn on any warn, else pass."""
    statuses = {finding.status for finding in findings}
    if Status.FAIL in statuses or Status.ERROR in statuses:
        return "fail"
    if Status.WARN in statuses:
        return "warn"
    return "pass"


def _round(value: float | None, decimals: int) -> float | None:
    if value is None or not math.isfinite(value):
        return None
    rounded = round(float(value), decimals)
    return 0.0 if rounded == 0.0 else rounded  # no "-0.0" in the bytes


def _finding(finding: Finding) -> dict:
    return {
        "check": finding.check,
        "status": finding.status.value,
        "maneuver": finding.maneuver,
        "arc": finding.arc,
        "message": finding.message,
        "value": _round(finding.value, 6),
        "limit": _round(finding.limit, 6),
        "unit": finding.unit,
    }


def _maneuver(burn: BurnResult) -> dict:
    loss = None if burn.finite_burn is None else burn.finite_burn.loss_m_s
    return {
        "id": burn.id,
        "engine": burn.engine_id,
        "frame": burn.frame,
        "delta_v_m_s": _round(burn.delta_v_m_s, 6),
        "delta_v_inertial_m_s": [_round(c, 6) for c in burn.delta_v_inertial_m_s],
        "propellant_kg": _round(burn.propellant_kg, 6),
        "duration_s": _round(burn.duration_s, 3),
        "mass_before_kg": _round(burn.mass_before_kg, 6),
        "mass_after_kg": _round(burn.mass_after_kg, 6),
        "ignition": format_utc(burn.ignition),
        "centre": format_utc(burn.centre),
        "cutoff": format_utc(burn.cutoff),
        "finite_burn_loss_m_s": _round(loss, 6),
    }


def _degrees(angle_rad: float) -> float | None:
    return _round(math.degrees(float(angle_rad)), 9)


def _arc(arc: Arc) -> dict:
    elements = arc.elements
    return {
        "index": arc.index,
        "after_maneuver": arc.after_maneuver,
        "start": format_utc(arc.start),
        "end": None if arc.end is None else format_utc(arc.end),
        "semi_major_axis_km": _round(arc.semi_major_axis_km, 6),
        "eccentricity": _round(arc.eccentricity, 12),
        "inclination_deg": _degrees(elements.i_rad),
        "raan_deg": _degrees(elements.raan_rad),
        "arg_periapsis_deg": _degrees(elements.argp_rad),
        "true_anomaly_deg": _degrees(elements.nu_rad),
        "periapsis_altitude_km": _round(arc.periapsis_altitude_km, 6),
        "apoapsis_altitude_km": _round(arc.apoapsis_altitude_km, 6),
        "period_s": _round(arc.period_s, 3),
        "lowest_altitude_km": _round(arc.lowest_altitude_km, 6),
        "lowest_altitude_epoch": format_utc(arc.lowest_altitude_epoch),
    }


def build_report(
    plan: Plan,
    trajectory: Trajectory,
    findings: list[Finding],
    *,
    profile_name: str,
    profile_digest: str,
    checks: list[RegisteredCheck],
    thresholds: dict,
) -> dict:
    """The report dict of CONTRACT.md section 2, JSON-ready and deterministic."""
    summary = {status: 0 for status in STATUS_ORDER}
    for finding in findings:
        summary[finding.status.value] += 1
    propellant = trajectory.total_propellant_kg
    return {
        "plan_id": plan.plan_id,
        "verdict": verdict(findings),
        "summary": summary,
        "findings": [_finding(finding) for finding in findings],
        "maneuvers": [_maneuver(burn) for burn in trajectory.maneuvers],
        "arcs": [_arc(arc) for arc in trajectory.arcs],
        "totals": {
            "delta_v_m_s": _round(trajectory.total_delta_v_m_s, 6),
            "propellant_kg": _round(propellant, 6),
            "propellant_remaining_kg": _round(plan.spacecraft.propellant_kg - propellant, 6),
            "final_mass_kg": _round(trajectory.final_mass_kg, 6),
        },
        "provenance": {
            "plan_digest": plan.digest,
            "profile": profile_name,
            "profile_digest": profile_digest,
            "service_version": __version__,
            "plugin_api_version": API_VERSION,
            "coast_model": trajectory.coast_model,
            "checks": [
                {"id": entry.check.id, "version": entry.check.version, "source": entry.source}
                for entry in sorted(checks, key=lambda e: e.check.id)
            ],
            "thresholds": {
                check_id: {
                    name: thresholds[check_id][name] for name in sorted(thresholds[check_id])
                }
                for check_id in sorted(thresholds)
            },
        },
        "cautions": list(CAUTIONS),
    }
