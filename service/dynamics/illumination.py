"""Sunlight along a planned trajectory: the sunlit fraction at any epoch and the next shadow change.

The trajectory gives body-centred states (``Trajectory.states_at``), ``sun`` the Sun seen from
the body, ``shadow`` the conical umbra/penumbra model (Montenbruck & Gill, Satellite Orbits,
2000, section 3.4.2) on a sphere of the body's equatorial radius.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from service.dynamics.shadow import PENUMBRA, SUNLIGHT, UMBRA, disc_angles_rad, sunlit_fraction
from service.dynamics.sun import sun_position_from_body_km
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


def next_shadow_change(
    trajectory: Trajectory, epoch: np.datetime64, horizon_s: float, step_s: float = 30.0
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
    """
    for name, value in (("horizon_s", horizon_s), ("step_s", step_s)):
        if not math.isfinite(value) or value <= 0.0:
            raise ValueError(f"{name} must be positive and finite, got {value!r} s")
    start = np.datetime64(epochs_ms(epoch), "ms")
    count = math.ceil(horizon_s / step_s)
    offsets = np.minimum(np.arange(count + 1) * float(step_s), float(horizon_s))
    penumbra, umbra = _margins_rad(trajectory, _offsets_to_epochs(start, offsets))
    states = _states(penumbra, umbra)
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
        at = _offsets_to_epochs(start, np.array([offset_s]))
        return float(_margins_rad(trajectory, at)[which][0])

    crossing = brentq(margin, offsets[k - 1], offsets[k], xtol=_XTOL_S)
    return float(crossing), new_state
