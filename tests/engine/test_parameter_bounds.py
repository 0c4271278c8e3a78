"""Plugin API 1.2: parameter bounds, and the context's thresholds and seed.

The test check 'grain-counter' belongs to an invented operator, 'kittiwake-ops'.
"""

from __future__ import annotations

import hashlib
import json
import types
from pathlib import Path

import pytest

from service.engine import PlanInvalid, build_engine
from service.engine.core import request_seed
from service.engine.profiles import load_profile_dir, load_profile_text, resolve_thresholds
from service.engine.render import catalogue_to_text
from service.plugin_api import API_VERSION, Check, Context, Finding, Parameter, Status, hookimpl
from tests.engine.conftest import make_plan

HEADER = 'name = "{name}"\ndescription = "an invented test profile"\n'


class _Counter(Check):
    id = "grain-counter"
    version = "1"
    summary = "a check with bounded parameters that records what it was given"
    parameters = {
        "grains": Parameter(2000, "count", "higher", "grains to count", minimum=100, maximum=5000),
        "max_ratio": Parameter(0.5, "fraction", "lower", "a ceiling", minimum=0.0, maximum=1.0),
        "floor_km": Parameter(None, "km", "higher", "an optional floor", minimum=0.0),
        "label": Parameter("a", "text", None, "an unbounded string"),
    }
    seen: list[Context] = []

    def evaluate(self, context, params):
        self.seen.append(context)
        yield Finding(Status.PASS, f"counted {params['grains']} grains", params["grains"], 0, "")


def _module(*checks):
    module = types.SimpleNamespace()

    @hookimpl
    def register_checks():
        return list(checks)

    module.register_checks = register_checks
    return module


def _engine(*checks, profile_dir: str | None = None):
    return build_engine(
        extra_plugins=[_module(*checks)], entry_points=False, profile_dir=profile_dir
    )


@pytest.fixture
def engine():
    built = _engine(_Counter())
    assert built.ready, built.problems
    return built


def test_the_api_version_is_1_2_and_bounds_default_to_none():
    assert API_VERSION == "1.2"
    spec = Parameter(1.0, "km", "higher", "a floor")
    assert spec.minimum is None and spec.maximum is None


# --- start-up ---------------------------------------------------------------------------------


class _OutOfBounds(_Counter):
    id = "out-of-bounds"
    parameters = {"grains": Parameter(50, "count", "higher", "too few", minimum=100)}


class _Inverted(_Counter):
    id = "inverted"
    parameters = {"grains": Parameter(200, "count", "higher", "x", minimum=300, maximum=100)}


class _OnAString(_Counter):
    id = "on-a-string"
    parameters = {"mode": Parameter("a", "text", None, "x", maximum=3)}


class _NotFinite(_Counter):
    id = "not-finite"
    parameters = {"grains": Parameter(200, "count", "higher", "x", maximum=float("inf"))}


class _AboveMaximum(_Counter):
    id = "above-maximum"
    parameters = {"ratio": Parameter(1.5, "fraction", "lower", "x", minimum=0.0, maximum=1.0)}


def test_a_default_outside_its_bounds_and_malformed_bounds_are_refused_at_start_up():
    built = _engine(_OutOfBounds(), _Inverted(), _OnAString(), _NotFinite(), _AboveMaximum())
    assert not built.ready
    problems = " | ".join(built.problems)
    assert (
        "check 'out-of-bounds' rejected: parameter 'grains': default 50 is outside its bounds "
        "(at least 100 count)" in problems
    )
    assert "check 'inverted' rejected: parameter 'grains': minimum 300 exceeds maximum 100" in (
        problems
    )
    assert "check 'on-a-string' rejected: parameter 'mode': minimum and maximum apply to" in (
        problems
    )
    assert "check 'not-finite' rejected: parameter 'grains': maximum must be a finite" in problems
    assert (
        "check 'above-maximum' rejected: parameter 'ratio': default 1.5 is outside its bounds "
        "(from 0.0 to 1.0 fraction)" in problems
    )
    assert set(built.registry.checks) == set()


