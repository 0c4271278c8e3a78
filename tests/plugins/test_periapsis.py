"""periapsis-floor: every arc's orbit against the body's floor, impact, escape, missed burns."""

from __future__ import annotations

import math

import numpy as np
import pytest

from plugins import periapsis
from service.dynamics.epochs import format_utc
from service.engine import PlanInvalid, build_engine
from service.engine.plan import CartesianState, ElementsState, Engine, Maneuver, Spacecraft
from service.engine.profiles import Profile
from service.plugin_api import Status
from tests.plugins.conftest import context_for, make_plan, validate_with

# EGM96 GM and WGS 84 equatorial radius (NIMA TR8350.2, 3rd ed., table 3.1).
MU_EARTH = 398600.4418
R_EARTH = 6378.137
# JPL DE430 GM (Folkner et al. 2014, table 8); IAU WG 2009 radii (Archinal et al. 2011, table 5).
MU_MOON, R_MOON = 4902.800066, 1737.4
MU_MARS, R_MARS = 42828.375214, 3396.19
BODIES = {"earth": (MU_EARTH, R_EARTH), "moon": (MU_MOON, R_MOON), "mars": (MU_MARS, R_MARS)}

# A thruster strong enough that these burns last about a minute: the check under test is
# the orbit, not the burn time.
STRONG = Spacecraft(540.0, 62.0, (Engine("main", 400.0, 300.0, 1200.0, 0.1),))
CIRCULAR_400_KM = R_EARTH + 400.0


def _burn(burn_id: str, ignition: str, along_track_m_s: float) -> Maneuver:
    return Maneuver(burn_id, np.datetime64(ignition, "ms"), "main", "TNW", (along_track_m_s, 0, 0))


def _at_periapsis(body: str, periapsis_km: float, apoapsis_km: float) -> CartesianState:
    """State at periapsis of an equatorial orbit, speed from vis-viva v^2 = mu (2/r - 1/a)
    (Vallado 4th ed. eq. 1-31; Curtis 3rd ed. chapter 2)."""
    mu, radius = BODIES[body]
    r = radius + periapsis_km
    a = radius + (periapsis_km + apoapsis_km) / 2.0
    return CartesianState("GCRF", (r, 0.0, 0.0), (0.0, math.sqrt(mu * (2.0 / r - 1.0 / a)), 0.0))


def _coasting(body: str, periapsis_km: float, apoapsis_km: float, **changes):
    state = _at_periapsis(body, periapsis_km, apoapsis_km)
    return make_plan(central_body=body, initial_state=state, maneuvers=(), **changes)


def _perigee_after_along_track_burn_km(r_km: float, dv_m_s: float) -> float:
    """Perigee altitude after an along-track burn on a circular orbit of radius r, by vis-viva:
    a = 1 / (2/r - v^2/mu), r_p = 2a - r (Vallado 4th ed. / Curtis 3rd ed. chapter 2)."""
    v = math.sqrt(MU_EARTH / r_km) + dv_m_s / 1000.0
    a = 1.0 / (2.0 / r_km - v * v / MU_EARTH)
    return 2.0 * a - r_km - R_EARTH


def _findings(report: dict) -> dict[int, dict]:
    return {f["arc"]: f for f in report["findings"] if f["check"] == "periapsis-floor"}


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in periapsis.PeriapsisFloor.parameters.items()}
    values.update(changes)
    return values


def test_parameters_are_the_documented_ones():
    spec = periapsis.PeriapsisFloor.parameters
    assert periapsis.PeriapsisFloor.id == "periapsis-floor"
    assert {name: (p.default, p.unit, p.stricter) for name, p in spec.items()} == {
        "min_altitude_km": (None, "km", "higher"),
        "earth_min_altitude_km": (200.0, "km", "higher"),
        "earth_margin_km": (50.0, "km", "higher"),
        "moon_min_altitude_km": (20.0, "km", "higher"),
        "moon_margin_km": (10.0, "km", "higher"),
        "mars_min_altitude_km": (150.0, "km", "higher"),
        "mars_margin_km": (50.0, "km", "higher"),
        "allow_escape": (False, "bool", "lower"),
    }


def test_perigee_after_a_retrograde_burn_matches_vis_viva():
    plan = make_plan(spacecraft=STRONG, maneuvers=(_burn("lower", "2031-05-02T01:00:00", -25.0),))
    found = _findings(validate_with(periapsis, plan))
    expected = _perigee_after_along_track_burn_km(CIRCULAR_400_KM, -25.0)
    assert 300.0 < expected < 320.0
    assert found[0]["status"] == "pass"
    assert found[0]["value"] == pytest.approx(400.0, abs=1e-6)
    assert found[1]["status"] == "pass"
    assert found[1]["value"] == pytest.approx(expected, abs=1e-5)
    assert found[1]["limit"] == 200.0
    assert found[1]["unit"] == "km"
    assert found[1]["message"] == (
        f"periapsis {expected:.1f} km stays above the 200.0 km floor and its 50.0 km margin"
    )


