"""target-orbit: the final orbit against the plan's target, the signed misses and the trim.

Reference values are written out by hand here: vis-viva v^2 = mu (2/r - 1/a) (Vallado,
Fundamentals of Astrodynamics and Applications, 4th ed. (2013), chapter 2; Curtis, Orbital
Mechanics for Engineering Students, 3rd ed. (2014), chapter 2), the plane change
2 v_t sin(di/2) with v_t = h / r (Vallado 4th ed. Algorithm 39; Curtis 3rd ed. chapter 6),
Kepler's equation M = E - e sin E for the time to a point of the orbit (Vallado 4th ed.
chapter 2) and the constant-thrust burn time t = m0 c / F (1 - exp(-dv / c)) (Curtis 3rd
ed. chapter 11; Sutton & Biblarz 9th ed. chapter 4). Each trim is checked by flying it:
the burn is added to the plan at the right point and the plan is flown again by the engine.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from plugins import target
from plugins.target import TargetOrbit, apsis_trim, inclination_trim
from service.engine.plan import ElementsState, Engine, Maneuver, Spacecraft
from service.engine.plan import TargetOrbit as Target
from service.plugin_api import Status
from tests.plugins.conftest import context_for, make_plan, validate_with

# EGM96 GM and WGS 84 equatorial radius (NIMA TR8350.2, 3rd ed., table 3.1).
MU = 398600.4418
RE = 6378.137
G0_M_S2 = 9.80665  # standard gravity, exact: 3rd CGPM (1901)
R0 = RE + 400.0  # the invented 'kestrel-9' starts on a 400 km circular orbit
DV = 12.5  # m/s along the velocity, as in CONTRACT.md's example plan
THRUST_N, ISP_S = 400.0, 300.0
STRONG = Spacecraft(540.0, 62.0, (Engine("main", THRUST_N, ISP_S, 1200.0, 0.1),))
EPOCH = np.datetime64("2031-05-02T00:00:00", "ms")
CHECK = "target-orbit"


def _apoapsis_after_burn_km(r_km: float, dv_m_s: float) -> float:
    """Apoapsis altitude after an along-track burn on a circular orbit of radius r, by vis-viva:
    a = 1 / (2/r - v^2/mu), r_a = 2a - r."""
    v = math.sqrt(MU / r_km) + dv_m_s / 1000.0
    a = 1.0 / (2.0 / r_km - v * v / MU)
    return 2.0 * a - r_km - RE


APOAPSIS_KM = _apoapsis_after_burn_km(R0, DV)


def _burn_time_s(m0_kg: float, dv_m_s: float) -> float:
    """t = m0 c / F (1 - exp(-dv / c)), c = Isp g0 (Curtis 3rd ed. chapter 11)."""
    c = ISP_S * G0_M_S2
    return m0_kg * c / THRUST_N * (1.0 - math.exp(-dv_m_s / c))


def _raise(ignition: str = "2031-05-02T01:00:00") -> Maneuver:
    return Maneuver("raise-1", np.datetime64(ignition, "ms"), "main", "TNW", (DV, 0.0, 0.0))


def _plan(goal: Target | None, state=None, **changes):
    """'kestrel-9' raises its apoapsis with one 12.5 m/s burn from a 400 km circular orbit."""
    fields = dict(
        plan_id="kestrel-9-raise-01",
        spacecraft=STRONG,
        maneuvers=(_raise(),),
        target_orbit=goal,
    )
    if state is not None:
        fields["initial_state"] = state
    fields.update(changes)
    return make_plan(**fields)


def _findings(plan) -> list[dict]:
    return [f for f in validate_with(target, plan)["findings"] if f["check"] == CHECK]


def finding_name(finding: dict) -> str:
    return finding["message"].split(" ", 1)[0]


def _params(**changes) -> dict:
    values = {name: spec.default for name, spec in TargetOrbit.parameters.items()}
    values.update(changes)
    return values


def test_parameters_are_the_documented_ones():
    assert TargetOrbit.id == "target-orbit"
    spec = TargetOrbit.parameters
    assert {name: (p.default, p.unit, p.stricter) for name, p in spec.items()} == {
        "warn_fraction": (0.8, "fraction", "lower"),
    }


def test_a_plan_without_a_target_is_skipped_with_the_reason():
    [finding] = _findings(_plan(None))
    assert finding["status"] == "skipped"
    assert finding["message"] == "the plan has no target_orbit to judge the orbit by"


def test_a_plan_that_hits_passes_with_zero_misses():
    assert 440.0 < APOAPSIS_KM < 450.0  # CONTRACT.md's example target is 400 x 444 km
    periapsis, apoapsis = _findings(_plan(Target(400.0, APOAPSIS_KM)))
    for finding in (periapsis, apoapsis):
        assert finding["status"] == "pass"
        assert finding["value"] == pytest.approx(0.0, abs=1e-6)
        assert finding["limit"] == 5.0
        assert finding["unit"] == "km"
        assert finding["arc"] == 1
    for finding, target_km in ((periapsis, 400.0), (apoapsis, APOAPSIS_KM)):
        assert finding["message"] == (
            f"{finding_name(finding)} {target_km:.1f} km is on the {target_km:.1f} km target "
            "(miss +0.00 km), within the 5.00 km tolerance"
        )


def test_a_plan_that_misses_high_fails_with_a_positive_miss():
    goal = Target(400.0, APOAPSIS_KM - 10.0)
    periapsis, apoapsis = _findings(_plan(goal))
    assert periapsis["status"] == "pass"
    assert apoapsis["status"] == "fail"
    assert apoapsis["value"] == pytest.approx(10.0, abs=1e-6)
    assert apoapsis["limit"] == 5.0
    assert apoapsis["message"].startswith(
        f"apoapsis {APOAPSIS_KM:.1f} km is 10.00 km above the {APOAPSIS_KM - 10.0:.1f} km target "
        "(miss +10.00 km), 5.00 km beyond the 5.00 km tolerance; a tangential burn of -"
    )
    assert "(against the velocity) at periapsis would bring the apoapsis" in apoapsis["message"]


def test_a_plan_that_misses_low_fails_with_a_negative_miss():
    goal = Target(400.0, APOAPSIS_KM + 10.0)
    periapsis, apoapsis = _findings(_plan(goal))
    assert periapsis["status"] == "pass"
    assert apoapsis["status"] == "fail"
    assert apoapsis["value"] == pytest.approx(-10.0, abs=1e-6)
    assert apoapsis["limit"] == 5.0
    assert "is 10.00 km below the" in apoapsis["message"]
    assert "(miss -10.00 km), 5.00 km beyond the 5.00 km tolerance" in apoapsis["message"]
    assert "(along the velocity) at periapsis" in apoapsis["message"]


def test_a_miss_inside_the_tolerance_but_beyond_the_warning_band_warns():
    periapsis, apoapsis = _findings(_plan(Target(404.5, APOAPSIS_KM)))
    assert periapsis["status"] == "warn"
    assert periapsis["value"] == pytest.approx(-4.5, abs=1e-6)
    assert periapsis["limit"] == 5.0
    assert (
        "inside the 5.00 km tolerance but beyond its warning band of 4.00 km (80 %)"
        in (periapsis["message"])
    )
    # The larger miss is the periapsis one: its trim is at apoapsis, the apoapsis gets none.
    assert "at apoapsis would bring the periapsis to the target" in periapsis["message"]
    assert apoapsis["status"] == "pass"
    assert "burn" not in apoapsis["message"]


@pytest.mark.parametrize(
    ("miss_km", "status"),
    [
        (5.0 * (1.0 + 1e-6), "fail"),  # just outside the tolerance
        (5.0 * (1.0 - 1e-6), "warn"),  # just inside it
        (4.0 * (1.0 + 1e-6), "warn"),  # just beyond the 80 % warning band
        (4.0 * (1.0 - 1e-6), "pass"),  # just inside it
    ],
)
@pytest.mark.parametrize("sign", [1.0, -1.0])
def test_the_boundaries_of_the_tolerance_and_the_warning_band(miss_km, status, sign):
    goal = Target(400.0, APOAPSIS_KM - sign * miss_km)
    [_, apoapsis] = TargetOrbit().evaluate(context_for(_plan(goal)), _params())
    assert apoapsis.status is Status(status)
    assert apoapsis.value == pytest.approx(sign * miss_km, abs=1e-9)
    assert apoapsis.limit == 5.0
    assert apoapsis.unit == "km"


def test_the_plan_tolerance_and_a_tightened_warning_fraction_apply():
    # 3 km off: passes under 5 km and 80 %, fails under a 2 km tolerance, warns at 50 %.
    loose = Target(400.0, APOAPSIS_KM + 3.0)
    assert _findings(_plan(loose))[1]["status"] == "pass"
    tight = Target(400.0, APOAPSIS_KM + 3.0, tolerance_km=2.0)
    failed = _findings(_plan(tight))[1]
    assert (failed["status"], failed["limit"]) == ("fail", 2.0)
    rules = {CHECK: {"warn_fraction": 0.5}}
    warned = _findings(_plan(loose, rules=rules))[1]
    assert (warned["status"], warned["value"]) == ("warn", pytest.approx(-3.0, abs=1e-6))


def test_an_unbound_final_orbit_fails():
    # 3.3 km/s along the velocity from 400 km exceeds escape: v > sqrt(2 mu / r).
    escape = Maneuver(
        "depart", np.datetime64("2031-05-02T01:00:00", "ms"), "main", "TNW", (3300, 0, 0)
    )
    plan = _plan(Target(400.0, 444.0), maneuvers=(escape,))
    periapsis, apoapsis = _findings(plan)
    v = math.sqrt(MU / R0) + 3.3
    c3 = v * v - 2.0 * MU / R0  # twice the specific energy (vis-viva)
    assert c3 > 0.0
    assert apoapsis["status"] == "fail"
    assert apoapsis["value"] == pytest.approx(c3, abs=1e-6)
    assert apoapsis["limit"] == 0.0
    assert apoapsis["unit"] == "km2/s2"
    assert "has no apoapsis to meet the 444.0 km target" in apoapsis["message"]
    assert periapsis["status"] == "pass"  # the burn point stays the periapsis
    assert "burn" not in periapsis["message"]


# --- inclination ------------------------------------------------------------------------


def _inclined(u0_deg: float = 0.0, inclination_deg: float = 51.6) -> ElementsState:
    """A 400 km circular orbit; on a circular orbit the true anomaly is the argument of latitude."""
    return ElementsState(R0, 0.0, inclination_deg, 30.0, 0.0, u0_deg)


@pytest.mark.parametrize(
    ("goal_deg", "status", "miss_deg"),
    [(51.6, "pass", 0.0), (51.64, "pass", -0.04), (51.555, "warn", 0.045), (51.5, "fail", 0.1)],
)
def test_the_inclination_is_judged_against_its_own_tolerance(goal_deg, status, miss_deg):
    goal = Target(400.0, APOAPSIS_KM, inclination_deg=goal_deg)
    periapsis, apoapsis, inclination = _findings(_plan(goal, _inclined()))
    assert periapsis["status"] == apoapsis["status"] == "pass"
    assert inclination["status"] == status
    assert inclination["value"] == pytest.approx(miss_deg, abs=1e-9)
    assert inclination["limit"] == 0.05
    assert inclination["unit"] == "deg"
    assert inclination["arc"] == 1


# --- the trim, flown ----------------------------------------------------------------------


def _time_to_true_anomaly_s(e: float, a_km: float, nu_from: float, nu_to: float) -> float:
    """Time from one true anomaly to the next passage of another on an ellipse, by Kepler's
    equation M = E - e sin E with tan(E/2) = sqrt((1 - e)/(1 + e)) tan(nu/2) (Vallado 4th ed.
    chapter 2)."""

    def mean(nu: float) -> float:
        big_e = 2.0 * math.atan(math.sqrt((1.0 - e) / (1.0 + e)) * math.tan(0.5 * nu))
        return big_e - e * math.sin(big_e)

    n = math.sqrt(MU / a_km**3)
    return ((mean(nu_to) - mean(nu_from)) % (2.0 * math.pi)) / n


def _with_trim(plan, dv_rtn_m_s, to_point_s: float):
    """The plan plus the trim, its mid-point at ``to_point_s`` after the final arc's start."""
    trajectory = context_for(plan).trajectory
    arc = trajectory.arcs[-1]
    dv = math.sqrt(sum(c * c for c in dv_rtn_m_s))
    half = 0.5 * _burn_time_s(trajectory.final_mass_kg, dv)
    ignition = arc.start + np.timedelta64(round((to_point_s - half) * 1000.0), "ms")
    trim = Maneuver("trim-1", ignition, "main", "RTN", tuple(dv_rtn_m_s))
    return replace(plan, maneuvers=(*plan.maneuvers, trim))


