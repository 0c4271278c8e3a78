"""disposal: GEO graveyard perigee, eccentricity and protected region; LEO lifetime or re-entry."""

from __future__ import annotations

import dataclasses
import math
from itertools import pairwise

import numpy as np
import pytest
from scipy.integrate import quad

from plugins import disposal
from service.dynamics.atmosphere import EXPONENTIAL_BASE_ALTITUDE_KM, density_exponential_kg_m3
from service.dynamics.decay import orbital_lifetime_years
from service.engine import build_engine
from service.engine.plan import CartesianState, ElementsState, Engine, Maneuver, Spacecraft
from service.plugin_api import Status
from tests.plugins.conftest import context_for, make_plan, validate_with

# EGM96 GM and WGS 84 equatorial radius and rotation rate (NIMA TR8350.2, 3rd ed., table 3.1).
MU_EARTH = 398600.4418
R_EARTH = 6378.137
# Standard gravity (CGPM 1901) for Isp -> exhaust velocity.
G0 = 9.80665
# (398600.4418 / 7.292115e-5^2)^(1/3) by hand (decimal arithmetic, 40 digits): 42164.172931 km;
# minus the equatorial radius, the geostationary altitude 35786.035931 km.
GEO_RADIUS_KM = 42164.172931
GEO_ALTITUDE_KM = GEO_RADIUS_KM - R_EARTH
# IADC-02-01 section 3.3.2: the GEO protected region is GEO altitude +/- 200 km.
GEO_UPPER_KM = GEO_ALTITUDE_KM + 200.0
GEO_LOWER_KM = GEO_ALTITUDE_KM - 200.0
SECONDS_PER_YEAR = 365.25 * 86400.0  # Julian year
SOLAR_CAVEAT = "solar activity changes lifetimes by a factor of several"

EPOCH = "2033-01-10T00:00:00"
# Invented spacecraft: 'skua-4', a geostationary relay at end of life, and 'auk-5', a small
# low-Earth-orbit spacecraft; engines strong enough that every burn is a near-impulse.
SKUA_ENGINE = Engine("main", 100.0, 300.0, 1800.0, 0.05)
SKUA_WET_KG = 2000.0 + 40.0
AUK_ENGINE = Engine("main", 200.0, 300.0, 1200.0, 0.05)
AUK_WET_KG = 470.0 + 60.0


def _skua(srp_area_m2: float | None = 10.0, cr: float | None = 1.2) -> Spacecraft:
    return Spacecraft(
        2000.0, 40.0, (SKUA_ENGINE,), srp_area_m2=srp_area_m2, reflectivity_coefficient=cr
    )


def _auk(drag_area_m2: float | None = 2.5, cd: float | None = 2.2) -> Spacecraft:
    return Spacecraft(470.0, 60.0, (AUK_ENGINE,), drag_area_m2=drag_area_m2, drag_coefficient=cd)


def _vis_viva_km_s(r_km: float, a_km: float) -> float:
    """v^2 = mu (2/r - 1/a) (Vallado 4th ed. eq. 1-31; Curtis 3rd ed. chapter 2)."""
    return math.sqrt(MU_EARTH * (2.0 / r_km - 1.0 / a_km))


def _duration_s(mass_kg: float, dv_m_s: float, engine: Engine) -> float:
    """Constant-thrust burn time t = m0 c / F (1 - exp(-dv / c)) (Curtis 3rd ed. chapter 11)."""
    c = engine.isp_s * G0
    return mass_kg * c / engine.thrust_n * (1.0 - math.exp(-abs(dv_m_s) / c))


def _mass_after_kg(mass_kg: float, dv_m_s: float, engine: Engine) -> float:
    """Rocket equation m1 = m0 exp(-dv / (Isp g0)) (Tsiolkovsky; Curtis 3rd ed. eq. 11.30)."""
    return mass_kg * math.exp(-abs(dv_m_s) / (engine.isp_s * G0))


def _ms(seconds: float) -> np.datetime64:
    return np.datetime64(EPOCH, "ms") + np.timedelta64(round(seconds * 1000.0), "ms")


