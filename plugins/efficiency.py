"""transfer-efficiency: the plan's delta-v against the least the same orbit change needs.

The orbit change is from the initial orbit (arc 0) to the final one (the last arc). For
near-circular orbits the least impulsive cost between them is known in closed form:

* the Hohmann transfer between the two mean radii (semi-major axes), Vallado,
  Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 36;
* the bi-elliptic transfer where the radius ratio makes it cheaper (Algorithm 37): beyond
  a ratio of 11.94 the rb -> infinity limit beats Hohmann, beyond 15.58 every bi-elliptic
  transfer does (``service.dynamics.transfers``); the intermediate apoapsis is capped by
  ``max_intermediate_radius_km`` (unset: the limit, approached but never reached);
* the turn between the two orbit planes (the angle between the angular-momentum vectors)
  combined with the two Hohmann impulses and split between them to cost least (Algorithm
  42, ``service.dynamics.plane_change``), or made at the bi-elliptic apoapsis, where it
  costs least (nothing in the rb -> infinity limit).

The lowest of these is the bound. The ratio plan / bound and the excess in m/s and in kg
of propellant (the plan's propellant minus what the bound would need from the same
initial mass at the plan's effective exhaust velocity, c_eff = total dv / ln(m0 / m_final),
Tsiolkovsky) are reported; the plan warns above ``max_ratio``. The bound assumes impulsive
burns, two-body motion and exactly circular end orbits, so a plan between near-circular
orbits can come in slightly under it: that passes, with a note. The check is skipped when
an end orbit is not near-circular, the final orbit is unbound, there are no burns, or the
change is too small to judge (station-keeping).
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass

import numpy as np

from service.dynamics.bodies import G0_M_S2
from service.dynamics.plane_change import combined_change_delta_v_km_s, hohmann_with_plane_change
from service.dynamics.rocket import propellant_for_delta_v_kg
from service.dynamics.transfers import cheaper_of, vis_viva_km_s
from service.plugin_api import Arc, Check, Context, Finding, Parameter, Status, hookimpl

# A bound below this is rounding noise of an unchanged orbit, whatever min_bound_m_s says.
_FLOOR_M_S = 1e-6


@dataclass(frozen=True)
class Bound:
    """The least impulsive delta-v (m/s) between two circular orbits and how it is flown.

    ``method`` is "Hohmann" or "bi-elliptic"; ``rb_km`` the bi-elliptic apoapsis (inf for
    the limit, None for Hohmann); ``plane_change_rad`` the angle between the orbit planes.
    ``note`` says why the bi-elliptic transfer was left out, when it was.
    """

    delta_v_m_s: float
    method: str
    r1_km: float
    r2_km: float
    rb_km: float | None
    plane_change_rad: float
    note: str = ""


def plane_angle_rad(first: Arc, second: Arc) -> float:
    """Angle between the two arcs' angular-momentum vectors h = r x v, rad, in [0, pi]."""
    h1 = np.cross(first.r_start_km, first.v_start_km_s)
    h2 = np.cross(second.r_start_km, second.v_start_km_s)
    return float(math.atan2(np.linalg.norm(np.cross(h1, h2)), float(np.dot(h1, h2))))


def _bi_elliptic_turning_at_rb_km_s(r1: float, rb: float, r2: float, di: float, mu: float):
    """Bi-elliptic transfer with the whole plane change in the burn at rb (Vallado Alg. 37, 42)."""
    a1, a2 = 0.5 * (r1 + rb), 0.5 * (rb + r2)
    dv1 = abs(float(vis_viva_km_s(r1, a1, mu)) - math.sqrt(mu / r1))
    dv2 = float(
        combined_change_delta_v_km_s(vis_viva_km_s(rb, a1, mu), vis_viva_km_s(rb, a2, mu), di)
    )
    dv3 = abs(math.sqrt(mu / r2) - float(vis_viva_km_s(r2, a2, mu)))
    return dv1 + dv2 + dv3


