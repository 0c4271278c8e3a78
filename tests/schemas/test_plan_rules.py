"""Every plan rule, table-driven: the fault, the dotted path it is reported on, and the words."""

from __future__ import annotations

import math

import numpy as np
import pytest

from service.engine.errors import PlanInvalid
from service.engine.plan import (
    EXECUTION_ERROR_MAXIMA,
    CartesianState,
    ElementsState,
    ExecutionErrors,
    GroundStation,
    Plan,
    plan_digest,
)
from service.schemas import load_plan
from tests.plans import DELETE, elements_plan, valid_plan, with_value


def change(path: str, value: object, base=valid_plan):
    """A case builder: the base plan with one value set (or deleted) at ``path``."""
    return lambda: with_value(base(), path, value)


def changes(*pairs: tuple[str, object], base=valid_plan):
    def build() -> dict:
        plan = base()
        for path, value in pairs:
            with_value(plan, path, value)
        return plan

    return build


def many_maneuvers(count: int):
    def build() -> dict:
        plan = valid_plan()
        template = plan["maneuvers"][0]
        plan["maneuvers"] = [{**template, "id": f"m-{i}"} for i in range(count)]
        return plan

    return build


def duplicate_maneuver() -> dict:
    plan = valid_plan()
    plan["maneuvers"].append({**plan["maneuvers"][0], "ignition": "2031-05-02T03:00:00Z"})
    return plan


def duplicate_engine() -> dict:
    plan = valid_plan()
    plan["spacecraft"]["engines"][1]["id"] = "main"
    return plan


def seventeen_engines() -> dict:
    plan = valid_plan()
    plan["spacecraft"]["engines"] = [
        {"id": f"e{i}", "thrust_n": 1.0, "isp_s": 200.0} for i in range(17)
    ]
    return plan


def both_state_forms() -> dict:
    plan = valid_plan()
    plan["initial_state"]["elements"] = elements_plan()["initial_state"]["elements"]
    return plan


CARTESIAN_KEYS = ("frame", "position_km", "velocity_km_s")

# An invented ground station, for the optional ground_stations list.
NORTH_1 = {"id": "north-1", "latitude_deg": 67.86, "longitude_deg": 20.96, "height_km": 0.4}


def with_station(**fields):
    """The valid plan with one ground station, NORTH_1 with ``fields`` set (or deleted)."""

    def build() -> dict:
        plan = valid_plan()
        station = dict(NORTH_1)
        for key, value in fields.items():
            if value is DELETE:
                del station[key]
            else:
                station[key] = value
        plan["ground_stations"] = [station]
        return plan

    return build


def many_stations(count: int):
    def build() -> dict:
        plan = valid_plan()
        plan["ground_stations"] = [{**NORTH_1, "id": f"s-{i}"} for i in range(count)]
        return plan

    return build


def duplicate_station() -> dict:
    plan = with_station()()
    plan["ground_stations"].append({**NORTH_1, "latitude_deg": -30.0})
    return plan