def _circular(radius_km: float) -> CartesianState:
    return CartesianState(
        "GCRF", (radius_km, 0.0, 0.0), (0.0, math.sqrt(MU_EARTH / radius_km), 0.0)
    )


def _geo_raise(
    perigee_raise_km: float, apogee_raise_km: float | None = None, **changes
) -> tuple[object, dict]:
    """'skua-4' leaves GEO with two along-track burns: the first, on the circular orbit, sends
    the far side up to GEO + ``apogee_raise_km``; the second, half a transfer orbit later, lifts
    the near side to GEO + ``perigee_raise_km``. Returns the plan and the hand values."""
    apogee_raise_km = perigee_raise_km if apogee_raise_km is None else apogee_raise_km
    r1 = GEO_RADIUS_KM
    ra = r1 + apogee_raise_km
    rp = r1 + perigee_raise_km
    a_transfer = 0.5 * (r1 + ra)
    dv1 = (_vis_viva_km_s(r1, a_transfer) - math.sqrt(MU_EARTH / r1)) * 1000.0
    dv2 = (_vis_viva_km_s(ra, 0.5 * (rp + ra)) - _vis_viva_km_s(ra, a_transfer)) * 1000.0
    m1 = _mass_after_kg(SKUA_WET_KG, dv1, SKUA_ENGINE)
    m2 = _mass_after_kg(m1, dv2, SKUA_ENGINE)
    centre1 = 600.0 + _duration_s(SKUA_WET_KG, dv1, SKUA_ENGINE) / 2.0
    # Half the transfer orbit's period (Kepler's third law) from the first impulse.
    centre2 = centre1 + math.pi * math.sqrt(a_transfer**3 / MU_EARTH)
    ignition2 = centre2 - _duration_s(m1, dv2, SKUA_ENGINE) / 2.0
    maneuvers = (
        Maneuver("graveyard-1", _ms(600.0), "main", "TNW", (dv1, 0.0, 0.0)),
        Maneuver("graveyard-2", _ms(ignition2), "main", "TNW", (dv2, 0.0, 0.0)),
    )
    fields = dict(
        plan_id="skua-4-graveyard",
        epoch=np.datetime64(EPOCH, "ms"),
        initial_state=_circular(r1),
        spacecraft=_skua(),
        maneuvers=maneuvers,
        end_of_life=True,
    )
    fields.update(changes)
    hand = {
        "perigee_km": rp - R_EARTH,
        "apogee_km": ra - R_EARTH,
        "eccentricity": (ra - rp) / (ra + rp),
        "final_mass_kg": m2,
    }
    return make_plan(**fields), hand


def _leo(altitude_km: float, *, spacecraft: Spacecraft | None = None, **changes):
    """'auk-5' left on a circular equatorial orbit at ``altitude_km`` (no burns)."""
    return make_plan(
        plan_id="auk-5-passivate",
        initial_state=_circular(R_EARTH + altitude_km),
        spacecraft=spacecraft or _auk(),
        maneuvers=(),
        end_of_life=True,
        **changes,
    )


def _leo_lowering(perigee_km: float, **changes) -> tuple[object, dict]:
    """'auk-5' on a 400 km circular orbit lowers its perigee with one retrograde burn."""
    r = R_EARTH + 400.0
    a = 0.5 * (r + R_EARTH + perigee_km)
    dv = (_vis_viva_km_s(r, a) - math.sqrt(MU_EARTH / r)) * 1000.0
    plan = make_plan(
        plan_id="auk-5-deorbit",
        initial_state=_circular(r),
        spacecraft=changes.pop("spacecraft", _auk()),
        maneuvers=(Maneuver("lower-1", _ms(600.0), "main", "TNW", (dv, 0.0, 0.0)),),
        end_of_life=True,
        **changes,
    )
    return plan, {"dv_m_s": dv, "final_mass_kg": _mass_after_kg(AUK_WET_KG, dv, AUK_ENGINE)}