def _final_arc_elements(plan):
    arc = context_for(plan).trajectory.arcs[-1]
    return arc, float(arc.elements.e), arc.semi_major_axis_km, float(arc.elements.nu_rad)


@pytest.mark.parametrize("change_km", [10.0, -10.0, 60.0])
def test_the_apoapsis_trim_closes_the_miss_when_flown(change_km):
    goal = Target(400.0, APOAPSIS_KM + change_km)
    plan = _plan(goal)
    arc, e, a, nu = _final_arc_elements(plan)
    trim = apsis_trim(arc, MU, "apoapsis", change_km)
    # By hand: at periapsis r_p, from a to a + d/2 (vis-viva).
    rp = R0
    hand = 1000.0 * (
        math.sqrt(MU * (2.0 / rp - 1.0 / (a + 0.5 * change_km)))
        - math.sqrt(MU * (2.0 / rp - 1.0 / a))
    )
    assert trim.where == "periapsis"
    assert trim.delta_v_m_s == pytest.approx(hand, rel=1e-9)
    assert trim.rtn_m_s == (0.0, trim.delta_v_m_s, 0.0)
    assert f"a tangential burn of {hand:+.3f} m/s" in _findings(plan)[1]["message"]
    # The next periapsis a whole orbit later (the final arc starts at periapsis).
    to_periapsis = _time_to_true_anomaly_s(e, a, nu, 0.0)
    if to_periapsis < 600.0:
        to_periapsis += 2.0 * math.pi * math.sqrt(a**3 / MU)
    periapsis, apoapsis = _findings(_with_trim(plan, trim.rtn_m_s, to_periapsis))
    assert abs(apoapsis["value"]) < 0.001 * 5.0
    assert abs(periapsis["value"]) < 0.001 * 5.0
    assert apoapsis["status"] == periapsis["status"] == "pass"


