"""sun-exclusion: the angle between the thrust axis and the Sun at each burn's ignition and cutoff.

Sensors, radiators and optics on the thrust side must not look into the Sun while the engine
fires: a keep-out cone around the thrust axis. The thrust axis is the direction of the burn's
inertial delta-v, held fixed in inertial space for the burn (the impulsive model's attitude);
the Sun's direction is taken from the spacecraft, the Sun from ``service.dynamics.sun`` minus
the spacecraft's position on the flown trajectory.

A spacecraft may name another body axis that must also keep out of the Sun, at
``protected_axis_offset_deg`` from the thrust axis (a star-tracker boresight, say). Roll about
the thrust axis is not planned, so that axis may lie anywhere on a cone of that half-angle
around the thrust axis, and the check takes the worst case over the cone: it comes as close
as ``max(0, alpha - offset)`` to the Sun and as far as ``min(180, alpha + offset)``, alpha
being the thrust axis's angle to the Sun (the spherical triangle inequality). An optional
keep-in maximum (for a Sun sensor or an array that must see the Sun) uses the far side.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping

import numpy as np

from plugins._sun_window import sun_model_gap
from service.dynamics.sun import sun_position_from_body_km
from service.dynamics.trajectory import burn_end_positions_km
from service.plugin_api import BurnResult, Check, Context, Finding, Parameter, Status, hookimpl


def angle_deg(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Angle between the rows of ``a`` and ``b`` (N, 3), degrees, accurate near 0 and 180."""
    cross = np.linalg.norm(np.cross(a, b), axis=-1)
    return np.degrees(np.arctan2(cross, np.einsum("ij,ij->i", a, b)))


class SunExclusion(Check):
    id = "sun-exclusion"
    version = "1"
    summary = "angle between the thrust axis and the Sun at ignition and cutoff vs a keep-out cone"
    parameters = {
        "keep_out_half_angle_deg": Parameter(
            30.0,
            "deg",
            "higher",
            "no Sun within this angle of the thrust axis; star trackers and thrust-side "
            "sensors are commonly kept 25 to 45 deg from the Sun (common practice)",
        ),
        "warn_margin_deg": Parameter(
            5.0,
            "deg",
            "higher",
            "warn when the Sun is less than this outside the keep-out cone, for attitude and "
            "timing error (common practice)",
        ),
        "keep_in_max_deg": Parameter(
            None,
            "deg",
            "lower",
            "optional: the Sun must stay within this angle of the thrust axis (a Sun sensor or "
            "array that must see it); off unless a profile or request sets it",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        keep_out = float(params["keep_out_half_angle_deg"])
        margin = float(params["warn_margin_deg"])
        keep_in = params["keep_in_max_deg"]
        keep_in = None if keep_in is None else float(keep_in)
        if not 0.0 <= keep_out <= 180.0:
            raise ValueError(f"keep_out_half_angle_deg must be 0 to 180 deg, not {keep_out}")
        if margin < 0.0:
            raise ValueError(f"warn_margin_deg must not be negative, not {margin}")
        if keep_in is not None and not 0.0 <= keep_in <= 180.0:
            raise ValueError(f"keep_in_max_deg must be 0 to 180 deg, not {keep_in}")
        trajectory = context.trajectory
        burns = [b for b in trajectory.maneuvers if np.linalg.norm(b.delta_v_inertial_m_s) > 0.0]
        if not burns:
            yield Finding(Status.SKIPPED, "the plan has no burns with a thrust direction to judge")
            return
        epochs = np.array([[b.ignition, b.cutoff] for b in burns], dtype="datetime64[ms]")
        epochs = epochs.reshape(-1)
        gap = sun_model_gap(epochs)
        if gap:
            yield Finding(Status.SKIPPED, gap)
            return
        r_km = burn_end_positions_km(trajectory, burns)
        sun_km = np.reshape(sun_position_from_body_km(context.body.name, epochs), (-1, 3))
        thrust = np.repeat(np.array([b.delta_v_inertial_m_s for b in burns], dtype=float), 2, 0)
        alpha = angle_deg(thrust, sun_km - r_km).reshape(len(burns), 2)
        offset = context.plan.spacecraft.protected_axis_offset_deg
        offset = 0.0 if offset is None else float(offset)
        for burn, (at_ignition, at_cutoff) in zip(burns, alpha, strict=True):
            yield _keep_out(burn, float(at_ignition), float(at_cutoff), offset, keep_out, margin)
            if keep_in is not None:
                yield _keep_in(burn, float(at_ignition), float(at_cutoff), offset, keep_in)


def _axis(offset: float) -> str:
    if offset == 0.0:
        return "the thrust axis"
    return f"the protected axis ({offset:.1f} deg from the thrust axis, at any roll)"


def _angles(at_ignition: float, at_cutoff: float, offset: float) -> str:
    return (
        f"thrust axis {at_ignition:.2f} deg from the Sun at ignition and {at_cutoff:.2f} deg "
        "at cutoff"
        + ("" if offset == 0.0 else f", protected axis {offset:.1f} deg from the thrust axis")
    )


def _keep_out(
    burn: BurnResult,
    at_ignition: float,
    at_cutoff: float,
    offset: float,
    keep_out: float,
    margin: float,
) -> Finding:
    closest = max(0.0, min(at_ignition, at_cutoff) - offset)
    angles = _angles(at_ignition, at_cutoff, offset)
    axis = _axis(offset)
    if closest < keep_out:
        status = Status.FAIL
        message = (
            f"{axis} comes within {closest:.2f} deg of the Sun, {keep_out - closest:.2f} deg "
            f"inside the {keep_out:.2f} deg keep-out cone ({angles})"
        )
    elif closest < keep_out + margin:
        status = Status.WARN
        message = (
            f"{axis} comes within {closest:.2f} deg of the Sun, only {closest - keep_out:.2f} "
            f"deg outside the {keep_out:.2f} deg keep-out cone, inside the {margin:.2f} deg "
            f"margin ({angles})"
        )
    else:
        status = Status.PASS
        message = (
            f"{axis} stays at least {closest:.2f} deg from the Sun, outside the {keep_out:.2f} "
            f"deg keep-out cone and its {margin:.2f} deg margin ({angles})"
        )
    return Finding(status, message, closest, keep_out, "deg", maneuver=burn.id)


def _keep_in(
    burn: BurnResult, at_ignition: float, at_cutoff: float, offset: float, keep_in: float
) -> Finding:
    farthest = min(180.0, max(at_ignition, at_cutoff) + offset)
    angles = _angles(at_ignition, at_cutoff, offset)
    axis = _axis(offset)
    if farthest > keep_in:
        message = (
            f"{axis} is up to {farthest:.2f} deg from the Sun, {farthest - keep_in:.2f} deg "
            f"beyond the {keep_in:.2f} deg keep-in maximum ({angles})"
        )
        return Finding(Status.FAIL, message, farthest, keep_in, "deg", maneuver=burn.id)
    message = (
        f"{axis} stays within {farthest:.2f} deg of the Sun, inside the {keep_in:.2f} deg "
        f"keep-in maximum ({angles})"
    )
    return Finding(Status.PASS, message, farthest, keep_in, "deg", maneuver=burn.id)


@hookimpl
def register_checks() -> list[Check]:
    return [SunExclusion()]