def _circular_lifetime_years(altitude_km: float, b_m2_kg: float) -> float:
    """Independent lifetime of a circular orbit: t = integral of da / (B rho sqrt(mu a)) from
    the re-entry radius (100 km) up (circular orbit-averaged drag, King-Hele 1987 chapter 3;
    Vallado 4th ed. section 9.7), by scipy quad band by band of Vallado's Table 8-4."""
    edges = [100.0, *(h for h in EXPONENTIAL_BASE_ALTITUDE_KM if 100.0 < h < altitude_km)]
    edges.append(altitude_km)

    def dt_dh(h: float) -> float:
        drag_per_km = b_m2_kg * float(density_exponential_kg_m3(h)) * 1000.0
        return 1.0 / (drag_per_km * math.sqrt(MU_EARTH * (R_EARTH + h)))

    seconds = sum(quad(dt_dh, low, high, epsrel=1e-10)[0] for low, high in pairwise(edges))
    return seconds / SECONDS_PER_YEAR


def _findings(plan) -> list[dict]:
    report = validate_with(disposal, plan)
    return [f for f in report["findings"] if f["check"] == "disposal"]


def test_parameters_are_the_documented_ones():
    spec = disposal.Disposal.parameters
    assert disposal.Disposal.id == "disposal"
    assert {name: (p.default, p.unit, p.stricter) for name, p in spec.items()} == {
        "geo_margin_km": (50.0, "km", "higher"),
        "max_eccentricity": (0.003, "", "lower"),
        "reentry_perigee_altitude_km": (50.0, "km", "lower"),
        "max_lifetime_years": (25.0, "yr", "lower"),
        "warn_fraction": (0.8, "fraction", "lower"),
    }
    assert all(p.description for p in spec.values())
    engine = build_engine(extra_plugins=[disposal], entry_points=False)
    assert engine.problems == []
    assert [c["id"] for c in engine.checks_catalogue()] == ["disposal"]


# --- when the check applies --------------------------------------------------------------------


def test_a_plan_that_is_not_a_disposal_is_skipped():
    plan, _ = _geo_raise(300.0, end_of_life=False)
    [finding] = _findings(plan)
    assert finding["status"] == "skipped"
    assert "not marked as an end-of-life disposal" in finding["message"]


def test_away_from_the_earth_it_is_skipped():
    state = CartesianState("GCRF", (1837.4, 0.0, 0.0), (0.0, math.sqrt(4902.800066 / 1837.4), 0))
    plan = make_plan(central_body="moon", initial_state=state, maneuvers=(), end_of_life=True)
    [finding] = _findings(plan)
    assert finding["status"] == "skipped"
    assert "'moon'" in finding["message"]


def test_an_orbit_in_neither_region_warns_that_the_operator_decides():
    # 20200 km circular (medium Earth orbit): clear of both IADC protected regions.
    [finding] = _findings(_leo(20200.0))
    assert finding["status"] == "warn"
    assert finding["value"] == pytest.approx(20200.0, abs=1e-6)
    assert finding["limit"] is None
    assert "no IADC region rule applies" in finding["message"]
    assert "operator's own disposal rules must decide" in finding["message"]


def test_an_escape_orbit_warns():
    r = R_EARTH + 3000.0
    escape_km_s = math.sqrt(2.0 * MU_EARTH / r)  # v_esc = sqrt(2 mu / r)
    state = CartesianState("GCRF", (r, 0.0, 0.0), (0.0, 1.1 * escape_km_s, 0.0))
    plan = make_plan(initial_state=state, maneuvers=(), end_of_life=True)
    [finding] = _findings(plan)
    assert finding["status"] == "warn"
    assert "unbound" in finding["message"]


# --- geostationary graveyard ---------------------------------------------------------------------


def _by_kind(findings: list[dict]) -> dict[str, dict]:
    kinds = {}
    for finding in findings:
        message = finding["message"]
        if "graveyard perigee" in message:
            kinds["perigee"] = finding
        elif "eccentricity" in message:
            kinds["eccentricity"] = finding
        elif "protected region" in message:
            kinds["region"] = finding
    assert len(kinds) == len(findings) == 3, findings
    return kinds


