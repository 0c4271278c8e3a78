"""A hand-made report in the engine's shape, so the rendering tests need no checks at all."""

from __future__ import annotations

import copy

_FINDINGS = [
    # (check, status, maneuver, arc, message, value, limit, unit)
    ("periapsis-floor", "pass", None, 0, "periapsis 400.0 km stays above the 250.0 km floor",
     400.0, 250.0, "km"),
    ("burn-duration", "warn", "lift-1", None,
     "finite-burn loss 0.8 m/s is above the 0.5 m/s advisory", 0.8, 0.5, "m/s"),
    ("periapsis-floor", "fail", "lift-1", None,
     'periapsis 142.3 km is 57.7 km below the 200.0 km floor <&> "quoted"', 142.3, 200.0, "km"),
    ("periapsis-floor", "fail", "lift-1", None,
     "apoapsis arc re-enters: lowest point 90.0 km", 90.0, 200.0, "km"),
    ("propellant-budget", "pass", "lift-1", None, "uses 3.4 kg of the 62.0 kg loaded",
     3.36, 62.0, "kg"),
    ("sun-exclusion", "error", None, None, "check failed: ZeroDivisionError: division by zero",
     None, None, None),
    ("eclipse-at-burn", "skipped", None, None, "no ephemeris for this body",
     None, None, None),
]  # fmt: skip

_ARC = {
    "index": 0,
    "after_maneuver": None,
    "start": "2031-05-02T00:00:00Z",
    "end": "2031-05-02T01:02:50.550Z",
    "semi_major_axis_km": 6778.137,
    "eccentricity": 0.0,
    "inclination_deg": 51.6,
    "raan_deg": 0.0,
    "arg_periapsis_deg": 0.0,
    "true_anomaly_deg": 0.0,
    "periapsis_altitude_km": 400.0,
    "apoapsis_altitude_km": 400.0,
    "period_s": 5553.6,
    "lowest_altitude_km": 400.0,
    "lowest_altitude_epoch": "2031-05-02T00:00:00Z",
}

REPORT = {
    "plan_id": "kestrel-2-phasing",
    "verdict": "fail",
    "summary": {"pass": 2, "warn": 1, "fail": 2, "error": 1, "skipped": 1},
    "findings": [
        {
            "check": c,
            "status": s,
            "maneuver": m,
            "arc": a,
            "message": msg,
            "value": v,
            "limit": lim,
            "unit": u,
        }
        for c, s, m, a, msg, v, lim, u in _FINDINGS
    ],
    "maneuvers": [
        {
            "id": "lift-1",
            "engine": "main",
            "frame": "TNW",
            "delta_v_m_s": 12.5,
            "delta_v_inertial_m_s": [0.0, 12.5, 0.0],
            "propellant_kg": 3.361234,
            "duration_s": 341.1,
            "mass_before_kg": 602.0,
            "mass_after_kg": 598.638766,
            "ignition": "2031-05-02T01:00:00Z",
            "centre": "2031-05-02T01:02:50.550Z",
            "cutoff": "2031-05-02T01:05:41.100Z",
            "finite_burn_loss_m_s": 0.8,
        }
    ],
    "arcs": [
        _ARC,
        {
            **_ARC,
            "index": 1,
            "after_maneuver": "lift-1",
            "start": "2031-05-02T01:02:50.550Z",
            "end": None,
            "semi_major_axis_km": None,
            "eccentricity": 1.2,
            "periapsis_altitude_km": 142.3,
            "apoapsis_altitude_km": None,
            "period_s": None,
            "lowest_altitude_km": 142.3,
            "lowest_altitude_epoch": "2031-05-02T01:02:50.550Z",
        },
    ],
    "totals": {
        "delta_v_m_s": 12.5,
        "propellant_kg": 3.361234,
        "propellant_remaining_kg": 58.638766,
        "final_mass_kg": 598.638766,
    },
    "provenance": {
        "plan_digest": "sha256:" + "ab" * 32,
        "profile": "default",
        "profile_digest": "sha256:" + "cd" * 32,
        "service_version": "0.1.0",
        "plugin_api_version": "1.0",
        "coast_model": "two-body",
        "checks": [{"id": "periapsis-floor", "version": "1", "source": "plugins.periapsis"}],
        "thresholds": {"periapsis-floor": {"min_altitude_km": 200.0}},
    },
    "cautions": [
        "burnproof supports, and never replaces, the operator's own flight rules, licensed "
        "judgement and plan approval process; a 'pass' is not an authorisation to uplink.",
        "Results come from a model: two-body coasts.",
    ],
}


def report(**changes) -> dict:
    """A fresh copy of the sample report with top-level fields replaced."""
    copied = copy.deepcopy(REPORT)
    copied.update(changes)
    return copied


def finding(status: str, message: str, **fields) -> dict:
    base = {"check": "some-check", "status": status, "maneuver": None, "arc": None,
            "message": message, "value": None, "limit": None, "unit": None}  # fmt: skip
    return {**base, **fields}