@pytest.mark.parametrize("change_km", [8.0, -12.0])
def test_the_periapsis_trim_closes_the_miss_when_flown(change_km):
    goal = Target(400.0 + change_km, APOAPSIS_KM)
    plan = _plan(goal)
    arc, e, a, nu = _final_arc_elements(plan)
    trim = apsis_trim(arc, MU, "periapsis", change_km)
    ra = APOAPSIS_KM + RE
    hand = 1000.0 * (
        math.sqrt(MU * (2.0 / ra - 1.0 / (a + 0.5 * change_km)))
        - math.sqrt(MU * (2.0 / ra - 1.0 / a))
    )
    assert trim.where == "apoapsis"
    assert trim.delta_v_m_s == pytest.approx(hand, rel=1e-9)
    assert (trim.delta_v_m_s > 0.0) == (change_km > 0.0)
    message = _findings(plan)[0]["message"]
    assert f"a tangential burn of {hand:+.3f} m/s" in message
    assert "at apoapsis would bring the periapsis to the target (vis-viva)" in message
    to_apoapsis = _time_to_true_anomaly_s(e, a, nu, math.pi)
    periapsis, apoapsis = _findings(_with_trim(plan, trim.rtn_m_s, to_apoapsis))
    assert abs(periapsis["value"]) < 0.001 * 5.0
    assert abs(apoapsis["value"]) < 0.001 * 5.0


