"""A valid plan to mutate, and a helper that sets or deletes a value at a dotted path."""

from __future__ import annotations

import copy

DELETE = object()


def valid_plan() -> dict:
    """CONTRACT.md section 1's example with a second engine and a second maneuver."""
    return copy.deepcopy(
        {
            "plan_id": "aurora-7-raise-03",
            "central_body": "earth",
            "epoch": "2031-05-02T00:00:00Z",
            "initial_state": {
                "frame": "GCRF",
                "position_km": [6778.137, 0.0, 0.0],
                "velocity_km_s": [0.0, 7.6686, 0.0],
            },
            "spacecraft": {
                "dry_mass_kg": 540.0,
                "propellant_kg": 62.0,
                "engines": [
                    {
                        "id": "main",
                        "thrust_n": 22.0,
                        "isp_s": 228.0,
                        "max_burn_s": 1200.0,
                        "min_burn_s": 0.1,
                    },
                    {"id": "rcs", "thrust_n": 1.0, "isp_s": 215.0},
                ],
                "drag_area_m2": 4.2,
                "drag_coefficient": 2.2,
            },
            "maneuvers": [
                {
                    "id": "raise-1",
                    "ignition": "2031-05-02T01:00:00Z",
                    "engine": "main",
                    "frame": "TNW",
                    "delta_v_m_s": [12.5, 0.0, 0.0],
                },
                {
                    "id": "raise-2",
                    "ignition": "2031-05-02T01:47:00Z",
                    "engine": "main",
                    "frame": "TNW",
                    "delta_v_m_s": [12.4, 0.0, 0.0],
                },
            ],
            "target_orbit": {
                "periapsis_altitude_km": 400.0,
                "apoapsis_altitude_km": 444.0,
                "tolerance_km": 5.0,
            },
            "profile": "default",
            "rules": {"periapsis-floor": {"min_altitude_km": 250.0}},
        }
    )


def elements_plan(**elements: float) -> dict:
    """The valid plan with its state given as elements (a 400 km circular orbit by default)."""
    plan = valid_plan()
    plan["initial_state"] = {
        "elements": {
            "semi_major_axis_km": 6778.137,
            "eccentricity": 0.0,
            "inclination_deg": 51.6,
            "raan_deg": 10.0,
            "arg_periapsis_deg": 0.0,
            "true_anomaly_deg": 0.0,
            **elements,
        }
    }
    return plan


def with_value(plan: dict, path: str, value: object) -> dict:
    """``plan`` with ``value`` at the dotted ``path`` (list indices as numbers), or deleted."""
    keys = [int(part) if part.isdigit() else part for part in path.split(".")]
    node = plan
    for key in keys[:-1]:
        node = node[key]
    if value is DELETE:
        del node[keys[-1]]
    else:
        node[keys[-1]] = value
    return plan