def test_defaults_on_the_bounds_themselves_are_accepted():
    class Edge(_Counter):
        id = "edge"
        parameters = {
            "low": Parameter(100, "count", "higher", "x", minimum=100, maximum=5000),
            "high": Parameter(1.0, "fraction", "lower", "x", minimum=0.0, maximum=1.0),
        }

    assert _engine(Edge()).ready


# --- the catalogue ----------------------------------------------------------------------------


def test_the_catalogue_shows_the_bounds(engine):
    (entry,) = engine.checks_catalogue()
    parameters = {p["name"]: p for p in entry["parameters"]}
    assert (parameters["grains"]["minimum"], parameters["grains"]["maximum"]) == (100, 5000)
    assert (parameters["floor_km"]["minimum"], parameters["floor_km"]["maximum"]) == (0.0, None)
    assert (parameters["label"]["minimum"], parameters["label"]["maximum"]) == (None, None)
    text = catalogue_to_text(engine.checks_catalogue())
    assert "grains to count (from 100 to 5000)" in text
    assert "an optional floor (at least 0.0)" in text


def test_the_built_in_catalogue_shows_the_dispersion_sample_bounds():
    catalogue = {entry["id"]: entry for entry in build_engine().checks_catalogue()}
    samples = {p["name"]: p for p in catalogue["execution-dispersion"]["parameters"]}["samples"]
    assert (samples["minimum"], samples["maximum"], samples["default"]) == (100, 100_000, 4000)


# --- site profiles ----------------------------------------------------------------------------


def _problems(tmp_path: Path, registry, body: str, name: str = "kittiwake-ops") -> list[str]:
    path = tmp_path / f"{name}.toml"
    path.write_text(HEADER.format(name=name) + body, encoding="utf-8")
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert name not in profiles, "a profile with a problem must never be used"
    return [problem.replace(str(path), "FILE") for problem in problems]


@pytest.mark.parametrize(
    ("body", "problem"),
    [
        (
            "grains = 99",
            "profile FILE: thresholds.grain-counter.grains: must be from 100 to 5000 count, not 99",
        ),
        (
            "grains = { value = 5001, reason = 'many' }",
            "profile FILE: thresholds.grain-counter.grains: must be from 100 to 5000 count, "
            "not 5001",
        ),
        (
            "max_ratio = 1.25",
            "profile FILE: thresholds.grain-counter.max_ratio: must be from 0.0 to 1.0 fraction, "
            "not 1.25",
        ),
        (
            "floor_km = -1.0",
            "profile FILE: thresholds.grain-counter.floor_km: must be at least 0.0 km, not -1.0",
        ),
    ],
)
def test_a_profile_value_outside_the_bounds_is_refused_naming_the_key_and_bounds(
    tmp_path, engine, body, problem
):
    problems = _problems(tmp_path, engine.registry, f"[thresholds.grain-counter]\n{body}\n")
    assert problems == [problem]


def test_a_profile_value_on_the_bounds_is_accepted(engine):
    body = "[thresholds.grain-counter]\ngrains = 5000\nmax_ratio = 0.0\nfloor_km = 0.0\n"
    profile = load_profile_text(HEADER.format(name="ops") + body, "ops.toml", engine.registry)
    assert profile.thresholds["grain-counter"]["grains"] == 5000


# --- requests ---------------------------------------------------------------------------------


def test_a_request_outside_the_bounds_is_refused_even_when_it_would_tighten(engine):
    plan = make_plan(rules={"grain-counter": {"grains": 1_000_000, "floor_km": -5.0}})
    with pytest.raises(PlanInvalid) as caught:
        engine.validate(plan)
    assert caught.value.errors == {
        "rules.grain-counter.floor_km": ["floor_km must be at least 0.0 km, not -5.0"],
        "rules.grain-counter.grains": ["grains must be from 100 to 5000 count, not 1000000"],
    }


