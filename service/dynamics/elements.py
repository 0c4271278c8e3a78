"""Cartesian state <-> osculating classical orbital elements, for every conic.

Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Algorithm 9 (RV2COE)
and Algorithm 10 (COE2RV); Curtis, Orbital Mechanics for Engineering Students, 3rd ed.,
Algorithms 4.2 and 4.5. Angles are found with atan2 of a sine and a cosine, never acos.

Size is the semi-latus rectum p = h^2 / mu, finite for every conic including the parabola;
``Elements.a_km`` gives p / (1 - e^2) (inf at e == 1, negative for e > 1).

Degenerate orbits follow Vallado's special cases (Algorithms 9 and 10), so the six numbers
always reproduce the state:

* circular inclined (e < ECCENTRICITY_CIRCULAR): argp = 0 and nu holds the argument of
  latitude u (angle from the ascending node to r);
* elliptic/open equatorial (sin i < EQUATORIAL_SIN_INCLINATION, i.e. |k x h| / |h|):
  raan = 0 and argp holds the true longitude of periapsis (angle from +x to periapsis);
* circular equatorial: raan = argp = 0 and nu holds the true longitude (angle from +x to r).

Every angle is measured about the angular-momentum direction, i.e. in the direction of motion.
For retrograde equatorial orbits (i = pi) the longitudes therefore run clockwise seen from +z:
true longitude = 2 pi - (counter-clockwise angle), as in Vallado's RV2COE code. COE2RV with
raan = 0 and i = pi maps them back to the same state, so the conventions round-trip. The
inclination of a nearly equatorial orbit is kept as computed (not snapped to 0 or pi); with
raan = 0 the +x axis stands in for the node line, which moves the state by at most
about EQUATORIAL_SIN_INCLINATION relative.

Ranges: i in [0, pi]; raan, argp in [0, 2 pi); nu in [0, 2 pi) for e < 1 and in
(-nu_inf, nu_inf), nu_inf = arccos(-1/e), for e >= 1. The e == 1 case needs no special branch
because nothing here divides by 1 - e^2.

Vector arguments are (3,) or (N, 3), scalars float or (N,); they broadcast. A single state
gives float fields, N states give (N,) arrays.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from service.dynamics.inputs import finite

TWO_PI = 2.0 * math.pi
# e below this is treated as circular: argp is undefined and set to 0 (Vallado Algorithm 9).
ECCENTRICITY_CIRCULAR = 1e-10
# sin i = |k x h| / |h| below this is treated as equatorial: raan is undefined and set to 0.
EQUATORIAL_SIN_INCLINATION = 1e-10
# p / |r| = |h|^2 / (mu |r|) at or below this is rectilinear motion (v = 0 or parallel to r):
# the conic has collapsed to a line (periapsis within 1e-10 |r| of the centre), there is no
# orbital plane, and e could not be told from 1 near apoapsis.
RECTILINEAR_TOLERANCE = 1e-10


@dataclass(frozen=True)
class Elements:
    """Osculating classical elements: p (km), e, i, raan, argp, nu (rad); floats or (N,) arrays.

    Conventions for degenerate orbits and angle ranges are in the module docstring.
    Construction raises ValueError for non-finite values, p <= 0 or e < 0.
    """

    p_km: float | np.ndarray
    e: float | np.ndarray
    i_rad: float | np.ndarray
    raan_rad: float | np.ndarray
    argp_rad: float | np.ndarray
    nu_rad: float | np.ndarray

    def __post_init__(self) -> None:
        fields = (self.p_km, self.e, self.i_rad, self.raan_rad, self.argp_rad, self.nu_rad)
        if (
            all(type(value) is float for value in fields)
            and all(map(math.isfinite, fields))
            and self.p_km > 0.0
            and self.e >= 0.0
        ):
            return  # one orbit of valid floats: the checks below would all pass
        for name in ("p_km", "e", "i_rad", "raan_rad", "argp_rad", "nu_rad"):
            if not np.all(np.isfinite(np.asarray(getattr(self, name), dtype=float))):
                raise ValueError(f"element {name} must be finite, got {getattr(self, name)!r}")
        if np.any(np.asarray(self.p_km, dtype=float) <= 0.0):
            raise ValueError(f"semi-latus rectum p_km must be > 0, got {self.p_km!r}")
        if np.any(np.asarray(self.e, dtype=float) < 0.0):
            raise ValueError(f"eccentricity e must be >= 0, got {self.e!r}")

    @property
    def a_km(self) -> float | np.ndarray:
        """Semi-major axis p / (1 - e^2): inf for e == 1, negative for e > 1."""
        p = np.asarray(self.p_km, dtype=float)
        e = np.asarray(self.e, dtype=float)
        with np.errstate(divide="ignore"):
            return float_or_array(p / ((1.0 - e) * (1.0 + e)))


def float_or_array(array: ArrayLike) -> float | np.ndarray:
    array = np.asarray(array, dtype=float)
    return float(array) if array.ndim == 0 else array


def _mu(mu_km3_s2) -> np.ndarray:
    mu = finite("mu_km3_s2", mu_km3_s2)
    if np.any(mu <= 0.0):
        raise ValueError(f"mu_km3_s2 must be > 0, got {mu_km3_s2!r}")
    return mu


def _state(r_km, v_km_s) -> tuple[np.ndarray, np.ndarray]:
    r = finite("position r_km", r_km)
    v = finite("velocity v_km_s", v_km_s)
    if r.shape[-1:] != (3,) or v.shape[-1:] != (3,) or r.ndim > 2 or v.ndim > 2:
        raise ValueError(
            f"r_km and v_km_s must have shape (3,) or (N, 3), got {r.shape}, {v.shape}"
        )
    r, v = np.broadcast_arrays(r, v)
    r_mag = np.linalg.norm(r, axis=-1)
    if np.any(r_mag == 0.0):
        raise ValueError("position r_km is the zero vector (the centre of the body)")
    return r, v


def _angle_about(from_vec: np.ndarray, to_vec: np.ndarray, axis: np.ndarray) -> np.ndarray:
    """Angle in (-pi, pi] from ``from_vec`` to ``to_vec``, positive about the unit ``axis``."""
    sine = np.sum(axis * np.cross(from_vec, to_vec), axis=-1)
    cosine = np.sum(from_vec * to_vec, axis=-1)
    return np.arctan2(sine, cosine)


def _wrap_2pi(angle_rad: np.ndarray) -> np.ndarray:
    wrapped = np.mod(angle_rad, TWO_PI)
    # np.mod returns 2 pi itself for tiny negative inputs.
    return np.where(wrapped >= TWO_PI, 0.0, wrapped)


def _wrap_2pi_one(angle_rad: float) -> float:
    wrapped = angle_rad % TWO_PI  # Python's float % and np.mod round alike
    return 0.0 if wrapped >= TWO_PI else wrapped


def _state_to_elements_one(r_km, v_km_s, mu_km3_s2) -> Elements | None:
    """``state_to_elements`` of one (3,) float state in plain Python arithmetic, or None.

    Same formulas in the same order as the array code below, and numpy's own arctan2 and
    hypot, so the result equals the array code's bit for bit, without numpy's per-call
    cost on small arrays (a single state is the common call). Anything other than one valid state of
    floats, or an orbit the array code refuses, returns None: the array code decides.
    """
    if not (
        isinstance(r_km, np.ndarray)
        and isinstance(v_km_s, np.ndarray)
        and r_km.shape == (3,)
        and v_km_s.shape == (3,)
        and r_km.dtype == np.float64
        and v_km_s.dtype == np.float64
        and type(mu_km3_s2) is float
    ):
        return None
    x, y, z = r_km.tolist()
    vx, vy, vz = v_km_s.tolist()
    mu = mu_km3_s2
    if not (all(map(math.isfinite, (x, y, z, vx, vy, vz, mu))) and mu > 0.0):
        return None
    r_mag = math.sqrt(x * x + y * y + z * z)
    hx, hy, hz = y * vz - z * vy, z * vx - x * vz, x * vy - y * vx
    h_mag = math.sqrt(hx * hx + hy * hy + hz * hz)
    p = float(np.float64(h_mag) ** 2) / mu  # numpy's scalar power, as the array code's 0-d
    if r_mag == 0.0 or p <= RECTILINEAR_TOLERANCE * r_mag:
        return None
    ux, uy, uz = hx / h_mag, hy / h_mag, hz / h_mag
    node_mag = float(np.hypot(hx, hy))
    ex = (vy * hz - vz * hy) / mu - x / r_mag
    ey = (vz * hx - vx * hz) / mu - y / r_mag
    ez = (vx * hy - vy * hx) / mu - z / r_mag
    e = math.sqrt(ex * ex + ey * ey + ez * ez)
    equatorial = node_mag < EQUATORIAL_SIN_INCLINATION * h_mag
    circular = e < ECCENTRICITY_CIRCULAR
    reference = (1.0, 0.0, 0.0) if equatorial else (-hy, hx, 0.0)
    periapsis = reference if circular else (ex, ey, ez)

    def angle_about(a, b) -> float:
        sx = a[1] * b[2] - a[2] * b[1]
        sy = a[2] * b[0] - a[0] * b[2]
        sz = a[0] * b[1] - a[1] * b[0]
        sine = ux * sx + uy * sy + uz * sz
        return float(np.arctan2(sine, a[0] * b[0] + a[1] * b[1] + a[2] * b[2]))

    inclination = float(np.arctan2(node_mag, hz))
    raan = 0.0 if equatorial else _wrap_2pi_one(float(np.arctan2(hx, -hy)))
    argp = 0.0 if circular else _wrap_2pi_one(angle_about(reference, (ex, ey, ez)))
    nu = angle_about(periapsis, (x, y, z))
    if e < 1.0:
        nu = _wrap_2pi_one(nu)
    return Elements(p_km=p, e=e, i_rad=inclination, raan_rad=raan, argp_rad=argp, nu_rad=nu)


def state_to_elements(r_km: ArrayLike, v_km_s: ArrayLike, mu_km3_s2: ArrayLike) -> Elements:
    """Osculating classical elements of a Cartesian state, for any conic.

    Vallado 4th ed., Algorithm 9 (RV2COE) with its special cases; Curtis 3rd ed.,
    Algorithm 4.2. ``r_km`` (3,) or (N, 3) km, ``v_km_s`` (3,) or (N, 3) km/s, ``mu_km3_s2`` > 0.
    Raises ValueError for non-finite input, r = 0, mu <= 0, or zero angular momentum
    (rectilinear motion, which has no orbital plane and so no elements).
    """
    one = _state_to_elements_one(r_km, v_km_s, mu_km3_s2)
    if one is not None:
        return one
    r, v = _state(r_km, v_km_s)
    mu = _mu(mu_km3_s2)
    r_mag = np.linalg.norm(r, axis=-1)
    h = np.cross(r, v)
    h_mag = np.linalg.norm(h, axis=-1)
    p = h_mag**2 / mu
    if np.any(p <= RECTILINEAR_TOLERANCE * r_mag):
        raise ValueError(
            "angular momentum r x v is zero (p/|r| <= RECTILINEAR_TOLERANCE): rectilinear "
            "motion (velocity zero or parallel to the position) has no orbital plane, so "
            "classical elements are undefined"
        )
    h_hat = h / h_mag[..., None]
    node = np.stack([-h[..., 1], h[..., 0], np.zeros_like(h_mag)], axis=-1)
    node_mag = np.hypot(h[..., 0], h[..., 1])
    e_vec = np.cross(v, h) / mu[..., None] - r / r_mag[..., None]
    e = np.linalg.norm(e_vec, axis=-1)

    equatorial = node_mag < EQUATORIAL_SIN_INCLINATION * h_mag
    circular = e < ECCENTRICITY_CIRCULAR
    # With raan set to 0 the x axis plays the node's part, which is what COE2RV assumes.
    reference = np.where(equatorial[..., None], np.array([1.0, 0.0, 0.0]), node)
    # For circular orbits nu is counted from the reference line, absorbing argp (= 0).
    periapsis_dir = np.where(circular[..., None], reference, e_vec)

    inclination = np.arctan2(node_mag, h[..., 2])
    raan = np.where(equatorial, 0.0, _wrap_2pi(np.arctan2(h[..., 0], -h[..., 1])))
    argp = np.where(circular, 0.0, _wrap_2pi(_angle_about(reference, e_vec, h_hat)))
    nu = _angle_about(periapsis_dir, r, h_hat)
    nu = np.where(e >= 1.0, nu, _wrap_2pi(nu))
    return Elements(
        p_km=float_or_array(p),
        e=float_or_array(e),
        i_rad=float_or_array(inclination),
        raan_rad=float_or_array(raan),
        argp_rad=float_or_array(argp),
        nu_rad=float_or_array(nu),
    )


def elements_to_state(elements: Elements, mu_km3_s2: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Cartesian position (km) and velocity (km/s) from classical elements, for any conic.

    Vallado 4th ed., Algorithm 10 (COE2RV): perifocal state rotated by R3(-raan) R1(-i)
    R3(-argp); Curtis 3rd ed., Algorithm 4.5. Degenerate orbits need no branch because their
    elements already hold u or the true longitudes in nu/argp (module docstring).
    ``mu_km3_s2`` > 0. Raises ValueError when an open orbit's true anomaly is on or beyond its
    asymptotes (1 + e cos nu <= 0).
    """
    mu = _mu(mu_km3_s2)
    fields = (
        elements.p_km,
        elements.e,
        elements.i_rad,
        elements.raan_rad,
        elements.argp_rad,
        elements.nu_rad,
    )
    p, e, i, raan, argp, nu = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in fields))
    denominator = 1.0 + e * np.cos(nu)
    if np.any(denominator <= 0.0):
        bad = np.flatnonzero(denominator <= 0.0)
        raise ValueError(
            "true anomaly nu_rad is on or beyond the asymptotes of the open orbit "
            f"(needs |nu| < arccos(-1/e)); nu_rad = {np.atleast_1d(nu).ravel()[bad][:5]}, "
            f"e = {np.atleast_1d(e).ravel()[bad][:5]}"
        )
    radius = p / denominator
    speed_scale = np.sqrt(mu / p)
    cos_raan, sin_raan = np.cos(raan), np.sin(raan)
    cos_argp, sin_argp = np.cos(argp), np.sin(argp)
    cos_i, sin_i = np.cos(i), np.sin(i)
    # Columns of R3(-raan) R1(-i) R3(-argp): periapsis direction P and its in-plane normal Q.
    p_hat = np.stack(
        [
            cos_raan * cos_argp - sin_raan * sin_argp * cos_i,
            sin_raan * cos_argp + cos_raan * sin_argp * cos_i,
            sin_argp * sin_i,
        ],
        axis=-1,
    )
    q_hat = np.stack(
        [
            -cos_raan * sin_argp - sin_raan * cos_argp * cos_i,
            -sin_raan * sin_argp + cos_raan * cos_argp * cos_i,
            cos_argp * sin_i,
        ],
        axis=-1,
    )
    cos_nu, sin_nu = np.cos(nu)[..., None], np.sin(nu)[..., None]
    r = radius[..., None] * (cos_nu * p_hat + sin_nu * q_hat)
    v = speed_scale[..., None] * (-sin_nu * p_hat + (e[..., None] + cos_nu) * q_hat)
    return r, v


