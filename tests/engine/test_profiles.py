"""The built-in default profile: every threshold of every built-in check, each with its reason."""

import tomllib
from importlib.resources import files

from service.engine import build_engine

BUILT_IN = {
    "disposal",
    "target-orbit",
    "transfer-efficiency",
    "burn-duration",
    "burn-sequence",
    "eclipse-at-burn",
    "execution-dispersion",
    "ground-contact",
    "periapsis-floor",
    "propellant-budget",
    "sun-exclusion",
    "thrust-to-weight",
}


def _toml() -> dict:
    text = files("service.engine").joinpath("default_profile.toml").read_text("utf-8")
    return tomllib.loads(text)


def test_the_default_profile_names_every_threshold_of_the_built_in_checks():
    engine = build_engine()
    assert engine.ready, engine.problems
    thresholds = _toml()["thresholds"]
    for check_id in BUILT_IN:
        declared = engine.registry.checks[check_id].parameters
        optional = {name for name, spec in declared.items() if spec.default is None}
        # Optional limits (off unless set) cannot be written in TOML, which has no null.
        assert set(thresholds[check_id]) == set(declared) - optional, check_id
        for name, entry in thresholds[check_id].items():
            assert entry["reason"].strip(), f"{check_id}.{name} has no reason"


def test_the_profile_values_are_the_ones_the_checks_run_with():
    engine = build_engine()
    document = engine.profile_document("default")
    for check_id, entries in _toml()["thresholds"].items():
        for name, entry in entries.items():
            assert document["thresholds"][check_id][name] == entry["value"]
            assert document["reasons"][check_id][name] == entry["reason"]
    assert document["allow_loosening"] is False
    assert document["digest"].startswith("sha256:")