def test_a_request_outside_the_bounds_is_refused_where_loosening_is_allowed(engine):
    text = HEADER.format(name="loose") + "allow_loosening = true\n"
    profile = load_profile_text(text, "loose.toml", engine.registry)
    with pytest.raises(PlanInvalid) as caught:
        resolve_thresholds(profile, engine.registry, {"grain-counter": {"max_ratio": 1.01}})
    assert caught.value.errors == {
        "rules.grain-counter.max_ratio": ["max_ratio must be from 0.0 to 1.0 fraction, not 1.01"]
    }
    resolved = resolve_thresholds(profile, engine.registry, {"grain-counter": {"grains": 100}})
    assert resolved["grain-counter"]["grains"] == 100  # on the bound, and loosening allowed


def test_a_request_for_a_million_dispersion_samples_is_a_422_not_an_out_of_memory():
    plan = make_plan(rules={"execution-dispersion": {"samples": 1_000_000}})
    with pytest.raises(PlanInvalid) as caught:
        build_engine().validate(plan)
    assert caught.value.errors == {
        "rules.execution-dispersion.samples": [
            "samples must be from 100 to 100000 count, not 1000000"
        ]
    }


def test_the_http_answer_to_a_million_samples_is_a_422_naming_the_field():
    from service.app import create_app
    from tests.http.conftest import PLOVER_1, assert_problem

    client = create_app({"TESTING": True}, engine=build_engine()).test_client()
    body = {**PLOVER_1, "rules": {"execution-dispersion": {"samples": 1_000_000}}}
    response = client.post(
        "/v1/validations", data=json.dumps(body), headers={"Content-Type": "application/json"}
    )
    problem = assert_problem(response, 422)
    assert problem["errors"]["rules.execution-dispersion.samples"] == [
        "samples must be from 100 to 100000 count, not 1000000"
    ]


# --- the context: thresholds and seed ---------------------------------------------------------


def test_the_context_carries_every_enabled_checks_thresholds_read_only_and_the_seed(engine):
    _Counter.seen.clear()
    plan = make_plan(digest="sha256:" + "ab" * 32, rules={"grain-counter": {"grains": 3000}})
    engine.validate(plan)
    (context,) = _Counter.seen
    assert isinstance(context.thresholds, types.MappingProxyType)
    assert isinstance(context.thresholds["grain-counter"], types.MappingProxyType)
    assert dict(context.thresholds["grain-counter"]) == {
        "grains": 3000,
        "max_ratio": 0.5,
        "floor_km": None,
        "label": "a",
    }
    with pytest.raises(TypeError):
        context.thresholds["grain-counter"]["grains"] = 1  # type: ignore[index]
    with pytest.raises(TypeError):
        context.thresholds["other"] = {}  # type: ignore[index]
    profile_digest = engine.profiles["default"].digest
    # First 8 bytes, big-endian, of SHA-256 over the two digests joined by a newline.
    text = f"{plan.digest}\n{profile_digest}".encode()
    expected = int.from_bytes(hashlib.sha256(text).digest()[:8], "big")
    assert context.seed == expected == request_seed(plan.digest, profile_digest)
    assert 0 <= context.seed < 2**64


def test_the_seed_changes_with_the_plan_and_with_the_profile(engine):
    one = request_seed("sha256:" + "ab" * 32, "sha256:" + "cd" * 32)
    assert one == request_seed("sha256:" + "ab" * 32, "sha256:" + "cd" * 32)
    assert one != request_seed("sha256:" + "ac" * 32, "sha256:" + "cd" * 32)
    assert one != request_seed("sha256:" + "ab" * 32, "sha256:" + "ce" * 32)


def test_a_hand_built_context_has_empty_thresholds_and_seed_zero():
    plan = make_plan()
    context = Context(plan=plan, body=None, trajectory=None, profile="default")  # type: ignore[arg-type]
    assert dict(context.thresholds) == {} and context.seed == 0