def test_a_low_intermediate_orbit_fails_even_when_raised_before_periapsis():
    # Lowered, then raised 10 minutes later, long before the perigee half an orbit away:
    # a missed second burn would leave the spacecraft on the low orbit.
    plan = make_plan(
        spacecraft=STRONG,
        maneuvers=(
            _burn("lower", "2031-05-02T01:00:00", -60.0),
            _burn("raise", "2031-05-02T01:10:00", 60.0),
        ),
    )
    found = _findings(validate_with(periapsis, plan))
    expected = _perigee_after_along_track_burn_km(CIRCULAR_400_KM, -60.0)
    assert 180.0 < expected < 200.0
    low = found[1]
    assert low["status"] == "fail"
    assert low["value"] == pytest.approx(expected, abs=1e-5)
    assert low["limit"] == 200.0
    arc = context_for(plan).trajectory.arcs[1]
    assert arc.lowest_altitude_km > 350.0  # never actually flown below 350 km
    assert low["message"] == (
        f"periapsis {expected:.1f} km is {200.0 - expected:.1f} km below the 200.0 km floor; "
        f"lowest altitude actually flown before the next burn: {arc.lowest_altitude_km:.1f} km "
        f"at {format_utc(arc.lowest_altitude_epoch)}"
    )
    assert found[2]["status"] == "pass"


def test_an_impact_arc_fails_and_says_the_surface_is_reached():
    plan = make_plan(spacecraft=STRONG, maneuvers=(_burn("deorbit", "2031-05-02T01:00:00", -150),))
    found = _findings(validate_with(periapsis, plan))
    expected = _perigee_after_along_track_burn_km(CIRCULAR_400_KM, -150.0)
    assert expected < 0.0
    impact = found[1]
    assert impact["status"] == "fail"
    assert impact["value"] == pytest.approx(expected, abs=1e-5)
    assert impact["limit"] == 200.0
    assert impact["message"].startswith(
        f"impact: periapsis {expected:.1f} km is {-expected:.1f} km below the surface "
        f"({200.0 - expected:.1f} km below the 200.0 km floor); the spacecraft reaches the surface"
    )


def test_an_impact_orbit_left_before_periapsis_fails_for_the_missed_burn():
    plan = make_plan(
        spacecraft=STRONG,
        maneuvers=(
            _burn("deorbit", "2031-05-02T01:00:00", -150.0),
            _burn("abort", "2031-05-02T01:10:00", 150.0),
        ),
    )
    found = _findings(validate_with(periapsis, plan))
    arc = context_for(plan).trajectory.arcs[1]
    assert arc.lowest_altitude_km > 0.0
    assert found[1]["status"] == "fail"
    assert found[1]["message"].startswith("impact: periapsis")
    assert (
        f"the next burn comes first (lowest altitude actually flown {arc.lowest_altitude_km:.1f}"
        f" km at {format_utc(arc.lowest_altitude_epoch)}), but the spacecraft would hit the "
        "surface if that burn were missed"
    ) in found[1]["message"]


def _escaping_from_400_km(v_infinity_km_s: float = 1.0) -> CartesianState:
    # Hyperbolic speed at periapsis from the energy integral v^2 = v_inf^2 + 2 mu / r
    # (Vallado 4th ed. section 2.2; Curtis 3rd ed. section 2.9).
    speed = math.sqrt(v_infinity_km_s**2 + 2.0 * MU_EARTH / CIRCULAR_400_KM)
    return CartesianState("GCRF", (CIRCULAR_400_KM, 0.0, 0.0), (0.0, speed, 0.0))


def test_an_escape_arc_fails_unless_allowed():
    plan = make_plan(initial_state=_escaping_from_400_km(1.0), maneuvers=())
    escape = _findings(validate_with(periapsis, plan))[0]
    assert escape["status"] == "fail"
    # C3 = v_inf^2 (Vallado 4th ed. section 2.2).
    assert escape["value"] == pytest.approx(1.0, abs=1e-6)
    assert escape["limit"] == 0.0
    assert escape["unit"] == "km2/s2"
    assert escape["message"].startswith("escape: the orbit is unbound (eccentricity ")
    assert "escape is not allowed" in escape["message"]


def test_a_request_may_not_allow_escape_under_the_default_profile():
    plan = make_plan(maneuvers=(), rules={"periapsis-floor": {"allow_escape": True}})
    with pytest.raises(PlanInvalid) as raised:
        validate_with(periapsis, plan)
    assert "rules.periapsis-floor.allow_escape" in str(raised.value.errors)


