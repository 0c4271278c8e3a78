"""ODM epochs: ASCII time code A (calendar) and B (day of year), put on UTC.

Formats: CCSDS 502.0-B-3 section 7.5.10, which points to CCSDS 301.0-B-4 "Time Code Formats"
(November 2010) section 3.5, ASCII time codes A and B:
    YYYY-MM-DDThh:mm:ss[.d...][Z]   and   YYYY-DDDThh:mm:ss[.d...][Z]
all fields with leading zeros, as many fraction digits as wanted; 'Z' is the only permitted
terminator and means UTC.

Choices (stated in the docs): the UTC instant is rounded to the nearest millisecond, ties to
even; 'Z' on an epoch whose TIME_SYSTEM is not UTC is refused as contradictory; a leap second
(ss = 60, allowed by the NOTE under 7.5.10) is refused because datetime64 cannot hold 23:59:60.
"""

from __future__ import annotations

import calendar
import re
from decimal import ROUND_HALF_EVEN, Decimal

import numpy as np

from service.ccsds import time_systems
from service.ccsds.opm_model import OpmEpoch

_CODE_A = re.compile(r"(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2}):(\d{2})(\.\d+)?(Z?)")
_CODE_B = re.compile(r"(\d{4})-(\d{3})T(\d{2}):(\d{2}):(\d{2})(\.\d+)?(Z?)")


class EpochError(ValueError):
    """The text is not a valid ASCII time code A/B, or cannot be put on UTC."""


def _calendar_day(text: str) -> tuple[str, int, int, int, str | None, str]:
    """(YYYY-MM-DD, hh, mm, ss, fraction, 'Z' or '') or EpochError."""
    match = _CODE_A.fullmatch(text)
    if match:
        year, month, day, hh, mm, ss, frac, zulu = match.groups()
        if not 1 <= int(month) <= 12:
            raise EpochError(f"month {month} is not 01-12")
        last = calendar.monthrange(int(year), int(month))[1]
        if not 1 <= int(day) <= last:
            raise EpochError(f"day {day} is not in {year}-{month} (01-{last:02d})")
        return f"{year}-{month}-{day}", int(hh), int(mm), int(ss), frac, zulu
    match = _CODE_B.fullmatch(text)
    if match:
        year, doy, hh, mm, ss, frac, zulu = match.groups()
        days = 366 if calendar.isleap(int(year)) else 365
        if not 1 <= int(doy) <= days:
            raise EpochError(f"day of year {doy} is not 001-{days:03d} in {year}")
        date = np.datetime64(f"{year}-01-01") + np.timedelta64(int(doy) - 1, "D")
        return str(date), int(hh), int(mm), int(ss), frac, zulu
    raise EpochError(
        "not an ASCII time code A (YYYY-MM-DDThh:mm:ss[.d...][Z]) or B "
        "(YYYY-DDDThh:mm:ss[.d...][Z]) with leading zeros (CCSDS 502.0-B-3 7.5.10, "
        "CCSDS 301.0-B-4 3.5)"
    )


def check_time_code(text: str) -> None:
    """Validate `text` as time code A or B (no time-system conversion): CREATION_DATE etc."""
    _, hh, mm, ss, _, _ = _calendar_day(text)
    _check_clock(hh, mm, ss, allow_leap=True)


def _check_clock(hh: int, mm: int, ss: int, allow_leap: bool) -> None:
    if hh > 23 or mm > 59 or ss > 60 or (ss == 60 and not allow_leap):
        raise EpochError(f"time {hh:02d}:{mm:02d}:{ss:02d} is not a valid time of day")


def parse_epoch(text: str, time_system: str) -> OpmEpoch:
    """Read `text` in `time_system` ('UTC', 'TAI', 'TT', 'GPS') and put it on UTC.

    >>> parse_epoch("2017-001T00:00:37", "TAI").utc
    np.datetime64('2017-01-01T00:00:00.000')
    """
    day, hh, mm, ss, frac, zulu = _calendar_day(text)
    _check_clock(hh, mm, ss, allow_leap=True)
    if ss == 60:
        raise EpochError(
            "a leap second (ss = 60) cannot be represented: burnproof holds UTC as numpy "
            "datetime64, which has no 23:59:60"
        )
    if zulu and time_system != "UTC":
        raise EpochError(f"'Z' marks UTC but TIME_SYSTEM is {time_system}")
    whole = np.datetime64(day, "s") + np.timedelta64(hh * 3600 + mm * 60 + ss, "s")
    fraction = Decimal(frac) if frac else Decimal(0)
    label_ns = whole.astype("datetime64[ns]") + np.timedelta64(
        int((fraction * 10**9).to_integral_value(rounding="ROUND_FLOOR")), "ns"
    )
    try:
        offset = time_systems.utc_offset_s(label_ns, time_system)
    except time_systems.TimeScaleError as error:
        raise EpochError(str(error)) from None
    whole_ms = Decimal(int(whole.astype("datetime64[ms]").astype(np.int64)))
    utc_ms = whole_ms + (fraction - offset) * 1000
    rounded = int(utc_ms.to_integral_value(rounding=ROUND_HALF_EVEN))
    return OpmEpoch(text, time_system, np.datetime64(rounded, "ms"))


def utc_to_opm_epoch(t: np.datetime64) -> OpmEpoch:
    """A UTC instant as an OPM epoch: time code A with millisecond digits, TIME_SYSTEM UTC.

    >>> utc_to_opm_epoch(np.datetime64("2031-05-02T04:10:00")).text
    '2031-05-02T04:10:00.000'
    """
    t = np.datetime64(t)
    if np.isnat(t):
        raise EpochError("not a time (NaT)")
    ms = t.astype("datetime64[ms]")
    if ms != t:
        raise EpochError(f"{t} has digits below the millisecond; round it first")
    text = str(np.datetime_as_string(ms, unit="ms"))
    epoch = parse_epoch(text, "UTC")  # same checks as a read epoch (range, calendar)
    return epoch
