"""Site profile files: the TOML format, every refusal naming file and key, and how they apply.

The site profiles here belong to an invented operator; "tern-ops" flies small
spacecraft in low Earth orbit and runs two of the built-in checks.
"""

from __future__ import annotations

import math
import tomllib
import types
from pathlib import Path

import pytest

from service.engine import PlanInvalid, build_engine
from service.engine.profiles import (
    ProfileError,
    default_profile,
    load_profile_dir,
    load_profile_text,
    load_profiles,
    resolve_thresholds,
)
from service.plugin_api import Check, Parameter, hookimpl
from tests.engine.conftest import make_plan

REPOSITORY = Path(__file__).resolve().parents[2]
EXAMPLE = REPOSITORY / "deploy" / "profiles" / "ops-conservative.toml"

TERN_OPS = """\
name = "tern-ops"
description = "Tern operations: two checks, a higher floor and a bigger reserve."
enabled = ["periapsis-floor", "propellant-budget"]
check_time_budget_s = 2.5
request_time_budget_s = 20

[thresholds.periapsis-floor]
earth_min_altitude_km = { value = 250.0, unit = "km", reason = "no recovery below 250 km" }
earth_margin_km = 75

[thresholds.propellant-budget]
reserve_fraction = { value = 0.08, reason = "gauging is not proven below 8 % (operator rule)" }
"""

HEADER = 'name = "{name}"\ndescription = "an invented test profile"\n'


@pytest.fixture(scope="module")
def registry():
    engine = build_engine()
    assert engine.ready, engine.problems
    return engine.registry


def _write(directory: Path, filename: str, text: str) -> Path:
    path = directory / filename
    path.write_text(text, encoding="utf-8")
    return path


def _problems(tmp_path: Path, registry, body: str, *, name: str = "ops") -> tuple[Path, list]:
    """Write ``<name>.toml`` (the header, then ``body``) and load the directory."""
    path = _write(tmp_path, f"{name}.toml", HEADER.format(name=name) + body)
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert name not in profiles, "a profile with a problem must never be used"
    return path, problems


# --- a valid site profile ------------------------------------------------------------------


def test_a_valid_site_profile_loads_with_only_its_enabled_checks(tmp_path, registry):
    path = _write(tmp_path, "tern-ops.toml", TERN_OPS)
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert problems == []
    profile = profiles["tern-ops"]
    assert profile.origin == str(path)
    assert profile.enabled == ("periapsis-floor", "propellant-budget")
    assert profile.enabled_checks(registry) == ["periapsis-floor", "propellant-budget"]
    assert set(profile.thresholds) == {"periapsis-floor", "propellant-budget"}
    assert profile.allow_loosening is False
    assert profile.check_time_budget_s == 2.5
    assert profile.request_time_budget_s == 20.0
    floor = profile.thresholds["periapsis-floor"]
    assert floor["earth_min_altitude_km"] == 250.0
    # An integer is accepted for a number and stored as one.
    assert floor["earth_margin_km"] == 75.0 and isinstance(floor["earth_margin_km"], float)
    # Parameters the file leaves out run at the check's declared default.
    declared = registry.checks["periapsis-floor"].parameters
    assert floor["moon_min_altitude_km"] == declared["moon_min_altitude_km"].default
    assert floor["min_altitude_km"] is None
    reasons = profile.reasons["periapsis-floor"]
    assert reasons["earth_min_altitude_km"] == "no recovery below 250 km"
    assert reasons["moon_margin_km"] == declared["moon_margin_km"].description
    document = profile.document()
    assert document["source"] == str(path)
    assert document["check_time_budget_s"] == 2.5
    assert document["request_time_budget_s"] == 20.0


def test_every_registered_check_runs_when_enabled_is_left_out(tmp_path, registry):
    _write(tmp_path, "all.toml", HEADER.format(name="all"))
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert problems == []
    assert profiles["all"].enabled is None
    assert set(profiles["all"].thresholds) == set(registry.checks)
    assert profiles["all"].check_time_budget_s == 5.0
    assert profiles["all"].request_time_budget_s == 30.0


