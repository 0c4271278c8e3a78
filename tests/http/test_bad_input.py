"""Bad input, table-driven: each CONTRACT.md rule gives the right status and problem.

Every row names the status it must get and, for 422, a field path that must be
named in ``errors`` (the path itself, or a path below it such as ``.1`` for a
vector component). No input may produce a 500.
"""

from __future__ import annotations

import copy
import json
from collections.abc import Callable

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.http.conftest import PLOVER_1, assert_problem

Mutation = Callable[[dict], object]


def _set(path: str, value: object) -> Mutation:
    """A mutation that sets ``path`` (dotted, list indices as numbers) to ``value``."""

    def mutate(plan: dict) -> dict:
        *parents, last = path.split(".")
        node = plan
        for key in parents:
            node = node[int(key)] if isinstance(node, list) else node[key]
        if isinstance(node, list):
            node[int(last)] = value
        else:
            node[last] = value
        return plan

    return mutate


def _drop(path: str) -> Mutation:
    def mutate(plan: dict) -> dict:
        *parents, last = path.split(".")
        node = plan
        for key in parents:
            node = node[int(key)] if isinstance(node, list) else node[key]
        del node[last]
        return plan

    return mutate


def _raw(text: str) -> Callable[[dict], bytes]:
    """Replace the JSON text of the marker value 12345.678 with ``text`` (NaN, Infinity, ...)."""

    def render(plan: dict) -> bytes:
        return json.dumps(plan).replace("12345.678", text).encode()

    return render


def _then(*steps: Mutation) -> Mutation:
    def mutate(plan: dict) -> object:
        result: object = plan
        for step in steps:
            result = step(result)  # type: ignore[arg-type]
        return result

    return mutate


def _many_maneuvers(count: int) -> Mutation:
    def mutate(plan: dict) -> dict:
        template = plan["maneuvers"][0]
        plan["maneuvers"] = [
            {
                **template,
                "id": f"trim-{i}",
                "ignition": f"2032-03-14T{6 + i // 60:02d}:{i % 60:02d}:30Z",
            }
            for i in range(count)
        ]
        return plan

    return mutate


def _many_engines(count: int) -> Mutation:
    def mutate(plan: dict) -> dict:
        template = plan["spacecraft"]["engines"][0]
        extra = [{**template, "id": f"spare-{i}"} for i in range(count - 1)]
        plan["spacecraft"]["engines"] = [template, *extra]
        return plan

    return mutate


def _both_state_forms(plan: dict) -> dict:
    plan["initial_state"]["elements"] = {
        "semi_major_axis_km": 6878.137,
        "eccentricity": 0.0,
        "inclination_deg": 0.0,
        "raan_deg": 0.0,
        "arg_periapsis_deg": 0.0,
        "true_anomaly_deg": 0.0,
    }
    return plan


def _duplicate_maneuver_id(plan: dict) -> dict:
    plan["maneuvers"][1]["id"] = plan["maneuvers"][0]["id"]
    return plan


def _raw_text(text: bytes) -> Callable[[dict], bytes]:
    return lambda plan: text


def _duplicate_key(plan: dict) -> bytes:
    text = json.dumps(plan)
    return ('{"plan_id": "shadow",' + text[1:]).encode()


def _deeply_nested(plan: dict) -> bytes:
    return b'{"plan_id": ' + b"[" * 100_000 + b"]" * 100_000 + b"}"


def _too_big(plan: dict) -> bytes:
    plan["plan_id"] = "x" * (1024 * 1024)
    return json.dumps(plan).encode()


