"""target-orbit: the final orbit within tolerance of the plan's ``target_orbit``, with a trim.

The last coast arc is the orbit the plan leaves the spacecraft on. Its periapsis and
apoapsis altitudes (and its inclination, when the target gives one) are compared with the
target: each finding carries the signed miss (achieved - target) against the plan's own
tolerance. The quantity with the larger miss in km, and the inclination on its own, also
get the single impulse that would close that miss, computed in closed form:

* apoapsis: a tangential burn at periapsis, v_p' - v_p, with v_p' from vis-viva on the
  orbit whose semi-major axis is a + d / 2 (d the wanted change of apoapsis radius);
* periapsis: the same at apoapsis;
* inclination: a plane change at the node, 2 v_t sin(|di| / 2), with v_t = h / r the
  horizontal speed there (the radial speed is untouched); the node farther from the body
  is chosen, where v_t is smaller.

Sources: vis-viva, Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013),
chapter 2, and Curtis, Orbital Mechanics for Engineering Students, 3rd ed. (2014),
chapters 2 and 6; the plane change, Vallado 4th ed. Algorithm 39 and Curtis 3rd ed.
chapter 6. Each trim closes its own miss only; it leaves the other quantities as they are
(a periapsis burn keeps the periapsis radius, a node burn keeps the shape of the orbit).
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass

from service.dynamics.elements import EQUATORIAL_SIN_INCLINATION, apoapsis_radius_km
from service.plugin_api import Arc, Check, Context, Finding, Parameter, Status, hookimpl

APSIDES = ("periapsis", "apoapsis")


@dataclass(frozen=True)
class Trim:
    """One impulse that closes one miss.

    ``quantity`` is what it corrects ("periapsis", "apoapsis" or "inclination"); ``where``
    the point of the orbit to burn at ("periapsis", "apoapsis", "ascending node",
    "descending node", or for an equatorial orbit "apoapsis (any point serves as a node)").
    ``delta_v_m_s`` is the impulse's size, signed for the tangential burns (+ along the
    velocity, - against it), a magnitude for the plane change. ``rtn_m_s`` gives the same
    impulse in the RTN frame at the burn point (radial, transverse, orbit normal), ready
    for a maneuver; ``radius_km`` is the radius of the burn point.
    """

    quantity: str
    where: str
    delta_v_m_s: float
    rtn_m_s: tuple[float, float, float]
    radius_km: float


def _apsides_km(arc: Arc) -> tuple[float, float]:
    return float(arc.periapsis_radius_km), float(apoapsis_radius_km(arc.elements))


def apsis_trim(arc: Arc, mu_km3_s2: float, quantity: str, change_km: float) -> Trim | None:
    """The tangential burn that moves the apoapsis (or periapsis) radius by ``change_km``.

    To move one apsis the burn is made at the other, whose radius it keeps: the new orbit
    has semi-major axis a + change / 2, and the burn is the difference of the vis-viva
    speeds v^2 = mu (2 / r - 1 / a) at the burn radius (Vallado 4th ed. chapter 2; Curtis
    3rd ed. chapters 2 and 6). ``arc`` must be bound. Returns None when no single
    tangential burn can do it (the moved apsis would reach the body's centre).
    """
    if quantity not in APSIDES:
        raise ValueError(f"quantity must be one of {APSIDES}, got {quantity!r}")
    if not arc.bound:
        raise ValueError("an unbound orbit has no apoapsis to trim")
    rp, ra = _apsides_km(arc)
    burn_r, moved_r = (rp, ra) if quantity == "apoapsis" else (ra, rp)
    if moved_r + change_km <= 0.0:
        return None
    a_km = 0.5 * (rp + ra)
    new_a_km = a_km + 0.5 * change_km
    v_before = math.sqrt(mu_km3_s2 * (2.0 / burn_r - 1.0 / a_km))
    v_after = math.sqrt(mu_km3_s2 * (2.0 / burn_r - 1.0 / new_a_km))
    dv = 1000.0 * (v_after - v_before)
    where = "periapsis" if quantity == "apoapsis" else "apoapsis"
    return Trim(quantity, where, dv, (0.0, dv, 0.0), burn_r)


def inclination_trim(arc: Arc, mu_km3_s2: float, change_rad: float) -> Trim:
    """The plane change at a node that changes the inclination by ``change_rad`` (signed).

    dv = 2 v_t sin(|di| / 2) with v_t = h / r, the horizontal speed at the node, whose
    radius is r = p / (1 +- e cos(argp)) (Vallado 4th ed. Algorithm 39; Curtis 3rd ed.
    chapter 6). The node farther from the body is chosen (the ascending one on a tie).
    The impulse turns the horizontal velocity about the radius vector: in RTN it is
    (0, v_t (cos di - 1), +-v_t sin |di|); towards the orbit normal raises the
    inclination at the ascending node and lowers it at the descending one. For an
    equatorial orbit the node line is free: the burn is placed at apoapsis. ``arc`` must
    be bound.
    """
    if not arc.bound:
        raise ValueError("an unbound orbit has no node to come back to for a plane change")
    elements = arc.elements
    p_km, e = float(elements.p_km), float(elements.e)
    h = math.sqrt(mu_km3_s2 * p_km)
    equatorial = math.sin(float(elements.i_rad)) < EQUATORIAL_SIN_INCLINATION
    if equatorial:
        radius = float(apoapsis_radius_km(elements))
        where = "apoapsis (any point serves as a node)"
        sign = 1.0
    else:
        e_cos = e * math.cos(float(elements.argp_rad))
        ascending_r, descending_r = p_km / (1.0 + e_cos), p_km / (1.0 - e_cos)
        ascending = ascending_r >= descending_r
        radius = ascending_r if ascending else descending_r
        where = "ascending node" if ascending else "descending node"
        raise_it = change_rad > 0.0
        sign = 1.0 if raise_it == ascending else -1.0
    v_t = h / radius
    angle = abs(change_rad)
    dv = 2000.0 * v_t * math.sin(0.5 * angle)
    rtn = (0.0, 1000.0 * v_t * (math.cos(angle) - 1.0), sign * 1000.0 * v_t * math.sin(angle))
    return Trim("inclination", where, dv, rtn, radius)


def _trim_text(trim: Trim | None, what: str) -> str:
    if trim is None:
        return f"; no single tangential burn can close the {what} miss"
    if f"{abs(trim.delta_v_m_s):.3f}" == "0.000":
        return ""  # under half a mm/s: nothing to burn
    if trim.quantity == "inclination":
        return (
            f"; a plane change of {trim.delta_v_m_s:.3f} m/s at the {trim.where} "
            f"(radius {trim.radius_km:.1f} km) would close it (2 v_t sin(di/2), Vallado 4th ed. "
            "Algorithm 39)"
        )
    sense = "along the velocity" if trim.delta_v_m_s >= 0.0 else "against the velocity"
    return (
        f"; a tangential burn of {trim.delta_v_m_s:+.3f} m/s ({sense}) at {trim.where} would "
        f"bring the {trim.quantity} to the target (vis-viva)"
    )


def _judge(
    what: str,
    achieved: float,
    target: float,
    tolerance: float,
    warn_fraction: float,
    unit: str,
    arc_index: int,
    trim: str,
) -> Finding:
    """Fail beyond the tolerance, warn beyond the warning band, else pass."""
    miss = achieved - target
    digits = 3 if unit == "deg" else 1
    warn_at = warn_fraction * tolerance
    shown = f"{abs(miss):.{digits + 1}f}"
    if float(shown) == 0.0:
        where, signed = "on", f"+{shown}"
    else:
        side = "above" if miss > 0.0 else "below"
        where, signed = f"{shown} {unit} {side}", f"{miss:+.{digits + 1}f}"
    head = (
        f"{what} {achieved:.{digits}f} {unit} is {where} the {target:.{digits}f} {unit} target "
        f"(miss {signed} {unit})"
    )
    tol = f"{tolerance:.{digits + 1}f} {unit}"
    if abs(miss) > tolerance:
        status = Status.FAIL
        body = f", {abs(miss) - tolerance:.{digits + 1}f} {unit} beyond the {tol} tolerance"
    elif abs(miss) > warn_at:
        status = Status.WARN
        body = (
            f", inside the {tol} tolerance but beyond its warning band of "
            f"{warn_at:.{digits + 1}f} {unit} ({100.0 * warn_fraction:.0f} %)"
        )
    else:
        status = Status.PASS
        body = f", within the {tol} tolerance"
    return Finding(status, head + body + trim, miss, tolerance, unit, arc=arc_index)


class TargetOrbit(Check):
    id = "target-orbit"
    version = "1"
    summary = "final orbit's periapsis, apoapsis and inclination within the target's tolerance"
    parameters = {
        "warn_fraction": Parameter(
            0.8,
            "fraction",
            "lower",
            "warn when a miss uses more than this fraction of the plan's tolerance (common "
            "practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        target = context.plan.target_orbit
        if target is None:
            yield Finding(Status.SKIPPED, "the plan has no target_orbit to judge the orbit by")
            return
        warn_fraction = float(params["warn_fraction"])
        mu = context.body.mu_km3_s2
        arc = context.trajectory.arcs[-1]
        tol_km = float(target.tolerance_km)
        wanted = {
            "periapsis": float(target.periapsis_altitude_km),
            "apoapsis": float(target.apoapsis_altitude_km),
        }
        achieved = {"periapsis": float(arc.periapsis_altitude_km)}
        if arc.bound:
            achieved["apoapsis"] = float(arc.apoapsis_altitude_km)
        misses = {what: achieved[what] - wanted[what] for what in achieved}
        # The trim closes the larger of the two misses in km (periapsis on a tie).
        larger = max(misses, key=lambda what: (abs(misses[what]), what == "periapsis"))
        for what in APSIDES:
            if what not in misses:
                yield _unbound(arc, wanted[what])
                continue
            trim = ""
            if arc.bound and what == larger and misses[what] != 0.0:
                trim = _trim_text(apsis_trim(arc, mu, what, -misses[what]), what)
            yield _judge(
                what, achieved[what], wanted[what], tol_km, warn_fraction, "km", arc.index, trim
            )
        if target.inclination_deg is not None:
            achieved_deg = math.degrees(arc.inclination_rad)
            miss_deg = achieved_deg - target.inclination_deg
            trim = ""
            if arc.bound and miss_deg != 0.0:
                trim = _trim_text(inclination_trim(arc, mu, -math.radians(miss_deg)), "")
            yield _judge(
                "inclination",
                achieved_deg,
                float(target.inclination_deg),
                float(target.tolerance_deg),
                warn_fraction,
                "deg",
                arc.index,
                trim,
            )


def _unbound(arc: Arc, target_km: float) -> Finding:
    c3 = 2.0 * arc.specific_energy_km2_s2
    message = (
        f"the final orbit is unbound (eccentricity {arc.eccentricity:.4f}, C3 {c3:.3f} "
        f"km^2/s^2 against 0 for a closed orbit): it has no apoapsis to meet the "
        f"{target_km:.1f} km target"
    )
    return Finding(Status.FAIL, message, c3, 0.0, "km2/s2", arc=arc.index)


@hookimpl
def register_checks() -> list[Check]:
    return [TargetOrbit()]