def test_requests_may_tighten_a_site_profile(tmp_path, registry):
    profile = load_profile_text(TERN_OPS, "tern-ops.toml", registry)
    rules = {"periapsis-floor": {"earth_min_altitude_km": 300.0}}
    resolved = resolve_thresholds(profile, registry, rules)
    assert set(resolved) == {"periapsis-floor", "propellant-budget"}
    assert resolved["periapsis-floor"]["earth_min_altitude_km"] == 300.0
    assert resolved["propellant-budget"]["reserve_fraction"] == 0.08
    # The profile itself is not changed by a request.
    assert profile.thresholds["periapsis-floor"]["earth_min_altitude_km"] == 250.0


def test_a_loosening_is_refused_naming_parameter_profile_value_and_request(registry):
    profile = load_profile_text(TERN_OPS, "tern-ops.toml", registry)
    with pytest.raises(PlanInvalid) as raised:
        resolve_thresholds(profile, registry, {"periapsis-floor": {"earth_min_altitude_km": 220.0}})
    [message] = raised.value.errors["rules.periapsis-floor.earth_min_altitude_km"]
    assert "would loosen profile 'tern-ops'" in message
    assert "profile value 250.0 km" in message
    assert "requested 220.0 km" in message


def test_rules_for_a_check_the_site_profile_does_not_enable_are_refused(registry):
    profile = load_profile_text(TERN_OPS, "tern-ops.toml", registry)
    with pytest.raises(PlanInvalid) as raised:
        resolve_thresholds(profile, registry, {"burn-sequence": {"min_spacing_s": 900.0}})
    [message] = raised.value.errors["rules.burn-sequence"]
    assert message == "check 'burn-sequence' is not enabled in profile 'tern-ops'"


def test_a_profile_that_allows_loosening_accepts_it(registry):
    text = TERN_OPS.replace("enabled = [", "allow_loosening = true\nenabled = [")
    profile = load_profile_text(text, "tern-ops.toml", registry)
    assert profile.allow_loosening is True
    rules = {"periapsis-floor": {"earth_min_altitude_km": 220.0}}
    resolved = resolve_thresholds(profile, registry, rules)
    assert resolved["periapsis-floor"]["earth_min_altitude_km"] == 220.0


def test_the_engine_validates_against_a_site_profile(tmp_path, registry):
    _write(tmp_path, "tern-ops.toml", TERN_OPS)
    engine = build_engine(profile_dir=str(tmp_path))
    assert engine.ready, engine.problems
    assert sorted(engine.profiles) == ["default", "tern-ops"]
    report = engine.validate(make_plan(profile="tern-ops"))
    assert report["provenance"]["profile"] == "tern-ops"
    assert report["provenance"]["profile_digest"] == engine.profiles["tern-ops"].digest
    assert {f["check"] for f in report["findings"]} == {"periapsis-floor", "propellant-budget"}
    floors = [f for f in report["findings"] if f["check"] == "periapsis-floor"]
    assert floors and all(f["limit"] == 250.0 for f in floors)
    with pytest.raises(PlanInvalid) as raised:
        engine.validate(
            make_plan(profile="tern-ops", rules={"propellant-budget": {"reserve_fraction": 0.05}})
        )
    assert "rules.propellant-budget.reserve_fraction" in raised.value.errors


# --- digests -------------------------------------------------------------------------------


def test_digests_are_stable_across_loads_and_places(tmp_path, registry):
    first = load_profile_text(TERN_OPS, "/etc/burnproof/profiles/tern-ops.toml", registry)
    again = load_profile_text(TERN_OPS, "/etc/burnproof/profiles/tern-ops.toml", registry)
    elsewhere = load_profile_text(TERN_OPS, "/srv/profiles/tern-ops.toml", registry)
    assert first.digest == again.digest
    assert first.document() == again.document()
    # The digest identifies the rules, not where the file was deployed.
    assert elsewhere.digest == first.digest
    assert elsewhere.document()["source"] != first.document()["source"]
    assert first.digest.startswith("sha256:") and len(first.digest) == len("sha256:") + 64


