"""Plane changes: a pure turn, a turn combined with a speed change, and a Hohmann transfer's split.

Why a module of its own: turning the orbit plane is priced by the law of cosines, and sharing
the turn between the two burns of a Hohmann transfer is an optimisation (scipy's bounded
minimize_scalar after a grid scan) with its own convexity caveats, apart from the closed forms
of the coplanar transfers in ``service.dynamics.transfers``, whose input checks and vis-viva
speed it reuses. Sources: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed.
(2013), Algorithms 39 (inclination only) and 42 (minimum combined plane change); Curtis,
Orbital Mechanics for Engineering Students, 3rd ed. (2014), chapter 6 (plane-change sections).

Radii in km, speeds in km/s, times in s, angles in rad, GM ``mu_km3_s2`` in km^3/s^2. Scalar
or array arguments broadcast; scalar inputs give numpy float64 scalars. Delta-v values are
magnitudes (never negative), whether the transfer raises or lowers the orbit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import minimize_scalar

from service.dynamics.inputs import FloatOrArray, finite, positive, scalar_or_array
from service.dynamics.transfers import vis_viva_km_s


def _angle(name: str, value: ArrayLike) -> np.ndarray:
    arr = finite(name, value)
    if np.any((arr < 0.0) | (arr > math.pi)):
        raise ValueError(f"{name} must lie in [0, pi] rad, got {value!r}")
    return arr


def inclination_change_delta_v_km_s(v_km_s: ArrayLike, di_rad: ArrayLike) -> FloatOrArray:
    """Single impulse turning a velocity of magnitude ``v_km_s`` through ``di_rad``: 2 v sin(di/2).

    Source: Vallado, 4th ed. (2013), Algorithm 39 (inclination only) with flight-path angle 0;
    Curtis, 3rd ed., chapter 6 (plane change maneuvers). Parameters: ``v_km_s`` speed, km/s
    (>= 0); ``di_rad`` angle, rad, in [0, pi].
    """
    v = finite("v_km_s", v_km_s)
    if np.any(v < 0.0):
        raise ValueError(f"v_km_s must not be negative, got {v_km_s!r}")
    return scalar_or_array(2.0 * v * np.sin(0.5 * _angle("di_rad", di_rad)))


def combined_change_delta_v_km_s(
    v1_km_s: ArrayLike, v2_km_s: ArrayLike, angle_rad: ArrayLike
) -> FloatOrArray:
    """Impulse from speed ``v1_km_s`` to ``v2_km_s`` with the direction turned by ``angle_rad``.

    Law of cosines, sqrt(v1^2 + v2^2 - 2 v1 v2 cos(angle)) (Vallado, 4th ed. (2013), Algorithm
    42; Curtis, 3rd ed., chapter 6), evaluated as the identical sqrt((v1 - v2)^2 + 4 v1 v2
    sin^2(angle / 2)), which keeps full precision for small angles and near-equal speeds.
    Parameters: speeds km/s (>= 0); ``angle_rad`` rad, in [0, pi].
    """
    one = _combined_one(v1_km_s, v2_km_s, angle_rad)
    if one is not None:
        return one
    v1 = finite("v1_km_s", v1_km_s)
    v2 = finite("v2_km_s", v2_km_s)
    if np.any(v1 < 0.0) or np.any(v2 < 0.0):
        raise ValueError(f"speeds must not be negative, got {v1_km_s!r}, {v2_km_s!r}")
    half = np.sin(0.5 * _angle("angle_rad", angle_rad))
    return scalar_or_array(np.sqrt((v1 - v2) ** 2 + 4.0 * v1 * v2 * half**2))


def _number(value) -> float | None:
    """``value`` as a float when it is one finite float64 number (or int), else None."""
    if type(value) is float or type(value) is int or isinstance(value, np.float64):
        number = float(value)
    elif isinstance(value, np.ndarray) and value.shape == () and value.dtype == np.float64:
        number = float(value)
    else:
        return None
    return number if math.isfinite(number) else None


def _combined_one(v1_km_s, v2_km_s, angle_rad) -> np.float64 | None:
    """``combined_change_delta_v_km_s`` of single numbers (the split's optimiser asks for one
    at a time): the same arithmetic, numpy's scalar power for the squares as in the array
    code, without its per-call checks; None for anything else."""
    v1, v2, angle = _number(v1_km_s), _number(v2_km_s), _number(angle_rad)
    if v1 is None or v2 is None or angle is None:
        return None
    if v1 < 0.0 or v2 < 0.0 or not 0.0 <= angle <= math.pi:
        return None
    half = math.sin(0.5 * angle)
    square = float(np.float64(v1 - v2) ** 2) + 4.0 * v1 * v2 * float(np.float64(half) ** 2)
    return np.float64(math.sqrt(square))


@dataclass(frozen=True)
class PlaneChangeHohmann:
    """Hohmann transfer turning the plane by di1 at the r1 burn and di2 at the r2 burn.

    ``all_at_apoapsis_total_km_s``: the whole turn combined with the burn at the larger radius;
    ``separate_total_km_s``: coplanar Hohmann plus a pure turn on the larger circular orbit.
    """

    dv1_km_s: FloatOrArray
    dv2_km_s: FloatOrArray
    total_km_s: FloatOrArray
    di1_rad: FloatOrArray
    di2_rad: FloatOrArray
    all_at_apoapsis_total_km_s: FloatOrArray
    separate_total_km_s: FloatOrArray
    time_of_flight_s: FloatOrArray


_SCAN_POINTS = 65


def _best_first_turn_rad(v1: float, vp: float, va: float, v2: float, di: float) -> float:
    if di == 0.0:
        return 0.0

    def total(alpha: ArrayLike) -> np.ndarray:
        return np.asarray(
            combined_change_delta_v_km_s(v1, vp, alpha)
            + combined_change_delta_v_km_s(va, v2, di - np.asarray(alpha))
        )

    # Each term is convex in its angle only below arccos(slower / faster speed), so for large
    # turns the total may be non-convex or lowest at an end: bracket the best grid point first.
    grid = np.linspace(0.0, di, _SCAN_POINTS)
    values = total(grid)
    k = int(np.argmin(values))
    lo, hi = grid[max(k - 1, 0)], grid[min(k + 1, _SCAN_POINTS - 1)]
    res = minimize_scalar(
        lambda a: float(total(a)), bounds=(lo, hi), method="bounded", options={"xatol": 1e-12}
    )
    if not res.success:
        raise RuntimeError(f"plane-change split did not converge: {res.message}")
    return float(res.x) if res.fun <= values[k] else float(grid[k])


def hohmann_with_plane_change(
    r1_km: ArrayLike, r2_km: ArrayLike, di_rad: ArrayLike, mu_km3_s2: ArrayLike
) -> PlaneChangeHohmann:
    """Hohmann transfer that also turns the plane by ``di_rad``, split to minimise the total.

    Source: Vallado, 4th ed. (2013), Algorithm 42 (minimum combined plane change): each burn
    is a law-of-cosines combined change (``combined_change_delta_v_km_s``); the split di1 at
    the r1 burn, di2 = di - di1 at the r2 burn, is found with scipy.optimize.minimize_scalar
    (bounded) over [0, di]. Parameters: radii km (> 0); ``di_rad`` rad in [0, pi];
    ``mu_km3_s2`` km^3/s^2 (> 0). Arrays broadcast; the split is solved element by element.
    """
    r1, r2, di, mu = np.broadcast_arrays(
        positive("r1_km", r1_km),
        positive("r2_km", r2_km),
        _angle("di_rad", di_rad),
        positive("mu_km3_s2", mu_km3_s2),
    )
    a_t = 0.5 * (r1 + r2)
    v1, v2 = np.sqrt(mu / r1), np.sqrt(mu / r2)
    vp, va = vis_viva_km_s(r1, a_t, mu), vis_viva_km_s(r2, a_t, mu)
    di1 = np.empty(r1.shape)
    for idx in np.ndindex(r1.shape):
        di1[idx] = _best_first_turn_rad(v1[idx], vp[idx], va[idx], v2[idx], di[idx])
    di2 = di - di1
    dv1 = np.asarray(combined_change_delta_v_km_s(v1, vp, di1))
    dv2 = np.asarray(combined_change_delta_v_km_s(va, v2, di2))
    coplanar1, coplanar2 = np.abs(vp - v1), np.abs(v2 - va)
    outer_first = r1 > r2
    all_at_apoapsis = np.where(
        outer_first,
        np.asarray(combined_change_delta_v_km_s(v1, vp, di)) + coplanar2,
        coplanar1 + np.asarray(combined_change_delta_v_km_s(va, v2, di)),
    )
    separate = (
        coplanar1 + coplanar2 + np.asarray(inclination_change_delta_v_km_s(np.minimum(v1, v2), di))
    )
    return PlaneChangeHohmann(
        dv1_km_s=scalar_or_array(dv1),
        dv2_km_s=scalar_or_array(dv2),
        total_km_s=scalar_or_array(dv1 + dv2),
        di1_rad=scalar_or_array(di1),
        di2_rad=scalar_or_array(di2),
        all_at_apoapsis_total_km_s=scalar_or_array(all_at_apoapsis),
        separate_total_km_s=scalar_or_array(separate),
        time_of_flight_s=scalar_or_array(math.pi * np.sqrt(a_t**3 / mu)),
    )
