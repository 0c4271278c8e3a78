"""execution-dispersion against hand formulas: vis-viva normal tail, Clopper-Pearson, rocket law.

The invented smallsat 'skua-5' (602 kg wet, a 400 N, 300 s engine) starts in a 400 km
circular equatorial orbit. One retrograde along-track (TNW) burn of 56 m/s lowers its
periapsis to about 205.6 km: 5.6 km above the default 200 km Earth floor.
"""

from __future__ import annotations

import math
import re
import types

import numpy as np
import pytest
from scipy.stats import binom, norm

from plugins import dispersion, periapsis
from service.dynamics.bodies import body_named
from service.engine import PlanInvalid, build_engine
from service.engine.core import fly
from service.engine.plan import (
    EXECUTION_ERROR_MAXIMA,
    CartesianState,
    Engine,
    ExecutionErrors,
    Maneuver,
    Spacecraft,
)
from service.plugin_api import Context, Status
from tests.plugins.conftest import make_plan

MU = 398600.4418  # km^3/s^2, EGM96
RE = 6378.137  # km, WGS 84
G0 = 9.80665  # m/s^2, standard gravity (CGPM 1901)
R0 = RE + 400.0
V0 = math.sqrt(MU / R0)
FLOOR_KM = 200.0  # the periapsis-floor check's default Earth floor
DV = 56.0
WET_KG = 602.0
ISP_S = 300.0
IGNITION = np.datetime64("2031-05-02T01:00:00", "ms")
ONLY_MAGNITUDE = ExecutionErrors(0.02, 0.0, 0.0, 0.0)
NO_ERRORS = ExecutionErrors(0.0, 0.0, 0.0, 0.0)
CHECK = dispersion.ExecutionDispersion()
DEFAULTS = {name: spec.default for name, spec in CHECK.parameters.items()}
FLOOR_DEFAULTS = {name: spec.default for name, spec in periapsis.PeriapsisFloor.parameters.items()}


def _state(r_km: float = R0) -> CartesianState:
    return CartesianState("GCRF", (r_km, 0.0, 0.0), (0.0, math.sqrt(MU / r_km), 0.0))


def skua(
    *,
    dv_m_s: float = DV,
    errors: ExecutionErrors | None = ONLY_MAGNITUDE,
    propellant_kg: float = 62.0,
    digest: str = "sha256:skua-5-lower-01",
    **changes,
):
    """skua-5's plan: one retrograde TNW burn from the 400 km circular orbit."""
    engine = Engine("main", 400.0, ISP_S, execution_errors=errors)
    return make_plan(
        plan_id="skua-5-lower-01",
        initial_state=_state(),
        spacecraft=Spacecraft(WET_KG - propellant_kg, propellant_kg, (engine,)),
        maneuvers=(Maneuver("lower-1", IGNITION, "main", "TNW", (-dv_m_s, 0.0, 0.0)),),
        digest=digest,
        **changes,
    )


def _validate(plan, *modules) -> list[dict]:
    """execution-dispersion's findings from the real engine with it and periapsis-floor."""
    engine = build_engine(extra_plugins=modules or (periapsis, dispersion), entry_points=False)
    report = engine.validate(plan)
    return [f for f in report["findings"] if f["check"] == "execution-dispersion"]


def _evaluate(plan, *, seed: int = 7, floor: dict | None = FLOOR_DEFAULTS, **params):
    """The check called directly on the engine's context, with ``params`` over its defaults."""
    body = body_named(plan.central_body)
    thresholds = {} if floor is None else {"periapsis-floor": types.MappingProxyType(floor)}
    context = Context(
        plan=plan,
        body=body,
        trajectory=fly(plan, body),
        profile="default",
        thresholds=types.MappingProxyType(thresholds),
        seed=seed,
    )
    return list(CHECK.evaluate(context, {**DEFAULTS, **params}))


def _arc(findings, index: int):
    (finding,) = [f for f in findings if _get(f, "arc") == index]
    return finding


def _plan_wide(findings):
    (finding,) = [f for f in findings if _get(f, "arc") is None]
    return finding


def _get(finding, name: str):
    return finding[name] if isinstance(finding, dict) else getattr(finding, name)