def test_digests_differ_when_a_threshold_or_budget_changes(registry):
    base = load_profile_text(TERN_OPS, "tern-ops.toml", registry)
    changed = load_profile_text(
        TERN_OPS.replace("value = 250.0", "value = 260.0"), "tern-ops.toml", registry
    )
    budget = load_profile_text(
        TERN_OPS.replace("check_time_budget_s = 2.5", "check_time_budget_s = 3.0"),
        "tern-ops.toml",
        registry,
    )
    assert len({base.digest, changed.digest, budget.digest}) == 3


def test_an_integer_and_the_same_number_written_as_a_float_give_one_digest(registry):
    as_float = load_profile_text(
        TERN_OPS.replace("earth_margin_km = 75", "earth_margin_km = 75.0"), "a.toml", registry
    )
    as_int = load_profile_text(TERN_OPS, "a.toml", registry)
    assert as_float.digest == as_int.digest


# --- every refusal names the file and the key ---------------------------------------------


def test_a_unit_that_differs_from_the_checks_unit_is_refused(tmp_path, registry):
    body = '[thresholds.periapsis-floor]\nmin_altitude_km = { value = 250000.0, unit = "m" }\n'
    path, problems = _problems(tmp_path, registry, body)
    assert problems == [
        f"profile {path}: thresholds.periapsis-floor.min_altitude_km: "
        "unit 'm' does not match the check's unit 'km'"
    ]


def test_an_unknown_check_in_thresholds_is_refused(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, "[thresholds.perigee-floor]\nfloor_km = 1.0\n")
    [problem] = problems
    assert problem.startswith(
        f"profile {path}: thresholds.perigee-floor: unknown check 'perigee-floor'; installed: "
    )
    assert "periapsis-floor" in problem


def test_an_unknown_check_in_enabled_is_refused(tmp_path, registry):
    body = 'enabled = ["periapsis-floor", "perigee-floor"]\n'
    path, problems = _problems(tmp_path, registry, body)
    [problem] = problems
    assert problem.startswith(f"profile {path}: enabled[1]: unknown check 'perigee-floor'")


def test_an_unknown_parameter_is_refused(tmp_path, registry):
    body = "[thresholds.periapsis-floor]\nearth_floor_km = 250.0\n"
    path, problems = _problems(tmp_path, registry, body)
    [problem] = problems
    assert problem.startswith(
        f"profile {path}: thresholds.periapsis-floor.earth_floor_km: "
        "unknown parameter of 'periapsis-floor'; known: allow_escape, earth_margin_km"
    )


@pytest.mark.parametrize(
    ("entry", "message"),
    [
        ("earth_min_altitude_km = true", "must be a number in km, not a boolean (true)"),
        ('earth_min_altitude_km = "250"', "must be a number in km, not a string ('250')"),
        ("allow_escape = 1", "must be true or false, not an integer (1)"),
        ("earth_min_altitude_km = nan", "must be a finite number, not nan"),
        ("earth_min_altitude_km = inf", "must be a finite number, not inf"),
        ("earth_min_altitude_km = [250.0]", "must be a number in km, not an array ([250.0])"),
    ],
)
def test_a_value_of_the_wrong_kind_or_not_finite_is_refused(tmp_path, registry, entry, message):
    body = f"[thresholds.periapsis-floor]\n{entry}\n"
    path, problems = _problems(tmp_path, registry, body)
    key = entry.split(" = ")[0]
    assert problems == [f"profile {path}: thresholds.periapsis-floor.{key}: {message}"]


def test_an_entry_table_needs_a_value_and_knows_only_value_reason_and_unit(tmp_path, registry):
    body = (
        "[thresholds.periapsis-floor]\n"
        'earth_min_altitude_km = { reason = "forgot the value" }\n'
        'earth_margin_km = { value = 60.0, why = "typo for reason" }\n'
    )
    path, problems = _problems(tmp_path, registry, body)
    prefix = f"profile {path}: thresholds.periapsis-floor"
    assert problems == [
        f"{prefix}.earth_margin_km.why: unknown key; an entry has value, reason and unit",
        f"{prefix}.earth_min_altitude_km: the table has no value",
    ]


