"""The trajectory builder: a plan flown once, checked against hand formulas and published values."""

import math

import numpy as np
import pytest

from service.dynamics.arcs import lowest_point, sample_arc
from service.dynamics.bodies import EARTH, G0_M_S2
from service.dynamics.elements import elements_from_semi_major_axis, elements_to_state
from service.dynamics.epochs import add_seconds, epoch, format_utc, seconds_between
from service.dynamics.kepler import propagate
from service.dynamics.secular import j2_secular_rates
from service.dynamics.trajectory import BurnSpec, EngineSpec, build_trajectory
from service.dynamics.transfers import hohmann

MU = EARTH.mu_km3_s2
RE = EARTH.equatorial_radius_km
EPOCH = epoch("2031-05-02T00:00:00")
MAIN = EngineSpec(id="main", thrust_n=22.0, isp_s=228.0)


def _circular(radius_km, inclination_rad=0.0):
    elements = elements_from_semi_major_axis(radius_km, 0.0, inclination_rad, 0.0, 0.0, 0.0)
    return elements_to_state(elements, MU)


def _burn(burn_id, at, dv, engine=MAIN, frame="TNW"):
    return BurnSpec(id=burn_id, ignition=at, engine=engine, frame=frame, delta_v_m_s=tuple(dv))


def test_contract_example_masses_duration_and_centre():
    # CONTRACT.md section 2 example, recomputed by hand with the rocket equation
    # (Tsiolkovsky; Curtis 3rd ed. chapter 11): 602 kg, 12.5 m/s, Isp 228 s, 22 N.
    r, v = _circular(RE + 400.0)
    burn = _burn("raise-1", epoch("2031-05-02T01:00:00"), (12.5, 0.0, 0.0))
    trajectory = build_trajectory(EARTH, EPOCH, r, v, 602.0, [burn], finite_burns=False)
    (result,) = trajectory.maneuvers
    c = 228.0 * G0_M_S2
    propellant = 602.0 * (1.0 - math.exp(-12.5 / c))
    assert result.propellant_kg == pytest.approx(propellant, rel=1e-12)
    assert result.propellant_kg == pytest.approx(3.36, abs=0.005)
    assert result.duration_s == pytest.approx(propellant / (22.0 / c), rel=1e-12)
    assert result.duration_s == pytest.approx(341.1, abs=0.05)
    assert result.mass_after_kg == pytest.approx(602.0 - propellant, rel=1e-14)
    # Centre = ignition + duration / 2, exact to the millisecond.
    assert format_utc(result.centre) == "2031-05-02T01:02:50.546Z"
    assert trajectory.arcs[0].end == result.centre
    assert trajectory.arcs[1].start == result.centre
    assert trajectory.arcs[1].end is None


def test_prograde_burn_from_circular_orbit_matches_vis_viva():
    # Vis-viva by hand (Vallado 4th ed. eq. 1-31; Curtis 3rd ed. eq. 2.80 form):
    # v = vc + dv at r gives a = 1 / (2/r - v^2/mu), apoapsis 2a - r, periapsis r.
    r0 = RE + 400.0
    r, v = _circular(r0, math.radians(51.6))
    dv = 30.0
    trajectory = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("up", add_seconds(EPOCH, 600.0), (dv, 0, 0))]
    )
    speed = math.sqrt(MU / r0) + dv / 1000.0
    a = 1.0 / (2.0 / r0 - speed**2 / MU)
    arc = trajectory.arcs[1]
    assert arc.periapsis_altitude_km == pytest.approx(400.0, abs=1e-6)
    assert arc.apoapsis_altitude_km == pytest.approx(2.0 * a - r0 - RE, abs=1e-6)
    assert arc.period_s == pytest.approx(2.0 * math.pi * math.sqrt(a**3 / MU), rel=1e-10)
    assert math.degrees(arc.inclination_rad) == pytest.approx(51.6, abs=1e-9)


def test_retrograde_burn_lowers_the_opposite_side_by_vis_viva():
    # Same hand formula: after a retrograde dv, the burn point becomes apoapsis and
    # the periapsis radius is 2a - r.
    r0 = RE + 400.0
    r, v = _circular(r0)
    dv = 60.0
    trajectory = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("down", EPOCH, (-dv, 0, 0))], finite_burns=False
    )
    speed = math.sqrt(MU / r0) - dv / 1000.0
    a = 1.0 / (2.0 / r0 - speed**2 / MU)
    arc = trajectory.arcs[1]
    assert arc.apoapsis_altitude_km == pytest.approx(400.0, abs=1e-6)
    assert arc.periapsis_altitude_km == pytest.approx(2.0 * a - r0 - RE, abs=1e-6)
    # The open-ended last arc reaches its periapsis half an orbit later.
    assert arc.lowest_altitude_km == pytest.approx(arc.periapsis_altitude_km, abs=1e-9)
    half_period = 0.5 * arc.period_s
    assert float(seconds_between(arc.start, arc.lowest_altitude_epoch)) == pytest.approx(
        half_period, abs=1e-3
    )