def _iadc_floor_km(cr: float, area_m2: float, mass_kg: float) -> float:
    """GEO altitude + 235 km + 1000 CR A/m (IADC-02-01 section 5.3.1)."""
    return GEO_ALTITUDE_KM + 235.0 + 1000.0 * cr * area_m2 / mass_kg


def test_graveyard_300_km_above_geo_with_small_area_to_mass_passes():
    plan, hand = _geo_raise(300.0)
    found = _by_kind(_findings(plan))
    assert {kind: f["status"] for kind, f in found.items()} == dict.fromkeys(found, "pass")
    perigee = found["perigee"]
    assert perigee["value"] == pytest.approx(hand["perigee_km"], abs=0.05)
    # A/m = 10 / 2032.5 m^2/kg: 235 + 1000 x 1.2 x 0.00492 = 240.9 km, with the FINAL mass.
    floor = _iadc_floor_km(1.2, 10.0, hand["final_mass_kg"])
    assert perigee["limit"] == pytest.approx(floor, abs=1e-5)
    assert perigee["unit"] == "km" and perigee["arc"] == 2
    assert (
        f"{perigee['value'] - floor:.1f} km above the {floor:.1f} km IADC minimum"
        in (perigee["message"])
    )
    assert found["eccentricity"]["value"] < 1e-5
    assert found["eccentricity"]["limit"] == 0.003
    assert found["region"]["value"] == pytest.approx(hand["perigee_km"], abs=0.05)
    assert found["region"]["limit"] == pytest.approx(GEO_UPPER_KM, abs=1e-5)


def test_the_iadc_worked_example_through_the_check_and_its_warning_margin():
    # IADC-02-01 section 5.3.1: CR 1.5 and A/m 0.02 m^2/kg give a 265 km minimum increase.
    _, hand = _geo_raise(300.0)
    area_m2 = 0.02 * hand["final_mass_kg"]
    plan, _ = _geo_raise(300.0, spacecraft=_skua(srp_area_m2=area_m2, cr=1.5))
    perigee = _by_kind(_findings(plan))["perigee"]
    assert perigee["limit"] - GEO_ALTITUDE_KM == pytest.approx(265.0, abs=1e-5)
    # 300 km raised, 35 km above the minimum: inside the 50 km margin.
    assert perigee["status"] == "warn"
    assert perigee["value"] - perigee["limit"] == pytest.approx(35.0, abs=0.05)
    assert "inside the 50.0 km margin" in perigee["message"]


def test_a_graveyard_too_low_fails_and_stays_in_the_protected_region():
    plan, hand = _geo_raise(150.0)
    found = _by_kind(_findings(plan))
    floor = _iadc_floor_km(1.2, 10.0, hand["final_mass_kg"])
    perigee = found["perigee"]
    assert perigee["status"] == "fail"
    assert perigee["value"] == pytest.approx(hand["perigee_km"], abs=0.05)
    assert perigee["limit"] == pytest.approx(floor, abs=1e-5)
    short = floor - perigee["value"]
    assert short == pytest.approx(floor - hand["perigee_km"], abs=0.05)
    assert f"is {short:.1f} km below the {floor:.1f} km IADC minimum" in perigee["message"]
    region = found["region"]
    assert region["status"] == "fail"
    assert region["value"] == pytest.approx(hand["perigee_km"], abs=0.05)
    assert region["limit"] == pytest.approx(GEO_UPPER_KM, abs=1e-5)
    assert "passes through the geostationary protected region" in region["message"]
    assert found["eccentricity"]["status"] == "pass"


def test_an_eccentric_graveyard_fails():
    # Perigee 300 km and apogee 700 km above GEO: e = (ra - rp) / (ra + rp) = 0.0047.
    plan, hand = _geo_raise(300.0, 700.0)
    found = _by_kind(_findings(plan))
    ecc = found["eccentricity"]
    assert ecc["status"] == "fail"
    assert ecc["value"] == pytest.approx(hand["eccentricity"], rel=1e-4)
    assert ecc["limit"] == 0.003 and ecc["unit"] == ""
    assert f"is {ecc['value'] - 0.003:.3g} above the 0.003 maximum" in ecc["message"]
    assert found["perigee"]["status"] == "pass"
    assert found["region"]["status"] == "pass"