def test_unknown_top_level_keys_are_refused(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, "allow_loosning = true\n")
    [problem] = problems
    assert problem.startswith(f"profile {path}: allow_loosning: unknown key; known: ")


def test_a_missing_description_is_refused(tmp_path, registry):
    path = _write(tmp_path, "ops.toml", 'name = "ops"\n')
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert profiles == {}
    assert problems == [f"profile {path}: description: is required"]


def test_broken_toml_names_the_file_and_the_line(tmp_path, registry):
    body = "\n[thresholds.periapsis-floor\nearth_min_altitude_km = 250.0\n"
    path, problems = _problems(tmp_path, registry, body)
    [problem] = problems
    assert problem.startswith(f"profile {path}: not valid TOML: ")
    assert "line 4" in problem  # two header lines, a blank line, then the broken table


@pytest.mark.parametrize(
    ("entry", "message"),
    [
        ("check_time_budget_s = 0", "must be a positive number of seconds, not 0"),
        ("request_time_budget_s = -5.0", "must be a positive number of seconds, not -5.0"),
        ("check_time_budget_s = inf", "must be a finite number, not inf"),
        ('request_time_budget_s = "30 s"', "must be a number in s, not a string ('30 s')"),
    ],
)
def test_time_budgets_must_be_positive_finite_seconds(tmp_path, registry, entry, message):
    path, problems = _problems(tmp_path, registry, entry + "\n")
    assert problems == [f"profile {path}: {entry.split(' = ')[0]}: {message}"]


def test_allow_loosening_must_be_a_boolean(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, 'allow_loosening = "no"\n')
    assert problems == [
        f"profile {path}: allow_loosening: must be true or false, not a string ('no')"
    ]


def test_enabled_must_list_each_installed_check_once(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, "enabled = []\n")
    assert problems == [
        f"profile {path}: enabled: must be a non-empty array of check ids (leave it out for all)"
    ]
    body = 'enabled = ["periapsis-floor", "periapsis-floor"]\n'
    path, problems = _problems(tmp_path, registry, body)
    assert problems == [f"profile {path}: enabled[1]: check 'periapsis-floor' is listed twice"]


def test_thresholds_for_a_check_that_is_not_enabled_are_refused(tmp_path, registry):
    body = 'enabled = ["periapsis-floor"]\n[thresholds.burn-sequence]\nmin_spacing_s = 900.0\n'
    path, problems = _problems(tmp_path, registry, body)
    assert problems == [
        f"profile {path}: thresholds.burn-sequence: check 'burn-sequence' is not in enabled; "
        "enable it or drop this"
    ]


def test_the_profile_name_must_match_the_file_name(tmp_path, registry):
    path = _write(tmp_path, "ops.toml", HEADER.format(name="operations"))
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert profiles == {}
    [problem] = problems
    assert problem.startswith(f"profile {path}: name: 'operations' differs from the file name")


def test_a_profile_name_must_be_lower_case_words(tmp_path, registry):
    path, problems = _problems(tmp_path, registry, "", name="Ops Team")
    assert problems == [
        f"profile {path}: name: 'Ops Team' must be lower-case letters and digits joined by . _ or -"
    ]


def test_a_site_may_not_replace_the_built_in_default(tmp_path, registry):
    path = _write(tmp_path, "default.toml", HEADER.format(name="default"))
    profiles, problems = load_profiles(registry, str(tmp_path))
    assert problems == [
        f"profile {path}: name: 'default' is the built-in profile, which a site may not "
        "replace; give the site's profile a name of its own"
    ]
    assert profiles["default"].origin == "built-in"