def test_a_profile_that_allows_escape_judges_the_lowest_altitude_ahead():
    engine = build_engine(extra_plugins=[periapsis], entry_points=False)
    engine.profiles["departures"] = Profile(
        name="departures",
        description="escape arcs are planned",
        thresholds={"periapsis-floor": {"allow_escape": True}},
    )
    plan = make_plan(initial_state=_escaping_from_400_km(1.0), maneuvers=(), profile="departures")
    finding = _findings(engine.validate(plan))[0]
    assert finding["status"] == "pass"
    assert finding["value"] == pytest.approx(400.0, abs=1e-6)  # outbound from periapsis
    assert finding["limit"] == 200.0
    assert finding["message"].startswith("escape allowed, the orbit is unbound")


def test_an_allowed_inbound_hyperbola_is_judged_on_its_periapsis_ahead():
    # Lunar arrival: v_inf 0.8 km/s, periapsis 10 km; a = -mu / v_inf^2 and
    # e = 1 - r_p / a (Vallado 4th ed. section 2.2), 60 deg before periapsis.
    a = -MU_MOON / 0.8**2
    e = 1.0 - (R_MOON + 10.0) / a
    state = ElementsState(a, e, 0.0, 0.0, 0.0, -60.0)
    plan = make_plan(central_body="moon", initial_state=state, maneuvers=())
    context = context_for(plan)
    check = periapsis.PeriapsisFloor()
    [allowed] = check.evaluate(context, _params(allow_escape=True))
    assert allowed.status is Status.FAIL
    assert allowed.value == pytest.approx(10.0, abs=1e-6)
    assert allowed.limit == 20.0
    assert allowed.message.startswith("escape allowed, the orbit is unbound (eccentricity ")
    assert allowed.message.endswith(
        "periapsis still ahead 10.0 km is 10.0 km below the 20.0 km floor"
    )
    [refused] = check.evaluate(context, _params())
    assert refused.status is Status.FAIL
    assert refused.value == pytest.approx(0.8**2, rel=1e-9)


FLOORS = {"earth": (200.0, 50.0), "moon": (20.0, 10.0), "mars": (150.0, 50.0)}


@pytest.mark.parametrize("body", sorted(FLOORS))
@pytest.mark.parametrize(
    ("offset_km", "status"),
    [
        (-1e-3, "fail"),  # just below the floor
        (1e-3, "warn"),  # just above the floor, inside the margin
        ("margin-", "warn"),  # just inside the margin
        ("margin+", "pass"),  # just above the margin
    ],
)
def test_floor_and_margin_boundaries_for_each_body(body, offset_km, status):
    floor, margin = FLOORS[body]
    if offset_km == "margin-":
        offset_km = margin - 1e-3
    elif offset_km == "margin+":
        offset_km = margin + 1e-3
    periapsis_km = floor + offset_km
    plan = _coasting(body, periapsis_km, periapsis_km + 300.0)
    [finding] = _findings(validate_with(periapsis, plan)).values()
    assert finding["status"] == status
    assert finding["value"] == pytest.approx(periapsis_km, abs=1e-6)
    assert finding["limit"] == floor
    assert finding["unit"] == "km"


def test_the_floors_come_from_the_central_body():
    plan = _coasting("moon", 35.0, 100.0)
    [finding] = _findings(validate_with(periapsis, plan)).values()
    assert finding["status"] == "pass"
    assert finding["message"] == (
        "periapsis 35.0 km stays above the 20.0 km floor and its 10.0 km margin"
    )
    plan = _coasting("mars", 140.0, 400.0)
    [finding] = _findings(validate_with(periapsis, plan)).values()
    assert finding["message"] == "periapsis 140.0 km is 10.0 km below the 150.0 km floor"


@pytest.mark.parametrize(
    ("rule_km", "status", "limit"),
    [
        (None, "pass", 200.0),  # default Earth floor, 270 km clears its 50 km margin
        (250.0, "warn", 250.0),  # the contract's example: 270 km is inside 250 + 50
        (150.0, "pass", 200.0),  # a lower plan floor never loosens the body's
        (280.0, "fail", 280.0),
    ],
)
def test_a_plan_floor_can_only_raise_the_body_floor(rule_km, status, limit):
    rules = {} if rule_km is None else {"periapsis-floor": {"min_altitude_km": rule_km}}
    plan = _coasting("earth", 270.0, 600.0, rules=rules)
    [finding] = _findings(validate_with(periapsis, plan)).values()
    assert (finding["status"], finding["limit"]) == (status, limit)
    assert finding["value"] == pytest.approx(270.0, abs=1e-6)
    if status == "fail":
        assert finding["message"] == "periapsis 270.0 km is 10.0 km below the 280.0 km floor"


def test_a_request_may_not_lower_the_body_floor():
    rules = {"periapsis-floor": {"earth_min_altitude_km": 150.0}}
    plan = _coasting("earth", 270.0, 600.0, rules=rules)
    with pytest.raises(PlanInvalid):
        validate_with(periapsis, plan)
