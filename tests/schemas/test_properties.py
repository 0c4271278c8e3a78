"""Properties: generated valid plans always load, keep their numbers, pass the JSON Schema, and
their digest does not depend on key order."""

from __future__ import annotations

import json
import math
import random
from datetime import UTC, datetime, timedelta, timezone

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from jsonschema import Draft202012Validator

from service.engine.plan import CartesianState, plan_digest
from service.schemas import load_plan, parse_json_bytes
from service.schemas.export import json_schema

PLAN_VALIDATOR = Draft202012Validator(json_schema("Plan"))
SETTINGS = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def numbers(low: float, high: float, *, exclude_low: bool = False) -> st.SearchStrategy:
    """Finite JSON numbers in [low, high]: floats, and integers where the range holds some."""
    floats = st.floats(low, high, exclude_min=exclude_low, allow_nan=False, allow_infinity=False)
    first = math.floor(low) + 1 if exclude_low else math.ceil(low)
    if first > high:
        return floats
    return st.one_of(floats, st.integers(first, math.floor(high)))


def vectors(low: float, high: float) -> st.SearchStrategy:
    return st.lists(numbers(low, high), min_size=3, max_size=3).filter(lambda v: any(v))


names = st.text(
    st.characters(codec="utf-8", exclude_categories=("Cc", "Cs")), min_size=1, max_size=64
).filter(lambda s: s.strip())

instants = st.datetimes(
    min_value=datetime(1958, 1, 1), max_value=datetime(2199, 12, 30), timezones=st.just(UTC)
)


@st.composite
def epochs(draw) -> tuple[str, np.datetime64]:
    """An epoch string with a random zone and 0-6 fraction digits, and the instant it means."""
    instant = draw(instants).replace(tzinfo=None)
    minutes = draw(st.integers(-23 * 60 - 59, 23 * 60 + 59))
    local = instant + timedelta(minutes=minutes)
    digits = draw(st.integers(0, 6))
    text = local.strftime("%Y-%m-%dT%H:%M:%S")
    if digits:
        text += "." + f"{local.microsecond:06d}"[:digits]
    if minutes == 0 and draw(st.booleans()):
        text += "Z"
    else:
        sign = "-" if minutes < 0 else "+"
        text += f"{sign}{abs(minutes) // 60:02d}:{abs(minutes) % 60:02d}"
    microseconds = int(f"{local.microsecond:06d}"[:digits].ljust(6, "0"))
    kept = local.replace(microsecond=0, tzinfo=timezone(timedelta(minutes=minutes)))
    exact_us = kept.astimezone(UTC).replace(tzinfo=None) + timedelta(microseconds=microseconds)
    rounded = exact_us.replace(microsecond=0) + timedelta(
        milliseconds=(exact_us.microsecond + 500) // 1000
    )
    return text, np.datetime64(rounded.isoformat(timespec="milliseconds"), "ms")


engines = st.fixed_dictionaries(
    {"thrust_n": numbers(0, 5000, exclude_low=True), "isp_s": numbers(0, 500, exclude_low=True)},
    optional={
        "max_burn_s": numbers(1000, 5000, exclude_low=True),
        "min_burn_s": numbers(0, 1000),
    },
)

elements_forms = st.one_of(
    st.fixed_dictionaries(
        {
            "semi_major_axis_km": numbers(1000, 100000, exclude_low=True),
            "eccentricity": numbers(0, 0.99),
        }
    ),
    st.builds(
        lambda a, e, fraction: {
            "semi_major_axis_km": a,
            "eccentricity": e,
            "true_anomaly_deg": fraction * 0.999 * math.degrees(math.acos(-1.0 / e)),
        },
        numbers(-100000, -1000),
        numbers(1.01, 5),
        st.floats(-1, 1),
    ),
)