def _dv_to_periapsis_m_s(altitude_km: float) -> float:
    """Retrograde delta-v that puts periapsis at ``altitude_km`` from the circular orbit at R0.

    Vis-viva at R0, which becomes the apoapsis: v = sqrt(mu (2/r - 1/a)), a = (R0 + rp) / 2
    (Vallado 4th ed. eq. 1-31; Curtis 3rd ed. chapter 2).
    """
    a_km = 0.5 * (R0 + RE + altitude_km)
    return 1000.0 * (V0 - math.sqrt(MU * (2.0 / R0 - 1.0 / a_km)))


def _tail(sigma_fraction: float, dv_m_s: float = DV) -> float:
    """P(periapsis < floor) = P(dv (1 + eps) > dv*), eps ~ N(0, sigma): a normal tail."""
    return float(norm.sf((_dv_to_periapsis_m_s(FLOOR_KM) - dv_m_s) / (sigma_fraction * dv_m_s)))


def _interval(count: int, samples: int, confidence: float) -> tuple[float, float]:
    """Clopper-Pearson bounds found from their definition (Clopper & Pearson, Biometrika 26,
    1934): P(X >= k | p_low) = alpha/2 and P(X <= k | p_high) = alpha/2, X ~ Binomial(n, p),
    solved by bisection on scipy's binomial distribution."""
    alpha = 1.0 - confidence

    def solve(f) -> float:
        low, high = 0.0, 1.0
        for _ in range(200):
            middle = 0.5 * (low + high)
            low, high = (middle, high) if f(middle) < 0.0 else (low, middle)
        return 0.5 * (low + high)

    lower = 0.0 if count == 0 else solve(lambda p: binom.sf(count - 1, samples, p) - alpha / 2)
    upper = 1.0 if count == samples else solve(lambda p: alpha / 2 - binom.cdf(count, samples, p))
    return lower, upper


# --- the estimator against the closed form ----------------------------------------------------


def test_the_skua_plan_clears_the_floor_nominally_by_a_few_km():
    body = body_named("earth")
    arc = fly(skua(), body).arcs[1]
    # Vis-viva: the periapsis radius of the orbit with apoapsis R0 and speed V0 - DV there.
    a_km = 1.0 / (2.0 / R0 - (V0 - DV / 1000.0) ** 2 / MU)
    assert arc.periapsis_altitude_km == pytest.approx(2.0 * a_km - R0 - RE, abs=1e-6)
    assert 3.0 < arc.periapsis_altitude_km - FLOOR_KM < 8.0


def test_a_near_floor_plan_fails_with_the_analytic_normal_tail_inside_the_interval():
    samples, confidence = 20_000, 0.9999
    rules = {"execution-dispersion": {"samples": samples, "confidence_level": confidence}}
    findings = _validate(skua(rules=rules))
    finding = _arc(findings, 1)
    expected = _tail(0.02)
    assert 0.05 < expected < 0.1  # about 0.0725: the plan fails one time in fourteen
    assert finding["status"] == "fail"
    assert finding["limit"] == 0.001 and finding["unit"] == "probability"
    count = round(finding["value"] * samples)
    assert finding["value"] == pytest.approx(count / samples, abs=1e-6)
    lower, upper = _interval(count, samples, confidence)
    assert lower <= expected <= upper
    assert finding["value"] == pytest.approx(expected, abs=0.01)
    message = finding["message"]
    assert message.startswith(f"probability {count / samples:.4g} ({count} of {samples} samples)")
    assert f"Clopper-Pearson 99.99 % interval {lower:.4g} to {upper:.4g}" in message
    assert "the whole interval is above it" in message
    assert "below the 200.0 km floor exceeds the 0.001 maximum" in message