def test_leo_to_geo_hohmann_plan_reaches_the_published_circular_orbit():
    # Vallado 4th ed. Example 6-1: r1 = 6378.137 + 191.34411 km, r2 = 6378.137 + 35781.34857 km,
    # dv_a 2.457038 km/s, dv_b 1.478187 km/s, transfer time 5.256713 h. Flying those two
    # published impulses half a transfer orbit apart must leave a circular GEO orbit.
    r1, r2 = RE + 191.34411, RE + 35781.34857
    r, v = _circular(r1, math.radians(28.5))
    big = EngineSpec(id="apogee", thrust_n=4.0e5, isp_s=320.0)
    first = _burn("perigee", add_seconds(EPOCH, 1000.0), (2457.038, 0, 0), engine=big)
    plan = build_trajectory(EARTH, EPOCH, r, v, 5000.0, [first], finite_burns=False)
    centre = plan.maneuvers[0].centre
    tof_s = 5.256713 * 3600.0
    # Choose the second ignition so its mid-point falls exactly at apoapsis.
    mass = plan.maneuvers[0].mass_after_kg
    c = 320.0 * G0_M_S2
    duration_2 = mass * c / 4.0e5 * -math.expm1(-1478.187 / c)
    second = _burn(
        "apogee", add_seconds(centre, tof_s - duration_2 / 2.0), (1478.187, 0, 0), engine=big
    )
    trajectory = build_trajectory(EARTH, EPOCH, r, v, 5000.0, [second, first], finite_burns=False)
    assert [m.id for m in trajectory.maneuvers] == ["perigee", "apogee"]
    transfer, final = trajectory.arcs[1], trajectory.arcs[2]
    assert transfer.periapsis_altitude_km == pytest.approx(191.34411, abs=1e-3)
    assert transfer.apoapsis_altitude_km == pytest.approx(35781.34857, abs=0.5)
    assert final.eccentricity < 2e-5
    assert final.semi_major_axis_km == pytest.approx(r2, abs=0.5)
    # Independent: our own Hohmann routine, the published total 3.935224 km/s.
    assert trajectory.total_delta_v_m_s == pytest.approx(
        1000.0 * hohmann(r1, r2, MU).total_km_s, abs=1e-3
    )


def test_burns_are_ordered_by_ignition_and_mass_carries_over():
    r, v = _circular(RE + 500.0)
    burns = [
        _burn("c", add_seconds(EPOCH, 9000.0), (5, 0, 0)),
        _burn("a", add_seconds(EPOCH, 1000.0), (7, 0, 0), frame="RTN"),
        _burn("b", add_seconds(EPOCH, 5000.0), (0, 0, 3), frame="GCRF"),
    ]
    trajectory = build_trajectory(EARTH, EPOCH, r, v, 602.0, burns, finite_burns=False)
    assert [m.id for m in trajectory.maneuvers] == ["a", "b", "c"]
    assert [a.after_maneuver for a in trajectory.arcs] == [None, "a", "b", "c"]
    for before, after in zip(trajectory.maneuvers, trajectory.maneuvers[1:], strict=False):
        assert after.mass_before_kg == before.mass_after_kg
    assert trajectory.total_propellant_kg == pytest.approx(602.0 - trajectory.final_mass_kg)
    assert trajectory.total_delta_v_m_s == pytest.approx(15.0, rel=1e-14)


def test_each_arc_ends_where_the_next_starts_and_matches_the_propagator():
    r, v = _circular(RE + 500.0, math.radians(97.4))
    burns = [_burn("a", add_seconds(EPOCH, 1200.0), (0.0, 0.0, 40.0), frame="RTN")]
    trajectory = build_trajectory(EARTH, EPOCH, r, v, 602.0, burns, finite_burns=False)
    first = trajectory.arcs[0]
    np.testing.assert_allclose(first.r_end_km, trajectory.maneuvers[0].r_centre_km)
    # An out-of-plane RTN burn adds its full length perpendicular to the velocity.
    burn = trajectory.maneuvers[0]
    assert np.dot(burn.delta_v_inertial_m_s, burn.v_before_km_s) == pytest.approx(0.0, abs=1e-9)
    assert np.linalg.norm(burn.v_after_km_s - burn.v_before_km_s) * 1000.0 == pytest.approx(40.0)


