"""execution-dispersion: how likely burn execution errors are to take an arc below the floor.

Engines never deliver exactly the planned delta-v. This check flies the plan ``samples``
times with random execution errors (``service.dynamics.dispersion``: Gaussian magnitude
error, proportional plus fixed; Gaussian pointing error perpendicular to the thrust axis,
a Rayleigh-distributed deflection; Gaussian ignition timing error), each burn applied in
the state the earlier dispersed burns left, and judges every arc after the first burn:

- the probability that its periapsis falls below the floor, estimated as count / samples,
  with its two-sided Clopper-Pearson ("exact") interval at ``confidence_level``;
- **fail** when the estimate exceeds ``max_probability_below_floor``; that covers every
  case where the interval's lower bound exceeds it too (a Clopper-Pearson lower bound never
  exceeds the estimate), and the message says whether the excess is significant at that
  confidence; **warn** when only the interval's upper bound exceeds the maximum (the
  samples cannot show the plan meets it); **pass** otherwise;
- the 0.135 / 50 / 99.865 percentiles of the periapsis altitude (the "3-sigma" band)
  over every sample (an unbound sample's periapsis is that of its hyperbola).

Unbound (escape) samples are counted apart, never as below the floor: escape is the
periapsis-floor check's rule. The floor is periapsis-floor's own, read from its resolved
thresholds (the higher of ``min_altitude_km`` and the body's floor); without that check
enabled there is no floor and this check is skipped. One plan-wide finding compares the
propellant used at the 99.865 percentile with what is loaded.

The error model is the profile's, except where an engine of the plan gives its own
``execution_errors`` (the plan describes the hardware): those values replace the profile's
for that engine's burns, as given, and each arc's message says which model its burn used.
The random stream is seeded with the request's seed, derived from the plan and profile
digests: the same request gives the same report, and another plan another stream.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass

import numpy as np
from scipy.stats import beta

from plugins.periapsis import effective_floor_km
from service.dynamics.dispersion import BurnErrors, Dispersion, disperse
from service.dynamics.trajectory import BurnSpec, EngineSpec
from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl

FLOOR_CHECK = "periapsis-floor"
# The periapsis altitude percentiles reported: the median and the "3-sigma" band,
# Phi(-3) = 0.135 % and Phi(3) = 99.865 % of a normal distribution.
PERCENTILES = (0.135, 50.0, 99.865)
# Samples x arcs held in memory at once ((arcs, N) float64 and bool in the kernel, about
# 9 bytes each): 10 million is about 90 MB. A request beyond it is refused by the check.
MAX_SAMPLE_ARCS = 10_000_000
# The error-model parameters, in the order of BurnErrors, and how a message names them.
ERROR_KEYS = (
    "magnitude_fraction_1sigma",
    "magnitude_fixed_m_s_1sigma",
    "pointing_1sigma_deg",
    "timing_1sigma_s",
)


@dataclass(frozen=True)
class ErrorModel:
    """The 1-sigma errors one burn is flown with, and which of them the plan gave."""

    values: dict[str, float]
    from_plan: frozenset[str]

    def burn_errors(self) -> BurnErrors:
        return BurnErrors(
            magnitude_fraction=self.values["magnitude_fraction_1sigma"],
            magnitude_fixed_m_s=self.values["magnitude_fixed_m_s_1sigma"],
            pointing_rad=math.radians(self.values["pointing_1sigma_deg"]),
            timing_s=self.values["timing_1sigma_s"],
        )

    def describe(self, engine_id: str) -> str:
        v = self.values
        numbers = (
            f"magnitude {100.0 * v['magnitude_fraction_1sigma']:g} % + "
            f"{v['magnitude_fixed_m_s_1sigma']:g} m/s, pointing {v['pointing_1sigma_deg']:g} deg, "
            f"timing {v['timing_1sigma_s']:g} s, 1-sigma"
        )
        if not self.from_plan:
            source = "the profile's error model"
        elif self.from_plan == frozenset(ERROR_KEYS):
            source = f"the plan's error model for engine {engine_id!r}"
        else:
            given = ", ".join(key for key in ERROR_KEYS if key in self.from_plan)
            source = f"the plan's {given} for engine {engine_id!r}, the profile's for the rest"
        return f"{source}: {numbers}"


def error_model(context: Context, engine_id: str, params: Mapping[str, object]) -> ErrorModel:
    """The profile's errors, replaced field by field by the engine's own from the plan."""
    values = {key: float(params[key]) for key in ERROR_KEYS}  # type: ignore[arg-type]
    own = context.plan.spacecraft.engine(engine_id).execution_errors
    from_plan = set()
    if own is not None:
        for key in ERROR_KEYS:
            given = getattr(own, key)
            if given is not None:
                values[key] = float(given)
                from_plan.add(key)
    return ErrorModel(values, frozenset(from_plan))


def clopper_pearson(count: int, samples: int, confidence: float) -> tuple[float, float]:
    """The two-sided Clopper-Pearson interval of a binomial proportion count / samples.

    Lower bound B(alpha/2; k, n - k + 1), upper bound B(1 - alpha/2; k + 1, n - k), with B
    the beta quantile and alpha = 1 - confidence; 0 and 1 at the ends (Clopper & Pearson,
    Biometrika 26, 1934; the beta form as in Brown, Cai & DasGupta, Statistical Science 16,
    2001, from memory). Its coverage is at least the confidence level for every p.
    """
    alpha = 1.0 - confidence
    low = 0.0 if count == 0 else float(beta.ppf(alpha / 2.0, count, samples - count + 1))
    if count == samples:
        return low, 1.0
    return low, float(beta.ppf(1.0 - alpha / 2.0, count + 1, samples - count))


def samples_to_show(limit: float, confidence: float) -> int | None:
    """The fewest samples for which none below the floor puts the upper bound at the limit.

    With no sample below, the upper bound is 1 - (alpha/2)^(1/n); it reaches ``limit`` when
    n >= ln(alpha/2) / ln(1 - limit). None when no count can (limit 0 or 1).
    """
    if not 0.0 < limit < 1.0:
        return None
    return math.ceil(math.log((1.0 - confidence) / 2.0) / math.log1p(-limit))


def _burn_specs(context: Context) -> list[BurnSpec]:
    """The plan's burns as the kernel takes them, in the trajectory's (ignition) order."""
    planned = {maneuver.id: maneuver for maneuver in context.plan.maneuvers}
    specs = []
    for burn in context.trajectory.maneuvers:
        maneuver = planned[burn.id]
        engine = context.plan.spacecraft.engine(maneuver.engine)
        specs.append(
            BurnSpec(
                maneuver.id,
                maneuver.ignition,
                EngineSpec(engine.id, engine.thrust_n, engine.isp_s),
                maneuver.frame,
                tuple(float(c) for c in maneuver.delta_v_m_s),  # type: ignore[arg-type]
            )
        )
    return specs


def _percent(confidence: float) -> str:
    return f"{100.0 * confidence:g} %"


def _arc_finding(
    arc_index: int,
    burn: BurnResult,
    model: ErrorModel,
    result: Dispersion,
    floor_km: float,
    nominal: str,
    limit: float,
    confidence: float,
) -> Finding:
    altitudes = result.periapsis_altitude_km[arc_index]
    bound = result.bound[arc_index]
    samples = altitudes.shape[0]
    below = int(np.count_nonzero(bound & (altitudes < floor_km)))
    unbound = int(np.count_nonzero(~bound))
    estimate = below / samples
    low, high = clopper_pearson(below, samples, confidence)
    level = _percent(confidence)
    interval = f"Clopper-Pearson {level} interval {low:.4g} to {high:.4g}"
    head = (
        f"probability {estimate:.4g} ({below} of {samples} samples) that periapsis falls below "
        f"the {floor_km:.1f} km floor"
    )
    if estimate > limit or low > limit:
        status = Status.FAIL
        significance = (
            "the whole interval is above it"
            if low > limit
            else f"the interval still reaches below it, so the excess is not significant at {level}"
        )
        message = (
            f"{head} exceeds the {limit:.4g} maximum by {estimate - limit:.4g} "
            f"({interval}: {significance})"
        )
    elif high > limit:
        status = Status.WARN
        needed = samples_to_show(limit, confidence)
        more = (
            f"; even with none below, at least {needed} samples are needed to show it"
            if below == 0 and needed is not None
            else ""
        )
        message = (
            f"{head} is within the {limit:.4g} maximum, but the {interval} reaches above it: "
            f"{samples} samples cannot show the plan meets it{more}"
        )
    else:
        status = Status.PASS
        message = f"{head} is within the {limit:.4g} maximum ({interval})"
    low_km, median_km, high_km = np.percentile(altitudes, PERCENTILES)
    message += (
        f"; periapsis altitude percentiles 0.135 / 50 / 99.865: {low_km:.1f} / {median_km:.1f} / "
        f"{high_km:.1f} km (nominal {nominal})"
    )
    if unbound:
        message += (
            f"; {unbound} samples are unbound (escape), counted apart and not as below the "
            "floor: escape is periapsis-floor's rule"
        )
    message += f"; after burn {burn.id!r}, flown with {model.describe(burn.engine_id)}"
    return Finding(status, message, estimate, limit, "probability", arc=arc_index)


def _propellant_finding(context: Context, result: Dispersion, seed: int) -> Finding:
    used = result.propellant_kg
    high_kg = float(np.percentile(used, PERCENTILES[2]))
    median_kg = float(np.percentile(used, 50.0))
    loaded_kg = float(context.plan.spacecraft.propellant_kg)
    detail = (
        f"median {median_kg:.3f} kg, nominal {context.trajectory.total_propellant_kg:.3f} kg; "
        f"{used.shape[0]} samples, seed {seed}"
    )
    if high_kg > loaded_kg:
        status = Status.FAIL
        message = (
            f"propellant used at the 99.865 percentile {high_kg:.3f} kg is "
            f"{high_kg - loaded_kg:.3f} kg more than the {loaded_kg:.3f} kg loaded ({detail})"
        )
    else:
        status = Status.PASS
        message = (
            f"propellant used at the 99.865 percentile {high_kg:.3f} kg is within the "
            f"{loaded_kg:.3f} kg loaded, {loaded_kg - high_kg:.3f} kg to spare ({detail})"
        )
    return Finding(status, message, high_kg, loaded_kg, "kg")


class ExecutionDispersion(Check):
    id = "execution-dispersion"
    version = "1"
    summary = (
        "Monte Carlo of burn execution errors: the probability that each arc's periapsis "
        "falls below the floor, its 3-sigma band, and propellant at the 99.865 percentile"
    )
    parameters = {
        "samples": Parameter(
            4000,
            "count",
            "higher",
            "samples per request; 4000 is the fewest round number with which no sample below "
            "the floor shows a probability under 0.001 at 95 % (Clopper-Pearson: n >= "
            "ln(0.025) / ln(0.999) = 3688)",
            minimum=100,
            maximum=100_000,
        ),
        "magnitude_fraction_1sigma": Parameter(
            0.01,
            "fraction",
            "higher",
            "1-sigma proportional delta-v magnitude error of a small chemical thruster, about "
            "1 % (common practice)",
            minimum=0.0,
            maximum=0.5,
        ),
        "magnitude_fixed_m_s_1sigma": Parameter(
            0.005,
            "m/s",
            "higher",
            "1-sigma fixed delta-v magnitude error: impulse bit and cutoff resolution, a few "
            "mm/s (common practice)",
            minimum=0.0,
            maximum=100.0,
        ),
        "pointing_1sigma_deg": Parameter(
            0.5,
            "deg",
            "higher",
            "1-sigma thrust-axis pointing error per axis: attitude error plus thrust "
            "misalignment, a fraction of a degree (common practice)",
            minimum=0.0,
            maximum=30.0,
        ),
        "timing_1sigma_s": Parameter(
            1.0,
            "s",
            "higher",
            "1-sigma ignition timing error of a stored-command burn, about a second "
            "(common practice)",
            minimum=0.0,
            maximum=3600.0,
        ),
        "max_probability_below_floor": Parameter(
            0.001,
            "probability",
            "lower",
            "at most 1 in 1000 that an arc's periapsis falls below the floor (common practice)",
            minimum=0.0,
            maximum=1.0,
        ),
        "confidence_level": Parameter(
            0.95,
            "probability",
            "higher",
            "confidence of the Clopper-Pearson interval on each estimated probability "
            "(common practice)",
            minimum=0.5,
            maximum=0.9999,
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        burns = context.trajectory.maneuvers
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns whose errors could disperse it")
            return
        floor_params = context.thresholds.get(FLOOR_CHECK)
        if floor_params is None:
            yield Finding(
                Status.SKIPPED,
                f"{FLOOR_CHECK} is not enabled in profile {context.profile!r}, so there is no "
                "floor to judge the dispersed periapses against",
            )
            return
        floor_km = effective_floor_km(context.body, floor_params)
        if floor_km is None:
            yield Finding(
                Status.SKIPPED,
                f"{FLOOR_CHECK} sets no floor for {context.body.name!r}, so there is none to "
                "judge the dispersed periapses against",
            )
            return
        samples = int(params["samples"])  # type: ignore[call-overload]
        arcs = len(context.trajectory.arcs)
        if samples * arcs > MAX_SAMPLE_ARCS:
            raise ValueError(
                f"{samples} samples x {arcs} arcs = {samples * arcs} exceeds the "
                f"{MAX_SAMPLE_ARCS} sample-arcs this check holds in memory; ask for at most "
                f"{MAX_SAMPLE_ARCS // arcs} samples for this plan"
            )
        limit = float(params["max_probability_below_floor"])  # type: ignore[arg-type]
        confidence = float(params["confidence_level"])  # type: ignore[arg-type]
        models = [error_model(context, burn.engine_id, params) for burn in burns]
        rng = np.random.default_rng(context.seed)
        result = disperse(
            context.trajectory,
            _burn_specs(context),
            [model.burn_errors() for model in models],
            samples,
            rng,
        )
        for index, (burn, model) in enumerate(zip(burns, models, strict=True), start=1):
            arc = context.trajectory.arcs[index]
            nominal = f"{arc.periapsis_altitude_km:.1f} km" + ("" if arc.bound else ", unbound")
            yield _arc_finding(index, burn, model, result, floor_km, nominal, limit, confidence)
        yield _propellant_finding(context, result, context.seed)


@hookimpl
def register_checks() -> list[Check]:
    return [ExecutionDispersion()]
