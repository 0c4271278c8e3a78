"""UTC/TAI/TT/GPS offsets against an independent reference: pyerfa's erfa.dat (SOFA iauDat),
the IERS Leap_Second.dat shipped in astropy-iers-data, and the defining constants
(TT - TAI = 32.184 s, IAU 1991 Resolution A4; TAI - GPS = 19 s)."""

from decimal import Decimal
from pathlib import Path

import astropy_iers_data
import erfa
import numpy as np
import pytest

from service.ccsds import time_systems as ts
from service.ccsds.opm_epoch import EpochError, parse_epoch

RNG = np.random.default_rng(20261202)
# 2000 instants from 1972 to 2026, plus one second either side of every leap second
_SPAN_S = int((np.datetime64("2026-12-31") - np.datetime64("1972-01-01")) / np.timedelta64(1, "s"))
SAMPLES = np.datetime64("1972-01-01T00:00:00", "ns") + (
    RNG.integers(0, _SPAN_S, 2000) * 10**9 + RNG.integers(0, 10**9, 2000)
).astype("timedelta64[ns]")
EDGES = np.concatenate([ts.LEAP_UTC_STARTS[1:] - np.timedelta64(1, "s"), ts.LEAP_UTC_STARTS[1:]])
UTC = np.concatenate([SAMPLES, EDGES, ts.LEAP_UTC_STARTS[:1]])


def erfa_dat(utc: np.ndarray) -> np.ndarray:
    days = utc.astype("datetime64[D]")
    years = days.astype("datetime64[Y]").astype(int) + 1970
    months = days.astype("datetime64[M]").astype(int) % 12 + 1
    dom = (days - days.astype("datetime64[M]")).astype(int) + 1
    fraction = (utc - days).astype(np.int64) / 86400e9
    return erfa.dat(years, months, dom, fraction)


def test_tai_minus_utc_matches_erfa_dat_on_many_epochs():
    np.testing.assert_array_equal(ts.tai_minus_utc_s(UTC), erfa_dat(UTC).astype(int))


@pytest.mark.parametrize(("scale", "extra_s"), [("TAI", 0.0), ("TT", 32.184), ("GPS", -19.0)])
def test_scale_labels_go_back_to_utc_with_erfa_offsets(scale, extra_s):
    offset_ns = np.round((erfa_dat(UTC) + extra_s) * 1e9).astype(np.int64)
    labels = UTC + offset_ns.astype("timedelta64[ns]")
    np.testing.assert_array_equal(ts.to_utc(labels, scale), UTC)
    np.testing.assert_array_equal(ts.from_utc(UTC, scale), labels)


def test_table_equals_iers_leap_second_file():
    path = Path(astropy_iers_data.__file__).parent / "data" / "Leap_Second.dat"
    rows = [
        line.split() for line in path.read_text().splitlines() if line and line[0] != "#"
    ]  # MJD, day, month, year, TAI-UTC
    table = [(f"{int(r[3]):04d}-{int(r[2]):02d}-{int(r[1]):02d}", int(r[4])) for r in rows]
    ours = [
        (str(d.astype("datetime64[D]")), int(o))
        for d, o in zip(ts.LEAP_UTC_STARTS, ts.TAI_MINUS_UTC_S, strict=True)
    ]
    assert ours == table
    assert "File expires on 28 June 2027" in path.read_text()
    assert ts.TABLE_VALID_UNTIL == np.datetime64("2027-06-28")


def test_defining_offsets():
    at = np.datetime64("2031-05-02T00:00:00", "ns")
    assert ts.scale_minus_utc_s(ts.from_utc(at, "TT"), "TT") == pytest.approx(69.184)
    assert ts.scale_minus_utc_s(ts.from_utc(at, "GPS"), "GPS") == 18.0
    assert ts.utc_offset_s(ts.from_utc(at, "TT"), "TT") == Decimal("69.184")


def test_after_the_table_the_last_offset_holds():
    assert int(ts.tai_minus_utc_s(np.datetime64("2040-01-01"))) == 37


def test_before_1972_is_refused():
    with pytest.raises(ts.TimeScaleError):
        ts.tai_minus_utc_s(np.datetime64("1971-12-31T23:59:59"))
    with pytest.raises(ts.TimeScaleError):
        ts.to_utc(np.datetime64("1972-01-01T00:00:05"), "TAI")  # = 1971-12-31T23:59:55 UTC


def test_an_instant_inside_a_leap_second_is_refused_in_every_scale():
    # 2016-12-31T23:59:60.5 UTC = 2017-01-01T00:00:36.5 TAI (TAI-UTC was 36 s before it)
    with pytest.raises(ts.TimeScaleError):
        ts.to_utc(np.datetime64("2017-01-01T00:00:36.500"), "TAI")
    with pytest.raises(EpochError):
        parse_epoch("2017-001T00:01:08.684", "TT")
    # the instants just outside it are fine
    assert ts.to_utc(np.datetime64("2017-01-01T00:00:37"), "TAI") == np.datetime64("2017-01-01")
    assert ts.to_utc(np.datetime64("2017-01-01T00:00:35.999"), "TAI") == np.datetime64(
        "2016-12-31T23:59:59.999"
    )


def test_unknown_scale():
    with pytest.raises(ts.TimeScaleError):
        ts.to_utc(np.datetime64("2020-01-01"), "TDB")