def test_the_reported_percentiles_are_the_vis_viva_periapsis_of_the_normal_quantiles():
    # Periapsis falls monotonically with |dv|, so its q-quantile is the periapsis of the
    # (1 - q)-quantile of dv = DV (1 + 0.02 z): z = -3, 0, 3 for 99.865, 50, 0.135 %.
    samples = 100_000
    findings = _evaluate(skua(), samples=samples)
    numbers = re.search(
        r"0\.135 / 50 / 99\.865: ([\d.]+) / ([\d.]+) / ([\d.]+) km", _arc(findings, 1).message
    )
    reported = [float(x) for x in numbers.groups()]

    def periapsis_km(z: float) -> float:
        v = V0 - DV * (1.0 + 0.02 * z) / 1000.0
        return 2.0 / (2.0 / R0 - v * v / MU) - R0 - RE

    # Standard error of an extreme sample quantile, sqrt(q (1 - q) / n) / phi(z), is 0.026 in z
    # at n = 100000; allow 0.15 in z either way.
    for value, z in zip(reported, (3.0, 0.0, -3.0), strict=True):
        assert periapsis_km(z + 0.15) - 0.05 <= value <= periapsis_km(z - 0.15) + 0.05


def test_the_clopper_pearson_bounds_meet_their_definition():
    for count, samples, confidence in [(0, 4000, 0.95), (1, 4000, 0.95), (37, 500, 0.99),
                                       (500, 500, 0.9), (1450, 20000, 0.9999)]:  # fmt: skip
        got = dispersion.clopper_pearson(count, samples, confidence)
        assert got == pytest.approx(_interval(count, samples, confidence), abs=1e-9)
    # With none below the floor the upper bound is 1 - (alpha/2)^(1/n) in closed form.
    assert dispersion.clopper_pearson(0, 4000, 0.95)[1] == pytest.approx(1 - 0.025 ** (1 / 4000))
    assert dispersion.samples_to_show(0.001, 0.95) == math.ceil(math.log(0.025) / math.log(0.999))
    assert dispersion.samples_to_show(0.0, 0.95) is None


# --- pass, warn, fail and the boundaries -----------------------------------------------------


def test_a_comfortable_plan_passes_with_probability_zero():
    plan = make_plan(digest="sha256:wren-3-trim-01")  # two 5 m/s raises from 400 km
    findings = _validate(plan)
    assert len(findings) == 3  # arcs 1 and 2, and the plan-wide propellant
    for index in (1, 2):
        finding = _arc(findings, index)
        assert finding["status"] == "pass", finding["message"]
        assert (finding["value"], finding["limit"], finding["unit"]) == (0.0, 0.001, "probability")
        upper = 1.0 - 0.025 ** (1.0 / 4000)  # Clopper-Pearson upper bound with none below
        assert "(0 of 4000 samples)" in finding["message"]
        assert f"interval 0 to {upper:.4g})" in finding["message"]
        assert (
            "the profile's error model: magnitude 1 % + 0.005 m/s, pointing 0.5 deg"
            in (finding["message"])
        )


def test_a_plan_warns_when_the_interval_reaches_above_the_maximum():
    # Tightening the confidence to 99 % widens the interval: with none of 4000 below, its upper
    # bound 1 - 0.005^(1/4000) = 0.00132 exceeds 0.001 although the estimate is 0.
    plan = make_plan(rules={"execution-dispersion": {"confidence_level": 0.99}})
    finding = _arc(_validate(plan), 1)
    assert finding["status"] == "warn"
    assert (finding["value"], finding["limit"]) == (0.0, 0.001)
    needed = math.ceil(math.log(0.005) / math.log(0.999))
    assert f"interval 0 to {1 - 0.005 ** (1 / 4000):.4g} reaches above it" in finding["message"]
    assert f"at least {needed} samples are needed to show it" in finding["message"]


@pytest.mark.parametrize(("samples", "status"), [(3687, Status.WARN), (3688, Status.PASS)])
def test_the_sample_count_boundary_with_none_below_the_floor(samples, status):
    # n >= ln(alpha/2) / ln(1 - p_max) = ln(0.025) / ln(0.999) = 3687.1: 3688 shows it.
    (finding,) = [f for f in _evaluate(skua(dv_m_s=5.0), samples=samples) if f.arc == 1]
    assert finding.status == status
    assert (finding.value, finding.limit) == (0.0, 0.001)


