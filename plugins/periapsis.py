"""periapsis-floor: every coast arc's orbit stays clear of the body and its atmosphere.

Each arc is judged on its own orbit, not only on the part flown: if the next
burn is missed the spacecraft stays on that orbit, so an intermediate arc whose
periapsis is too low fails even when the next burn comes before periapsis. The
lowest altitude actually flown before the next burn is reported beside it.

The floor is the central body's (drag for Earth, terrain for the Moon,
atmosphere and terrain for Mars), raised by a plan's own ``min_altitude_km``.
An unbound arc fails unless escape is allowed; then the lowest altitude still
ahead on it (periapsis if inbound, the arc's start if outbound) is judged.
Altitudes are above the equatorial-radius sphere, as everywhere in burnproof.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

import numpy as np

from service.dynamics.bodies import Body
from service.dynamics.epochs import format_utc
from service.plugin_api import Arc, Check, Context, Finding, Parameter, Status, hookimpl


def _flown(arc: Arc, judged_km: float) -> str:
    """The lowest altitude actually flown on the arc, when it differs from the judged one."""
    if f"{arc.lowest_altitude_km:.1f}" == f"{judged_km:.1f}":
        return ""
    where = "before the next burn" if arc.end is not None else "on this arc"
    return (
        f"; lowest altitude actually flown {where}: {arc.lowest_altitude_km:.1f} km at "
        f"{format_utc(arc.lowest_altitude_epoch)}"
    )


def _impact(arc: Arc, what: str, altitude_km: float, floor_km: float) -> str:
    head = (
        f"impact: {what} {altitude_km:.1f} km is {-altitude_km:.1f} km below the surface "
        f"({floor_km - altitude_km:.1f} km below the {floor_km:.1f} km floor)"
    )
    lowest = f"{arc.lowest_altitude_km:.1f} km at {format_utc(arc.lowest_altitude_epoch)}"
    if arc.lowest_altitude_km < 0.0:
        when = " before the next burn" if arc.end is not None else ""
        return f"{head}; the spacecraft reaches the surface{when} (lowest point {lowest})"
    return (
        f"{head}; the next burn comes first (lowest altitude actually flown {lowest}), "
        "but the spacecraft would hit the surface if that burn were missed"
    )


def _judge(
    arc: Arc, what: str, altitude_km: float, floor_km: float, margin_km: float, prefix: str
) -> Finding:
    """Impact below 0 km, fail below the floor, warn inside the margin, else pass."""
    if altitude_km < 0.0:
        status, message = Status.FAIL, _impact(arc, what, altitude_km, floor_km)
        return Finding(status, prefix + message, altitude_km, floor_km, "km", arc=arc.index)
    if altitude_km < floor_km:
        status = Status.FAIL
        message = (
            f"{what} {altitude_km:.1f} km is {floor_km - altitude_km:.1f} km below the "
            f"{floor_km:.1f} km floor"
        )
    elif altitude_km < floor_km + margin_km:
        status = Status.WARN
        message = (
            f"{what} {altitude_km:.1f} km is only {altitude_km - floor_km:.1f} km above the "
            f"{floor_km:.1f} km floor, inside the {margin_km:.1f} km margin"
        )
    else:
        status = Status.PASS
        message = (
            f"{what} {altitude_km:.1f} km stays above the {floor_km:.1f} km floor "
            f"and its {margin_km:.1f} km margin"
        )
    message = prefix + message + _flown(arc, altitude_km)
    return Finding(status, message, altitude_km, floor_km, "km", arc=arc.index)


def _lowest_ahead_km(arc: Arc, body: Body) -> tuple[str, float]:
    """On an unbound arc: periapsis if still inbound at the arc's start, else the start itself.

    The radius of a hyperbola falls until periapsis and rises after it (trajectory
    equation, Vallado 4th ed. chapter 1), so the sign of r . v says which.
    """
    if float(np.dot(arc.r_start_km, arc.v_start_km_s)) < 0.0:
        return "periapsis still ahead", arc.periapsis_altitude_km
    start_km = float(body.altitude_km(float(np.linalg.norm(arc.r_start_km))))
    return "lowest altitude ahead (outbound from the arc's start)", start_km


def effective_floor_km(body: Body, params: Mapping[str, object]) -> float | None:
    """The floor this check judges against, from its resolved ``params``; None when unset.

    The higher of the body's floor (``<body>_min_altitude_km``) and the plan's own
    ``min_altitude_km``. The execution-dispersion check judges against the same floor.
    """
    body_floor = params.get(f"{body.name}_min_altitude_km")
    plan_floor = params.get("min_altitude_km")
    floors = [float(f) for f in (body_floor, plan_floor) if f is not None]
    return max(floors) if floors else None


class PeriapsisFloor(Check):
    id = "periapsis-floor"
    version = "1"
    summary = "every arc's periapsis above the body's floor; impact and escape arcs fail"
    parameters = {
        "min_altitude_km": Parameter(
            None,
            "km",
            "higher",
            "an extra floor for this plan; the higher of it and the body's floor applies",
        ),
        "earth_min_altitude_km": Parameter(
            200.0,
            "km",
            "higher",
            "below about 200 km drag brings a LEO orbit down within days (common practice)",
        ),
        "earth_margin_km": Parameter(50.0, "km", "higher", "warn band above the Earth floor"),
        "moon_min_altitude_km": Parameter(
            20.0,
            "km",
            "higher",
            "highest lunar terrain about 10.8 km above the 1737.4 km mean radius (LOLA, Smith "
            "et al. 2010, from memory); the rest covers orbit-knowledge error",
        ),
        "moon_margin_km": Parameter(10.0, "km", "higher", "warn band above the Moon floor"),
        "mars_min_altitude_km": Parameter(
            150.0,
            "km",
            "higher",
            "clear of aerobraking densities (about 100-130 km) and of Olympus Mons' about 22 km "
            "(common practice, from memory)",
        ),
        "mars_margin_km": Parameter(50.0, "km", "higher", "warn band above the Mars floor"),
        "allow_escape": Parameter(
            False,
            "bool",
            "lower",
            "whether an unbound (escape) arc is acceptable; false is the stricter value",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        body = context.body
        floor_km = effective_floor_km(body, params)
        if floor_km is None:
            yield Finding(
                Status.SKIPPED,
                f"no periapsis floor is set for {body.name!r}: set min_altitude_km",
            )
            return
        margin_km = float(params.get(f"{body.name}_margin_km") or 0.0)
        allow_escape = bool(params["allow_escape"])
        for arc in context.trajectory.arcs:
            if arc.bound:
                yield _judge(arc, "periapsis", arc.periapsis_altitude_km, floor_km, margin_km, "")
                continue
            c3 = 2.0 * arc.specific_energy_km2_s2
            unbound = (
                f"the orbit is unbound (eccentricity {arc.eccentricity:.4f}, C3 {c3:.3f} km^2/s^2)"
            )
            what, altitude = _lowest_ahead_km(arc, body)
            if allow_escape:
                prefix = f"escape allowed, {unbound}: "
                yield _judge(arc, what, altitude, floor_km, margin_km, prefix)
                continue
            # C3 >= 0 is what makes the arc an escape; it is the number judged, against 0.
            message = (
                f"escape: {unbound} and escape is not allowed; {what} {altitude:.1f} km "
                f"against the {floor_km:.1f} km floor" + _flown(arc, altitude)
            )
            yield Finding(Status.FAIL, message, c3, 0.0, "km2/s2", arc=arc.index)


@hookimpl
def register_checks() -> list[Check]:
    return [PeriapsisFloor()]