# (case id, plan builder, path the error must be on, words the message must contain)
CASES = [
    # unknown fields, at every level
    ("unknown-top", change("colour", "red"), "colour", "unknown field 'colour'"),
    ("unknown-state", change("initial_state.colour", 1), "initial_state.colour", "unknown field"),
    ("unknown-spacecraft", change("spacecraft.solar_area_m2", 1.0), "spacecraft.solar_area_m2",
     "unknown field"),
    ("unknown-engine", change("spacecraft.engines.1.colour", 1), "spacecraft.engines.1.colour",
     "unknown field"),
    ("unknown-maneuver", change("maneuvers.0.note", "x"), "maneuvers.0.note", "unknown field"),
    ("unknown-target", change("target_orbit.raan_deg", 1.0), "target_orbit.raan_deg",
     "unknown field"),
    ("unknown-elements", change("initial_state.elements.mean_anomaly_deg", 1.0,
                                base=elements_plan),
     "initial_state.elements.mean_anomaly_deg", "unknown field"),
    # the body and plan_id
    ("body-array", lambda: [valid_plan()], "plan", "must be a JSON object"),
    ("body-string", lambda: "plan", "plan", "must be a JSON object"),
    ("plan-id-missing", change("plan_id", DELETE), "plan_id", "is required"),
    ("plan-id-empty", change("plan_id", ""), "plan_id", "1 to 128 characters"),
    ("plan-id-blank", change("plan_id", "   "), "plan_id", "white space"),
    ("plan-id-long", change("plan_id", "x" * 129), "plan_id", "got 129 characters"),
    ("plan-id-control", change("plan_id", "kestrel\n2"), "plan_id", "U+000A"),
    ("plan-id-number", change("plan_id", 42), "plan_id", "must be a string"),
    ("plan-id-null", change("plan_id", None), "plan_id", "not null"),
    ("central-body", change("central_body", "venus"), "central_body",
     "one of 'earth', 'moon', 'mars'"),
    ("central-body-null", change("central_body", None), "central_body", "default \"earth\""),
    # epochs
    ("epoch-naive", change("epoch", "2031-05-02T00:00:00"), "epoch", "no time zone"),
    ("epoch-garbage", change("epoch", "next tuesday"), "epoch", "ISO 8601"),
    ("epoch-date-only", change("epoch", "2031-05-02"), "epoch", "ISO 8601"),
    ("epoch-not-a-date", change("epoch", "2031-02-30T00:00:00Z"), "epoch", "not a real"),
    ("epoch-leap-second", change("epoch", "2016-12-31T23:59:60Z"), "epoch", "leap second"),
    ("epoch-too-early", change("epoch", "1956-12-31T23:59:59Z"), "epoch", "1957 to 2200"),
    ("epoch-too-late", change("epoch", "2201-01-01T00:00:00Z"), "epoch", "1957 to 2200"),
    ("epoch-offset-to-1956", change("epoch", "1957-01-01T00:30:00+01:00"), "epoch",
     "1957 to 2200"),
    ("epoch-bad-offset", change("epoch", "2031-05-02T00:00:00+24:00"), "epoch", "offset"),
    ("epoch-number", change("epoch", 1967328000), "epoch", "got 1967328000"),
    ("epoch-missing", change("epoch", DELETE), "epoch", "is required"),
    ("ignition-naive", change("maneuvers.1.ignition", "2031-05-02T01:00"),
     "maneuvers.1.ignition", "no time zone"),
    # numbers: real JSON numbers only
    ("thrust-string", change("spacecraft.engines.0.thrust_n", "22"),
     "spacecraft.engines.0.thrust_n", "got a string ('22')"),
    ("thrust-bool", change("spacecraft.engines.0.thrust_n", True),
     "spacecraft.engines.0.thrust_n", "got a boolean (true)"),
    ("thrust-nan", change("spacecraft.engines.0.thrust_n", math.nan),
     "spacecraft.engines.0.thrust_n", "got NaN"),
    ("thrust-inf", change("spacecraft.engines.0.thrust_n", math.inf),
     "spacecraft.engines.0.thrust_n", "got Infinity"),
    ("thrust-zero", change("spacecraft.engines.0.thrust_n", 0),
     "spacecraft.engines.0.thrust_n", "greater than 0; got 0"),
    ("thrust-huge-int", change("spacecraft.engines.0.thrust_n", 10**400),
     "spacecraft.engines.0.thrust_n", "too large"),
    ("thrust-null", change("spacecraft.engines.0.thrust_n", None),
     "spacecraft.engines.0.thrust_n", "not null"),
    ("isp-negative", change("spacecraft.engines.1.isp_s", -1.0), "spacecraft.engines.1.isp_s",
     "greater than 0; got -1"),
    ("isp-missing", change("spacecraft.engines.1.isp_s", DELETE), "spacecraft.engines.1.isp_s",
     "is required"),
    ("dry-mass-zero", change("spacecraft.dry_mass_kg", 0.0), "spacecraft.dry_mass_kg",
     "greater than 0"),
    ("propellant-negative", change("spacecraft.propellant_kg", -0.5),
     "spacecraft.propellant_kg", "at least 0; got -0.5"),
    ("drag-area-zero", change("spacecraft.drag_area_m2", 0), "spacecraft.drag_area_m2",
     "greater than 0"),
    ("drag-coefficient-negative", change("spacecraft.drag_coefficient", -2.2),
     "spacecraft.drag_coefficient", "greater than 0"),
    # engines
    ("engines-empty", change("spacecraft.engines", []), "spacecraft.engines",
     "1 to 16 engines; got 0"),
    ("engines-seventeen", seventeen_engines, "spacecraft.engines", "1 to 16 engines; got 17"),
    ("engines-not-list", change("spacecraft.engines", {"id": "main"}), "spacecraft.engines",
     "must be a list"),
    ("engine-not-object", change("spacecraft.engines.1", "rcs"), "spacecraft.engines.1",
     "each item of engines must be a JSON object"),
    ("engine-id-empty", change("spacecraft.engines.0.id", ""), "spacecraft.engines.0.id",
     "1 to 64 characters"),
    ("engine-id-long", change("spacecraft.engines.0.id", "e" * 65), "spacecraft.engines.0.id",
     "got 65 characters"),
    ("engine-id-duplicate", duplicate_engine, "spacecraft.engines.1.id",
     "'main' is already used by spacecraft.engines.0"),
    ("max-burn-zero", change("spacecraft.engines.0.max_burn_s", 0.0),
     "spacecraft.engines.0.max_burn_s", "greater than 0"),
    ("min-burn-negative", change("spacecraft.engines.0.min_burn_s", -0.1),
     "spacecraft.engines.0.min_burn_s", "at least 0"),
    ("min-above-max", change("spacecraft.engines.0.min_burn_s", 1500.0),
     "spacecraft.engines.0.min_burn_s", "exceeds max_burn_s 1200"),
    ("spacecraft-not-object", change("spacecraft", [1, 2]), "spacecraft",
     "spacecraft must be a JSON object"),
    ("spacecraft-missing", change("spacecraft", DELETE), "spacecraft", "is required"),
    # initial state, Cartesian
    ("position-short", change("initial_state.position_km", [6778.137, 0.0]),
     "initial_state.position_km", "exactly 3 finite numbers"),
    ("position-zero", change("initial_state.position_km", [0, 0, 0]),
     "initial_state.position_km", "zero vector"),
    ("position-string-item", change("initial_state.position_km.1", "0"),
     "initial_state.position_km.1", "each component of position_km must be a finite number"),
    ("velocity-infinite", change("initial_state.velocity_km_s.0", -math.inf),
     "initial_state.velocity_km_s.0", "got -Infinity"),
    ("velocity-not-list", change("initial_state.velocity_km_s", "0,7.6,0"),
     "initial_state.velocity_km_s", "exactly 3 finite numbers"),
    ("state-frame", change("initial_state.frame", "ITRF"), "initial_state.frame",
     "one of 'GCRF', 'EME2000'"),
    ("state-missing-velocity", change("initial_state.velocity_km_s", DELETE),
     "initial_state.velocity_km_s", "required in the Cartesian form"),
    ("state-both-forms", both_state_forms, "initial_state", "exactly one form"),
    ("state-neither-form", change("initial_state", {}), "initial_state", "got neither"),
    ("state-frame-with-elements", change("initial_state.frame", "GCRF", base=elements_plan),
     "initial_state", "got elements together with frame"),
    # initial state, elements
    ("parabola", change("initial_state.elements.eccentricity", 1, base=elements_plan),
     "initial_state.elements.eccentricity", "parabola"),
    ("eccentricity-negative", change("initial_state.elements.eccentricity", -0.1,
                                     base=elements_plan),
     "initial_state.elements.eccentricity", "at least 0"),
    ("ellipse-negative-a", change("initial_state.elements.semi_major_axis_km", -7000.0,
                                  base=elements_plan),
     "initial_state.elements.semi_major_axis_km", "greater than 0 for an ellipse"),
    ("hyperbola-positive-a", changes(("initial_state.elements.eccentricity", 1.5),
                                     base=elements_plan),
     "initial_state.elements.semi_major_axis_km", "less than 0 for a hyperbola"),
    ("hyperbola-beyond-asymptote",
     changes(("initial_state.elements.eccentricity", 1.5),
             ("initial_state.elements.semi_major_axis_km", -20000.0),
             ("initial_state.elements.true_anomaly_deg", -140.0), base=elements_plan),
     "initial_state.elements.true_anomaly_deg", "less than 131.81"),
    ("hyperbola-wrapped-anomaly",
     changes(("initial_state.elements.eccentricity", 1.5),
             ("initial_state.elements.semi_major_axis_km", -20000.0),
             ("initial_state.elements.true_anomaly_deg", 200.0), base=elements_plan),
     "initial_state.elements.true_anomaly_deg", "asymptotes"),
    ("inclination-181", change("initial_state.elements.inclination_deg", 181.0,
                               base=elements_plan),
     "initial_state.elements.inclination_deg", "from 0 to 180 inclusive; got 181"),
    ("raan-361", change("initial_state.elements.raan_deg", 361.0, base=elements_plan),
     "initial_state.elements.raan_deg", "from -360 to 360"),
    ("argp-nan", change("initial_state.elements.arg_periapsis_deg", math.nan,
                        base=elements_plan),
     "initial_state.elements.arg_periapsis_deg", "got NaN"),
    ("elements-missing-a", change("initial_state.elements.semi_major_axis_km", DELETE,
                                  base=elements_plan),
     "initial_state.elements.semi_major_axis_km", "is required"),
    # maneuvers
    ("maneuvers-501", many_maneuvers(501), "maneuvers", "at most 500 maneuvers; got 501"),
    ("maneuvers-not-list", change("maneuvers", {"id": "raise-1"}), "maneuvers",
     "must be a list"),
    ("maneuver-not-object", change("maneuvers.0", 12.5), "maneuvers.0",
     "each item of maneuvers must be a JSON object"),
    ("maneuver-id-duplicate", duplicate_maneuver, "maneuvers.2.id",
     "'raise-1' is already used by maneuvers.0"),
    ("maneuver-unknown-engine", change("maneuvers.1.engine", "x"), "maneuvers.1.engine",
     "unknown engine 'x'; known: main, rcs"),
    ("maneuver-frame", change("maneuvers.0.frame", "LVLH"), "maneuvers.0.frame",
     "one of 'RTN', 'TNW', 'GCRF', 'EME2000'"),
    ("maneuver-zero-burn", change("maneuvers.0.delta_v_m_s", [0.0, 0, -0.0]),
     "maneuvers.0.delta_v_m_s", "zero vector"),
    ("maneuver-dv-four", change("maneuvers.0.delta_v_m_s", [1, 2, 3, 4]),
     "maneuvers.0.delta_v_m_s", "got an array of 4 items"),
    ("maneuver-dv-nan", change("maneuvers.1.delta_v_m_s.2", math.nan),
     "maneuvers.1.delta_v_m_s.2", "got NaN"),
    ("maneuver-id-missing", change("maneuvers.0.id", DELETE), "maneuvers.0.id", "is required"),
    # target orbit
    ("target-inverted", change("target_orbit.apoapsis_altitude_km", 300.0),
     "target_orbit.apoapsis_altitude_km", "below periapsis_altitude_km 400"),
    ("target-tolerance-zero", change("target_orbit.tolerance_km", 0.0),
     "target_orbit.tolerance_km", "greater than 0"),
    ("target-inclination", change("target_orbit.inclination_deg", 200.0),
     "target_orbit.inclination_deg", "from 0 to 180"),
    ("target-tolerance-deg", change("target_orbit.tolerance_deg", -0.05),
     "target_orbit.tolerance_deg", "greater than 0"),
    ("target-missing-periapsis", change("target_orbit.periapsis_altitude_km", DELETE),
     "target_orbit.periapsis_altitude_km", "is required"),
    # profile and rules
    ("profile-empty", change("profile", ""), "profile", "1 to 128 characters"),
    ("profile-number", change("profile", 7), "profile", "must be a string"),
    ("rules-list", change("rules", ["periapsis-floor"]), "rules", "must be an object"),
    ("rules-check-not-object", change("rules.periapsis-floor", 250.0), "rules.periapsis-floor",
     "rule 'periapsis-floor' must be an object"),
    ("rules-null-value", change("rules.periapsis-floor.min_altitude_km", None),
     "rules.periapsis-floor.min_altitude_km", "got null"),
    ("rules-nan-value", change("rules.periapsis-floor.min_altitude_km", math.nan),
     "rules.periapsis-floor.min_altitude_km", "got NaN"),
    ("rules-list-value", change("rules.periapsis-floor.min_altitude_km", [250]),
     "rules.periapsis-floor.min_altitude_km", "a finite number, a boolean or a string"),
    # the protected axis of the spacecraft
    ("protected-axis-181", change("spacecraft.protected_axis_offset_deg", 181.0),
     "spacecraft.protected_axis_offset_deg", "from 0 to 180 inclusive; got 181"),
    ("protected-axis-negative", change("spacecraft.protected_axis_offset_deg", -0.5),
     "spacecraft.protected_axis_offset_deg", "got -0.5"),
    ("protected-axis-string", change("spacecraft.protected_axis_offset_deg", "45"),
     "spacecraft.protected_axis_offset_deg", "got a string ('45')"),
    # end-of-life disposal: the plan flag and the spacecraft's radiation-pressure data
    ("end-of-life-string", change("end_of_life", "yes"), "end_of_life",
     "must be true or false; got a string ('yes')"),
    ("end-of-life-number", change("end_of_life", 1), "end_of_life", "true or false; got 1"),
    ("end-of-life-null", change("end_of_life", None), "end_of_life", "default false"),
    ("srp-area-zero", change("spacecraft.srp_area_m2", 0), "spacecraft.srp_area_m2",
     "greater than 0; got 0"),
    ("srp-area-string", change("spacecraft.srp_area_m2", "24"), "spacecraft.srp_area_m2",
     "got a string ('24')"),
    ("srp-area-nan", change("spacecraft.srp_area_m2", math.nan), "spacecraft.srp_area_m2",
     "got NaN"),
    ("reflectivity-low", change("spacecraft.reflectivity_coefficient", 0.9),
     "spacecraft.reflectivity_coefficient", "from 1 to 2 inclusive; got 0.9"),
    ("reflectivity-high", change("spacecraft.reflectivity_coefficient", 2.1),
     "spacecraft.reflectivity_coefficient", "from 1 to 2 inclusive; got 2.1"),
    ("reflectivity-bool", change("spacecraft.reflectivity_coefficient", True),
     "spacecraft.reflectivity_coefficient", "got a boolean (true)"),
    # an engine's own execution errors (the execution-dispersion check's model)
    ("exec-errors-not-object", change("spacecraft.engines.0.execution_errors", 0.01),
     "spacecraft.engines.0.execution_errors", "execution_errors must be a JSON object; got 0.01"),
    ("exec-errors-unknown", change("spacecraft.engines.0.execution_errors",
                                   {"magnitude_pct_1sigma": 1.0}),
     "spacecraft.engines.0.execution_errors.magnitude_pct_1sigma",
     "unknown field 'magnitude_pct_1sigma'"),
    ("exec-fraction-negative",
     change("spacecraft.engines.0.execution_errors", {"magnitude_fraction_1sigma": -0.01}),
     "spacecraft.engines.0.execution_errors.magnitude_fraction_1sigma",
     "from 0 to 0.5 inclusive; got -0.01"),
    ("exec-fraction-high",
     change("spacecraft.engines.1.execution_errors", {"magnitude_fraction_1sigma": 0.51}),
     "spacecraft.engines.1.execution_errors.magnitude_fraction_1sigma",
     "from 0 to 0.5 inclusive; got 0.51"),
    ("exec-fraction-string",
     change("spacecraft.engines.0.execution_errors", {"magnitude_fraction_1sigma": "1%"}),
     "spacecraft.engines.0.execution_errors.magnitude_fraction_1sigma",
     "got a string ('1%')"),
    ("exec-fixed-high",
     change("spacecraft.engines.0.execution_errors", {"magnitude_fixed_m_s_1sigma": 100.5}),
     "spacecraft.engines.0.execution_errors.magnitude_fixed_m_s_1sigma",
     "from 0 to 100 inclusive; got 100.5"),
    ("exec-fixed-nan",
     change("spacecraft.engines.0.execution_errors", {"magnitude_fixed_m_s_1sigma": math.nan}),
     "spacecraft.engines.0.execution_errors.magnitude_fixed_m_s_1sigma", "got NaN"),
    ("exec-pointing-high",
     change("spacecraft.engines.0.execution_errors", {"pointing_1sigma_deg": 30.01}),
     "spacecraft.engines.0.execution_errors.pointing_1sigma_deg",
     "from 0 to 30 inclusive; got 30.01"),
    ("exec-pointing-inf",
     change("spacecraft.engines.0.execution_errors", {"pointing_1sigma_deg": math.inf}),
     "spacecraft.engines.0.execution_errors.pointing_1sigma_deg", "got Infinity"),
    ("exec-timing-negative",
     change("spacecraft.engines.0.execution_errors", {"timing_1sigma_s": -1}),
     "spacecraft.engines.0.execution_errors.timing_1sigma_s", "from 0 to 3600 inclusive; got -1"),
    ("exec-timing-high",
     change("spacecraft.engines.0.execution_errors", {"timing_1sigma_s": 3601}),
     "spacecraft.engines.0.execution_errors.timing_1sigma_s", "got 3601"),
    ("exec-timing-bool",
     change("spacecraft.engines.0.execution_errors", {"timing_1sigma_s": True}),
     "spacecraft.engines.0.execution_errors.timing_1sigma_s", "got a boolean (true)"),
    # ground stations
    ("stations-not-list", change("ground_stations", {"id": "north-1"}), "ground_stations",
     "must be a list"),
    ("stations-65", many_stations(65), "ground_stations", "at most 64 ground stations; got 65"),
    ("stations-null", change("ground_stations", None), "ground_stations", "not null"),
    ("station-not-object", change("ground_stations", ["north-1"]), "ground_stations.0",
     "each item of ground_stations must be a JSON object"),
    ("station-unknown-field", with_station(altitude_m=400.0), "ground_stations.0.altitude_m",
     "unknown field 'altitude_m'"),
    ("station-id-missing", with_station(id=DELETE), "ground_stations.0.id", "is required"),
    ("station-id-blank", with_station(id="   "), "ground_stations.0.id", "white space"),
    ("station-id-long", with_station(id="s" * 65), "ground_stations.0.id", "got 65 characters"),
    ("station-id-duplicate", duplicate_station, "ground_stations.1.id",
     "'north-1' is already used by ground_stations.0; each ground station needs a unique id"),
    ("station-latitude-missing", with_station(latitude_deg=DELETE),
     "ground_stations.0.latitude_deg", "is required"),
    ("station-latitude-91", with_station(latitude_deg=91.0), "ground_stations.0.latitude_deg",
     "from -90 to 90 inclusive; got 91"),
    ("station-latitude-string", with_station(latitude_deg="67.86"),
     "ground_stations.0.latitude_deg", "got a string ('67.86')"),
    ("station-longitude-360", with_station(longitude_deg=360.0),
     "ground_stations.0.longitude_deg", "at least -180 and less than 360; got 360"),
    ("station-longitude-low", with_station(longitude_deg=-180.5),
     "ground_stations.0.longitude_deg", "got -180.5"),
    ("station-height-missing", with_station(height_km=DELETE), "ground_stations.0.height_km",
     "is required"),
    ("station-height-high", with_station(height_km=9.5), "ground_stations.0.height_km",
     "from -0.5 to 9 inclusive; got 9.5"),
    ("station-height-low", with_station(height_km=-0.6), "ground_stations.0.height_km",
     "got -0.6"),
    ("station-mask-90", with_station(min_elevation_deg=90.0),
     "ground_stations.0.min_elevation_deg", "at least 0 and less than 90; got 90"),
    ("station-mask-negative", with_station(min_elevation_deg=-1.0),
     "ground_stations.0.min_elevation_deg", "got -1"),
    ("station-mask-null", with_station(min_elevation_deg=None),
     "ground_stations.0.min_elevation_deg", "default 5.0"),
]  # fmt: skip


