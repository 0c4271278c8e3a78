"""Local orbital frames (RTN, TNW) and their rotation to and from the inertial frame.

Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), section 3.3
("Satellite coordinate systems"), defines these frames under the names RSW and NTW.
burnproof uses the CCSDS names (CCSDS 502.0-B-3, Orbit Data Messages, section 3.2.4.11,
which lists RSW as another name for RTN):

* RTN: R = r/|r| (radial), N = h/|h| (orbit normal, h = r x v), T = N x R (transverse:
  in the orbit plane, perpendicular to R, towards the motion). Vallado's RSW.
* TNW: T = v/|v| (along the velocity), W = h/|h| (orbit normal), N = W x T (in-plane
  normal, towards the inside of the curve). Vallado's NTW lists the axes in the order N, T,
  W, so his N is the opposite of this one.

The two frames share their normal axis and differ by the flight-path angle, a rotation
about it. "GCRF" and "EME2000" are treated as the same inertial frame at this fidelity
(the frame bias between them is a few tens of milliarcseconds, far below what a maneuver
plan resolves), so for them the conversion is the identity.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

LOCAL_FRAMES = ("RTN", "TNW")
INERTIAL_FRAMES = ("GCRF", "EME2000")
FRAMES = LOCAL_FRAMES + INERTIAL_FRAMES

# A frame built on h = r x v is undefined when r and v are (nearly) parallel; below this
# value of |h| / (|r| |v|) (the sine of the angle between them) its axes are mostly noise.
_MIN_SINE_R_V = 1e-12


def _state(r_km: ArrayLike, v_km_s: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Finite float arrays of shape (..., 3), broadcast to each other."""
    r = np.asarray(r_km, dtype=float)
    v = np.asarray(v_km_s, dtype=float)
    if r.ndim not in (1, 2) or r.shape[-1] != 3:
        raise ValueError(f"position must have shape (3,) or (N, 3), got {r.shape}")
    if v.ndim not in (1, 2) or v.shape[-1] != 3:
        raise ValueError(f"velocity must have shape (3,) or (N, 3), got {v.shape}")
    if not (np.all(np.isfinite(r)) and np.all(np.isfinite(v))):
        raise ValueError("position and velocity must be finite")
    try:
        r, v = np.broadcast_arrays(r, v)
    except ValueError:
        raise ValueError(f"position {r.shape} and velocity {v.shape} do not broadcast") from None
    return r, v


def _unit_normal(r: np.ndarray, v: np.ndarray) -> np.ndarray:
    """h / |h|, refusing states whose angular momentum is zero (frame undefined)."""
    h = np.cross(r, v)
    h_norm = np.linalg.norm(h, axis=-1)
    scale = np.linalg.norm(r, axis=-1) * np.linalg.norm(v, axis=-1)
    bad = ~(h_norm > _MIN_SINE_R_V * scale)
    if np.any(bad):
        raise ValueError(
            f"local orbital frame undefined: zero angular momentum (zero position, zero "
            f"velocity or rectilinear motion) in {int(np.count_nonzero(bad))} state(s)"
        )
    return h / h_norm[..., None]


