"""Earth's atmospheric density: the piecewise-exponential model table of Vallado.

Source: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Table 8-4,
the exponential atmospheric model (built, as Vallado says, from CIRA-72 at 0 km and from 500 km
up and from the US Standard Atmosphere 1976 between; from memory). Within each band, starting
at base altitude h0,

    rho(h) = rho0 exp(-(h - h0) / H)        (Vallado 4th ed., section 8.6; number from memory)

with the band's nominal density rho0 and scale height H. Each band holds from its base altitude
up to the next row's base altitude; above 1000 km the last row (1000 km) is extended (the
table's last band is open-ended, from memory). The density there is an extrapolation, adequate
only because drag above 1000 km matters little for orbital lifetime.

Provenance of the rows: the 500 km row (6.967e-13 kg/m^3, 63.822 km) is given in the project's
REFERENCES.md and the 700 km row is confirmed by Vallado's Example 8-4 (rho at 747.2119 km =
2.1219854e-14 kg/m^3, reproduced to 1e-7 by the tests); the other 26 rows are written from
memory. They are cross-checked by continuity, which a misremembered density or scale height
would break: each row's exponential, carried to the next base altitude, lands on that row's
nominal density within 0.14 % (0 km to 25 km) and within 1e-4 everywhere else. Only the last
scale height (268.00 km) escapes that check. The published table itself is continuous only to
that level, since its bands were fitted one by one.

What the model is: a static, mean-solar-activity profile with no dependence on time, latitude or
local time. Real thermospheric density swings by a factor of several over the 11-year solar
cycle (an order of magnitude and more at 600 to 800 km) and further in geomagnetic storms, so
anything computed from this table (drag, lifetimes) carries that uncertainty.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.inputs import FloatOrArray, finite, scalar_or_array

# Vallado 4th ed. (2013), Table 8-4: base altitude h0 (km), nominal density rho0 (kg/m^3) and
# scale height H (km). Rows from memory except 500 km (REFERENCES.md) and 700 km (Example 8-4).
_TABLE_8_4 = (
    (0.0, 1.225, 7.249),
    (25.0, 3.899e-2, 6.349),
    (30.0, 1.774e-2, 6.682),
    (40.0, 3.972e-3, 7.554),
    (50.0, 1.057e-3, 8.382),
    (60.0, 3.206e-4, 7.714),
    (70.0, 8.770e-5, 6.549),
    (80.0, 1.905e-5, 5.799),
    (90.0, 3.396e-6, 5.382),
    (100.0, 5.297e-7, 5.877),
    (110.0, 9.661e-8, 7.263),
    (120.0, 2.438e-8, 9.473),
    (130.0, 8.484e-9, 12.636),
    (140.0, 3.845e-9, 16.149),
    (150.0, 2.070e-9, 22.523),
    (180.0, 5.464e-10, 29.740),
    (200.0, 2.789e-10, 37.105),
    (250.0, 7.248e-11, 45.546),
    (300.0, 2.418e-11, 53.628),
    (350.0, 9.518e-12, 53.298),
    (400.0, 3.725e-12, 58.515),
    (450.0, 1.585e-12, 60.828),
    (500.0, 6.967e-13, 63.822),
    (600.0, 1.454e-13, 71.835),
    (700.0, 3.614e-14, 88.667),
    (800.0, 1.170e-14, 124.64),
    (900.0, 5.245e-15, 181.05),
    (1000.0, 3.019e-15, 268.00),
)


def _column(index: int) -> np.ndarray:
    array = np.array([row[index] for row in _TABLE_8_4], dtype=float)
    array.flags.writeable = False
    return array


EXPONENTIAL_BASE_ALTITUDE_KM = _column(0)
EXPONENTIAL_NOMINAL_DENSITY_KG_M3 = _column(1)
EXPONENTIAL_SCALE_HEIGHT_KM = _column(2)

EXPONENTIAL_MODEL_NAME = (
    "exponential atmosphere, Vallado 4th ed. (2013) Table 8-4 (mean solar activity; "
    "1000 km row extended above 1000 km)"
)


def density_exponential_kg_m3(altitude_km: ArrayLike) -> FloatOrArray:
    """Atmospheric density at ``altitude_km`` from Vallado's exponential model table.

    Source: Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Table 8-4
    and Example 8-4: rho = rho0 exp(-(h - h0) / H) in the band whose base altitude h0 is the
    largest one not above h; the 1000 km row is extended above 1000 km (module docstring).

    Parameter: ``altitude_km`` geometric altitude above the equatorial-radius sphere, km
    (float or array, finite, >= 0). Returns kg/m^3, a numpy float64 for scalar input.
    Raises ValueError for a negative or non-finite altitude: the table starts at sea level.
    """
    altitude = finite("altitude_km", altitude_km)
    if np.any(altitude < 0.0):
        raise ValueError(
            f"altitude_km must not be negative (the density table starts at 0 km), "
            f"got {altitude_km!r}"
        )
    band = np.searchsorted(EXPONENTIAL_BASE_ALTITUDE_KM, altitude, side="right") - 1
    return scalar_or_array(
        EXPONENTIAL_NOMINAL_DENSITY_KG_M3[band]
        * np.exp(
            -(altitude - EXPONENTIAL_BASE_ALTITUDE_KM[band]) / EXPONENTIAL_SCALE_HEIGHT_KM[band]
        )
    )