def _errors(data: object) -> dict[str, list[str]]:
    with pytest.raises(PlanInvalid) as caught:
        load_plan(data)
    return caught.value.errors


def test_there_are_enough_cases() -> None:
    assert len(CASES) >= 30
    assert len({case[0] for case in CASES}) == len(CASES)


@pytest.mark.parametrize(
    ("build", "path", "words"), [c[1:] for c in CASES], ids=[c[0] for c in CASES]
)
def test_rule(build, path: str, words: str) -> None:
    errors = _errors(build())
    assert path in errors, f"expected an error on {path!r}, got {errors}"
    assert any(words in message for message in errors[path]), errors[path]
    leaf = next(part for part in reversed(path.split(".")) if not part.isdigit())
    assert all(leaf in message for message in errors[path]), (leaf, errors[path])
    assert "_schema" not in "".join(errors)


def test_every_fault_is_reported_at_once() -> None:
    plan = valid_plan()
    plan["plan_id"] = ""
    plan["spacecraft"]["engines"][0]["thrust_n"] = "22"
    plan["maneuvers"][1]["engine"] = "x"
    plan["initial_state"]["position_km"] = [0, 0, 0]
    plan["epoch"] = "2031-05-02T00:00:00"
    plan["extra"] = True
    errors = _errors(plan)
    assert set(errors) == {
        "plan_id",
        "spacecraft.engines.0.thrust_n",
        "maneuvers.1.engine",
        "initial_state.position_km",
        "epoch",
        "extra",
    }