def test_a_trim_that_would_move_an_apsis_through_the_centre_is_refused():
    arc = context_for(_plan(None)).trajectory.arcs[-1]
    assert apsis_trim(arc, MU, "periapsis", -(R0 + 1.0)) is None
    with pytest.raises(ValueError, match="quantity"):
        apsis_trim(arc, MU, "inclination", 1.0)


def _burn_argument_of_latitude_rad(u0_deg: float) -> float:
    """Where the 12.5 m/s burn's mid-point falls: u0 + n t on the circular orbit."""
    t_centre = 3600.0 + 0.5 * _burn_time_s(STRONG.wet_mass_kg, DV)
    return math.radians(u0_deg) + math.sqrt(MU / R0**3) * t_centre


@pytest.mark.parametrize("goal_deg", [51.5, 51.72])
@pytest.mark.parametrize(("u0_deg", "node"), [(0.0, "ascending"), (180.0, "descending")])
def test_the_inclination_trim_closes_the_miss_when_flown(goal_deg, u0_deg, node):
    goal = Target(400.0, APOAPSIS_KM, inclination_deg=goal_deg)
    plan = _plan(goal, _inclined(u0_deg))
    arc, e, a, nu = _final_arc_elements(plan)
    # The final orbit's periapsis is the burn point, argument of latitude u_b = argp, so the
    # node radii are p / (1 + e cos u_b) (ascending) and p / (1 - e cos u_b) (descending);
    # the farther one is chosen, where the horizontal speed h / r is smaller.
    u_b = _burn_argument_of_latitude_rad(u0_deg)
    assert (math.cos(u_b) > 0.0) == (node == "descending")
    p = a * (1.0 - e * e)
    r_node = (
        p / (1.0 - e * math.cos(u_b)) if node == "descending" else p / (1.0 + e * math.cos(u_b))
    )
    di = math.radians(goal_deg - 51.6)
    hand = 2000.0 * math.sqrt(MU * p) / r_node * math.sin(0.5 * abs(di))
    trim = inclination_trim(arc, MU, di)
    assert trim.where == f"{node} node"
    assert trim.radius_km == pytest.approx(r_node, rel=1e-9)
    assert trim.delta_v_m_s == pytest.approx(hand, rel=1e-6)
    assert math.sqrt(sum(c * c for c in trim.rtn_m_s)) == pytest.approx(hand, rel=1e-9)
    [*_, inclination] = _findings(plan)
    assert f"a plane change of {hand:.3f} m/s at the {node} node" in inclination["message"]
    # The node's true anomaly: -argp (ascending) or pi - argp (descending).
    argp = float(arc.elements.argp_rad)
    nu_node = (math.pi if node == "descending" else 0.0) - argp
    to_node = _time_to_true_anomaly_s(e, a, nu, nu_node % (2.0 * math.pi))
    periapsis, apoapsis, inclination = _findings(_with_trim(plan, trim.rtn_m_s, to_node))
    assert abs(inclination["value"]) < 0.001 * 0.05
    assert inclination["status"] == "pass"
    # A plane change at the node keeps the orbit's shape.
    assert abs(periapsis["value"]) < 0.001 * 5.0 and abs(apoapsis["value"]) < 0.001 * 5.0


def test_an_equatorial_orbit_turns_at_apoapsis():
    arc = context_for(_plan(None)).trajectory.arcs[-1]
    trim = inclination_trim(arc, MU, math.radians(1.0))
    ra = APOAPSIS_KM + RE
    a = 0.5 * (R0 + ra)
    h = math.sqrt(MU * a * (1.0 - ((ra - R0) / (ra + R0)) ** 2))
    assert trim.where == "apoapsis (any point serves as a node)"
    assert trim.delta_v_m_s == pytest.approx(
        2000.0 * h / ra * math.sin(math.radians(0.5)), rel=1e-9
    )
