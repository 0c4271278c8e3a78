"""Argument checks shared by the core: a bad value raises ValueError naming it, never a clamp."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

FloatOrArray = np.float64 | np.ndarray


def finite(name: str, value: ArrayLike) -> np.ndarray:
    """``value`` as a float array, or ValueError if any element is NaN or infinite."""
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return array


def positive(name: str, value: ArrayLike) -> np.ndarray:
    """``value`` as a float array, or ValueError unless every element is finite and > 0."""
    array = finite(name, value)
    if np.any(array <= 0.0):
        raise ValueError(f"{name} must be positive, got {value!r}")
    return array


def non_negative(name: str, value: ArrayLike) -> np.ndarray:
    """``value`` as a float array, or ValueError unless every element is finite and >= 0."""
    array = finite(name, value)
    if np.any(array < 0.0):
        raise ValueError(f"{name} must not be negative, got {value!r}")
    return array


def scalar_or_array(value: np.ndarray) -> FloatOrArray:
    """0-d results as numpy float64 scalars, arrays unchanged."""
    return value[()] if isinstance(value, np.ndarray) and value.ndim == 0 else value


def float_or_array(array: ArrayLike) -> float | np.ndarray:
    """0-d results as plain Python floats, arrays unchanged."""
    array = np.asarray(array, dtype=float)
    return float(array) if array.ndim == 0 else array
