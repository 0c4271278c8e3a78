"""How a plugin author tests a check: the real engine, only this plugin loaded, plans as JSON.

``build_engine(extra_plugins=[module], entry_points=False)`` gives the engine
burnproof runs, with this module's checks and nothing else installed: the
trajectory is flown by burnproof's core and the check runs inside the same
guard as in service. Plans are written in the wire format (CONTRACT.md section
1) and parsed with ``service.schemas.load_plan``, exactly as a request is.

This file's name is unique on purpose: it has no ``__init__.py`` beside it, so
pytest imports it by its bare name, also when burnproof's own suite collects it.
"""

from __future__ import annotations

import tomllib
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from harbourlight_rules import burns_per_day

from service.engine import PlanInvalid, build_engine
from service.plugin_api import API_VERSION, Check, Parameter
from service.schemas import load_plan

PROJECT = Path(__file__).resolve().parents[1]
CHECK = "max-burns-per-day"


def plan_with_burns(*hours_after_midnight: float, rules: dict | None = None) -> dict:
    """An invented smallsat, Petrel-4, 400 km circular, with a 0.5 m/s trim at each hour given.

    Hours count from 2031-05-02T00:00:00Z, an hour after the plan epoch.
    """
    burns = [
        {
            "id": f"trim-{number}",
            "ignition": _iso(hours),
            "engine": "main",
            "frame": "TNW",
            "delta_v_m_s": [0.5, 0.0, 0.0],
        }
        for number, hours in enumerate(hours_after_midnight, start=1)
    ]
    return {
        "plan_id": "petrel-4-phasing-07",
        "central_body": "earth",
        "epoch": "2031-05-01T23:00:00Z",
        "initial_state": {
            "elements": {
                "semi_major_axis_km": 6778.137,
                "eccentricity": 0.0,
                "inclination_deg": 97.0,
                "raan_deg": 40.0,
                "arg_periapsis_deg": 0.0,
                "true_anomaly_deg": 0.0,
            }
        },
        "spacecraft": {
            "dry_mass_kg": 180.0,
            "propellant_kg": 12.0,
            "engines": [{"id": "main", "thrust_n": 5.0, "isp_s": 220.0}],
        },
        "maneuvers": burns,
        "profile": "default",
        "rules": rules or {},
    }


def _iso(hours: float) -> str:
    """2031-05-02T00:00:00Z plus ``hours``, as ISO 8601 UTC with milliseconds."""
    start = np.datetime64("2031-05-02T00:00:00", "ms")
    epoch = start + np.timedelta64(round(hours * 3_600_000), "ms")
    return np.datetime_as_string(epoch, unit="ms") + "Z"


def report_for(plan: dict) -> dict:
    """The report from the real engine with only this plugin's checks loaded."""
    engine = build_engine(extra_plugins=[burns_per_day], entry_points=False)
    assert engine.ready, engine.problems
    return engine.validate(load_plan(plan))


def findings(report: dict) -> list[dict]:
    return [finding for finding in report["findings"] if finding["check"] == CHECK]


def test_the_hook_returns_one_well_formed_check():
    (check,) = burns_per_day.register_checks()
    assert isinstance(check, Check)
    assert check.id == CHECK
    assert check.parameters["max_burns_per_day"] == Parameter(
        4, "count", "lower", check.parameters["max_burns_per_day"].description
    )
    assert API_VERSION.split(".")[0] == "1"  # the API major this plugin was written against


def test_the_engine_lists_the_check_with_its_parameters():
    engine = build_engine(extra_plugins=[burns_per_day], entry_points=False)
    assert engine.problems == []
    (entry,) = engine.checks_catalogue()
    assert entry["id"] == CHECK
    assert entry["source"] == "harbourlight_rules.burns_per_day"
    assert entry["parameters"][0]["name"] == "max_burns_per_day"
    assert entry["parameters"][0]["default"] == 4
    assert entry["profiles"] == ["default"]


def test_three_burns_in_a_day_pass():
    report = report_for(plan_with_burns(0, 8, 16))
    (finding,) = findings(report)
    assert finding["status"] == "pass"
    assert (finding["value"], finding["limit"], finding["unit"]) == (3, 4, "count")
    assert finding["maneuver"] is None
    assert finding["message"] == (
        "the busiest 24 h, from 2031-05-02T00:00:00Z, has 3 burns, within the limit of 4"
    )
    assert report["verdict"] == "pass"


def test_exactly_the_limit_passes():
    (finding,) = findings(report_for(plan_with_burns(0, 6, 12, 18)))
    assert (finding["status"], finding["value"]) == ("pass", 4)