def lower_bound(
    r1_km: float, r2_km: float, di_rad: float, mu_km3_s2: float, rb_max_km: float | None
) -> Bound:
    """The cheapest of Hohmann (with the plane change split optimally) and bi-elliptic.

    Coplanar (``di_rad`` 0): ``cheaper_of`` (Vallado 4th ed. Algorithms 36 and 37). With a
    plane change: ``hohmann_with_plane_change`` (Algorithm 42) against the bi-elliptic
    transfer turning the plane at rb (free in the rb -> infinity limit, whose total is then
    the coplanar one). ``rb_max_km`` None means the limit; a cap below the larger radius
    leaves only Hohmann. With a cap and a plane change the bi-elliptic transfer is priced at
    the cap only: coplanar, the family's cheapest is at one end of [max(r1, r2), cap]
    (``cheaper_of``), and the other end is the Hohmann transfer, priced with its best split;
    with a turn an rb inside the range could cost a little less, so the bound may then
    lie slightly high.
    """
    mu = mu_km3_s2
    note = ""
    if rb_max_km is not None and rb_max_km < max(r1_km, r2_km):
        coplanar = cheaper_of(r1_km, r2_km, mu)
        bi_total, rb = math.inf, None
        note = (
            f"; no bi-elliptic transfer fits under the {rb_max_km:.1f} km intermediate-radius cap"
        )
    else:
        coplanar = cheaper_of(r1_km, r2_km, mu, rb_max_km)
        rb = float(coplanar.bi_elliptic_rb_km)
        bi_total = float(coplanar.bi_elliptic_total_km_s)
        if di_rad > 0.0 and rb_max_km is not None:
            bi_total = _bi_elliptic_turning_at_rb_km_s(r1_km, rb, r2_km, di_rad, mu)
    if di_rad > 0.0:
        hohmann_total = float(hohmann_with_plane_change(r1_km, r2_km, di_rad, mu).total_km_s)
    else:
        hohmann_total = float(coplanar.hohmann_total_km_s)
    if bi_total < hohmann_total:
        return Bound(1000.0 * bi_total, "bi-elliptic", r1_km, r2_km, rb, di_rad, note)
    return Bound(1000.0 * hohmann_total, "Hohmann", r1_km, r2_km, None, di_rad, note)


def _describe(bound: Bound) -> str:
    ends = f"{bound.r1_km:.1f} km -> {bound.r2_km:.1f} km"
    degrees = math.degrees(bound.plane_change_rad)
    if bound.method == "Hohmann":
        if bound.plane_change_rad == 0.0:
            return f"Hohmann transfer {ends}, coplanar{bound.note}"
        return (
            f"Hohmann transfer {ends} with a {degrees:.3f} deg plane change split optimally "
            f"between its two burns{bound.note}"
        )
    if bound.rb_km is not None and math.isinf(bound.rb_km):
        how = f"bi-elliptic transfer {ends} in the rb -> infinity limit (approached, never reached)"
        turn = f", with the {degrees:.3f} deg plane change made there at no cost"
    else:
        how = f"bi-elliptic transfer {ends} by way of a {bound.rb_km:.1f} km apoapsis"
        turn = f", with the {degrees:.3f} deg plane change made there"
    return how + (turn if bound.plane_change_rad > 0.0 else ", coplanar")


def _signed(value: float, digits: int) -> str:
    """``value`` with its sign, never "-0.00"."""
    text = f"{value:+.{digits}f}"
    return f"+{0.0:.{digits}f}" if float(text) == 0.0 else text


