"""UTC epochs held as ``numpy.datetime64`` with millisecond resolution.

Plans give epochs in UTC and the report gives them back; time differences are
needed in seconds for propagation. Holding epochs as integer milliseconds keeps
the arithmetic exact to the millisecond, as the report promises.

Approximation, stated once: UTC is treated as a uniform time scale, so a leap
second falling inside a plan would shift later epochs by one second in
propagation (none has been inserted since 2016-12-31, and IERS Bulletin C
announces them six months ahead). Common practice for short plans.
"""

from __future__ import annotations

import numpy as np

MS = np.timedelta64(1, "ms")


def epoch(text_or_value) -> np.datetime64:
    """An epoch at millisecond resolution from an ISO 8601 UTC string (no offset) or datetime64."""
    return np.datetime64(text_or_value, "ms")


def seconds_between(start: np.datetime64, end):
    """``end - start`` in seconds (float, or float array when ``end`` is an array)."""
    return (np.asarray(end, dtype="datetime64[ms]") - start) / MS / 1000.0


def add_seconds(start: np.datetime64, seconds: float) -> np.datetime64:
    """``start + seconds``, rounded to the nearest millisecond (half away from zero)."""
    if not np.isfinite(seconds):
        raise ValueError(f"cannot add a non-finite time span ({seconds!r} s) to an epoch")
    milliseconds = np.sign(seconds) * np.floor(abs(seconds) * 1000.0 + 0.5)
    return start + np.timedelta64(int(milliseconds), "ms")


def format_utc(value: np.datetime64) -> str:
    """ISO 8601 with a ``Z``: whole seconds when the milliseconds are zero, else three decimals."""
    text = np.datetime_as_string(np.datetime64(value, "ms"), unit="ms")
    if text.endswith(".000"):
        text = text[:-4]
    return text + "Z"
