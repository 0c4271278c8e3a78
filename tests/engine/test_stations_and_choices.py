"""Plugin API 1.1: parameter choices, and the ground stations of a profile and of a plan.

The site profiles belong to an invented operator, 'puffin-ops', with a two-station network.
"""

from __future__ import annotations

import types
from pathlib import Path

import pytest

from service.engine import PlanInvalid, build_engine
from service.engine.plan import GroundStation
from service.engine.profiles import load_profile_dir, load_profile_text, resolve_thresholds
from service.engine.render import catalogue_to_text
from service.plugin_api import API_VERSION, Check, Finding, Parameter, Status, hookimpl
from tests.engine.conftest import make_plan

HEADER = 'name = "{name}"\ndescription = "an invented test profile"\n'
NETWORK = """
[[stations]]
id = "puffin-north"
latitude_deg = 64.14
longitude_deg = 338.06
height_km = 0.05

[[stations]]
id = "puffin-south"
latitude_deg = -45.87
longitude_deg = 170.5
height_km = 0.3
min_elevation_deg = 10.0
"""


@pytest.fixture(scope="module")
def registry():
    engine = build_engine()
    assert engine.ready, engine.problems
    return engine.registry


def _problems(tmp_path: Path, registry, body: str, name: str = "ops") -> tuple[Path, list[str]]:
    path = tmp_path / f"{name}.toml"
    path.write_text(HEADER.format(name=name) + body, encoding="utf-8")
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert name not in profiles, "a profile with a problem must never be used"
    return path, problems


def test_the_api_version_says_what_was_added():
    # 1.1 added choices; 1.2 (tests/engine/test_parameter_bounds.py) added the bounds.
    assert tuple(int(part) for part in API_VERSION.split(".")) >= (1, 1)
    assert Parameter(1.0, "km", "higher", "a floor").choices is None


# --- choices ---------------------------------------------------------------------------------


def test_the_catalogue_shows_each_parameters_choices(registry):
    engine = build_engine()
    catalogue = {entry["id"]: entry for entry in engine.checks_catalogue()}
    rule = {p["name"]: p for p in catalogue["eclipse-at-burn"]["parameters"]}["rule"]
    assert rule["choices"] == ["sunlight-only", "shadow-only", "any"]
    assert rule["default"] == "any" and rule["stricter"] is None
    floor = {p["name"]: p for p in catalogue["periapsis-floor"]["parameters"]}
    assert floor["earth_min_altitude_km"]["choices"] is None
    text = catalogue_to_text(engine.checks_catalogue())
    assert "(one of sunlight-only, shadow-only, any)" in text


def test_a_profile_value_that_is_not_a_choice_is_refused_naming_them(tmp_path, registry):
    body = '[thresholds.eclipse-at-burn]\nrule = { value = "daylight", reason = "typo" }\n'
    path, problems = _problems(tmp_path, registry, body)
    assert problems == [
        f"profile {path}: thresholds.eclipse-at-burn.rule: 'daylight' is not an allowed value; "
        "allowed: 'sunlight-only', 'shadow-only', 'any'"
    ]


def test_a_profile_choice_must_still_be_a_string(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, "[thresholds.ground-contact]\nrule = 1\n")
    assert problems == [
        f"profile {path}: thresholds.ground-contact.rule: must be a string, not an integer (1)"
    ]


def test_a_profile_may_choose_any_allowed_value(tmp_path, registry):
    body = '[thresholds.ground-contact]\nrule = "require-contact-at-both"\n'
    profile = load_profile_text(HEADER.format(name="ops") + body, "ops.toml", registry)
    assert profile.thresholds["ground-contact"]["rule"] == "require-contact-at-both"


def test_a_request_value_that_is_not_a_choice_is_refused_even_where_loosening_is_allowed(
    registry,
):
    text = HEADER.format(name="ops") + "allow_loosening = true\n"
    profile = load_profile_text(text, "ops.toml", registry)
    with pytest.raises(PlanInvalid) as refused:
        resolve_thresholds(profile, registry, {"ground-contact": {"rule": "always"}})
    assert refused.value.errors == {
        "rules.ground-contact.rule": [
            "rule 'always' is not an allowed value; allowed: 'require-contact-at-ignition', "
            "'require-contact-at-cutoff', 'require-contact-at-both', 'advisory'"
        ]
    }
    # An allowed value is a change of a choice: accepted here because loosening is allowed.
    resolved = resolve_thresholds(
        profile, registry, {"ground-contact": {"rule": "require-contact-at-cutoff"}}
    )
    assert resolved["ground-contact"]["rule"] == "require-contact-at-cutoff"