class TransferEfficiency(Check):
    id = "transfer-efficiency"
    version = "1"
    summary = "plan delta-v against the Hohmann / bi-elliptic / plane-change lower bound"
    parameters = {
        "max_ratio": Parameter(
            1.10,
            "ratio",
            "lower",
            "warn when the plan spends more than 110 % of the impulsive lower bound (common "
            "practice)",
        ),
        "max_eccentricity": Parameter(
            0.01,
            "dimensionless",
            None,
            "the bound is for circular orbits: beyond this eccentricity of the initial or final "
            "orbit the check is skipped (an applicability limit, not a flight rule)",
        ),
        # No stricter direction: unset (the rb -> infinity limit) gives the lowest bound, so
        # setting any cap raises the bound and loosens the check; only a profile may set it.
        "max_intermediate_radius_km": Parameter(
            None,
            "km",
            None,
            "largest apoapsis radius a bi-elliptic transfer may reach; unset means the rb -> "
            "infinity limit (Vallado 4th ed. Algorithm 37)",
        ),
        "min_bound_m_s": Parameter(
            1.0,
            "m/s",
            None,
            "below this bound the orbit change is station-keeping and the ratio means nothing: "
            "skipped (common practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        trajectory = context.trajectory
        if not trajectory.maneuvers:
            yield Finding(Status.SKIPPED, "the plan has no burns: there is no transfer to judge")
            return
        first, last = trajectory.arcs[0], trajectory.arcs[-1]
        if not last.bound:
            yield Finding(
                Status.SKIPPED,
                f"the final orbit is unbound (eccentricity {last.eccentricity:.4f}): the bound "
                "is for transfers between closed circular orbits",
            )
            return
        max_e = float(params["max_eccentricity"])
        for name, arc in (("initial", first), ("final", last)):
            if arc.eccentricity > max_e:
                yield Finding(
                    Status.SKIPPED,
                    f"the {name} orbit's eccentricity {arc.eccentricity:.4f} exceeds "
                    f"{max_e:.4f}: the bound assumes near-circular orbits (Hohmann and "
                    "bi-elliptic transfers between circular orbits)",
                    arc.eccentricity,
                    max_e,
                    "dimensionless",
                )
                return
        rb_max = params.get("max_intermediate_radius_km")
        mu = context.body.mu_km3_s2
        di = plane_angle_rad(first, last)
        bound = lower_bound(
            first.semi_major_axis_km,
            last.semi_major_axis_km,
            di,
            mu,
            None if rb_max is None else float(rb_max),
        )
        min_bound = float(params.get("min_bound_m_s") or 0.0)
        if bound.delta_v_m_s < max(min_bound, _FLOOR_M_S):
            yield Finding(
                Status.SKIPPED,
                f"the orbit change is negligible: its lower bound {bound.delta_v_m_s:.3f} m/s is "
                f"below {min_bound:.3f} m/s (station-keeping or a trim), so the ratio would mean "
                "nothing",
                bound.delta_v_m_s,
                min_bound,
                "m/s",
            )
            return
        yield _judge(context, bound, float(params["max_ratio"]), first, last, max_e)


def _judge(
    context: Context, bound: Bound, max_ratio: float, first: Arc, last: Arc, max_e: float
) -> Finding:
    trajectory = context.trajectory
    plan_m_s = trajectory.total_delta_v_m_s
    ratio = plan_m_s / bound.delta_v_m_s
    m0, m_final = trajectory.initial_mass_kg, trajectory.final_mass_kg
    # The plan's effective exhaust velocity, c_eff = dv / ln(m0 / m_final) (Tsiolkovsky).
    c_eff = plan_m_s / math.log(m0 / m_final)
    bound_kg = float(propellant_for_delta_v_kg(m0, bound.delta_v_m_s, c_eff / G0_M_S2))
    excess_m_s = plan_m_s - bound.delta_v_m_s
    excess_kg = trajectory.total_propellant_kg - bound_kg
    head = (
        f"the plan's {plan_m_s:.2f} m/s is {ratio:.4f} times the {bound.delta_v_m_s:.2f} m/s "
        f"lower bound ({_describe(bound)}): excess {_signed(excess_m_s, 2)} m/s and "
        f"{_signed(excess_kg, 3)} kg of propellant (effective exhaust velocity {c_eff:.1f} m/s)"
    )
    assumptions = (
        f"; assumes impulsive burns, two-body motion and circular orbits of the initial and "
        f"final semi-major axes (eccentricities {first.eccentricity:.4f} and "
        f"{last.eccentricity:.4f}, at most {max_e:.4f})"
    )
    if ratio > max_ratio:
        status = Status.WARN
        verdict = f", {ratio - max_ratio:.4f} above the {max_ratio:.4f} ratio limit"
    else:
        status = Status.PASS
        verdict = f", within the {max_ratio:.4f} ratio limit"
        if ratio < 1.0:
            verdict += (
                "; the plan comes in under the bound, as one between near-circular (not exactly "
                "circular) orbits can"
            )
    return Finding(status, head + verdict + assumptions, ratio, max_ratio, "ratio")


@hookimpl
def register_checks() -> list[Check]:
    return [TransferEfficiency()]