def test_the_probability_boundary_is_judged_on_the_estimate():
    samples = 4000
    first = _arc(_evaluate(skua(), samples=samples), 1)
    count = round(first.value * samples)
    assert 100 < count < 600
    at = _arc(_evaluate(skua(), samples=samples, max_probability_below_floor=count / samples), 1)
    assert at.status == Status.WARN  # estimate == maximum: not above it, interval reaches above
    assert (at.value, at.limit) == (count / samples, count / samples)
    just_below = (count - 0.5) / samples
    over = _arc(_evaluate(skua(), samples=samples, max_probability_below_floor=just_below), 1)
    assert over.status == Status.FAIL
    assert "the interval still reaches below it, so the excess is not significant at 95 %" in (
        over.message
    )
    low, _ = _interval(count, samples, 0.95)
    clear = _arc(_evaluate(skua(), samples=samples, max_probability_below_floor=low * 0.99), 1)
    assert clear.status == Status.FAIL and "the whole interval is above it" in clear.message


# --- determinism ------------------------------------------------------------------------------


def test_the_same_plan_twice_gives_identical_findings():
    plan = skua(rules={"execution-dispersion": {"samples": 5000}})
    assert _validate(plan) == _validate(plan)


def test_a_different_plan_gets_a_different_stream():
    one = _validate(skua(digest="sha256:skua-5-lower-01"))
    two = _validate(skua(digest="sha256:skua-5-lower-02"))
    assert _arc(one, 1)["message"] != _arc(two, 1)["message"]
    seeds = {re.search(r"seed (\d+)", _plan_wide(f)["message"]).group(1) for f in (one, two)}
    assert len(seeds) == 2


# --- the error model --------------------------------------------------------------------------


def test_the_engine_override_changes_the_result_and_is_named():
    samples = {"execution-dispersion": {"samples": 20_000}}
    own = _arc(_validate(skua(rules=samples)), 1)
    profile = _arc(_validate(skua(errors=None, rules=samples)), 1)
    # 2 % magnitude error (about 0.07 below the floor) against the profile's 1 % (about 0.002).
    assert own["value"] > 10 * profile["value"]
    assert own["value"] == pytest.approx(_tail(0.02), abs=0.01)
    assert (
        "flown with the plan's error model for engine 'main': magnitude 2 % + 0 m/s, pointing 0 "
        "deg, timing 0 s, 1-sigma" in own["message"]
    )
    assert "flown with the profile's error model: magnitude 1 % + 0.005 m/s" in profile["message"]


def test_a_partial_override_keeps_the_profiles_other_values():
    partial = ExecutionErrors(pointing_1sigma_deg=2.0)
    finding = _arc(_evaluate(skua(errors=partial)), 1)
    assert (
        "the plan's pointing_1sigma_deg for engine 'main', the profile's for the rest: "
        "magnitude 1 % + 0.005 m/s, pointing 2 deg, timing 1 s" in finding.message
    )


def test_the_error_parameters_share_the_plans_maxima():
    for name, maximum in EXECUTION_ERROR_MAXIMA.items():
        spec = CHECK.parameters[name]
        assert (spec.minimum, spec.maximum) == (0.0, maximum)
        assert spec.stricter == "higher"


# --- propellant at the 99.865 percentile ------------------------------------------------------


def _rocket_kg(dv_m_s: float) -> float:
    """Propellant for ``dv_m_s`` from WET_KG: m0 (1 - exp(-dv / (Isp g0))) (Tsiolkovsky;
    Curtis 3rd ed. chapter 11)."""
    return WET_KG * -math.expm1(-dv_m_s / (ISP_S * G0))


def test_without_errors_every_sample_uses_the_rocket_equation_propellant():
    finding = _plan_wide(_evaluate(skua(errors=NO_ERRORS)))
    assert finding.status == Status.PASS
    assert finding.value == pytest.approx(_rocket_kg(DV), rel=1e-12)
    assert (finding.limit, finding.unit) == (62.0, "kg")


def test_the_propellant_percentile_is_the_rocket_equation_at_three_sigma():
    # Phi(3) = 0.99865, so the 99.865 percentile of dv (1 + 0.02 z) is at z = 3; the sample
    # quantile's standard error is 0.026 in z at n = 100000; allow 0.15.
    load_kg = 0.5 * (_rocket_kg(DV) + _rocket_kg(DV * 1.06))  # between nominal and 3-sigma
    plan = skua(propellant_kg=load_kg, rules={"execution-dispersion": {"samples": 100_000}})
    finding = _plan_wide(_validate(plan))
    assert finding["status"] == "fail"
    assert _rocket_kg(DV * (1 + 0.02 * 2.85)) <= finding["value"] <= _rocket_kg(DV * 1.063)
    assert finding["limit"] == pytest.approx(load_kg, abs=1e-6) and finding["unit"] == "kg"
    assert _rocket_kg(DV) < load_kg  # the nominal plan fits: only the dispersion does not
    over = finding["value"] - load_kg
    assert f"is {over:.3f} kg more than the {load_kg:.3f} kg loaded" in finding["message"]
    assert "100000 samples, seed " in finding["message"]