def rtn_to_inertial_matrix(r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray:
    """Rotation matrix whose columns are the R, T, N unit vectors in inertial coordinates.

    Source: Vallado, 4th ed. (2013), section 3.3, RSW system (R = r/|r|, W = h/|h|, S = W x R).
    Multiplying a column of RTN components by it gives inertial components; its transpose
    does the reverse.

    Parameters: ``r_km`` position (3,) or (N, 3), km; ``v_km_s`` velocity, same shapes,
    km/s. Returns (3, 3) or (N, 3, 3). Raises ValueError if the angular momentum is zero.
    """
    r, v = _state(r_km, v_km_s)
    n_hat = _unit_normal(r, v)
    r_hat = r / np.linalg.norm(r, axis=-1)[..., None]
    t_hat = np.cross(n_hat, r_hat)
    return np.stack((r_hat, t_hat, n_hat), axis=-1)


def tnw_to_inertial_matrix(r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray:
    """Rotation matrix whose columns are the T, N, W unit vectors in inertial coordinates.

    Source: Vallado, 4th ed. (2013), section 3.3, NTW system (T = v/|v|, W = h/|h|). Vallado
    orders the axes N, T, W, so his N = T x W points outward (from memory); CCSDS 502.0-B-3
    section 3.2.4.11 orders them T, N, W with N completing the right-handed set, so here
    N = W x T points inward: the opposite sign.

    Parameters: ``r_km`` position (3,) or (N, 3), km; ``v_km_s`` velocity, same shapes,
    km/s. Returns (3, 3) or (N, 3, 3). Raises ValueError if the angular momentum is zero.
    """
    r, v = _state(r_km, v_km_s)
    w_hat = _unit_normal(r, v)
    t_hat = v / np.linalg.norm(v, axis=-1)[..., None]
    n_hat = np.cross(w_hat, t_hat)
    return np.stack((t_hat, n_hat, w_hat), axis=-1)


def _matrix(frame: str, r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray | None:
    """The local-to-inertial matrix of ``frame``; None for the inertial frames."""
    if frame == "RTN":
        return rtn_to_inertial_matrix(r_km, v_km_s)
    if frame == "TNW":
        return tnw_to_inertial_matrix(r_km, v_km_s)
    if frame in INERTIAL_FRAMES:
        return None
    raise ValueError(f"unknown frame {frame!r}; known: {', '.join(FRAMES)}")


def _matrix_one(frame: str, r_km: ArrayLike, v_km_s: ArrayLike) -> np.ndarray | None:
    """``_matrix`` of RTN or TNW at one (3,) float state in plain floats, or None.

    The trajectory builder turns each burn's delta-v at one state. The same unit vectors
    from the same arithmetic (norms summed in numpy's order) without numpy's per-call cost;
    anything else, or a state the general code refuses, returns None and goes there.
    """
    if frame not in LOCAL_FRAMES or not (
        isinstance(r_km, np.ndarray)
        and isinstance(v_km_s, np.ndarray)
        and r_km.shape == (3,)
        and v_km_s.shape == (3,)
        and r_km.dtype == np.float64
        and v_km_s.dtype == np.float64
    ):
        return None
    r, v = r_km.tolist(), v_km_s.tolist()
    if not all(map(math.isfinite, r + v)):
        return None
    h = _cross(r, v)
    h_norm = _norm(h)
    if not h_norm > _MIN_SINE_R_V * (_norm(r) * _norm(v)):
        return None
    w = [h[0] / h_norm, h[1] / h_norm, h[2] / h_norm]
    if frame == "RTN":
        r_norm = _norm(r)
        radial = [r[0] / r_norm, r[1] / r_norm, r[2] / r_norm]
        columns = (radial, _cross(w, radial), w)
    else:
        v_norm = _norm(v)
        along = [v[0] / v_norm, v[1] / v_norm, v[2] / v_norm]
        columns = (along, _cross(w, along), w)
    return np.array([[column[row] for column in columns] for row in range(3)])


def _cross(a: list, b: list) -> list:
    return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]]


def _norm(a: list) -> float:
    return math.sqrt(a[0] * a[0] + a[1] * a[1] + a[2] * a[2])


def _vector(vector: ArrayLike) -> np.ndarray:
    vec = np.asarray(vector, dtype=float)
    if vec.ndim not in (1, 2) or vec.shape[-1] != 3:
        raise ValueError(f"vector must have shape (3,) or (N, 3), got {vec.shape}")
    if not np.all(np.isfinite(vec)):
        raise ValueError("vector must be finite")
    return vec


def _rotate(vec: np.ndarray, matrix: np.ndarray | None, transpose: bool, r_km, v_km_s):
    if matrix is None:
        # Inertial frames: the state is unused but still sets the broadcast shape.
        shape = np.broadcast_shapes(vec.shape, np.shape(r_km), np.shape(v_km_s))
        return np.array(np.broadcast_to(vec, shape))
    try:
        np.broadcast_shapes(vec.shape[:-1], matrix.shape[:-2])
    except ValueError:
        raise ValueError(
            f"vector {vec.shape} does not broadcast with the state {(*matrix.shape[:-2], 3)}"
        ) from None
    subscripts = "...ji,...j->...i" if transpose else "...ij,...j->...i"
    return np.einsum(subscripts, matrix, vec)


def local_to_inertial(
    vector: ArrayLike, frame: str, r_km: ArrayLike, v_km_s: ArrayLike
) -> np.ndarray:
    """Inertial components of a vector given in ``frame`` at the state (r, v).

    Source: Vallado, 4th ed. (2013), section 3.3 (RSW, NTW); frame names after CCSDS
    502.0-B-3 section 3.2.4.11. ``frame`` is "RTN", "TNW", "GCRF" or "EME2000" (exact,
    upper case); the last two are both taken as the inertial frame (identity).

    Parameters: ``vector`` (3,) or (N, 3), any unit (kept); ``r_km`` position, km, and
    ``v_km_s`` velocity, km/s, (3,) or (N, 3), at which the local frame is evaluated.
    Returns the broadcast (3,) or (N, 3) result. Raises ValueError for an unknown frame,
    non-finite input or a state with zero angular momentum (RTN, TNW).
    """
    vec = _vector(vector)
    matrix = _matrix_one(frame, r_km, v_km_s)
    if matrix is None:
        matrix = _matrix(frame, r_km, v_km_s)
    return _rotate(vec, matrix, False, r_km, v_km_s)


def inertial_to_local(
    vector: ArrayLike, frame: str, r_km: ArrayLike, v_km_s: ArrayLike
) -> np.ndarray:
    """Components in ``frame`` of an inertial vector at the state (r, v).

    Source: Vallado, 4th ed. (2013), section 3.3; the inverse of a rotation matrix is its
    transpose. Same parameters, shapes and errors as :func:`local_to_inertial`.
    """
    vec = _vector(vector)
    matrix = _matrix(frame, r_km, v_km_s)
    return _rotate(vec, matrix, True, r_km, v_km_s)