def test_the_detail_names_the_first_fault() -> None:
    with pytest.raises(PlanInvalid) as caught:
        load_plan(with_value(valid_plan(), "central_body", "pluto"))
    assert caught.value.detail.startswith("central_body: central_body must be one of")


def test_a_valid_plan_loads_into_typed_objects() -> None:
    data = valid_plan()
    plan = load_plan(data)
    assert isinstance(plan, Plan)
    assert plan.plan_id == "aurora-7-raise-03"
    assert plan.epoch == np.datetime64("2031-05-02T00:00:00", "ms")
    assert plan.epoch.dtype == np.dtype("datetime64[ms]")
    assert plan.initial_state == CartesianState("GCRF", (6778.137, 0.0, 0.0), (0.0, 7.6686, 0.0))
    assert [e.id for e in plan.spacecraft.engines] == ["main", "rcs"]
    assert plan.spacecraft.engines[1].max_burn_s is None
    assert [m.id for m in plan.maneuvers] == ["raise-1", "raise-2"]
    assert plan.maneuvers[0].delta_v_m_s == (12.5, 0.0, 0.0)
    assert plan.target_orbit.tolerance_deg == 0.05
    assert plan.rules == {"periapsis-floor": {"min_altitude_km": 250.0}}
    assert plan.digest == plan_digest(data)