def test_under_the_default_profile_a_change_of_choice_is_a_loosening(registry):
    engine = build_engine()
    plan = make_plan(rules={"eclipse-at-burn": {"rule": "sunlight-only"}})
    with pytest.raises(PlanInvalid) as refused:
        engine.validate(plan)
    [message] = refused.value.errors["rules.eclipse-at-burn.rule"]
    assert "would loosen profile 'default'" in message


class _Chooser(Check):
    id = "chooser"
    version = "1"
    summary = "a check whose choice parameter is declared wrongly"
    parameters = {"mode": Parameter("sometimes", "choice", None, "a mode", choices=("a", "b"))}

    def evaluate(self, context, params):
        return []


class _BadChoices(_Chooser):
    id = "bad-choices"
    parameters = {"mode": Parameter("a", "choice", None, "a mode", choices=["a", "b"])}


def _engine_of(*checks):
    module = types.SimpleNamespace()

    @hookimpl
    def register_checks():
        return list(checks)

    module.register_checks = register_checks
    return build_engine(extra_plugins=[module], entry_points=False)


def test_a_check_whose_default_is_not_among_its_choices_is_rejected_at_start_up():
    engine = _engine_of(_Chooser(), _BadChoices())
    assert not engine.ready
    problems = " | ".join(engine.problems)
    assert "check 'chooser' rejected: parameter 'mode': default 'sometimes' is not" in problems
    assert "check 'bad-choices' rejected: parameter 'mode': choices must be a non-empty" in problems


# --- the ground stations of a profile -------------------------------------------------------


def test_a_profile_carries_its_station_network_into_its_document_and_digest(registry):
    text = HEADER.format(name="puffin-ops") + NETWORK
    profile = load_profile_text(text, "puffin-ops.toml", registry)
    assert profile.stations == (
        GroundStation("puffin-north", 64.14, 338.06, 0.05, 5.0),
        GroundStation("puffin-south", -45.87, 170.5, 0.3, 10.0),
    )
    document = profile.document()
    assert document["stations"][0] == {
        "id": "puffin-north",
        "latitude_deg": 64.14,
        "longitude_deg": 338.06,
        "height_km": 0.05,
        "min_elevation_deg": 5.0,
    }
    moved = load_profile_text(text.replace("338.06", "338.07"), "puffin-ops.toml", registry)
    bare = load_profile_text(HEADER.format(name="puffin-ops"), "puffin-ops.toml", registry)
    assert len({profile.digest, moved.digest, bare.digest}) == 3
    assert bare.document()["stations"] == []


