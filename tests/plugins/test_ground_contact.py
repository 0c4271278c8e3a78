"""ground-contact: which stations see the spacecraft above their masks at ignition and cutoff.

The invented smallsat 'wren-3' (tests/engine/conftest.py) flies a 400 km circular equatorial
orbit. Stations are placed relative to its sub-satellite point, found independently with
pyerfa: the J2000 position is turned to mean-of-date axes by ``erfa.pmat76`` (IAU 1976
precession) and to Earth-fixed axes by ``erfa.gmst82`` (IAU 1982 GMST, UT1 = UTC as in the
core), then ``erfa.gc2gd`` gives its geodetic point on WGS 84. A station there has the
spacecraft on its ellipsoid normal: elevation 90 deg. Other elevations are recomputed here as
asin(up . rho / |rho|), with the station from ``erfa.gd2gc`` and the geodetic up vector
(cos lat cos lon, cos lat sin lon, sin lat) (Vallado 4th ed., Algorithm 27 in east-north-up
form).

The invented operator 'gull-ops' keeps a two-station network in its site profile.
"""

from __future__ import annotations

import math

import erfa
import numpy as np
import pytest

from plugins import ground_contact
from plugins.ground_contact import GroundContact
from service.engine import PlanInvalid, build_engine
from service.engine.plan import CartesianState, GroundStation, Maneuver
from tests.plugins.conftest import context_for, make_plan

CHECK = "ground-contact"
EPOCH = np.datetime64("2031-05-02T00:00:00", "ms")
IGNITION = np.datetime64("2031-05-02T01:00:00", "ms")
WGS84 = 1  # erfa's ellipsoid number for WGS 84


def _plan(stations=(), rules=None, **changes):
    burn = Maneuver("trim-1", IGNITION, "main", "TNW", (0.01, 0.0, 0.0))  # a 0.27 s burn
    return make_plan(
        plan_id="wren-3-contact-01",
        maneuvers=(burn,),
        ground_stations=tuple(stations),
        rules=rules or {},
        **changes,
    )


def _ecef_m(r_j2000_km: np.ndarray, epoch: np.datetime64) -> np.ndarray:
    """Earth-fixed position in metres by pyerfa: ROT3(GMST82) @ PMAT76 @ r, UT1 = TT = UTC."""
    days = float((epoch - np.datetime64("2000-01-01T12:00:00", "ms")) / np.timedelta64(1, "ms"))
    days /= 86_400_000.0
    precession = erfa.pmat76(2451545.0, days)
    gmst = erfa.gmst82(2451545.0, days)
    c, s = math.cos(gmst), math.sin(gmst)
    spin = np.array([[c, s, 0.0], [-s, c, 0.0], [0.0, 0.0, 1.0]])
    return spin @ precession @ (np.asarray(r_j2000_km) * 1000.0)


def _instants(plan) -> list[tuple[np.datetime64, np.ndarray]]:
    (flown,) = context_for(plan).trajectory.maneuvers
    return [(flown.ignition, flown.r_ignition_km), (flown.cutoff, flown.r_cutoff_km)]


def _below(plan, when: int = 0) -> tuple[float, float]:
    """Geodetic (latitude, longitude) deg of the point under the spacecraft at ignition (0)."""
    epoch, r_km = _instants(plan)[when]
    lon, lat, _ = erfa.gc2gd(WGS84, _ecef_m(r_km, epoch))
    return math.degrees(lat), math.degrees(lon)


def _elevation_deg(plan, station: GroundStation, when: int = 0) -> float:
    epoch, r_km = _instants(plan)[when]
    lat, lon = math.radians(station.latitude_deg), math.radians(station.longitude_deg)
    site = erfa.gd2gc(WGS84, lon, lat, station.height_km * 1000.0)
    rho = _ecef_m(r_km, epoch) - site
    up = np.array([math.cos(lat) * math.cos(lon), math.cos(lat) * math.sin(lon), math.sin(lat)])
    sine = float(np.dot(up, rho) / np.linalg.norm(rho))
    return math.degrees(math.asin(min(1.0, max(-1.0, sine))))


def _evaluate(plan, stations, **changes) -> list:
    params = {name: spec.default for name, spec in GroundContact.parameters.items()}
    params.update(changes)
    context = context_for(plan)
    context = type(context)(**{**context.__dict__, "ground_stations": tuple(stations)})
    return list(GroundContact().evaluate(context, params))


def _report(plan, **engine_options) -> dict:
    engine = build_engine(extra_plugins=[ground_contact], entry_points=False, **engine_options)
    assert engine.ready, engine.problems
    return engine.validate(plan)


def _findings(report) -> list[dict]:
    return [f for f in report["findings"] if f["check"] == CHECK]


BASE = _plan()
LAT0, LON0 = _below(BASE)
OVERHEAD = GroundStation("overhead", LAT0, LON0, 0.0)
EAST = GroundStation("east-10", LAT0, LON0 + 10.0, 0.0)  # 10 deg east: about 14 deg up
EAST_ELEVATION_DEG = _elevation_deg(BASE, EAST)
FAR = GroundStation("far-side", -LAT0, LON0 + 180.0, 0.0)  # under the horizon