def test_defaults_apply_when_fields_are_left_out() -> None:
    data = valid_plan()
    for key in ("central_body", "maneuvers", "target_orbit", "profile", "rules"):
        del data[key]
    del data["initial_state"]["frame"]
    plan = load_plan(data)
    assert plan.central_body == "earth"
    assert plan.maneuvers == ()
    assert plan.target_orbit is None
    assert plan.profile == "default"
    assert plan.rules == {}
    assert plan.initial_state.frame == "GCRF"


def test_target_orbit_defaults() -> None:
    data = valid_plan()
    data["target_orbit"] = {"periapsis_altitude_km": 500, "apoapsis_altitude_km": 500}
    target = load_plan(data).target_orbit
    assert (target.tolerance_km, target.tolerance_deg, target.inclination_deg) == (5.0, 0.05, None)


@pytest.mark.parametrize(
    ("path", "value"),
    [
        ("spacecraft.engines.0.max_burn_s", None),
        ("spacecraft.engines.0.min_burn_s", None),
        ("spacecraft.drag_area_m2", None),
        ("spacecraft.drag_coefficient", None),
        ("spacecraft.srp_area_m2", None),
        ("spacecraft.reflectivity_coefficient", None),
        ("spacecraft.reflectivity_coefficient", 1),
        ("spacecraft.reflectivity_coefficient", 2.0),
        ("spacecraft.srp_area_m2", 1e-6),
        ("end_of_life", False),
        ("end_of_life", True),
        ("target_orbit", None),
        ("target_orbit.inclination_deg", None),
        ("spacecraft.propellant_kg", 0),
        ("spacecraft.engines.0.min_burn_s", 0),
        ("spacecraft.engines.0.min_burn_s", 1200.0),
        ("maneuvers", []),
        ("maneuvers.0.frame", "EME2000"),
        ("maneuvers.0.delta_v_m_s", [0, 0, -0.001]),
        ("initial_state.frame", "EME2000"),
        ("initial_state.velocity_km_s", [0, 0, 0]),
        ("target_orbit.apoapsis_altitude_km", 400.0),
        ("target_orbit.periapsis_altitude_km", -50.0),
        ("rules.periapsis-floor", {"enabled": True, "mode": "strict", "samples": 1000}),
        ("epoch", "1957-01-01T00:00:00Z"),
        ("epoch", "2200-12-31T23:59:59.999Z"),
        ("plan_id", "é" * 128),
    ],
)
def test_accepted_edges(path: str, value: object) -> None:
    load_plan(with_value(valid_plan(), path, value))