def test_eccentricity_boundary_by_a_tightened_rule():
    plan, hand = _geo_raise(300.0, 450.0)  # e = 0.00176, inside the 0.003 default
    e = context_for(plan).trajectory.arcs[-1].eccentricity
    assert e == pytest.approx(hand["eccentricity"], rel=1e-4)
    at = dataclasses.replace(plan, rules={"disposal": {"max_eccentricity": e}})
    below = dataclasses.replace(plan, rules={"disposal": {"max_eccentricity": e * (1 - 1e-9)}})
    assert _by_kind(_findings(at))["eccentricity"]["status"] == "pass"
    assert _by_kind(_findings(below))["eccentricity"]["status"] == "fail"


@pytest.mark.parametrize(
    ("missing", "named", "not_named"),
    [
        ({"cr": None}, ["spacecraft.reflectivity_coefficient"], "spacecraft.srp_area_m2"),
        ({"srp_area_m2": None}, ["spacecraft.srp_area_m2"], "spacecraft.reflectivity_coefficient"),
        (
            {"cr": None, "srp_area_m2": None},
            ["spacecraft.srp_area_m2", "spacecraft.reflectivity_coefficient"],
            None,
        ),
    ],
)
def test_missing_radiation_pressure_data_fails_closed(missing, named, not_named):
    plan, hand = _geo_raise(300.0, spacecraft=_skua(**missing))
    found = _by_kind(_findings(plan))
    perigee = found["perigee"]
    assert perigee["status"] == "fail"
    assert perigee["message"].startswith("cannot judge the graveyard perigee")
    assert perigee["value"] == pytest.approx(hand["perigee_km"], abs=0.05)
    assert perigee["limit"] is None
    assert all(name in perigee["message"] for name in named)
    assert not_named is None or not_named not in perigee["message"]
    # The rules that need no radiation-pressure data still judge.
    assert found["eccentricity"]["status"] == "pass"
    assert found["region"]["status"] == "pass"


@pytest.mark.parametrize(
    ("floor_below_perigee_km", "status"),
    [
        (-1e-3, "fail"),  # the floor just above the perigee
        (1e-3, "warn"),  # just inside: at the floor, within the 50 km margin
        (50.0 - 1e-3, "warn"),  # margin edge, just inside
        (50.0 + 1e-3, "pass"),  # margin edge, just outside
    ],
)
def test_graveyard_perigee_boundaries(floor_below_perigee_km, status):
    """The floor moves with srp_area_m2 (the trajectory does not): A = (floor - GEO - 235) m /
    (1000 CR) puts it exactly where wanted."""
    plan, _ = _geo_raise(300.0)
    trajectory = context_for(plan).trajectory
    perigee_km = trajectory.arcs[-1].periapsis_altitude_km
    mass_kg = trajectory.final_mass_kg
    floor_km = perigee_km - floor_below_perigee_km
    area_m2 = (floor_km - GEO_ALTITUDE_KM - 235.0) * mass_kg / (1000.0 * 1.2)
    moved = dataclasses.replace(plan, spacecraft=_skua(srp_area_m2=area_m2))
    perigee = _by_kind(_findings(moved))["perigee"]
    assert perigee["status"] == status
    assert perigee["value"] == pytest.approx(perigee_km, abs=1e-6)
    assert perigee["limit"] == pytest.approx(floor_km, abs=1e-6)


def test_a_higher_margin_rule_turns_a_pass_into_a_warning():
    plan, _ = _geo_raise(300.0, rules={"disposal": {"geo_margin_km": 80.0}})
    perigee = _by_kind(_findings(plan))["perigee"]
    assert perigee["status"] == "warn"
    assert "inside the 80.0 km margin" in perigee["message"]