# (id, mutation, expected status, field path named in errors for 422, content type)
CASES: list[tuple[str, Callable[[dict], object], int, str | None, str]] = [
    # non-finite numbers (JSON text NaN / Infinity, and a literal that overflows a double)
    (
        "nan-position",
        _then(_set("initial_state.position_km.1", 12345.678), _raw("NaN")),
        422,
        "initial_state.position_km",
        "application/json",
    ),
    (
        "infinity-thrust",
        _then(_set("spacecraft.engines.0.thrust_n", 12345.678), _raw("Infinity")),
        422,
        "spacecraft.engines.0.thrust_n",
        "application/json",
    ),
    (
        "minus-infinity-velocity",
        _then(_set("initial_state.velocity_km_s.0", 12345.678), _raw("-Infinity")),
        422,
        "initial_state.velocity_km_s",
        "application/json",
    ),
    (
        "overflow-delta-v",
        _then(_set("maneuvers.0.delta_v_m_s.0", 12345.678), _raw("1e999")),
        422,
        "maneuvers.0.delta_v_m_s",
        "application/json",
    ),
    (
        "nan-dry-mass",
        _then(_set("spacecraft.dry_mass_kg", 12345.678), _raw("NaN")),
        422,
        "spacecraft.dry_mass_kg",
        "application/json",
    ),
    # masses, thrust, Isp
    (
        "negative-dry-mass",
        _set("spacecraft.dry_mass_kg", -180.0),
        422,
        "spacecraft.dry_mass_kg",
        "application/json",
    ),
    (
        "negative-propellant",
        _set("spacecraft.propellant_kg", -1.0),
        422,
        "spacecraft.propellant_kg",
        "application/json",
    ),
    (
        "zero-thrust",
        _set("spacecraft.engines.0.thrust_n", 0.0),
        422,
        "spacecraft.engines.0.thrust_n",
        "application/json",
    ),
    (
        "negative-isp",
        _set("spacecraft.engines.0.isp_s", -220.0),
        422,
        "spacecraft.engines.0.isp_s",
        "application/json",
    ),
    # vectors
    (
        "short-position",
        _set("initial_state.position_km", [6878.137, 0.0]),
        422,
        "initial_state.position_km",
        "application/json",
    ),
    (
        "long-delta-v",
        _set("maneuvers.1.delta_v_m_s", [1.0, 0.0, 0.0, 0.0]),
        422,
        "maneuvers.1.delta_v_m_s",
        "application/json",
    ),
    (
        "scalar-delta-v",
        _set("maneuvers.0.delta_v_m_s", 2.5),
        422,
        "maneuvers.0.delta_v_m_s",
        "application/json",
    ),
    # names that must resolve
    (
        "unknown-engine",
        _set("maneuvers.0.engine", "thruster-z"),
        422,
        "maneuvers.0.engine",
        "application/json",
    ),
    (
        "unknown-maneuver-frame",
        _set("maneuvers.1.frame", "LVLH"),
        422,
        "maneuvers.1.frame",
        "application/json",
    ),
    (
        "unknown-state-frame",
        _set("initial_state.frame", "ITRF"),
        422,
        "initial_state.frame",
        "application/json",
    ),
    (
        "unknown-central-body",
        _set("central_body", "vulcan"),
        422,
        "central_body",
        "application/json",
    ),
    ("duplicate-maneuver-id", _duplicate_maneuver_id, 422, "maneuvers", "application/json"),
    (
        "duplicate-engine-id",
        _then(_many_engines(2), _set("spacecraft.engines.1.id", "thruster-a")),
        422,
        "spacecraft.engines",
        "application/json",
    ),
    # epochs
    ("unparseable-epoch", _set("epoch", "the ides of march"), 422, "epoch", "application/json"),
    (
        "impossible-ignition",
        _set("maneuvers.0.ignition", "2032-13-45T25:61:00Z"),
        422,
        "maneuvers.0.ignition",
        "application/json",
    ),
    ("numeric-epoch", _set("epoch", 1_962_000_000), 422, "epoch", "application/json"),
    # shape
    (
        "unknown-top-level-field",
        _set("flux_capacitor", 1.21),
        422,
        "flux_capacitor",
        "application/json",
    ),
    (
        "unknown-maneuver-field",
        _set("maneuvers.0.throttle", 0.5),
        422,
        "maneuvers.0.throttle",
        "application/json",
    ),
    ("both-state-forms", _both_state_forms, 422, "initial_state", "application/json"),
    ("neither-state-form", _set("initial_state", {}), 422, "initial_state", "application/json"),
    ("missing-initial-state", _drop("initial_state"), 422, "initial_state", "application/json"),
    ("missing-plan-id", _drop("plan_id"), 422, "plan_id", "application/json"),
    ("501-maneuvers", _many_maneuvers(501), 422, "maneuvers", "application/json"),
    ("17-engines", _many_engines(17), 422, "spacecraft.engines", "application/json"),
    (
        "negative-eccentricity",
        _then(
            _set("initial_state", {}),
            _both_state_forms,
            _set("initial_state.elements.eccentricity", -0.1),
        ),
        422,
        "initial_state.elements.eccentricity",
        "application/json",
    ),
    # wrong types
    (
        "string-for-mass",
        _set("spacecraft.dry_mass_kg", "180"),
        422,
        "spacecraft.dry_mass_kg",
        "application/json",
    ),
    (
        "boolean-for-thrust",
        _set("spacecraft.engines.0.thrust_n", True),
        422,
        "spacecraft.engines.0.thrust_n",
        "application/json",
    ),
    (
        "boolean-in-vector",
        _set("maneuvers.0.delta_v_m_s.2", False),
        422,
        "maneuvers.0.delta_v_m_s",
        "application/json",
    ),
    ("number-for-plan-id", _set("plan_id", 7), 422, "plan_id", "application/json"),
    (
        "object-for-maneuvers",
        _set("maneuvers", {"raise-1": {}}),
        422,
        "maneuvers",
        "application/json",
    ),
    ("null-spacecraft", _set("spacecraft", None), 422, "spacecraft", "application/json"),
    # the body is JSON but not a plan object
    ("array-body", lambda plan: [plan], 422, "plan", "application/json"),
    ("string-body", lambda plan: "plover-1", 422, "plan", "application/json"),
    ("null-body", lambda plan: None, 422, "plan", "application/json"),
    # engine-level refusals (profile and rules)
    ("unknown-profile", _set("profile", "no-such-profile"), 422, "profile", "application/json"),
    (
        "rule-for-unknown-check",
        _set("rules", {"warp-drive": {"max_warp": 9}}),
        422,
        "rules",
        "application/json",
    ),
    # not JSON at all: 400
    ("empty-body", _raw_text(b""), 400, None, "application/json"),
    ("whitespace-body", _raw_text(b" \n\t "), 400, None, "application/json"),
    (
        "truncated-json",
        _raw_text(b'{"plan_id": "plover-1", "epoch": '),
        400,
        None,
        "application/json",
    ),
    (
        "trailing-garbage",
        lambda plan: json.dumps(plan).encode() + b" }",
        400,
        None,
        "application/json",
    ),
    ("single-quotes", _raw_text(b"{'plan_id': 'plover-1'}"), 400, None, "application/json"),
    (
        "invalid-utf8",
        lambda plan: json.dumps(plan).encode().replace(b"plover", b"pl\xffver"),
        400,
        None,
        "application/json",
    ),
    ("duplicate-keys", _duplicate_key, 400, None, "application/json"),
    ("deeply-nested", _deeply_nested, 400, None, "application/json"),
    # transport limits
    ("huge-body", _too_big, 413, None, "application/json"),
    ("wrong-media-type", lambda plan: plan, 415, None, "text/plain"),
    ("form-media-type", lambda plan: plan, 415, None, "application/x-www-form-urlencoded"),
]