@pytest.mark.parametrize(
    ("field", "value"),
    [
        ("latitude_deg", -90.0),
        ("latitude_deg", 90.0),
        ("longitude_deg", -180.0),
        ("longitude_deg", 359.999),
        ("height_km", -0.5),
        ("height_km", 9.0),
        ("min_elevation_deg", 0.0),
        ("min_elevation_deg", 89.999),
        ("id", "s" * 64),
    ],
)
def test_ground_station_edges_are_accepted(field: str, value: object) -> None:
    (station,) = load_plan(with_station(**{field: value})()).ground_stations
    assert getattr(station, field) == value


@pytest.mark.parametrize("value", [0.0, 180.0, 45, None])
def test_protected_axis_offset_edges_are_accepted(value: object) -> None:
    plan = load_plan(with_value(valid_plan(), "spacecraft.protected_axis_offset_deg", value))
    assert plan.spacecraft.protected_axis_offset_deg == value


@pytest.mark.parametrize(
    "errors",
    [
        None,
        {},
        {"magnitude_fraction_1sigma": 0.0},
        {"magnitude_fraction_1sigma": 0.5, "magnitude_fixed_m_s_1sigma": 100},
        {"pointing_1sigma_deg": 30.0, "timing_1sigma_s": 3600.0},
        {"magnitude_fraction_1sigma": None, "timing_1sigma_s": 0},
    ],
)
def test_execution_error_edges_are_accepted(errors: object) -> None:
    plan = load_plan(with_value(valid_plan(), "spacecraft.engines.0.execution_errors", errors))
    own = plan.spacecraft.engines[0].execution_errors
    if errors is None:
        assert own is None
        return
    for field in EXECUTION_ERROR_MAXIMA:
        assert getattr(own, field) == errors.get(field)  # type: ignore[union-attr]


