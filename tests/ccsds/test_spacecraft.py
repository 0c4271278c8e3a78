"""The spacecraft description beside an OPM: JSON or TOML, errors by field, MASS and propellant."""

from __future__ import annotations

import copy
import json
import tomllib
from decimal import Decimal
from pathlib import Path

import pytest

from service.ccsds.spacecraft import (
    DescriptionInvalid,
    load_description,
    parse_description,
    propellant_kg,
)

EXAMPLES = Path(__file__).resolve().parents[2] / "schemas" / "examples"
BASE = {
    "spacecraft": {
        "dry_mass_kg": 182.4,
        "engines": [
            {"id": "hpgp-1", "thrust_n": 22.0, "isp_s": 231.0},
            {"id": "cold-gas", "thrust_n": 1.0, "isp_s": 65.0},
        ],
    },
    "maneuvers": [{"id": "a", "engine": "hpgp-1"}, {"id": "b"}, {"id": "c", "engine": "x"}],
}


def _errors(data) -> dict:
    with pytest.raises(DescriptionInvalid) as caught:
        load_description(data)
    return caught.value.errors


def test_the_demo_description_reads_from_toml_and_json_alike() -> None:
    raw = (EXAMPLES / "wagtail-5.spacecraft.toml").read_bytes()
    from_toml = load_description(parse_description(raw, toml=True))
    as_json = json.dumps(tomllib.loads(raw.decode())).encode()
    from_json = load_description(parse_description(as_json))  # sniffed: starts with "{"
    assert from_toml == from_json
    assert from_toml.default_engine == "hpgp-1"  # the only engine
    assert not from_toml.default_engine_explicit
    assert [link.id for link in from_toml.maneuvers] == ["raise-a", "raise-b"]
    assert from_toml.plan["plan_id"] == "wagtail-5-raise-02"


def test_errors_name_the_field() -> None:
    errors = _errors(copy.deepcopy(BASE))
    assert list(errors) == ["maneuvers.2.engine"]
    assert (
        "unknown engine a string ('x'); known: hpgp-1, cold-gas" in errors["maneuvers.2.engine"][0]
    )
    data = copy.deepcopy(BASE)
    data["spacecraft"]["engines"][0]["isp_s"] = -1
    data["colour"] = "red"
    errors = _errors(data)
    assert errors["spacecraft.engines.0.isp_s"] == [
        "isp_s must be a finite number greater than 0; got -1"
    ]
    assert errors["colour"][0].startswith("unknown field 'colour'")


def test_duplicate_ids_unknown_default_engine_and_missing_spacecraft() -> None:
    data = copy.deepcopy(BASE)
    data["maneuvers"][1]["id"] = "a"
    data["default_engine"] = "main"
    errors = _errors(data)
    assert "already used by maneuvers.0" in errors["maneuvers.1.id"][0]
    assert "unknown engine" in errors["default_engine"][0]
    assert "spacecraft is required" in _errors({"maneuvers": []})["spacecraft"][0]


def test_bad_syntax_is_an_error_not_a_traceback() -> None:
    with pytest.raises(DescriptionInvalid) as caught:
        parse_description(b"[spacecraft\ndry_mass_kg = 1", toml=True)
    assert "not TOML" in caught.value.errors["spacecraft"][0]
    with pytest.raises(DescriptionInvalid) as caught:
        parse_description(b'{"spacecraft": ')
    assert "not JSON" in caught.value.errors["spacecraft"][0]


def test_propellant_is_mass_less_dry_exactly() -> None:
    description = load_description({"spacecraft": {**BASE["spacecraft"]}})
    # 196.75 - 182.4 = 14.35 in Decimal; in binary floats 196.75 - 182.4 = 14.349999999999994
    assert 196.75 - 182.4 != 14.35
    assert propellant_kg(description, Decimal("196.75")) == 14.35


def test_mass_and_propellant_must_agree_within_a_gram() -> None:
    block = {**BASE["spacecraft"], "propellant_kg": 14.35}
    description = load_description({"spacecraft": block})
    assert propellant_kg(description, Decimal("196.7509")) == 14.35  # 0.9 g: accepted
    with pytest.raises(DescriptionInvalid) as caught:
        propellant_kg(description, Decimal("196.7511"))  # 1.1 g
    [message] = caught.value.errors["spacecraft.propellant_kg"]
    assert "MASS 196.7511 kg" in message and "propellant_kg 14.35 kg" in message
    assert propellant_kg(description, None) == 14.35  # no MASS: nothing to compare


def test_propellant_needs_mass_or_its_own_value() -> None:
    description = load_description({"spacecraft": {**BASE["spacecraft"]}})
    with pytest.raises(DescriptionInvalid) as caught:
        propellant_kg(description, None)
    assert (
        "required when the OPM gives no MASS" in caught.value.errors["spacecraft.propellant_kg"][0]
    )
    with pytest.raises(DescriptionInvalid) as caught:
        propellant_kg(description, Decimal("100"))
    assert "more than the OPM's MASS 100 kg" in caught.value.errors["spacecraft.dry_mass_kg"][0]