def test_one_over_the_limit_fails_on_the_burn_past_it():
    report = report_for(plan_with_burns(1, 5, 9, 13, 17))
    (finding,) = findings(report)
    assert finding["status"] == "fail"
    assert finding["maneuver"] == "trim-5"
    assert (finding["value"], finding["limit"]) == (5, 4)
    assert finding["message"] == (
        "5 burns ignite in the 24 h from 2031-05-02T01:00:00Z ('trim-1', 'trim-2', "
        "'trim-3', 'trim-4', 'trim-5'), 1 more than the limit of 4"
    )
    assert report["verdict"] == "fail"


def test_a_window_inside_a_reported_one_is_not_reported_again():
    # Windows from trim-1 (6 burns) and trim-2 (5 burns) both breach; trim-2's adds no burn.
    (finding,) = findings(report_for(plan_with_burns(0, 3, 6, 9, 12, 15)))
    assert (finding["status"], finding["value"], finding["maneuver"]) == ("fail", 6, "trim-5")


def test_each_window_that_brings_new_burns_is_its_own_finding():
    plan = plan_with_burns(0, 10, 20, 30, rules={CHECK: {"max_burns_per_day": 2}})
    fails = findings(report_for(plan))
    assert [(f["status"], f["maneuver"], f["value"]) for f in fails] == [
        ("fail", "trim-3", 3),  # trim-1 .. trim-3 in the 24 h from 00:00
        ("fail", "trim-4", 3),  # trim-2 .. trim-4 in the 24 h from 10:00
    ]
    assert "from 2031-05-02T10:00:00Z" in fails[1]["message"]


def test_two_ignitions_exactly_24_h_apart_are_in_different_windows():
    tight = {CHECK: {"max_burns_per_day": 1}}
    (apart,) = findings(report_for(plan_with_burns(0, 24, rules=tight)))
    assert (apart["status"], apart["value"]) == ("pass", 1)
    (inside,) = findings(report_for(plan_with_burns(0, 24 - 1 / 3_600_000, rules=tight)))
    assert (inside["status"], inside["value"], inside["maneuver"]) == ("fail", 2, "trim-2")


def test_a_plan_without_burns_is_skipped():
    (finding,) = findings(report_for(plan_with_burns()))
    assert finding["status"] == "skipped"
    assert finding["message"] == "the plan has no burns to count"


def test_a_request_may_tighten_but_not_loosen_the_limit():
    (tightened,) = findings(
        report_for(plan_with_burns(0, 8, 16, rules={CHECK: {"max_burns_per_day": 2}}))
    )
    assert (tightened["status"], tightened["limit"]) == ("fail", 2)
    with pytest.raises(PlanInvalid) as refused:
        report_for(plan_with_burns(0, 8, rules={CHECK: {"max_burns_per_day": 6}}))
    (message,) = refused.value.errors[f"rules.{CHECK}.max_burns_per_day"]
    assert "would loosen profile 'default'" in message


def stand_in(*hours_after_midnight: float) -> SimpleNamespace:
    """A stand-in context carrying only what this check reads: burn ids and ignitions.

    Calling ``evaluate`` directly is quick and needs no orbit; keep it for the
    arithmetic, and test the real thing through the engine as above.
    """
    burns = [
        SimpleNamespace(id=f"trim-{number}", ignition=np.datetime64(_iso(hours)[:-1], "ms"))
        for number, hours in enumerate(hours_after_midnight, start=1)
    ]
    return SimpleNamespace(trajectory=SimpleNamespace(maneuvers=tuple(burns)))


def test_hourly_burns_give_one_finding_per_window_with_new_burns():
    check = burns_per_day.MaxBurnsPerDay()
    found = list(check.evaluate(stand_in(*range(26)), {"max_burns_per_day": 4}))
    # 26 hourly burns: the windows from 00:00 (trim-1 .. trim-24), 01:00 and 02:00 each add one
    assert [(f.status, f.value, f.maneuver) for f in found] == [
        ("fail", 24, "trim-5"),
        ("fail", 24, "trim-6"),
        ("fail", 24, "trim-7"),
    ]


def test_a_limit_that_is_not_a_whole_number_is_refused_by_the_check():
    # Raised inside evaluate, the engine turns this into one ``error`` finding for the check.
    check = burns_per_day.MaxBurnsPerDay()
    with pytest.raises(ValueError, match=r"whole number of burns >= 0, got 2\.5"):
        list(check.evaluate(stand_in(0, 8), {"max_burns_per_day": 2.5}))


def test_the_entry_point_names_this_module():
    project = tomllib.loads((PROJECT / "pyproject.toml").read_text("utf-8"))
    points = project["project"]["entry-points"]["burnproof"]
    assert points == {CHECK: "harbourlight_rules.burns_per_day"}
    assert project["project"]["name"] == "harbourlight-burnproof-rules"
