"""UTC, TAI, TT and GPS time: the offsets between them, leap seconds included.

Sources:
- TAI-UTC: IERS Bulletin C, as tabulated in the IERS file Leap_Second.dat (the copy shipped
  in astropy-iers-data 0.2026.11.2 says "File expires on 28 June 2027": no leap second is
  announced before then). The table starts at 1972-01-01, when UTC took whole-second steps;
  epochs before it are refused (the earlier rubber-second UTC is not modelled).
- TT = TAI + 32.184 s (IAU 1991 Resolution A4, via IERS Conventions 2010 section 1.1).
- GPS = TAI - 19 s (GPS time was set equal to UTC at 1980-01-06, when TAI-UTC was 19 s).

After TABLE_VALID_UNTIL the last offset (37 s) is assumed: a leap second announced later
than this table is not known to this module and would shift such epochs by one second.

Labels are numpy datetime64 values that name a clock reading in the given time scale (a TAI
label '2020-01-01T00:00:37' is the instant UTC 2020-01-01T00:00:00). Functions take one label
or an array of them.
"""

from __future__ import annotations

from decimal import Decimal

import numpy as np

# (first UTC day of the offset, TAI-UTC in seconds) -- IERS Bulletin C / Leap_Second.dat.
_LEAP_TABLE = (
    ("1972-01-01", 10),
    ("1972-07-01", 11),
    ("1973-01-01", 12),
    ("1974-01-01", 13),
    ("1975-01-01", 14),
    ("1976-01-01", 15),
    ("1977-01-01", 16),
    ("1978-01-01", 17),
    ("1979-01-01", 18),
    ("1980-01-01", 19),
    ("1981-07-01", 20),
    ("1982-07-01", 21),
    ("1983-07-01", 22),
    ("1985-07-01", 23),
    ("1988-01-01", 24),
    ("1990-01-01", 25),
    ("1991-01-01", 26),
    ("1992-07-01", 27),
    ("1993-07-01", 28),
    ("1994-07-01", 29),
    ("1996-01-01", 30),
    ("1997-07-01", 31),
    ("1999-01-01", 32),
    ("2006-01-01", 33),
    ("2009-01-01", 34),
    ("2012-07-01", 35),
    ("2015-07-01", 36),
    ("2017-01-01", 37),
)
LEAP_UTC_STARTS = np.array([day for day, _ in _LEAP_TABLE], dtype="datetime64[ns]")
TAI_MINUS_UTC_S = np.array([offset for _, offset in _LEAP_TABLE], dtype=np.int64)
TABLE_START = np.datetime64("1972-01-01T00:00:00", "ns")
TABLE_VALID_UNTIL = np.datetime64("2027-06-28", "D")  # Leap_Second.dat "File expires on"

TT_MINUS_TAI_S = Decimal("32.184")  # IAU 1991 Resolution A4
GPS_MINUS_TAI_S = Decimal("-19")  # GPS epoch 1980-01-06, TAI-UTC = 19 s then
SCALE_MINUS_TAI_S = {"TAI": Decimal(0), "TT": TT_MINUS_TAI_S, "GPS": GPS_MINUS_TAI_S}
SUPPORTED = ("UTC", "TAI", "TT", "GPS")

_NS = np.int64(1_000_000_000)
_TAI_STARTS = LEAP_UTC_STARTS + TAI_MINUS_UTC_S * _NS.astype("timedelta64[ns]")


class TimeScaleError(ValueError):
    """An epoch this module cannot put on UTC (before 1972, inside a leap second, unknown scale)."""


def _ns(t) -> np.ndarray:
    return np.asarray(t, dtype="datetime64[ns]")


def _scale_offset_ns(scale: str) -> np.timedelta64:
    if scale not in SCALE_MINUS_TAI_S:
        raise TimeScaleError(f"time system {scale!r} is not one of {', '.join(SUPPORTED)}")
    return np.timedelta64(int(SCALE_MINUS_TAI_S[scale] * 10**9), "ns")


def tai_minus_utc_s(utc) -> np.ndarray:
    """TAI-UTC in whole seconds at UTC instant(s) `utc` (from 1972-01-01 on).

    >>> int(tai_minus_utc_s(np.datetime64("2020-01-01")))
    37
    """
    utc = _ns(utc)
    if np.any(utc < TABLE_START):
        raise TimeScaleError("UTC before 1972-01-01 is not modelled (no whole-second UTC)")
    return TAI_MINUS_UTC_S[np.searchsorted(LEAP_UTC_STARTS, utc, side="right") - 1]


def scale_minus_utc_s(label, scale: str) -> np.ndarray:
    """Seconds to subtract from a `scale` label to get UTC (float, for display and tests)."""
    utc = to_utc(label, scale)
    return (_ns(label) - utc).astype(np.int64) / 1e9


def to_utc(label, scale: str) -> np.ndarray:
    """UTC instant(s) of clock reading(s) `label` in `scale` ('UTC', 'TAI', 'TT', 'GPS').

    Refuses labels before 1972-01-01 UTC and labels that fall inside an inserted leap second
    (23:59:60 UTC has no datetime64 value). Resolution: nanoseconds.
    """
    label = _ns(label)
    if scale == "UTC":
        tai_minus_utc_s(label)  # range check
        return label
    tai = label - _scale_offset_ns(scale)
    index = np.searchsorted(_TAI_STARTS, tai, side="right") - 1
    if np.any(index < 0):
        raise TimeScaleError(f"{scale} epoch before 1972-01-01 UTC is not modelled")
    offset = TAI_MINUS_UTC_S[index] * _NS
    nxt = np.minimum(index + 1, len(LEAP_UTC_STARTS) - 1)
    leap_begins = LEAP_UTC_STARTS[nxt] + (TAI_MINUS_UTC_S[index] * _NS).astype("timedelta64[ns]")
    in_leap = (index + 1 < len(LEAP_UTC_STARTS)) & (tai >= leap_begins)
    if np.any(in_leap):
        raise TimeScaleError(
            f"{scale} epoch falls inside a leap second (UTC 23:59:60), which UTC datetime64 "
            "cannot hold"
        )
    return tai - offset.astype("timedelta64[ns]")


def from_utc(utc, scale: str) -> np.ndarray:
    """Clock reading(s) in `scale` at UTC instant(s) `utc` (inverse of to_utc)."""
    utc = _ns(utc)
    offset = tai_minus_utc_s(utc) * _NS
    if scale == "UTC":
        return utc
    return utc + offset.astype("timedelta64[ns]") + _scale_offset_ns(scale)


def utc_offset_s(label_ns: np.datetime64, scale: str) -> Decimal:
    """Exact seconds to subtract from one `scale` label to reach UTC (TAI-UTC + scale-TAI).

    Used where the label carries more digits than nanoseconds (opm_epoch keeps them as Decimal).
    """
    if scale == "UTC":
        tai_minus_utc_s(label_ns)
        return Decimal(0)
    utc = to_utc(label_ns, scale)
    return Decimal(int(tai_minus_utc_s(utc))) + SCALE_MINUS_TAI_S[scale]