@st.composite
def plans(draw) -> dict:
    engine_ids = draw(st.lists(names, min_size=1, max_size=4, unique=True))
    plan: dict = {
        "plan_id": draw(names),
        "epoch": draw(epochs())[0],
        "spacecraft": {
            "dry_mass_kg": draw(numbers(0, 20000, exclude_low=True)),
            "propellant_kg": draw(numbers(0, 20000)),
            "engines": [{"id": engine_id, **draw(engines)} for engine_id in engine_ids],
        },
    }
    if draw(st.booleans()):
        plan["central_body"] = draw(st.sampled_from(["earth", "moon", "mars"]))
    if draw(st.booleans()):
        plan["initial_state"] = {
            "position_km": draw(vectors(-1e6, 1e6)),
            "velocity_km_s": draw(st.lists(numbers(-50, 50), min_size=3, max_size=3)),
        }
        if draw(st.booleans()):
            plan["initial_state"]["frame"] = draw(st.sampled_from(["GCRF", "EME2000"]))
    else:
        elements = {
            "inclination_deg": draw(numbers(0, 180)),
            "raan_deg": draw(numbers(-360, 360)),
            "arg_periapsis_deg": draw(numbers(-360, 360)),
            "true_anomaly_deg": draw(numbers(-360, 360)),
            **draw(elements_forms),
        }
        plan["initial_state"] = {"elements": elements}
    maneuver_ids = draw(st.lists(names, max_size=6, unique=True))
    plan["maneuvers"] = [
        {
            "id": maneuver_id,
            "ignition": draw(epochs())[0],
            "engine": draw(st.sampled_from(engine_ids)),
            "frame": draw(st.sampled_from(["RTN", "TNW", "GCRF", "EME2000"])),
            "delta_v_m_s": draw(vectors(-5000, 5000)),
        }
        for maneuver_id in maneuver_ids
    ]
    if draw(st.booleans()):
        low = draw(numbers(-100, 40000))
        plan["target_orbit"] = {
            "periapsis_altitude_km": low,
            "apoapsis_altitude_km": low + draw(numbers(0, 40000)),
            "tolerance_km": draw(numbers(0, 100, exclude_low=True)),
        }
    if draw(st.booleans()):
        plan["rules"] = draw(
            st.dictionaries(
                names,
                st.dictionaries(
                    names, st.one_of(numbers(-1e9, 1e9), st.booleans(), names), max_size=3
                ),
                max_size=3,
            )
        )
    return plan


def shuffled(value: object, rng: random.Random) -> object:
    """The same JSON value with the keys of every object in a random order."""
    if isinstance(value, dict):
        keys = list(value)
        rng.shuffle(keys)
        return {key: shuffled(value[key], rng) for key in keys}
    if isinstance(value, list):
        return [shuffled(item, rng) for item in value]
    return value


@SETTINGS
@given(plans())
def test_generated_plans_load_and_keep_their_numbers(data: dict) -> None:
    plan = load_plan(data)
    craft = data["spacecraft"]
    assert plan.spacecraft.dry_mass_kg == float(craft["dry_mass_kg"])
    assert plan.spacecraft.propellant_kg == float(craft["propellant_kg"])
    for engine, given_engine in zip(plan.spacecraft.engines, craft["engines"], strict=True):
        assert (engine.thrust_n, engine.isp_s) == (given_engine["thrust_n"], given_engine["isp_s"])
        assert type(engine.thrust_n) is float
    for maneuver, given_maneuver in zip(plan.maneuvers, data["maneuvers"], strict=True):
        assert maneuver.delta_v_m_s == tuple(float(x) for x in given_maneuver["delta_v_m_s"])
    state = data["initial_state"]
    if isinstance(plan.initial_state, CartesianState):
        assert plan.initial_state.position_km == tuple(float(x) for x in state["position_km"])
        assert plan.initial_state.frame == state.get("frame", "GCRF")
    else:
        assert plan.initial_state.eccentricity == float(state["elements"]["eccentricity"])
    assert plan.digest == plan_digest(data)


@SETTINGS
@given(plans())
def test_generated_plans_survive_the_wire_and_pass_the_json_schema(data: dict) -> None:
    wire = json.dumps(data, ensure_ascii=False).encode("utf-8")
    received = parse_json_bytes(wire)
    assert received == data
    assert load_plan(received).digest == load_plan(data).digest
    PLAN_VALIDATOR.validate(received)


@SETTINGS
@given(plans(), st.randoms(use_true_random=False))
def test_digest_does_not_depend_on_key_order(data: dict, rng: random.Random) -> None:
    reordered = shuffled(data, rng)
    assert load_plan(reordered).digest == load_plan(data).digest
    wire = json.dumps(reordered).encode()
    assert load_plan(parse_json_bytes(wire)).digest == load_plan(data).digest


@SETTINGS
@given(epochs())
def test_epochs_convert_to_utc_and_round_to_the_millisecond(epoch: tuple) -> None:
    text, expected = epoch
    data = {
        "plan_id": "p",
        "epoch": text,
        "initial_state": {"position_km": [7000, 0, 0], "velocity_km_s": [0, 7.5, 0]},
        "spacecraft": {"dry_mass_kg": 1, "propellant_kg": 0, "engines": [
            {"id": "e", "thrust_n": 1, "isp_s": 1}
        ]},
    }  # fmt: skip
    assert load_plan(data).epoch == expected