@pytest.mark.parametrize(
    ("mutation", "status", "field", "content_type"),
    [pytest.param(*case[1:], id=case[0]) for case in CASES],
)
def test_bad_input(post_plan, plan, mutation, status, field, content_type):
    body = mutation(plan)
    raw = body if isinstance(body, bytes) else json.dumps(body).encode()
    problem = assert_problem(post_plan(raw, content_type=content_type), status)
    if status == 422:
        assert problem["type"] == "urn:burnproof:problem:invalid-plan"
        errors = problem["errors"]
        assert isinstance(errors, dict) and errors
        assert all(
            isinstance(m, list) and all(isinstance(s, str) for s in m) for m in errors.values()
        )
        named = [path for path in errors if path == field or path.startswith(field + ".")]
        assert named, f"{field!r} not named in {errors}"
        assert "_schema" not in errors


def test_the_table_covers_enough_cases():
    assert len(CASES) >= 25
    assert len({case[0] for case in CASES}) == len(CASES)


json_values = st.recursive(
    st.none()
    | st.booleans()
    | st.integers()
    | st.floats(allow_nan=True, allow_infinity=True)
    | st.text(max_size=20),
    lambda children: (
        st.lists(children, max_size=5) | st.dictionaries(st.text(max_size=12), children, max_size=5)
    ),
    max_leaves=25,
)


def _leaf_paths(node: object, prefix: tuple = ()) -> list[tuple]:
    if isinstance(node, dict):
        items = node.items()
    elif isinstance(node, list):
        items = enumerate(node)
    else:
        return [prefix]
    paths = [prefix] if prefix else []
    for key, child in items:
        paths.extend(_leaf_paths(child, (*prefix, key)))
    return paths


PLAN_PATHS = _leaf_paths(PLOVER_1)
ALLOWED = {200, 400, 413, 415, 422}
_SETTINGS = settings(
    max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)


@_SETTINGS
@given(value=json_values)
def test_random_json_never_breaks_the_service(post_plan, value):
    # allow_nan: NaN and Infinity reach the parser as the bare words some clients send
    response = post_plan(json.dumps(value, allow_nan=True).encode())
    assert response.status_code in ALLOWED, response.get_data(as_text=True)[:500]
    if response.status_code != 200:
        assert response.mimetype == "application/problem+json"


@_SETTINGS
@given(path=st.sampled_from(PLAN_PATHS), value=json_values)
def test_random_value_anywhere_in_a_plan_never_breaks_the_service(post_plan, path, value):
    plan = copy.deepcopy(PLOVER_1)
    node = plan
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    response = post_plan(json.dumps(plan, allow_nan=True).encode())
    assert response.status_code in ALLOWED, response.get_data(as_text=True)[:500]
    if response.status_code != 200:
        assert response.mimetype == "application/problem+json"