def _with_mask(station: GroundStation, mask_deg: float) -> GroundStation:
    return GroundStation(
        station.id, station.latitude_deg, station.longitude_deg, station.height_km, mask_deg
    )


def test_the_sub_satellite_point_is_on_the_equator_and_the_east_station_is_low():
    assert abs(LAT0) < 0.5  # J2000 equator against the equator of date: 31 years of precession
    assert 10.0 < EAST_ELEVATION_DEG < 20.0
    assert _elevation_deg(BASE, FAR) < -60.0


# --- a station straight below --------------------------------------------------------------


def test_a_station_straight_below_sees_the_spacecraft_at_ninety_degrees():
    ignition, cutoff = _findings(_report(_plan([OVERHEAD])))
    assert ignition["status"] == cutoff["status"] == "pass"
    assert ignition["maneuver"] == "trim-1"
    assert ignition["value"] == pytest.approx(90.0, abs=1e-4)
    assert ignition["value"] == pytest.approx(_elevation_deg(BASE, OVERHEAD), abs=1e-4)
    # 0.27 s later the spacecraft has moved about 2 km along its track: no longer quite overhead.
    assert cutoff["value"] == pytest.approx(_elevation_deg(BASE, OVERHEAD, when=1), abs=1e-4)
    assert 89.0 < cutoff["value"] < 90.0
    assert ignition["limit"] == 5.0 and ignition["unit"] == "deg"
    assert ignition["message"].startswith("at ignition 1 station in view")
    assert "'overhead' at 90.00 deg (mask 5.00 deg)" in ignition["message"]


# --- mask and margin: pass, warn, the edges ------------------------------------------------


@pytest.mark.parametrize(
    ("below_elevation_deg", "status"),
    [
        (3.0, "pass"),
        (2.01, "pass"),  # just beyond the 2 deg margin
        (1.99, "warn"),  # just inside it
        (1.0, "warn"),
        (0.01, "warn"),  # just above the mask: in view, barely
        (-0.01, "warn"),  # just below it: no contact, and the rule is advisory
    ],
)
def test_mask_and_margin_edges_under_the_advisory_rule(below_elevation_deg, status):
    mask = EAST_ELEVATION_DEG - below_elevation_deg
    ignition, _ = _findings(_report(_plan([_with_mask(EAST, mask)])))
    assert ignition["status"] == status
    assert ignition["value"] == pytest.approx(EAST_ELEVATION_DEG, abs=1e-4)
    assert ignition["limit"] == pytest.approx(mask)
    if below_elevation_deg < 0:
        assert ignition["message"].startswith("no ground station sees the spacecraft at ignition")
        assert "advisory" in ignition["message"]
    elif status == "warn":
        assert "within the 2.00 deg margin" in ignition["message"]


def test_no_contact_fails_where_the_rule_requires_it():
    mask = EAST_ELEVATION_DEG + 0.01  # just out of view
    plan = _plan([_with_mask(EAST, mask)], {CHECK: {"rule": "require-contact-at-ignition"}})
    engine = build_engine(extra_plugins=[ground_contact], entry_points=False)
    # Any change of a choice counts as loosening under the default profile: it is refused...
    with pytest.raises(PlanInvalid) as refused:
        engine.validate(plan)
    assert "would loosen profile 'default'" in refused.value.errors["rules.ground-contact.rule"][0]
    # ...so the operator's own rule comes from a profile; here straight to the check.
    ignition, _ = _evaluate(_plan(), [_with_mask(EAST, mask)], rule="require-contact-at-ignition")
    assert ignition.status == "fail"
    assert ignition.value == pytest.approx(EAST_ELEVATION_DEG, abs=1e-4)
    assert ignition.limit == pytest.approx(mask)
    assert ignition.message.startswith(
        f"no ground station sees the spacecraft at ignition: the highest above its mask is "
        f"'east-10' at {EAST_ELEVATION_DEG:.2f} deg, 0.01 deg below its {mask:.2f} deg mask"
    )
    assert "the require-contact-at-ignition rule requires contact at ignition" in ignition.message


@pytest.mark.parametrize(
    ("rule", "statuses"),
    [
        ("advisory", ("warn", "warn")),
        ("require-contact-at-ignition", ("fail", "warn")),
        ("require-contact-at-cutoff", ("warn", "fail")),
        ("require-contact-at-both", ("fail", "fail")),
    ],
)
def test_each_rule_decides_which_instant_needs_contact(rule, statuses):
    ignition, cutoff = _evaluate(_plan(), [FAR], rule=rule)
    assert (ignition.status, cutoff.status) == statuses
    assert (ignition.maneuver, cutoff.maneuver) == ("trim-1", "trim-1")
    assert ignition.value == pytest.approx(_elevation_deg(BASE, FAR), abs=1e-4)
    assert cutoff.value == pytest.approx(_elevation_deg(BASE, FAR, when=1), abs=1e-4)
    assert "at ignition" in ignition.message and "at cutoff" in cutoff.message