# --- low Earth orbit -----------------------------------------------------------------------------


def test_lowering_the_perigee_to_350_km_gives_a_short_lifetime_and_passes():
    plan, hand = _leo_lowering(350.0)
    [finding] = _findings(plan)
    b = 2.2 * 2.5 / hand["final_mass_kg"]  # B = Cd A / m with the mass after the burn
    expected = orbital_lifetime_years(350.0, 400.0, b).years
    assert finding["status"] == "pass"
    assert finding["value"] == pytest.approx(expected, rel=1e-3)
    # Rule of thumb (common practice, not a citable source): a few months from 350 km.
    assert 0.1 < finding["value"] < 1.0
    assert finding["limit"] == 25.0 and finding["unit"] == "yr"
    assert f"B = Cd A / m = {b:.5f} m^2/kg" in finding["message"]
    assert SOLAR_CAVEAT in finding["message"]


def test_a_spacecraft_left_at_700_km_fails_the_25_year_rule():
    [finding] = _findings(_leo(700.0))
    b = 2.2 * 2.5 / AUK_WET_KG
    expected = _circular_lifetime_years(700.0, b)
    # Rule of thumb (common practice): about a century at 700 km for B near 0.01 m^2/kg.
    assert 50.0 < expected < 200.0
    assert finding["status"] == "fail"
    assert finding["value"] == pytest.approx(expected, rel=2e-3)
    assert finding["limit"] == 25.0
    assert f"is {finding['value'] - 25.0:.2f} yr beyond the 25 yr maximum" in finding["message"]
    assert "Vallado 4th ed. (2013) Table 8-4" in finding["message"]
    assert SOLAR_CAVEAT in finding["message"]


def test_a_lifetime_beyond_the_integration_cap_says_more_than():
    [finding] = _findings(_leo(1200.0))
    assert finding["status"] == "fail"
    assert finding["value"] == 200.0 and finding["limit"] == 25.0
    assert "more than 200 years" in finding["message"]


def test_a_lifetime_in_the_warning_band_warns():
    [finding] = _findings(_leo(590.0))
    expected = _circular_lifetime_years(590.0, 2.2 * 2.5 / AUK_WET_KG)
    assert 20.0 < expected < 25.0  # above 0.8 x 25 yr, within 25 yr
    assert finding["status"] == "warn"
    assert finding["value"] == pytest.approx(expected, rel=2e-3)
    assert finding["limit"] == 25.0
    assert "above the 20.00 yr warning level" in finding["message"]


def test_a_site_rule_of_five_years_turns_a_pass_into_a_fail():
    plan = _leo(560.0)
    expected = _circular_lifetime_years(560.0, 2.2 * 2.5 / AUK_WET_KG)
    assert 5.0 < expected < 20.0
    [default] = _findings(plan)
    assert default["status"] == "pass"
    assert default["value"] == pytest.approx(expected, rel=2e-3)
    site = dataclasses.replace(plan, rules={"disposal": {"max_lifetime_years": 5.0}})
    [tightened] = _findings(site)
    assert tightened["status"] == "fail"
    assert tightened["value"] == pytest.approx(expected, rel=2e-3)
    assert tightened["limit"] == 5.0
    assert "beyond the 5 yr maximum" in tightened["message"]


@pytest.mark.parametrize(("factor", "status"), [(1 + 1e-6, "warn"), (1 - 1e-6, "fail")])
def test_lifetime_boundary(factor, status):
    plan = _leo(590.0)
    [first] = _findings(plan)
    years = first["value"]
    limited = dataclasses.replace(plan, rules={"disposal": {"max_lifetime_years": years * factor}})
    [finding] = _findings(limited)
    assert finding["status"] == status
    assert finding["value"] == years
    assert finding["limit"] == pytest.approx(years * factor, abs=1e-6)  # the report rounds


