"""Julian dates and Julian centuries of UTC epochs, the time arguments of the geometry models.

Epochs are ``numpy.datetime64`` UTC at millisecond resolution (``service.dynamics.epochs``).
The models that take these arguments want UT1 (Earth rotation, the Sun's mean longitude) or
TT/TDB (precession, the Sun's mean anomaly, planetary elements); UTC stands in for all of them.
The errors are stated where each model is used: |UT1 - UTC| < 0.9 s is < 0.004 deg of Earth
rotation; TT - UTC = 69.184 s (since 2017) moves the Sun by < 3 arcsec and precession by far less.

Julian date: Meeus, Astronomical Algorithms, 2nd ed. (1998), chapter 7 (J2000.0 is JD 2451545.0 =
2000-01-01T12:00); Julian centuries of 36525 days from J2000.0 as in Vallado, Fundamentals of
Astrodynamics and Applications, 4th ed. (2013), chapter 3.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

JD_J2000 = 2451545.0
J2000_UTC = np.datetime64("2000-01-01T12:00:00", "ms")
MS_PER_DAY = 86_400_000
DAYS_PER_JULIAN_CENTURY = 36525.0


def epochs_ms(epochs: ArrayLike) -> np.ndarray:
    """``epochs`` as a datetime64[ms] array of the same shape; ValueError for NaT or non-dates."""
    try:
        times = np.asarray(epochs, dtype="datetime64[ms]")
    except (TypeError, ValueError) as error:
        raise ValueError(f"epochs must be UTC datetime64 values or ISO strings: {error}") from None
    if np.any(np.isnat(times)):
        raise ValueError("epochs must not contain NaT")
    return times


def milliseconds_since_j2000(epochs: ArrayLike) -> np.ndarray:
    """Whole milliseconds from J2000.0 (2000-01-01T12:00 UTC) to each epoch, int64, exact."""
    return (epochs_ms(epochs) - J2000_UTC).astype(np.int64)


def _float_or_array(value: np.ndarray) -> float | np.ndarray:
    return float(value) if value.ndim == 0 else value


def julian_date_utc(epochs: ArrayLike) -> float | np.ndarray:
    """Julian date of each UTC epoch (a float for one epoch, an array of the epochs' shape).

    Meeus, Astronomical Algorithms, 2nd ed., chapter 7: JD = 2451545.0 + days from J2000.0.
    A float64 JD resolves about 40 microseconds; use ``julian_centuries_j2000`` where more is
    needed.
    """
    days = milliseconds_since_j2000(epochs) / MS_PER_DAY
    return _float_or_array(JD_J2000 + days)


def julian_centuries_j2000(epochs: ArrayLike) -> float | np.ndarray:
    """T = (JD - 2451545.0) / 36525 for each UTC epoch, from exact milliseconds.

    Vallado 4th ed., chapter 3 (T_UT1, T_TT with UTC standing in). Computed from the integer
    millisecond count, so T carries no rounding of a large Julian date.
    """
    centuries = milliseconds_since_j2000(epochs) / (MS_PER_DAY * DAYS_PER_JULIAN_CENTURY)
    return _float_or_array(centuries)