def test_several_stations_are_listed_best_first_and_the_best_is_judged():
    stations = [FAR, _with_mask(EAST, 10.0), OVERHEAD]
    ignition, _ = _evaluate(_plan(), stations)
    assert ignition.status == "pass"
    assert ignition.value == pytest.approx(90.0, abs=1e-4)
    assert ignition.message.startswith("at ignition 2 stations in view")
    listed = ignition.message.split(": ", 1)[1]
    assert listed.index("'overhead'") < listed.index("'east-10'")
    assert "far-side" not in listed
    assert f"'east-10' at {EAST_ELEVATION_DEG:.2f} deg (mask 10.00 deg)" in listed


# --- the profile's network and the plan's own ----------------------------------------------

GULL_OPS = """\
name = "gull-ops"
description = "Gull operations: two stations, contact required at ignition"

[thresholds.ground-contact]
rule = {{ value = "require-contact-at-ignition", reason = "the team watches every ignition" }}

[[stations]]
id = "overhead"
latitude_deg = {lat}
longitude_deg = {lon}
height_km = 0.0

[[stations]]
id = "far-side"
latitude_deg = {far_lat}
longitude_deg = {far_lon}
height_km = 0.25
min_elevation_deg = 10.0
"""


def _gull_ops(tmp_path) -> str:
    text = GULL_OPS.format(
        lat=LAT0, lon=LON0, far_lat=FAR.latitude_deg, far_lon=(FAR.longitude_deg + 360.0) % 360.0
    )
    (tmp_path / "gull-ops.toml").write_text(text, encoding="utf-8")
    return str(tmp_path)


def test_the_profiles_network_is_used_and_shown(tmp_path):
    engine = build_engine(
        extra_plugins=[ground_contact], entry_points=False, profile_dir=_gull_ops(tmp_path)
    )
    assert engine.ready, engine.problems
    document = engine.profile_document("gull-ops")
    assert [s["id"] for s in document["stations"]] == ["overhead", "far-side"]
    assert document["stations"][1]["min_elevation_deg"] == 10.0
    report = engine.validate(_plan(profile="gull-ops"))
    ignition, cutoff = _findings(report)
    assert (ignition["status"], cutoff["status"]) == ("pass", "pass")
    assert ignition["value"] == pytest.approx(90.0, abs=1e-4)


def test_a_plan_may_add_stations_to_the_profiles_network(tmp_path):
    engine = build_engine(
        extra_plugins=[ground_contact], entry_points=False, profile_dir=_gull_ops(tmp_path)
    )
    plan = _plan([_with_mask(EAST, 1.0)], profile="gull-ops")
    ignition, _ = _findings(engine.validate(plan))
    assert "'overhead'" in ignition["message"] and "'east-10'" in ignition["message"]


def test_a_plan_station_may_not_reuse_a_profile_stations_id(tmp_path):
    engine = build_engine(
        extra_plugins=[ground_contact], entry_points=False, profile_dir=_gull_ops(tmp_path)
    )
    plan = _plan([EAST, GroundStation("far-side", 0.0, 0.0, 0.0)], profile="gull-ops")
    with pytest.raises(PlanInvalid) as refused:
        engine.validate(plan)
    assert refused.value.errors == {
        "ground_stations.1.id": [
            "station 'far-side' is already in profile 'gull-ops'; give the plan's station an "
            "id of its own"
        ]
    }


# --- not applicable ------------------------------------------------------------------------


def test_without_stations_the_check_is_skipped_saying_why():
    (finding,) = _findings(_report(_plan()))
    assert finding["status"] == "skipped"
    assert "no ground stations" in finding["message"]


def test_around_the_moon_the_check_is_skipped():
    plan = _plan(
        [OVERHEAD],
        central_body="moon",
        initial_state=CartesianState(
            "GCRF", (1837.4, 0.0, 0.0), (0.0, math.sqrt(4902.800066 / 1837.4), 0.0)
        ),
    )
    (finding,) = _findings(_report(plan))
    assert finding["status"] == "skipped"
    assert "the Moon" in finding["message"]


def test_a_plan_without_burns_is_skipped():
    (finding,) = _evaluate(make_plan(maneuvers=()), [OVERHEAD])
    assert finding.status == "skipped"
    assert "no burns" in finding.message


def test_the_parameters_declare_their_choices():
    spec = GroundContact.parameters
    assert spec["rule"].choices == (
        "require-contact-at-ignition",
        "require-contact-at-cutoff",
        "require-contact-at-both",
        "advisory",
    )
    assert {name: (p.default, p.unit, p.stricter) for name, p in spec.items()} == {
        "rule": ("advisory", "choice", None),
        "elevation_margin_deg": (2.0, "deg", "higher"),
    }