def test_execution_errors_load_into_typed_objects_and_default_to_none() -> None:
    data = valid_plan()
    data["spacecraft"]["engines"][1]["execution_errors"] = {
        "magnitude_fraction_1sigma": 0.02,
        "pointing_1sigma_deg": 1.5,
    }
    plan = load_plan(data)
    assert plan.spacecraft.engines[0].execution_errors is None
    assert plan.spacecraft.engine("rcs").execution_errors == ExecutionErrors(
        magnitude_fraction_1sigma=0.02, pointing_1sigma_deg=1.5
    )


def test_ground_stations_load_into_typed_objects_with_the_default_mask() -> None:
    plan = load_plan(many_stations(64)())
    assert len(plan.ground_stations) == 64
    first = plan.ground_stations[0]
    assert first == GroundStation("s-0", 67.86, 20.96, 0.4, 5.0)
    assert load_plan(valid_plan()).ground_stations == ()
    assert load_plan(valid_plan()).spacecraft.protected_axis_offset_deg is None


def test_disposal_fields_load_into_typed_objects_and_default_to_off() -> None:
    plan = load_plan(valid_plan())
    assert plan.end_of_life is False
    assert plan.spacecraft.srp_area_m2 is None
    assert plan.spacecraft.reflectivity_coefficient is None
    data = valid_plan()
    data["end_of_life"] = True
    data["spacecraft"]["srp_area_m2"] = 24
    data["spacecraft"]["reflectivity_coefficient"] = 1.2
    plan = load_plan(data)
    assert plan.end_of_life is True
    assert plan.spacecraft.srp_area_m2 == 24.0
    assert isinstance(plan.spacecraft.srp_area_m2, float)
    assert plan.spacecraft.reflectivity_coefficient == 1.2
    assert plan.digest == plan_digest(data)


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf], ids=["nan", "inf", "-inf"])
@pytest.mark.parametrize(
    "field", ["latitude_deg", "longitude_deg", "height_km", "min_elevation_deg"]
)
def test_a_non_finite_station_number_is_named(field: str, bad: float) -> None:
    errors = _errors(with_station(**{field: bad})())
    assert f"ground_stations.0.{field}" in errors, errors