def elements_from_semi_major_axis(
    a_km: ArrayLike,
    e: ArrayLike,
    i_rad: ArrayLike,
    raan_rad: ArrayLike,
    argp_rad: ArrayLike,
    nu_rad: ArrayLike,
) -> Elements:
    """Elements from a semi-major axis instead of p, using p = a (1 - e^2).

    Vallado 4th ed., ch. 1 (conic geometry, p = a (1 - e^2)); Curtis 3rd ed., ch. 2.
    ``a_km`` > 0 for e < 1 and < 0 for e > 1; e == 1 is refused because a parabola's a is
    infinite (give p to ``Elements`` directly). Angles in radians.
    """
    a = finite("semi-major axis a_km", a_km)
    ecc = finite("eccentricity e", e)
    if np.any(ecc < 0.0):
        raise ValueError(f"eccentricity e must be >= 0, got {e!r}")
    if np.any(ecc == 1.0):
        raise ValueError("e == 1 (parabola) has infinite a; give the semi-latus rectum p instead")
    a, ecc = np.broadcast_arrays(a, ecc)
    if np.any((ecc < 1.0) & (a <= 0.0)):
        raise ValueError(f"an ellipse (e < 1) needs a_km > 0, got a_km = {a_km!r}")
    if np.any((ecc > 1.0) & (a >= 0.0)):
        raise ValueError(f"a hyperbola (e > 1) needs a_km < 0, got a_km = {a_km!r}")
    return Elements(
        p_km=float_or_array(a * (1.0 - ecc) * (1.0 + ecc)),
        e=float_or_array(ecc),
        i_rad=float_or_array(finite("i_rad", i_rad)),
        raan_rad=float_or_array(finite("raan_rad", raan_rad)),
        argp_rad=float_or_array(finite("argp_rad", argp_rad)),
        nu_rad=float_or_array(finite("nu_rad", nu_rad)),
    )


