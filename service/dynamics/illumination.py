"""Sunlight along a planned trajectory: the sunlit fraction at any epoch and the next shadow change.

The trajectory gives body-centred states (``Trajectory.states_at``), ``sun`` the Sun seen from
the body, ``shadow`` the conical umbra/penumbra model (Montenbruck & Gill, Satellite Orbits,
2000, section 3.4.2) on a sphere of the body's equatorial radius.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from service.dynamics.shadow import PENUMBRA, SUNLIGHT, UMBRA, disc_angles_rad, sunlit_fraction
from service.dynamics.sun import SUN_RADIUS_KM, sun_position_from_body_km
from service.dynamics.timescales import epochs_ms
from service.dynamics.trajectory import Trajectory

# Root-finding tolerance in seconds: epochs carry milliseconds, nothing finer is meaningful.
_XTOL_S = 1e-3


def _geometry(trajectory: Trajectory, epochs: np.ndarray):
    r_km, _ = trajectory.states_at(epochs)
    sun_km = sun_position_from_body_km(trajectory.body.name, epochs.reshape(-1))
    return r_km, sun_km, trajectory.body.equatorial_radius_km


def sunlit_fraction_on(trajectory: Trajectory, epochs: ArrayLike) -> float | np.ndarray:
    """Fraction of the Sun's disc visible from the spacecraft on ``trajectory`` at ``epochs``.

    Montenbruck & Gill, Satellite Orbits (2000), section 3.4.2, eqs. 3.85-3.87
    (``shadow.sunlit_fraction``) with the trajectory's states and the Sun from
    ``sun.sun_position_from_body_km``. ``epochs`` UTC datetime64, one (a float) or (N,).
    """
    times = epochs_ms(epochs)
    fraction = np.asarray(sunlit_fraction(*_geometry(trajectory, times.reshape(-1))))
    return float(fraction[0]) if times.ndim == 0 else fraction.reshape(times.shape)


def _margins_rad(trajectory: Trajectory, epochs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Signed angular distances to the penumbra and umbra cones: c - (a + b) and c - (b - a).

    Negative inside the cone. ``sunlit_fraction`` gives 1 exactly where the first is >= 0 and 0
    exactly where the second is <= 0, so their signs are the shadow states.
    """
    a, b, c = disc_angles_rad(*_geometry(trajectory, epochs))
    return np.atleast_1d(c - (a + b)), np.atleast_1d(c - (b - a))


def _states(penumbra_margin: np.ndarray, umbra_margin: np.ndarray) -> np.ndarray:
    return np.where(
        penumbra_margin >= 0.0, SUNLIGHT, np.where(umbra_margin <= 0.0, UMBRA, PENUMBRA)
    )


def _offsets_to_epochs(epoch: np.datetime64, offsets_s: np.ndarray) -> np.ndarray:
    milliseconds = np.rint(np.asarray(offsets_s, dtype=float) * 1000.0).astype(np.int64)
    return epoch + milliseconds.astype("timedelta64[ms]")


def _grid_s(horizon_s: float, step_s: float) -> np.ndarray:
    """Sample offsets every ``step_s`` over [0, horizon_s], the horizon itself last."""
    for name, value in (("horizon_s", horizon_s), ("step_s", step_s)):
        if not math.isfinite(value) or value <= 0.0:
            raise ValueError(f"{name} must be positive and finite, got {value!r} s")
    count = math.ceil(horizon_s / step_s)
    return np.minimum(np.arange(count + 1) * float(step_s), float(horizon_s))


@dataclass(frozen=True)
class ShadowSamples:
    """The shadow state sampled every ``step_s`` from one epoch (see ``next_shadow_change``)."""

    offsets_s: np.ndarray
    states: np.ndarray


def sample_shadow_states(
    trajectory: Trajectory, epochs, horizons_s, step_s: float = 30.0
) -> list[ShadowSamples] | None:
    """The sampling pass of ``next_shadow_change`` for many start epochs in one vectorised call.

    One states_at and one Sun call for every sample of every epoch, instead of one per epoch;
    the states are those ``next_shadow_change`` would sample (a state can only differ where a
    cone margin is within rounding of zero). None when any sample's geometry cannot be
    computed (below the surface, say): ``next_shadow_change`` without samples then raises
    for exactly the epochs whose own samples fail.
    """
    survey = shadow_survey(
        trajectory, np.array([], dtype="datetime64[ms]"), epochs, horizons_s, step_s
    )
    return None if survey is None else survey[1]


