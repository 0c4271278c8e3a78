"""Coplanar impulsive transfers between circular orbits: the delta-v floor a plan is judged by.

Why a module of its own: Hohmann (two impulses), bi-elliptic (three impulses, and its limit as
the intermediate apoapsis grows without bound), the radius-ratio thresholds between them and
``cheaper_of`` answer one question, the cheapest in-plane way between two circular orbits;
turning the orbit plane as well is ``service.dynamics.plane_change``'s job, which reuses the
input checks and vis-viva speed here. Sources: Vallado, Fundamentals of Astrodynamics and
Applications, 4th ed. (2013), Algorithms 36 (Hohmann) and 37 (bi-elliptic); Curtis, Orbital
Mechanics for Engineering Students, 3rd ed. (2014), chapter 6 (Hohmann and bi-elliptic Hohmann
sections).

Radii in km, speeds in km/s, times in s, angles in rad, GM ``mu_km3_s2`` in km^3/s^2. Scalar
or array arguments broadcast; scalar inputs give numpy float64 scalars. Delta-v values are
magnitudes (never negative), whether the transfer raises or lowers the orbit; totals are the
same either way, so the ratio thresholds below are stated as larger radius over smaller.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from service.dynamics.inputs import FloatOrArray, positive, scalar_or_array

_SQRT2 = math.sqrt(2.0)


def vis_viva_km_s(r_km: np.ndarray, a_km: np.ndarray, mu_km3_s2: np.ndarray) -> np.ndarray:
    return np.sqrt(mu_km3_s2 * (2.0 / r_km - 1.0 / a_km))


def circular_speed_km_s(r_km: ArrayLike, mu_km3_s2: ArrayLike) -> FloatOrArray:
    """Speed on a circular orbit of radius ``r_km``: sqrt(mu / r).

    Source: Vallado, 4th ed. (2013), Algorithm 36 (v_init, v_final); Curtis, 3rd ed., chapter 2
    (circular orbits). Parameters: ``r_km`` radius, km (> 0); ``mu_km3_s2`` GM, km^3/s^2 (> 0).
    """
    return scalar_or_array(np.sqrt(positive("mu_km3_s2", mu_km3_s2) / positive("r_km", r_km)))


@dataclass(frozen=True)
class HohmannTransfer:
    """Burn magnitudes (km/s), time of flight (s) and transfer-ellipse semi-major axis (km)."""

    dv1_km_s: FloatOrArray
    dv2_km_s: FloatOrArray
    total_km_s: FloatOrArray
    time_of_flight_s: FloatOrArray
    transfer_semi_major_axis_km: FloatOrArray


def hohmann(r1_km: ArrayLike, r2_km: ArrayLike, mu_km3_s2: ArrayLike) -> HohmannTransfer:
    """Hohmann transfer from a circular orbit of radius ``r1_km`` to one of ``r2_km`` (up or down).

    Source: Vallado, 4th ed. (2013), Algorithm 36; Curtis, 3rd ed., chapter 6 (Hohmann transfer).
    Parameters: ``r1_km``, ``r2_km`` initial and final radii, km (> 0); ``mu_km3_s2`` GM,
    km^3/s^2 (> 0). ``dv1_km_s`` is the burn at ``r1_km``, ``dv2_km_s`` the one at ``r2_km``.
    """
    r1 = positive("r1_km", r1_km)
    r2 = positive("r2_km", r2_km)
    mu = positive("mu_km3_s2", mu_km3_s2)
    a_t = 0.5 * (r1 + r2)
    dv1 = np.abs(vis_viva_km_s(r1, a_t, mu) - np.sqrt(mu / r1))
    dv2 = np.abs(np.sqrt(mu / r2) - vis_viva_km_s(r2, a_t, mu))
    tof = math.pi * np.sqrt(a_t**3 / mu)
    return HohmannTransfer(
        scalar_or_array(dv1),
        scalar_or_array(dv2),
        scalar_or_array(dv1 + dv2),
        scalar_or_array(tof),
        scalar_or_array(a_t),
    )


@dataclass(frozen=True)
class BiEllipticTransfer:
    """Three burn magnitudes (km/s) at r1, rb and r2, their sum, and the time of flight (s)."""

    dv1_km_s: FloatOrArray
    dv2_km_s: FloatOrArray
    dv3_km_s: FloatOrArray
    total_km_s: FloatOrArray
    time_of_flight_s: FloatOrArray


def bi_elliptic(
    r1_km: ArrayLike, rb_km: ArrayLike, r2_km: ArrayLike, mu_km3_s2: ArrayLike
) -> BiEllipticTransfer:
    """Bi-elliptic transfer from radius ``r1_km`` out to apoapsis ``rb_km`` and on to ``r2_km``.

    Source: Vallado, 4th ed. (2013), Algorithm 37; Curtis, 3rd ed., chapter 6 (bi-elliptic
    Hohmann transfer). Parameters: ``r1_km``, ``r2_km`` circular radii, km (> 0); ``rb_km`` the
    common apoapsis of the two transfer ellipses, km, at least max(r1, r2) (ValueError below);
    ``mu_km3_s2`` GM, km^3/s^2 (> 0). With ``rb_km == max(r1, r2)`` the burns are Hohmann's
    (the time of flight still includes the second half-ellipse, then half a circular orbit).
    """
    r1 = positive("r1_km", r1_km)
    rb = positive("rb_km", rb_km)
    r2 = positive("r2_km", r2_km)
    mu = positive("mu_km3_s2", mu_km3_s2)
    if np.any(rb < np.maximum(r1, r2)):
        raise ValueError(f"rb_km ({rb_km!r}) must be at least max(r1_km, r2_km)")
    a1 = 0.5 * (r1 + rb)
    a2 = 0.5 * (rb + r2)
    dv1 = np.abs(vis_viva_km_s(r1, a1, mu) - np.sqrt(mu / r1))
    dv2 = np.abs(vis_viva_km_s(rb, a2, mu) - vis_viva_km_s(rb, a1, mu))
    dv3 = np.abs(vis_viva_km_s(r2, a2, mu) - np.sqrt(mu / r2))
    tof = math.pi * (np.sqrt(a1**3 / mu) + np.sqrt(a2**3 / mu))
    return BiEllipticTransfer(
        scalar_or_array(dv1),
        scalar_or_array(dv2),
        scalar_or_array(dv3),
        scalar_or_array(dv1 + dv2 + dv3),
        scalar_or_array(tof),
    )


def bi_elliptic_limit_total_km_s(
    r1_km: ArrayLike, r2_km: ArrayLike, mu_km3_s2: ArrayLike
) -> FloatOrArray:
    """Bi-elliptic total as ``rb`` grows without bound: (sqrt(2) - 1) (v1 + v2).

    Derived from Vallado, 4th ed. (2013), Algorithm 37: as rb -> inf the first burn tends to
    escape speed minus circular speed, sqrt(2 mu / r1) - v1 = (sqrt(2) - 1) v1, the burn at rb
    tends to 0 (both ellipses arrive there at speed -> 0) and the last burn to (sqrt(2) - 1) v2
    (the derivation is ours). Parameters as ``hohmann``. The limit is approached, never
    reached: any finite rb costs more.
    """
    mu = positive("mu_km3_s2", mu_km3_s2)
    v1 = np.sqrt(mu / positive("r1_km", r1_km))
    v2 = np.sqrt(mu / positive("r2_km", r2_km))
    return scalar_or_array((_SQRT2 - 1.0) * (v1 + v2))


def _hohmann_total_per_v1(ratio: float) -> float:
    # Algorithm 36 with r1 = mu = 1, for ratio = r2 / r1 > 1.
    return (
        math.sqrt(2.0 * ratio / (1.0 + ratio)) - 1.0
        + 1.0 / math.sqrt(ratio) - math.sqrt(2.0 / (ratio * (1.0 + ratio)))
    )  # fmt: skip


def _hohmann_slope_per_v1(ratio: float) -> float:
    # Closed-form d/dR of _hohmann_total_per_v1 (by hand), so brentq needs no finite differences;
    # setting it to zero gives R^3 - 15 R^2 - 9 R - 1 = 0.
    return 0.5 * ratio**-1.5 * (_SQRT2 * (1.0 + 3.0 * ratio) / (1.0 + ratio) ** 1.5 - 1.0)


@functools.cache
def hohmann_peak_ratio() -> float:
    """Radius ratio r2/r1 at which the Hohmann total, in units of v1, is largest (15.581719...).

    Found by scipy.optimize.brentq on the closed-form derivative of the Algorithm 36 total
    (Vallado, 4th ed. (2013)); the root is that of R^3 - 15 R^2 - 9 R - 1 = 0.
    """
    return float(brentq(_hohmann_slope_per_v1, 2.0, 100.0, xtol=1e-14, rtol=1e-15))


def hohmann_peak_total_per_v1() -> float:
    """The largest Hohmann total between circular orbits in units of v1 (0.536258...).

    Source: Vallado, 4th ed. (2013), Algorithm 36 evaluated at ``hohmann_peak_ratio()``.
    """
    return _hohmann_total_per_v1(hohmann_peak_ratio())


@functools.cache
def bi_elliptic_break_even_ratio() -> float:
    """Radius ratio above which bi-elliptic transfers can beat Hohmann (11.938765...).

    Root, by scipy.optimize.brentq, of Hohmann total = bi-elliptic limit total
    (``bi_elliptic_limit_total_km_s``), both per v1, from Vallado, 4th ed. (2013), Algorithms
    36 and 37. Below the Hohmann peak the Hohmann total rises with the ratio and the limit falls,
    so the root is unique; above the peak the Hohmann total stays the larger.
    """

    def gap(ratio: float) -> float:
        return _hohmann_total_per_v1(ratio) - (_SQRT2 - 1.0) * (1.0 + 1.0 / math.sqrt(ratio))

    return float(brentq(gap, 1.0, hohmann_peak_ratio(), xtol=1e-14, rtol=1e-15))


def bi_elliptic_always_cheaper_ratio() -> float:
    """Radius ratio above which every bi-elliptic transfer (any rb > r2) beats Hohmann (15.58...).

    Per v1 (Vallado, 4th ed. (2013), Algorithm 37), the bi-elliptic total with apoapsis rb is
    the Hohmann total r1 -> rb plus (first burn - second burn) of a Hohmann transfer r2 -> rb;
    that bracket has zero slope in rb at rb = r2, so bi-elliptic starts out cheaper than
    Hohmann exactly where the Hohmann total falls with r2, past ``hohmann_peak_ratio()`` (the
    same brentq root); the tests check that it then stays cheaper for every larger rb.
    """
    return hohmann_peak_ratio()


@dataclass(frozen=True)
class CheaperTransfer:
    """The cheaper of Hohmann and bi-elliptic, with both totals (km/s) and the rb used (km)."""

    total_km_s: FloatOrArray
    hohmann_total_km_s: FloatOrArray
    bi_elliptic_total_km_s: FloatOrArray
    bi_elliptic_rb_km: FloatOrArray
    bi_elliptic_is_cheaper: np.bool_ | np.ndarray

    @property
    def method(self) -> str | np.ndarray:
        """``"bi-elliptic"`` or ``"hohmann"`` (an array of them for array inputs)."""
        names = np.where(self.bi_elliptic_is_cheaper, "bi-elliptic", "hohmann")
        return str(names) if names.ndim == 0 else names


def cheaper_of(
    r1_km: ArrayLike,
    r2_km: ArrayLike,
    mu_km3_s2: ArrayLike,
    rb_max_km: ArrayLike | None = None,
) -> CheaperTransfer:
    """The lower total of Hohmann and bi-elliptic between two circular orbits, saying which.

    Sources: Vallado, 4th ed. (2013), Algorithms 36 and 37. With ``rb_max_km`` None the
    bi-elliptic value is the rb -> inf limit (``bi_elliptic_limit_total_km_s``, rb reported as
    inf); otherwise the bi-elliptic transfer with rb = ``rb_max_km`` (at least max(r1, r2),
    ValueError below). The bi-elliptic total rises then falls with rb (or only falls), so over
    rb in [max(r1, r2), rb_max] its minimum is at one end: this is the cheapest of the family.
    Hohmann wins ties. Parameters as ``hohmann``; ``rb_max_km`` km.
    """
    h = hohmann(r1_km, r2_km, mu_km3_s2)
    if rb_max_km is None:
        bi_total = np.asarray(bi_elliptic_limit_total_km_s(r1_km, r2_km, mu_km3_s2))
        rb = np.full_like(bi_total, np.inf)
    else:
        bi_total = np.asarray(bi_elliptic(r1_km, rb_max_km, r2_km, mu_km3_s2).total_km_s)
        rb = np.broadcast_to(np.asarray(rb_max_km, dtype=float), bi_total.shape).copy()
    h_total = np.asarray(h.total_km_s)
    bi_wins = bi_total < h_total
    return CheaperTransfer(
        total_km_s=scalar_or_array(np.where(bi_wins, bi_total, h_total)),
        hohmann_total_km_s=scalar_or_array(h_total),
        bi_elliptic_total_km_s=scalar_or_array(bi_total),
        bi_elliptic_rb_km=scalar_or_array(rb),
        bi_elliptic_is_cheaper=scalar_or_array(bi_wins),
    )