def test_lowest_altitude_flown_before_the_next_burn_is_not_the_periapsis():
    # Lower the orbit, then raise it again a quarter orbit later, before periapsis is reached:
    # the lowest altitude actually flown lies at the end of the arc. Independent check: a
    # dense sampling of the arc with the propagator.
    r0 = RE + 600.0
    r, v = _circular(r0)
    quarter = 0.25 * 2.0 * math.pi * math.sqrt(r0**3 / MU)
    burns = [
        _burn("down", EPOCH, (-150.0, 0, 0)),
        _burn("up", add_seconds(EPOCH, quarter), (150.0, 0, 0)),
    ]
    trajectory = build_trajectory(EARTH, EPOCH, r, v, 602.0, burns, finite_burns=False)
    arc = trajectory.arcs[1]
    assert arc.lowest_altitude_km > arc.periapsis_altitude_km + 50.0
    duration = float(seconds_between(arc.start, arc.end))
    _, r_samples, _ = sample_arc(arc.r_start_km, arc.v_start_km_s, duration, MU, 20001)
    sampled = np.linalg.norm(r_samples, axis=1).min() - RE
    assert arc.lowest_altitude_km == pytest.approx(sampled, abs=1e-6)


def test_lowest_point_through_periapsis_agrees_with_sampling():
    elements = elements_from_semi_major_axis(RE + 2000.0, 0.2, 0.3, 0.1, 0.2, 3.0)
    r, v = elements_to_state(elements, MU)
    lowest = lowest_point(r, v, 4000.0, MU)
    times, r_samples, _ = sample_arc(r, v, 4000.0, MU, 400001)
    radii = np.linalg.norm(r_samples, axis=1)
    assert lowest.radius_km == pytest.approx(radii.min(), abs=1e-6)
    assert lowest.time_from_start_s == pytest.approx(times[np.argmin(radii)], abs=0.02)


def test_unbound_arc_reports_no_apoapsis_or_period():
    r0 = RE + 400.0
    r, v = _circular(r0)
    escape_m_s = (math.sqrt(2.0) - 1.0) * math.sqrt(MU / r0) * 1000.0
    big = EngineSpec(id="kick", thrust_n=5.0e4, isp_s=300.0)
    trajectory = build_trajectory(
        EARTH, EPOCH, r, v, 1000.0, [_burn("kick", EPOCH, (escape_m_s + 100.0, 0, 0), big)]
    )
    arc = trajectory.arcs[1]
    assert not arc.bound
    assert arc.apoapsis_altitude_km is None and arc.period_s is None
    assert arc.eccentricity > 1.0
    assert arc.lowest_altitude_km == pytest.approx(400.0, abs=1e-6)


def test_finite_burn_is_flown_beside_the_impulsive_one():
    r, v = _circular(RE + 400.0)
    trajectory = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("raise", add_seconds(EPOCH, 60.0), (12.5, 0, 0))]
    )
    finite = trajectory.maneuvers[0].finite_burn
    assert finite is not None
    assert finite.mass_cutoff_kg == pytest.approx(trajectory.maneuvers[0].mass_after_kg, rel=1e-9)
    # A 341 s burn sweeps about 22 deg of a LEO orbit: a loss of a few cm/s, not zero.
    assert 0.0 < finite.loss_m_s < 0.5


def test_j2_secular_coast_turns_the_node_at_the_published_rate():
    # Node rate -3/2 n J2 (R/p)^2 cos i (Vallado 4th ed. section 9.6), evaluated with our own
    # rates; a one-day coast must move the node by rate * 86400 s.
    r, v = _circular(RE + 700.0, math.radians(98.188))
    burn = _burn("trim", add_seconds(EPOCH, 86400.0), (0.001, 0, 0))
    trajectory = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [burn], coast_model="j2-secular", finite_burns=False
    )
    first, second = trajectory.arcs
    raan_rate, _, _ = j2_secular_rates(first.elements, EARTH)
    moved = float(second.elements.raan_rad - first.elements.raan_rad)
    elapsed = float(seconds_between(first.start, first.end))
    assert moved == pytest.approx(raan_rate * elapsed, rel=1e-6)
    # Sun-synchronous at 700 km: about 0.9856 deg/day (project references, computed).
    assert math.degrees(raan_rate) * 86400.0 == pytest.approx(0.98564736, abs=2e-4)


def test_bad_inputs_are_refused():
    r, v = _circular(RE + 400.0)
    with pytest.raises(ValueError, match="mass"):
        build_trajectory(EARTH, EPOCH, r, v, 0.0, [])
    with pytest.raises(ValueError, match="coast model"):
        build_trajectory(EARTH, EPOCH, r, v, 10.0, [], coast_model="n-body")