def shadow_survey(
    trajectory: Trajectory, instants, epochs, horizons_s, step_s: float = 30.0
) -> tuple[np.ndarray, list[ShadowSamples]] | None:
    """``sunlit_fraction_on`` at ``instants`` and ``sample_shadow_states`` from ``epochs``,
    all from one states_at and one Sun call; None when any geometry cannot be computed
    (each function on its own then says what is wrong).
    """
    instants = epochs_ms(instants).reshape(-1)
    starts = [np.datetime64(epochs_ms(epoch), "ms") for epoch in epochs]
    grids = [_grid_s(float(h), step_s) for h in horizons_s]
    times = np.concatenate(
        [instants]
        + [_offsets_to_epochs(start, grid) for start, grid in zip(starts, grids, strict=True)]
    )
    if times.size == 0:
        return np.empty(0), []
    try:
        r_km, _ = trajectory.states_at(times)
        sun_km = np.reshape(sun_position_from_body_km(trajectory.body.name, times), (-1, 3))
        radius = trajectory.body.equatorial_radius_km
        count = instants.size
        fractions = np.atleast_1d(sunlit_fraction(r_km[:count], sun_km[:count], radius))
        a, b, c = disc_angles_rad(r_km[count:], sun_km[count:], radius)
    except (ValueError, ArithmeticError, RuntimeError):
        return None
    states = _states(np.atleast_1d(c - (a + b)), np.atleast_1d(c - (b - a)))
    bounds = np.cumsum([0] + [grid.size for grid in grids])
    samples = [
        ShadowSamples(grid, states[first:last])
        for grid, first, last in zip(grids, bounds[:-1], bounds[1:], strict=True)
    ]
    return fractions, samples


def _disc_angles_one(sat: list, sun: list, radius: float) -> tuple[float, float, float] | None:
    """``disc_angles_rad`` of one geometry in plain floats (numpy's arcsin and arctan2, the
    same sums in the same order: the same angles); None where that function would raise."""
    x, y, z = sat
    tx, ty, tz = sun[0] - x, sun[1] - y, sun[2] - z
    sat_distance = math.sqrt(x * x + y * y + z * z)
    sun_distance = math.sqrt(tx * tx + ty * ty + tz * tz)
    if not (sat_distance > radius and sun_distance > SUN_RADIUS_KM):
        return None
    a = float(np.arcsin(SUN_RADIUS_KM / sun_distance))
    b = float(np.arcsin(radius / sat_distance))
    nx, ny, nz = -x, -y, -z
    cx, cy, cz = ny * tz - nz * ty, nz * tx - nx * tz, nx * ty - ny * tx
    cross = math.sqrt(cx * cx + cy * cy + cz * cz)
    c = float(np.arctan2(cross, nx * tx + ny * ty + nz * tz))
    return a, b, c


def _margin_at(trajectory: Trajectory, start: np.datetime64, offset_s: float, which: int) -> float:
    """One cone margin (0: penumbra, 1: umbra) at ``start + offset_s``; the root search's."""
    at = _offsets_to_epochs(start, np.array([offset_s]))
    r_km, _ = trajectory.states_at(at)
    sun_km = np.reshape(sun_position_from_body_km(trajectory.body.name, at), (-1, 3))
    radius = trajectory.body.equatorial_radius_km
    angles = None
    if type(radius) is float and math.isfinite(radius) and radius > 0.0:
        sat, sun = r_km[0].tolist(), sun_km[0].tolist()
        if all(map(math.isfinite, sat + sun)):
            angles = _disc_angles_one(sat, sun, radius)
    if angles is None:  # the array code says what is wrong
        return float(_margins_rad(trajectory, at)[which][0])
    a, b, c = angles
    return c - (a + b) if which == 0 else c - (b - a)


def next_shadow_change(
    trajectory: Trajectory,
    epoch: np.datetime64,
    horizon_s: float,
    step_s: float = 30.0,
    samples: ShadowSamples | None = None,
) -> tuple[float, str] | None:
    """Seconds from ``epoch`` to the next change of shadow state within ``horizon_s``, and the
    state it changes to ("sunlight", "penumbra" or "umbra"); None if there is none.

    The state (see ``shadow.shadow_state``) is sampled every ``step_s`` seconds over
    [epoch, epoch + horizon_s] in one vectorised pass; at the first sample whose state differs
    from the state at ``epoch``, the crossed cone is the one bordering the starting state
    (sunlight and umbra always change to penumbra first, even when a short penumbra falls
    between two samples), and its crossing is refined with scipy.optimize.brentq on the signed
    cone margin (Montenbruck & Gill, Satellite Orbits, 2000, section 3.4.2) to 1 ms. A shadow
    passage shorter than ``step_s`` can fall between samples and be missed, so ``step_s`` must
    be shorter than the shortest passage of interest (the 30 s default suits LEO eclipses and
    misses only grazing penumbrae). ``horizon_s`` > 0 and ``step_s`` > 0, seconds.
    ``samples`` may give this epoch's sampling pass, already made by ``sample_shadow_states``
    with the same horizon and step.
    """
    offsets = _grid_s(horizon_s, step_s)
    start = np.datetime64(epochs_ms(epoch), "ms")
    if samples is None:
        penumbra, umbra = _margins_rad(trajectory, _offsets_to_epochs(start, offsets))
        states = _states(penumbra, umbra)
    else:
        states = samples.states
    changed = np.flatnonzero(states != states[0])
    if changed.size == 0:
        return None
    k = int(changed[0])
    initial, sampled = str(states[0]), str(states[k])
    if initial == SUNLIGHT or (initial == PENUMBRA and sampled == SUNLIGHT):
        which = 0
        new_state = PENUMBRA if initial == SUNLIGHT else SUNLIGHT
    else:
        which = 1
        new_state = PENUMBRA if initial == UMBRA else UMBRA

    def margin(offset_s: float) -> float:
        return _margin_at(trajectory, start, offset_s, which)

    crossing = brentq(margin, offsets[k - 1], offsets[k], xtol=_XTOL_S)
    return float(crossing), new_state