@pytest.mark.parametrize(("factor", "status"), [(1 + 1e-6, "pass"), (1 - 1e-6, "warn")])
def test_warning_level_boundary(factor, status):
    plan = _leo(560.0)
    [first] = _findings(plan)
    fraction = first["value"] / 25.0 * factor
    [finding] = _findings(
        dataclasses.replace(plan, rules={"disposal": {"warn_fraction": fraction}})
    )
    assert finding["status"] == status


@pytest.mark.parametrize(
    ("spacecraft", "named"),
    [
        (_auk(drag_area_m2=None), ["spacecraft.drag_area_m2"]),
        (_auk(cd=None), ["spacecraft.drag_coefficient"]),
        (_auk(None, None), ["spacecraft.drag_area_m2", "spacecraft.drag_coefficient"]),
    ],
)
def test_missing_drag_data_fails_closed(spacecraft, named):
    [finding] = _findings(_leo(560.0, spacecraft=spacecraft))
    assert finding["status"] == "fail"
    assert finding["message"].startswith("cannot estimate the orbital lifetime")
    assert all(name in finding["message"] for name in named)
    assert finding["value"] is None and finding["limit"] == 25.0


def test_lowering_the_perigee_to_40_km_is_a_controlled_reentry():
    plan, _ = _leo_lowering(40.0)
    [finding] = _findings(plan)
    assert finding["status"] == "pass"
    assert finding["message"].startswith("controlled re-entry")
    assert finding["value"] == pytest.approx(40.0, abs=0.05)
    assert finding["limit"] == 50.0 and finding["unit"] == "km"


def test_reentry_altitude_boundary():
    plan, _ = _leo_lowering(40.0)
    perigee_km = context_for(plan).trajectory.arcs[-1].periapsis_altitude_km
    at = dataclasses.replace(plan, rules={"disposal": {"reentry_perigee_altitude_km": perigee_km}})
    [finding] = _findings(at)
    assert finding["status"] == "pass" and finding["unit"] == "km"
    assert finding["message"].startswith("controlled re-entry")
    below = dataclasses.replace(
        plan, rules={"disposal": {"reentry_perigee_altitude_km": perigee_km - 1e-3}}
    )
    [finding] = _findings(below)
    # No longer a controlled re-entry: the lifetime rule judges, and a 40 km perigee is below
    # the decay model's 100 km re-entry altitude, so the lifetime is zero.
    assert finding["unit"] == "yr"
    assert finding["status"] == "pass" and finding["value"] == 0.0


def test_a_transfer_orbit_crossing_the_geo_region_is_judged_by_lifetime_and_warned():
    # Perigee 300 km, apogee at the geostationary altitude: a transfer orbit left in place.
    a = R_EARTH + 0.5 * (300.0 + GEO_ALTITUDE_KM)
    e = (GEO_ALTITUDE_KM - 300.0) / (2.0 * a)
    state = ElementsState(a, e, 7.0, 0.0, 0.0, 0.0)
    plan = make_plan(initial_state=state, spacecraft=_auk(), maneuvers=(), end_of_life=True)
    findings = _findings(plan)
    assert [f["unit"] for f in findings] == ["yr", "km"]
    crossing = findings[1]
    assert crossing["status"] == "warn"
    assert crossing["value"] == pytest.approx(GEO_ALTITUDE_KM, abs=1e-3)
    assert crossing["limit"] == pytest.approx(GEO_LOWER_KM, abs=1e-5)
    assert "luni-solar" in crossing["message"]


def test_a_bad_parameter_is_the_checks_error():
    report = validate_with(disposal, _leo(560.0, rules={"disposal": {"max_lifetime_years": 0.0}}))
    [finding] = [f for f in report["findings"] if f["check"] == "disposal"]
    assert finding["status"] == "error"
    assert "max_lifetime_years must be greater than 0" in finding["message"]


def test_findings_are_on_the_final_arc_and_the_verdict_follows():
    plan, _ = _geo_raise(150.0)
    report = validate_with(disposal, plan)
    assert report["verdict"] == "fail"
    assert {f["arc"] for f in report["findings"]} == {2}
    assert Status.FAIL.value in {f["status"] for f in report["findings"]}