@pytest.mark.parametrize(
    ("body", "problem"),
    [
        ('stations = "puffin-north"\n', "stations: must be an array of tables ([[stations]])"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = 1.0\nlongitude_deg = 2.0\n",
         "stations[0].height_km: is required"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = 91.0\nlongitude_deg = 2.0\nheight_km = 0.0\n",
         "stations[0].latitude_deg: must be at least -90.0 and at most 90.0 deg, not 91.0"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = 1.0\nlongitude_deg = 360.0\nheight_km = 0.0\n",
         "stations[0].longitude_deg: must be at least -180.0 and less than 360.0 deg, not 360.0"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = 1.0\nlongitude_deg = 2.0\nheight_km = 9.5\n",
         "stations[0].height_km: must be at least -0.5 and at most 9.0 km, not 9.5"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = 1.0\nlongitude_deg = 2.0\nheight_km = 0.0\n"
         "min_elevation_deg = 90.0\n",
         "stations[0].min_elevation_deg: must be at least 0.0 and less than 90.0 deg, not 90.0"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = \"1\"\nlongitude_deg = 2.0\nheight_km = 0.0\n",
         "stations[0].latitude_deg: must be a number in deg, not a string ('1')"),
        ("[[stations]]\nid = 7\nlatitude_deg = 1.0\nlongitude_deg = 2.0\nheight_km = 0.0\n",
         "stations[0].id: must be a string, not an integer (7)"),
        ("[[stations]]\nid = \" \"\nlatitude_deg = 1.0\nlongitude_deg = 2.0\nheight_km = 0.0\n",
         "stations[0].id: must be 1 to 64 characters, not only white space"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = 1.0\nlongitude_deg = 2.0\nheight_km = 0.0\n"
         "altitude_m = 5\n",
         "stations[0].altitude_m: unknown key; known: id, latitude_deg, longitude_deg"),
        ("[[stations]]\nid = \"a\"\nlatitude_deg = nan\nlongitude_deg = 2.0\nheight_km = 0.0\n",
         "stations[0].latitude_deg: must be a finite number, not nan"),
    ],
)  # fmt: skip
def test_every_station_fault_names_the_file_and_the_key(tmp_path, registry, body, problem):
    path, problems = _problems(tmp_path, registry, body)
    assert len(problems) == 1, problems
    assert problems[0].startswith(f"profile {path}: {problem}"), problems[0]


def test_two_stations_with_one_id_are_refused(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, NETWORK.replace("puffin-south", "puffin-north"))
    assert problems == [
        f"profile {path}: stations[1].id: station 'puffin-north' is already defined at stations[0]"
    ]


def test_more_than_sixty_four_stations_are_refused(tmp_path, registry):
    station = '[[stations]]\nid = "s{k}"\nlatitude_deg = 1.0\nlongitude_deg = 2.0\nheight_km = 0\n'
    body = "".join(station.format(k=k) for k in range(65))
    path, problems = _problems(tmp_path, registry, body)
    assert problems == [f"profile {path}: stations: at most 64 stations are allowed; got 65"]


# --- what a check sees: the profile's stations, then the plan's ------------------------------


class _Witness(Check):
    id = "station-witness"
    version = "1"
    summary = "says which ground stations it was given"
    parameters = {}

    def evaluate(self, context, params):
        ids = ", ".join(station.id for station in context.ground_stations) or "none"
        yield Finding(Status.PASS, f"stations: {ids}")


def test_a_check_sees_the_profiles_stations_then_the_plans(tmp_path):
    (tmp_path / "puffin-ops.toml").write_text(
        HEADER.format(name="puffin-ops") + NETWORK, encoding="utf-8"
    )
    module = types.SimpleNamespace(register_checks=hookimpl(lambda: [_Witness()]))
    engine = build_engine(extra_plugins=[module], entry_points=False, profile_dir=str(tmp_path))
    assert engine.ready, engine.problems
    own = (GroundStation("ship-1", 10.0, 200.0, 0.02),)
    report = engine.validate(make_plan(profile="puffin-ops", ground_stations=own))
    assert report["findings"][0]["message"] == "stations: puffin-north, puffin-south, ship-1"
    report = engine.validate(make_plan(ground_stations=own))  # the default profile has none
    assert report["findings"][0]["message"] == "stations: ship-1"
    report = engine.validate(make_plan())
    assert report["findings"][0]["message"] == "stations: none"


def test_a_station_conflict_is_reported_with_any_refused_rule(tmp_path):
    (tmp_path / "puffin-ops.toml").write_text(
        HEADER.format(name="puffin-ops") + NETWORK, encoding="utf-8"
    )
    engine = build_engine(profile_dir=str(tmp_path))
    plan = make_plan(
        profile="puffin-ops",
        ground_stations=(GroundStation("puffin-south", 0.0, 0.0, 0.0),),
        rules={"periapsis-floor": {"earth_min_altitude_km": 100.0}},
    )
    with pytest.raises(PlanInvalid) as refused:
        engine.validate(plan)
    assert set(refused.value.errors) == {
        "ground_stations.0.id",
        "rules.periapsis-floor.earth_min_altitude_km",
    }
    assert refused.value.errors["ground_stations.0.id"][0].startswith(
        "station 'puffin-south' is already in profile 'puffin-ops'"
    )
