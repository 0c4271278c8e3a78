"""Julian dates and centuries of UTC epochs (service.dynamics.timescales) against pyerfa."""

from __future__ import annotations

import erfa
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.dynamics.timescales import (
    epochs_ms,
    julian_centuries_j2000,
    julian_date_utc,
    milliseconds_since_j2000,
)


def test_reference_epochs():
    # Meeus, Astronomical Algorithms, 2nd ed., chapter 7: J2000.0 = 2000-01-01T12:00 is JD
    # 2451545.0 and 1970-01-01T00:00 is JD 2440587.5; 2100-01-01T12:00 is 36525 days on.
    assert julian_date_utc(np.datetime64("2000-01-01T12:00:00")) == 2451545.0
    assert julian_date_utc(np.datetime64("1970-01-01T00:00:00")) == 2440587.5
    assert julian_centuries_j2000(np.datetime64("2100-01-01T12:00:00")) == 1.0
    assert julian_centuries_j2000(np.datetime64("2000-01-01T12:00:00")) == 0.0


# erfa flags years beyond its leap-second table as "dubious"; the calendar arithmetic is exact.
@pytest.mark.filterwarnings("ignore:.*dubious year:erfa.ErfaWarning")
@settings(max_examples=200, deadline=None)
@given(st.integers(-1_577_880_000_000, 1_577_880_000_000))
def test_julian_date_matches_erfa_dtf2d(ms_from_j2000):
    # pyerfa dtf2d("UTC", ...) gives the two-part JD of a calendar date (no leap second inside
    # the day except on leap-second days, where erfa stretches the day: those are skipped).
    when = np.datetime64("2000-01-01T12:00:00", "ms") + np.timedelta64(ms_from_j2000, "ms")
    stamp = when.astype(object)
    day_start = np.datetime64(when, "D")
    d1, d2 = erfa.dtf2d("UTC", stamp.year, stamp.month, stamp.day, 0, 0, 0.0)
    _, d2_next = erfa.dtf2d("UTC", *_next_day(day_start), 0, 0, 0.0)
    if abs((d2_next - d2) % 1.0) > 1e-12:
        return
    day_fraction = (when - day_start) / np.timedelta64(86_400_000, "ms")
    assert julian_date_utc(when) == pytest.approx(d1 + d2 + day_fraction, abs=1e-9)
    assert milliseconds_since_j2000(when) == ms_from_j2000


def _next_day(day: np.datetime64) -> tuple[int, int, int]:
    nxt = (day + np.timedelta64(1, "D")).astype(object)
    return nxt.year, nxt.month, nxt.day


def test_shapes_follow_the_epochs():
    times = np.array(["2024-03-01T00:00:00", "2024-03-02T06:00:00"], dtype="datetime64[ms]")
    assert julian_date_utc(times).shape == (2,)
    assert np.allclose(np.diff(julian_date_utc(times)), 1.25, rtol=0, atol=1e-9)
    assert isinstance(julian_centuries_j2000(times[0]), float)
    assert julian_centuries_j2000(times.reshape(2, 1)).shape == (2, 1)


def test_iso_strings_are_accepted_and_nat_refused():
    assert epochs_ms("2024-03-01T00:00:00.250").dtype == np.dtype("datetime64[ms]")
    with pytest.raises(ValueError, match="NaT"):
        julian_date_utc(np.array(["2024-03-01", "NaT"], dtype="datetime64[ms]"))
    with pytest.raises(ValueError, match="datetime64"):
        julian_date_utc("not a date")