def test_burn_arc_is_the_orbit_angle_swept_during_the_burn():
    # On a circular orbit the angle swept is the mean motion times the burn time
    # (n = sqrt(mu / r^3), Vallado 4th ed. chapter 2); a tiny burn barely changes the orbit.
    r0 = RE + 400.0
    r, v = _circular(r0, math.radians(51.6))
    trajectory = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("trim", EPOCH, (0.5, 0, 0))], finite_burns=False
    )
    burn = trajectory.maneuvers[0]
    expected = math.sqrt(MU / r0**3) * burn.duration_s
    assert burn.burn_arc_rad == pytest.approx(expected, rel=2e-4)
    # A long burn: 2 m/s with 1 N from 602 kg lasts about 20 minutes, over 70 deg of orbit.
    slow = EngineSpec(id="slow", thrust_n=1.0, isp_s=228.0)
    long_burn = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("long", EPOCH, (2.0, 0, 0), slow)], finite_burns=False
    ).maneuvers[0]
    assert math.degrees(long_burn.burn_arc_rad) == pytest.approx(
        math.degrees(math.sqrt(MU / r0**3) * long_burn.duration_s), rel=2e-3
    )
    assert math.degrees(long_burn.burn_arc_rad) > 70.0


def test_a_burn_longer_than_an_orbit_counts_whole_turns_and_is_not_integrated():
    # 30 m/s at 0.05 N from 602 kg lasts about 100 h: dozens of orbits. The arc counts every
    # turn (mean motion times duration, Vallado 4th ed. chapter 2), and the finite-burn
    # comparison is skipped with its reason rather than integrated for ever.
    r0 = RE + 400.0
    r, v = _circular(r0)
    faint = EngineSpec(id="faint", thrust_n=0.05, isp_s=228.0)
    burn = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("spiral", EPOCH, (30.0, 0, 0), faint)]
    ).maneuvers[0]
    assert burn.duration_s > 86400.0
    n = math.sqrt(MU / r0**3)
    assert burn.burn_arc_rad == pytest.approx(n * burn.duration_s, rel=0.02)
    assert burn.burn_arc_rad > 50 * 2.0 * math.pi
    assert burn.finite_burn is None
    assert "beyond the 86400 s" in burn.finite_burn_skipped


def test_a_burn_of_more_than_one_orbit_within_a_day_is_not_integrated():
    r0 = RE + 400.0
    r, v = _circular(r0)
    weak = EngineSpec(id="weak", thrust_n=0.5, isp_s=228.0)
    burn = build_trajectory(
        EARTH, EPOCH, r, v, 602.0, [_burn("slow", EPOCH, (12.0, 0, 0), weak)]
    ).maneuvers[0]
    assert 5600.0 < burn.duration_s < 86400.0
    assert burn.burn_arc_rad > 2.0 * math.pi
    assert burn.finite_burn is None
    assert "whole orbit" in burn.finite_burn_skipped


def test_states_at_follows_the_arcs_and_matches_the_burn_states():
    r0 = RE + 500.0
    r, v = _circular(r0, math.radians(45.0))
    burns = [
        _burn("a", add_seconds(EPOCH, 1200.0), (20.0, 0, 0)),
        _burn("b", add_seconds(EPOCH, 5000.0), (0, 0, 10.0), frame="RTN"),
    ]
    trajectory = build_trajectory(EARTH, EPOCH, r, v, 602.0, burns, finite_burns=False)
    a, b = trajectory.maneuvers
    epochs = np.array(
        [EPOCH, a.centre, b.centre, add_seconds(EPOCH, 9000.0), add_seconds(EPOCH, -60.0)],
        dtype="datetime64[ms]",
    )
    r_km, v_km_s = trajectory.states_at(epochs)
    np.testing.assert_allclose(r_km[0], r, atol=1e-9)
    np.testing.assert_allclose(r_km[1], a.r_centre_km, atol=1e-6)
    np.testing.assert_allclose(v_km_s[1], a.v_after_km_s, atol=1e-9)  # the burn has happened
    np.testing.assert_allclose(v_km_s[2], b.v_after_km_s, atol=1e-9)
    last = trajectory.arcs[-1]
    expected_r, _ = propagate(
        last.r_start_km, last.v_start_km_s, 9000.0 - float(seconds_between(EPOCH, last.start)), MU
    )
    np.testing.assert_allclose(r_km[3], expected_r, atol=1e-6)
    back_r, _ = propagate(r, v, -60.0, MU)
    np.testing.assert_allclose(r_km[4], back_r, atol=1e-6)