def periapsis_radius_km(elements: Elements) -> float | np.ndarray:
    """Periapsis radius p / (1 + e), km, for any conic (Vallado 4th ed., ch. 1, conic geometry)."""
    if type(elements.p_km) is float and type(elements.e) is float:
        return elements.p_km / (1.0 + elements.e)
    return float_or_array(np.asarray(elements.p_km, dtype=float) / (1.0 + np.asarray(elements.e)))


def apoapsis_radius_km(elements: Elements) -> float | np.ndarray:
    """Apoapsis radius p / (1 - e), km; nan for open orbits, e >= 1 (Vallado 4th ed., ch. 1)."""
    if type(elements.p_km) is float and type(elements.e) is float:
        return elements.p_km / (1.0 - elements.e) if elements.e < 1.0 else math.nan
    p = np.asarray(elements.p_km, dtype=float)
    e = np.asarray(elements.e, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return float_or_array(np.where(e < 1.0, p / (1.0 - e), np.nan))


def period_s(elements: Elements, mu_km3_s2: ArrayLike) -> float | np.ndarray:
    """Orbital period 2 pi sqrt(a^3 / mu), s; nan for open orbits (e >= 1).

    Kepler's third law: Vallado 4th ed., ch. 1; Curtis 3rd ed., section 2.7.
    """
    e_one, mu_one = elements.e, mu_km3_s2
    if type(elements.p_km) is float and type(e_one) is float and type(mu_one) is float:
        if math.isfinite(mu_one) and mu_one > 0.0:
            if e_one >= 1.0:
                return math.nan
            # numpy's power, as the array code raises a 0-d array to the third power
            return TWO_PI * math.sqrt(float(np.power(elements.a_km, 3.0)) / mu_one)
    mu = _mu(mu_km3_s2)
    a = np.asarray(elements.a_km, dtype=float)
    e = np.asarray(elements.e, dtype=float)
    closed = e < 1.0
    # Open orbits get a placeholder a = 1 so the masked-out branch raises no warning.
    period = TWO_PI * np.sqrt(np.where(closed, a, 1.0) ** 3 / mu)
    return float_or_array(np.where(closed, period, np.nan))


def specific_energy_km2_s2(
    r_km: ArrayLike, v_km_s: ArrayLike, mu_km3_s2: ArrayLike
) -> float | np.ndarray:
    """Specific orbital energy v^2 / 2 - mu / r, km^2/s^2 (vis-viva).

    Vallado 4th ed., ch. 1 (specific mechanical energy); Curtis 3rd ed., section 2.5.
    ``r_km``/``v_km_s`` (3,) or (N, 3); ``mu_km3_s2`` > 0.
    """
    if (
        isinstance(r_km, np.ndarray)
        and isinstance(v_km_s, np.ndarray)
        and r_km.shape == v_km_s.shape == (3,)
        and r_km.dtype == v_km_s.dtype == np.float64
        and type(mu_km3_s2) is float
        and math.isfinite(mu_km3_s2)
        and mu_km3_s2 > 0.0
    ):
        (x, y, z), (vx, vy, vz) = r_km.tolist(), v_km_s.tolist()
        if all(map(math.isfinite, (x, y, z, vx, vy, vz))) and (x, y, z) != (0.0, 0.0, 0.0):
            return 0.5 * (vx * vx + vy * vy + vz * vz) - mu_km3_s2 / math.sqrt(
                x * x + y * y + z * z
            )
    r, v = _state(r_km, v_km_s)
    mu = _mu(mu_km3_s2)
    return float_or_array(0.5 * np.sum(v * v, axis=-1) - mu / np.linalg.norm(r, axis=-1))
