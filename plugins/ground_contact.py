"""ground-contact: which ground stations see the spacecraft at each burn's ignition and cutoff.

Most teams want a station in view when an engine starts and stops, to watch the burn's
telemetry and to stop it if it goes wrong. The stations are the profile's network (a site's
``[[stations]]``) and the plan's own ``ground_stations``; each sees the spacecraft when its
elevation above the local horizon is at or above the station's mask (``min_elevation_deg``).
Elevations are topocentric on the WGS 84 ellipsoid, the Earth turned by Greenwich mean
sidereal time (``service.dynamics.earth_rotation``; UT1 = UTC, no polar motion).

Rules: ``require-contact-at-ignition``, ``require-contact-at-cutoff`` or
``require-contact-at-both`` fail a burn with no station in view where the rule requires one;
an instant the rule does not require, and every instant under ``advisory``, warns instead.
A contact less than ``elevation_margin_deg`` above its mask warns: the pass may drop out with
a small timing or orbit error. Only the Earth has stations: other bodies are skipped.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence

import numpy as np

from service.dynamics.earth_rotation import look_angles
from service.dynamics.trajectory import burn_end_positions_km
from service.plugin_api import (
    BurnResult,
    Check,
    Context,
    Finding,
    GroundStation,
    Parameter,
    Status,
    hookimpl,
)

RULES = (
    "require-contact-at-ignition",
    "require-contact-at-cutoff",
    "require-contact-at-both",
    "advisory",
)
REQUIRED = {
    "require-contact-at-ignition": ("ignition",),
    "require-contact-at-cutoff": ("cutoff",),
    "require-contact-at-both": ("ignition", "cutoff"),
    "advisory": (),
}
INSTANTS = ("ignition", "cutoff")
SHOWN_STATIONS = 6  # a message names at most this many stations in view, best first


class GroundContact(Check):
    id = "ground-contact"
    version = "1"
    summary = "ground stations in view above their masks at each burn's ignition and cutoff"
    parameters = {
        "rule": Parameter(
            "advisory",
            "choice",
            None,
            "where a station must see the spacecraft; under advisory no contact only warns "
            "(the mission's operations rules)",
            choices=RULES,
        ),
        "elevation_margin_deg": Parameter(
            2.0,
            "deg",
            "higher",
            "warn when the best station is less than this above its mask (common practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        rule = str(params["rule"])
        margin = float(params["elevation_margin_deg"])
        if rule not in RULES:
            raise ValueError(f"rule must be one of {', '.join(RULES)}, not {rule!r}")
        if margin < 0.0:
            raise ValueError(f"elevation_margin_deg must not be negative, not {margin}")
        stations = tuple(context.ground_stations)
        burns = context.trajectory.maneuvers
        if context.body.name != "earth":
            yield Finding(
                Status.SKIPPED,
                "ground stations are on the Earth and this plan flies around "
                f"{'the Moon' if context.body.name == 'moon' else context.body.name.title()}",
            )
            return
        if not stations:
            yield Finding(
                Status.SKIPPED,
                "no ground stations: the profile has no station network and the plan lists "
                "no ground_stations",
            )
            return
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns to watch from the ground")
            return
        epochs = np.array([[b.ignition, b.cutoff] for b in burns], dtype="datetime64[ms]")
        epochs = epochs.reshape(-1)
        r_km = burn_end_positions_km(context.trajectory, burns)
        elevation_deg = np.empty((len(stations), epochs.size))
        for row, station in enumerate(stations):  # one vectorised call per station
            elevation_rad, _, _ = look_angles(
                r_km,
                np.radians(station.latitude_deg),
                np.radians(station.longitude_deg),
                station.height_km,
                epochs,
            )
            elevation_deg[row] = np.degrees(np.asarray(elevation_rad, dtype=float))
        required = REQUIRED[rule]
        for index, burn in enumerate(burns):
            for offset, instant in enumerate(INSTANTS):
                column = elevation_deg[:, 2 * index + offset]
                yield _judge(burn, instant, stations, column, rule, instant in required, margin)


def _judge(
    burn: BurnResult,
    instant: str,
    stations: Sequence[GroundStation],
    elevation_deg: np.ndarray,
    rule: str,
    required: bool,
    margin: float,
) -> Finding:
    masks = np.array([s.min_elevation_deg for s in stations], dtype=float)
    above = elevation_deg - masks
    best = int(np.argmax(above))
    value, limit = float(elevation_deg[best]), float(masks[best])
    name = stations[best].id
    if above[best] < 0.0:
        status = Status.FAIL if required else Status.WARN
        need = (
            f"the {rule} rule requires contact at {instant}"
            if required
            else f"contact at {instant} is advisory under the {rule} rule"
        )
        message = (
            f"no ground station sees the spacecraft at {instant}: the highest above its mask is "
            f"{name!r} at {value:.2f} deg, {limit - value:.2f} deg below its {limit:.2f} deg "
            f"mask; {need}"
        )
        return Finding(status, message, value, limit, "deg", maneuver=burn.id)
    in_view = sorted(np.flatnonzero(above >= 0.0), key=lambda k: (-above[k], stations[k].id))
    listed = ", ".join(
        f"{stations[k].id!r} at {elevation_deg[k]:.2f} deg (mask {masks[k]:.2f} deg)"
        for k in in_view[:SHOWN_STATIONS]
    )
    if len(in_view) > SHOWN_STATIONS:
        listed += f" and {len(in_view) - SHOWN_STATIONS} more"
    count = f"{len(in_view)} station{'' if len(in_view) == 1 else 's'}"
    if above[best] < margin:
        message = (
            f"at {instant} {count} in view, the best only {above[best]:.2f} deg above its mask, "
            f"within the {margin:.2f} deg margin: {listed}"
        )
        return Finding(Status.WARN, message, value, limit, "deg", maneuver=burn.id)
    message = (
        f"at {instant} {count} in view, the best {above[best]:.2f} deg above its mask, beyond "
        f"the {margin:.2f} deg margin: {listed}"
    )
    return Finding(Status.PASS, message, value, limit, "deg", maneuver=burn.id)


@hookimpl
def register_checks() -> list[Check]:
    return [GroundContact()]