def test_a_missing_directory_is_a_problem(tmp_path, registry):
    missing = tmp_path / "nowhere"
    assert load_profile_dir(str(missing), registry) == (
        {},
        [f"profile directory {missing}: does not exist"],
    )
    profiles, problems = load_profiles(registry, str(missing))
    assert list(profiles) == ["default"]
    assert problems == [f"profile directory {missing}: does not exist"]


def test_only_visible_toml_files_are_read_in_sorted_order(tmp_path, registry):
    _write(tmp_path, "README.md", "not a profile")
    _write(tmp_path, "notes.toml.bak", "not a profile either [")
    _write(tmp_path, ".ops.toml", "hidden [")
    b = _write(tmp_path, "b.toml", "broken =")
    a = _write(tmp_path, "a.toml", HEADER.format(name="a") + "surprise = 1\n")
    _write(tmp_path, "c.toml", HEADER.format(name="c"))
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert list(profiles) == ["c"]  # the broken files do not stop the good one
    assert [p.split(":")[0] for p in problems] == [f"profile {a}", f"profile {b}"]


def test_without_a_directory_only_the_built_in_profile_is_loaded(registry):
    for directory in (None, ""):
        profiles, problems = load_profiles(registry, directory)
        assert list(profiles) == ["default"]
        assert problems == []


# --- the built-in profile goes through the same loader ------------------------------------


def test_the_built_in_profile_is_read_by_the_same_loader(registry):
    text = (REPOSITORY / "service" / "engine" / "default_profile.toml").read_text("utf-8")
    assert default_profile(registry) == load_profile_text(
        text, "built-in", registry, installed_only=True
    )
    assert default_profile(registry).origin == "built-in"
    assert default_profile(registry).document()["source"] == "built-in"


class _Lone(Check):
    id = "lone-check"
    version = "1"
    summary = "a third-party check the built-in file does not mention"
    parameters = {"limit_km": Parameter(1.0, "km", "higher", "a floor")}

    def evaluate(self, context, params):
        return []


class _Impostor(_Lone):
    id = "periapsis-floor"
    summary = "another check installed under a built-in id"


def _registry_of(*checks):
    module = types.SimpleNamespace()

    @hookimpl
    def register_checks():
        return list(checks)

    module.register_checks = register_checks
    return build_engine(extra_plugins=[module], entry_points=False).registry


def test_built_in_entries_for_checks_not_installed_are_dropped():
    registry = _registry_of(_Lone())
    profile = default_profile(registry)
    assert profile.thresholds == {"lone-check": {"limit_km": 1.0}}
    assert profile.reasons == {"lone-check": {"limit_km": "a floor"}}


def test_a_built_in_file_that_does_not_fit_the_installed_checks_is_a_problem():
    registry = _registry_of(_Impostor())
    with pytest.raises(ProfileError):
        default_profile(registry)
    profiles, problems = load_profiles(registry, None)
    assert profiles == {}
    assert problems[0].startswith(
        "profile built-in: thresholds.periapsis-floor.allow_escape: unknown parameter"
    )


# --- the example site profile in deploy/ -------------------------------------------------


def test_the_example_site_profile_loads_and_only_tightens_the_default(registry):
    profiles, problems = load_profile_dir(str(EXAMPLE.parent), registry)
    assert problems == []
    example = profiles["ops-conservative"]
    default = default_profile(registry)
    assert example.allow_loosening is False
    assert example.enabled is None
    entries = tomllib.loads(EXAMPLE.read_text("utf-8"))["thresholds"]
    tighter = 0
    for check_id, table in entries.items():
        for name, entry in table.items():
            assert entry["reason"].strip(), f"{check_id}.{name} has no reason"
            spec = registry.checks[check_id].parameters[name]
            value = example.thresholds[check_id][name]
            built_in = default.thresholds[check_id][name]
            if spec.stricter == "higher":
                assert value >= built_in, f"{check_id}.{name}"
            elif spec.stricter == "lower":
                assert value <= built_in, f"{check_id}.{name}"
            tighter += value != built_in
    assert tighter >= 10
    assert math.isclose(example.thresholds["periapsis-floor"]["earth_min_altitude_km"], 250.0)
