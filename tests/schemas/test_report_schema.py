"""ReportSchema and report.schema.json describe exactly the report dict of the service brief."""

from __future__ import annotations

import copy

import pytest
from jsonschema import Draft202012Validator, ValidationError
from marshmallow import ValidationError as MarshmallowError

from service.schemas import ReportSchema
from service.schemas.export import json_schema

DIGEST = "sha256:" + "0" * 64

REPORT = {
    "plan_id": "tern-4-deorbit-test-07",
    "verdict": "fail",
    "summary": {"pass": 1, "warn": 0, "fail": 1, "error": 0, "skipped": 1},
    "findings": [
        {"check": "periapsis-floor", "status": "fail", "maneuver": "lower-1", "arc": 1,
         "message": "periapsis 130.4 km is 69.6 km below the 200.0 km floor",
         "value": 130.4, "limit": 200.0, "unit": "km"},
        {"check": "burn-sequence", "status": "pass", "maneuver": None, "arc": None,
         "message": "ignitions are ordered", "value": None, "limit": None, "unit": None},
        {"check": "target-orbit", "status": "skipped", "maneuver": None, "arc": None,
         "message": "the plan gives no target_orbit", "value": None, "limit": None,
         "unit": None},
    ],
    "maneuvers": [
        {"id": "lower-1", "engine": "main", "frame": "TNW", "delta_v_m_s": 52.0,
         "delta_v_inertial_m_s": [-45.1, -25.3, -3.6], "propellant_kg": 4.250842,
         "duration_s": 2292.759, "mass_before_kg": 178.5, "mass_after_kg": 174.249158,
         "ignition": "2032-03-03T12:40:00Z", "centre": "2032-03-03T12:59:06.379Z",
         "cutoff": "2032-03-03T13:18:12.759Z", "finite_burn_loss_m_s": None},
    ],
    "arcs": [
        {"index": 0, "after_maneuver": None, "start": "2032-03-03T12:00:00Z",
         "end": "2032-03-03T12:59:06.379Z", "semi_major_axis_km": 6688.137,
         "eccentricity": 0.0008, "inclination_deg": 51.6, "raan_deg": 212.5,
         "arg_periapsis_deg": 75.0, "true_anomaly_deg": 10.0,
         "periapsis_altitude_km": 304.649, "apoapsis_altitude_km": 315.351, "period_s": 5442.3,
         "lowest_altitude_km": 304.649, "lowest_altitude_epoch": "2032-03-03T12:58:00Z"},
        {"index": 1, "after_maneuver": "lower-1", "start": "2032-03-03T12:59:06.379Z",
         "end": None, "semi_major_axis_km": None, "eccentricity": 1.0, "inclination_deg": 51.6,
         "raan_deg": 212.5, "arg_periapsis_deg": 75.0, "true_anomaly_deg": 10.0,
         "periapsis_altitude_km": 130.418, "apoapsis_altitude_km": None, "period_s": None,
         "lowest_altitude_km": 130.418, "lowest_altitude_epoch": "2032-03-03T13:40:00Z"},
    ],
    "totals": {"delta_v_m_s": 52.0, "propellant_kg": 4.250842,
               "propellant_remaining_kg": -1.850842, "final_mass_kg": 174.249158},
    "provenance": {"plan_digest": DIGEST, "profile": "default", "profile_digest": DIGEST,
                   "service_version": "0.1.0", "plugin_api_version": "1.0",
                   "coast_model": "two-body",
                   "checks": [{"id": "periapsis-floor", "version": "1",
                               "source": "plugins.periapsis"}],
                   "thresholds": {"periapsis-floor": {"min_altitude_km": 200.0,
                                                      "enabled": True, "mode": "strict",
                                                      "optional": None}}},
    "cautions": ["burnproof supports, and never replaces, the operator's own flight rules"],
}  # fmt: skip

VALIDATOR = Draft202012Validator(json_schema("Report"))


def test_a_full_report_is_described() -> None:
    ReportSchema().load(REPORT)
    VALIDATOR.validate(REPORT)


def _broken(path: str, value: object) -> dict:
    report = copy.deepcopy(REPORT)
    *parents, last = [int(p) if p.isdigit() else p for p in path.split(".")]
    node = report
    for key in parents:
        node = node[key]
    if value is KeyError:
        del node[last]
    else:
        node[last] = value
    return report


@pytest.mark.parametrize(
    ("path", "value"),
    [
        ("verdict", "error"),
        ("summary.pass", -1),
        ("findings.0.status", "ok"),
        ("findings.0.extra", 1),
        ("findings.0.unit", KeyError),
        ("maneuvers.0.delta_v_inertial_m_s", [1.0, 2.0]),
        ("maneuvers.0.delta_v_m_s", None),
        ("maneuvers.0.centre", "2032-03-03T12:59:06.379"),
        ("arcs.0.lowest_altitude_epoch", None),
        ("provenance.plan_digest", "md5:abc"),
        ("provenance.thresholds.periapsis-floor.min_altitude_km", [200]),
        ("totals.final_mass_kg", KeyError),
        ("cautions", "read the rules"),
        ("surprise", True),
    ],
)
def test_departures_from_the_report_shape_are_refused(path: str, value: object) -> None:
    report = _broken(path, value)
    with pytest.raises(ValidationError):
        VALIDATOR.validate(report)
    with pytest.raises(MarshmallowError):
        ReportSchema().load(report)
