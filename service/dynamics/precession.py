"""IAU 1976 precession between the mean equator and equinox of date (MOD) and of J2000.

Lieske et al., "Expressions for the precession quantities based upon the IAU (1976) system of
astronomical constants", Astronomy and Astrophysics 58 (1977) 1-16; Vallado, Fundamentals of
Astrodynamics and Applications, 4th ed. (2013), eqs. 3-88 to 3-90. The angles zeta, theta, z
are polynomials in T, Julian centuries from J2000.0 (TT, here UTC: the 69 s difference moves
the axes by < 1e-6 arcsec). The IAU 2006 model differs by < 0.1 arcsec over 1950-2050.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.timescales import julian_centuries_j2000

ARCSEC_RAD = np.pi / (180.0 * 3600.0)


def frame_rotation_z(angle_rad: ArrayLike) -> np.ndarray:
    """Matrix (..., 3, 3) that gives a vector's components in axes turned by angle about z.

    The passive rotation ROT3 of Vallado 4th ed., chapter 3: [[c, s, 0], [-s, c, 0], [0, 0, 1]].
    """
    angle = np.asarray(angle_rad, dtype=float)
    c, s = np.cos(angle), np.sin(angle)
    # Filled in place: the same matrix as stacking rows of c, s, 0 and 1, at a fraction of
    # the cost for one epoch.
    matrix = np.zeros((*angle.shape, 3, 3))
    matrix[..., 0, 0], matrix[..., 0, 1] = c, s
    matrix[..., 1, 0], matrix[..., 1, 1] = -s, c
    matrix[..., 2, 2] = 1.0
    return matrix


def frame_rotation_y(angle_rad: ArrayLike) -> np.ndarray:
    """Matrix (..., 3, 3) of the passive rotation ROT2 about y (Vallado 4th ed., chapter 3)."""
    angle = np.asarray(angle_rad, dtype=float)
    c, s = np.cos(angle), np.sin(angle)
    matrix = np.zeros((*angle.shape, 3, 3))
    matrix[..., 0, 0], matrix[..., 0, 2] = c, -s
    matrix[..., 1, 1] = 1.0
    matrix[..., 2, 0], matrix[..., 2, 2] = s, c
    return matrix


def precession_angles_rad(epochs: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """IAU 1976 precession angles (zeta, theta, z) in radians from J2000.0 to each epoch.

    Lieske et al. (1977) with the fixed epoch J2000.0; Vallado 4th ed., eq. 3-88 (arcseconds):
    zeta = 2306.2181 T + 0.30188 T^2 + 0.017998 T^3,
    theta = 2004.3109 T - 0.42665 T^2 - 0.041833 T^3,
    z = 2306.2181 T + 1.09468 T^2 + 0.018203 T^3.
    """
    t = np.asarray(julian_centuries_j2000(epochs), dtype=float)
    zeta = ((0.017998 * t + 0.30188) * t + 2306.2181) * t
    theta = ((-0.041833 * t - 0.42665) * t + 2004.3109) * t
    z = ((0.018203 * t + 1.09468) * t + 2306.2181) * t
    return zeta * ARCSEC_RAD, theta * ARCSEC_RAD, z * ARCSEC_RAD


def precession_mod_to_j2000(epochs: ArrayLike) -> np.ndarray:
    """Matrix P (3, 3) or (N, 3, 3) with r_J2000 = P @ r_MOD, IAU 1976 precession at each epoch.

    Vallado 4th ed., eqs. 3-89 and 3-90: r_MOD = R3(-z) R2(theta) R3(-zeta) r_J2000 (the
    matrix pyerfa's ``pmat76`` returns), so P is its transpose. ``epochs`` UTC datetime64
    (one epoch gives (3, 3), N epochs (N, 3, 3)).
    """
    zeta, theta, z = precession_angles_rad(epochs)
    j2000_to_mod = frame_rotation_z(-z) @ frame_rotation_y(theta) @ frame_rotation_z(-zeta)
    return np.swapaxes(j2000_to_mod, -1, -2)