def test_the_propellant_boundary():
    at_kg = _rocket_kg(DV)  # every sample uses exactly this without errors
    just_inside = _plan_wide(_evaluate(skua(errors=NO_ERRORS, propellant_kg=at_kg + 1e-9)))
    just_outside = _plan_wide(_evaluate(skua(errors=NO_ERRORS, propellant_kg=at_kg - 1e-6)))
    assert just_inside.status == Status.PASS
    assert just_outside.status == Status.FAIL
    assert just_outside.value == pytest.approx(at_kg, rel=1e-12)


# --- what is not judged -----------------------------------------------------------------------


def test_unbound_samples_are_counted_apart_not_as_below_the_floor():
    # Prograde from the circular orbit: escape needs dv = (sqrt(2) - 1) V0 (vis-viva with
    # 1/a = 0). A nominal 6 m/s short of it escapes in P(z > 6 / (0.02 dv)) of the samples.
    escape_m_s = 1000.0 * (math.sqrt(2.0) - 1.0) * V0
    dv = escape_m_s - 6.0
    plan = skua(dv_m_s=-dv)  # the plan's component is -dv: retrograde is negative, so prograde
    samples = 20_000
    finding = _arc(_evaluate(plan, samples=samples), 1)
    unbound = int(re.search(r"; (\d+) samples are unbound \(escape\)", finding.message).group(1))
    expected = norm.sf(6.0 / (0.02 * dv)) * samples
    assert abs(unbound - expected) < 5.0 * math.sqrt(expected)
    assert finding.value == 0.0 and finding.status == Status.PASS
    assert "counted apart and not as below the floor: escape is periapsis-floor's rule" in (
        finding.message
    )


def test_a_plan_without_burns_is_skipped():
    (finding,) = _validate(make_plan(maneuvers=()))
    assert finding["status"] == "skipped"
    assert finding["message"] == "the plan has no burns whose errors could disperse it"


def test_without_periapsis_floor_there_is_no_floor_and_the_check_is_skipped():
    (finding,) = _validate(skua(), dispersion)
    assert finding["status"] == "skipped"
    assert finding["message"] == (
        "periapsis-floor is not enabled in profile 'default', so there is no floor to judge "
        "the dispersed periapses against"
    )


def test_the_floor_is_periapsis_floors_own_including_the_plans_min_altitude():
    rules = {"periapsis-floor": {"min_altitude_km": 204.0}}
    finding = _arc(_validate(skua(rules=rules)), 1)
    assert "below the 204.0 km floor" in finding["message"]
    assert finding["value"] == pytest.approx(_tail_at(204.0, 0.02), abs=0.03)


def _tail_at(floor_km: float, sigma: float) -> float:
    return float(norm.sf((_dv_to_periapsis_m_s(floor_km) - DV) / (sigma * DV)))


def test_a_million_samples_is_refused_naming_the_rule():
    with pytest.raises(PlanInvalid) as caught:
        _validate(skua(rules={"execution-dispersion": {"samples": 1_000_000}}))
    assert caught.value.errors == {
        "rules.execution-dispersion.samples": [
            "samples must be from 100 to 100000 count, not 1000000"
        ]
    }


def test_more_sample_arcs_than_memory_allows_is_an_error_naming_the_largest_count(monkeypatch):
    monkeypatch.setattr(dispersion, "MAX_SAMPLE_ARCS", 5000)
    findings = build_engine(extra_plugins=[periapsis, dispersion], entry_points=False).validate(
        skua()
    )["findings"]
    (finding,) = [f for f in findings if f["check"] == "execution-dispersion"]
    assert finding["status"] == "error"
    assert "4000 samples x 2 arcs = 8000 exceeds the 5000 sample-arcs" in finding["message"]
    assert "ask for at most 2500 samples for this plan" in finding["message"]