def test_five_hundred_maneuvers_are_allowed() -> None:
    assert len(load_plan(many_maneuvers(500)()).maneuvers) == 500


def test_integers_are_accepted_as_floats() -> None:
    plan = load_plan(with_value(valid_plan(), "spacecraft.engines.0.thrust_n", 22))
    thrust = plan.spacecraft.engines[0].thrust_n
    assert thrust == 22.0 and type(thrust) is float


def test_rule_values_pass_through_as_received() -> None:
    rules = {"execution-dispersion": {"samples": 2000, "enabled": True, "mode": "gauss"}}
    plan = load_plan(with_value(valid_plan(), "rules", rules))
    assert plan.rules == rules
    assert type(plan.rules["execution-dispersion"]["samples"]) is int


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("2031-05-02T03:00:00+03:00", "2031-05-02T00:00:00.000"),
        ("2031-05-01T21:30:00-02:30", "2031-05-02T00:00:00.000"),
        ("2031-05-02T00:00:00-00:00", "2031-05-02T00:00:00.000"),
        ("2031-05-02T00:00:00.5Z", "2031-05-02T00:00:00.500"),
        ("2031-05-02T00:00:00.123Z", "2031-05-02T00:00:00.123"),
        ("2031-05-02T00:00:00.1234Z", "2031-05-02T00:00:00.123"),
        ("2031-05-02T00:00:00.1235Z", "2031-05-02T00:00:00.124"),  # halves round up
        ("2031-05-02T00:00:00.00049999Z", "2031-05-02T00:00:00.000"),
        ("2031-12-31T23:59:59.9995Z", "2032-01-01T00:00:00.000"),
        ("2032-02-29T12:00:00Z", "2032-02-29T12:00:00.000"),
    ],
)
def test_epochs_are_utc_milliseconds(text: str, expected: str) -> None:
    plan = load_plan(with_value(valid_plan(), "epoch", text))
    assert plan.epoch == np.datetime64(expected, "ms")
    assert plan.epoch.dtype == np.dtype("datetime64[ms]")


def test_elements_form_loads() -> None:
    plan = load_plan(elements_plan(eccentricity=0.01, true_anomaly_deg=-360.0))
    assert plan.initial_state == ElementsState(6778.137, 0.01, 51.6, 10.0, 0.0, -360.0)


@pytest.mark.parametrize("nu_deg", [-131.0, 0.0, 131.0, 229.0])
def test_hyperbola_inside_its_asymptotes_loads(nu_deg: float) -> None:
    data = elements_plan(eccentricity=1.5, semi_major_axis_km=-20000.0, true_anomaly_deg=nu_deg)
    assert load_plan(data).initial_state.eccentricity == 1.5


def test_unknown_engine_is_not_reported_when_the_engines_are_unreadable() -> None:
    errors = _errors(with_value(valid_plan(), "spacecraft", "none"))
    assert set(errors) == {"spacecraft"}


def test_unknown_field_message_lists_the_allowed_fields() -> None:
    errors = _errors(with_value(valid_plan(), "maneuvers.0.dv", 1))
    assert errors["maneuvers.0.dv"] == [
        "unknown field 'dv'; allowed here: declared_duration_s, declared_propellant_kg, "
        "delta_v_m_s, engine, frame, id, ignition"
    ]


def _leaf_paths(node: object, prefix: str = "") -> list[str]:
    if isinstance(node, dict):
        items = node.items()
    elif isinstance(node, list):
        items = enumerate(node)
    else:
        return [prefix]
    paths: list[str] = []
    for key, value in items:
        paths += _leaf_paths(value, f"{prefix}.{key}" if prefix else str(key))
    return paths


LEAVES = [("cartesian", p) for p in _leaf_paths(valid_plan())] + [
    ("elements", p) for p in _leaf_paths(elements_plan()) if p.startswith("initial_state")
]


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf], ids=["nan", "inf", "-inf"])
@pytest.mark.parametrize(("form", "path"), LEAVES, ids=[f"{f}:{p}" for f, p in LEAVES])
def test_a_non_finite_number_anywhere_is_named(form: str, path: str, bad: float) -> None:
    """CONTRACT.md section 1: NaN or Infinity in any field is a 422 naming that field."""
    base = valid_plan if form == "cartesian" else elements_plan
    errors = _errors(with_value(base(), path, bad))
    assert path in errors, errors
