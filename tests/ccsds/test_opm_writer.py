"""write_opm: KVN text that parse_opm reads back to an equal message (property test), the
layout of CCSDS 502.0-B-3 section 7, and the refusals of what cannot be written faithfully."""

from decimal import Decimal

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from service.ccsds.opm import (
    OpmHeader,
    OpmKeplerian,
    OpmManeuver,
    OpmMessage,
    OpmMetadata,
    OpmSpacecraft,
    OpmStateVector,
    parse_opm,
    utc_to_opm_epoch,
    write_opm,
)
from service.ccsds.opm_epoch import parse_epoch
from service.ccsds.opm_tables import COVARIANCE_KEYS
from service.ccsds.opm_writer import format_decimal
from tests.ccsds.opm_samples import valid_text


def decimals(min_value=None, max_value=None):
    """Decimals of at most 16 digits (7.5.6), plain or with an exponent, in a range."""
    mantissa = st.integers(-(10**16) + 1, 10**16 - 1)
    value = st.builds(lambda m, e: Decimal(m).scaleb(e), mantissa, st.integers(-40, 12))
    if min_value is not None:
        value = value.filter(lambda d: d >= min_value)
    if max_value is not None:
        value = value.filter(lambda d: d <= max_value)
    return value


UTC_MS = st.integers(
    int(np.datetime64("1972-01-01T00:00:01", "ms").astype(np.int64)),
    int(np.datetime64("2099-12-31T23:59:59", "ms").astype(np.int64)),
).map(lambda ms: np.datetime64(ms, "ms"))
SCALE = st.sampled_from(["UTC", "TAI", "TT", "GPS"])
TEXT = st.text(st.characters(min_codepoint=0x21, max_codepoint=0x7E), min_size=1, max_size=30)
COMMENT = st.text(st.characters(min_codepoint=0x20, max_codepoint=0x7E), max_size=60).map(
    str.rstrip
)
COMMENTS = st.lists(COMMENT, max_size=3).map(tuple)
VEC = st.tuples(decimals(), decimals(), decimals())


@st.composite
def epochs(draw, scale):
    utc = draw(UTC_MS)
    text = str(np.datetime_as_string(utc, unit="ms"))
    if draw(st.booleans()):  # time code B
        day = utc.astype("datetime64[D]")
        doy = int((day - day.astype("datetime64[Y]")).astype(int)) + 1
        text = f"{text[:4]}-{doy:03d}{text[10:]}"
    try:
        return parse_epoch(text, scale)
    except ValueError:
        return parse_epoch("2031-05-02T00:00:00", scale)  # a leap-second label: rare


@st.composite
def messages(draw):
    scale = draw(SCALE)
    version = draw(st.sampled_from(["2.0", "3.0"]))
    message_id = draw(st.none() | TEXT) if version == "3.0" else None
    header = OpmHeader(version, "2031-04-30T12:00:00", draw(TEXT), message_id, draw(COMMENTS))
    metadata = OpmMetadata(
        draw(TEXT),
        draw(TEXT),
        "EARTH",
        draw(st.sampled_from(["GCRF", "EME2000", "ICRF"])),
        None,
        scale,
        draw(COMMENTS),
    )
    state = OpmStateVector(draw(epochs(scale)), draw(VEC), draw(VEC), draw(COMMENTS))
    keplerian = None
    if draw(st.booleans()):
        true_anomaly = draw(st.booleans())
        anomaly = draw(decimals())
        keplerian = OpmKeplerian(
            draw(decimals()),
            draw(decimals(min_value=0)),
            draw(decimals()),
            draw(decimals()),
            draw(decimals()),
            anomaly if true_anomaly else None,
            None if true_anomaly else anomaly,
            draw(decimals(min_value=Decimal("1E-30"))),
            draw(COMMENTS),
        )
    maneuvers = tuple(
        OpmManeuver(
            draw(epochs(scale)),
            draw(decimals(min_value=0)),
            draw(decimals(max_value=0)),
            draw(st.sampled_from(["RTN", "TNW", "RSW", "GCRF"])),
            draw(VEC),
            0,
            draw(COMMENTS),
        )
        for _ in range(draw(st.integers(0, 3)))
    )
    spacecraft = None
    if maneuvers or draw(st.booleans()):
        optional = st.none() | decimals(min_value=0)
        spacecraft = OpmSpacecraft(
            draw(decimals(min_value=0)),
            draw(optional),
            draw(optional),
            draw(optional),
            draw(optional),
            draw(COMMENTS),
        )
    covariance = None
    if draw(st.booleans()):
        covariance = tuple((key, draw(decimals())) for key in COVARIANCE_KEYS)
    names = draw(
        st.lists(st.from_regex(r"[A-Z][A-Z0-9_]{0,20}", fullmatch=True), unique=True, max_size=3)
    )
    user = tuple((name, draw(TEXT)) for name in names)
    return OpmMessage(
        header,
        metadata,
        state,
        keplerian,
        spacecraft,
        covariance,
        maneuvers,
        user,
        covariance_ref_frame=draw(st.none() | st.just("RTN")) if covariance else None,
        covariance_comments=draw(COMMENTS) if covariance else (),
    )


@given(messages())
def test_parse_of_write_is_the_same_message(message):
    text = write_opm(message)
    assert text.isascii() and text.endswith("\n")
    assert all(len(line) <= 254 for line in text.split("\n"))
    assert parse_opm(text) == message


@given(decimals())
def test_format_decimal_reads_back_exactly(value):
    text = format_decimal(value)
    assert Decimal(text) == value
    assert "." in text or "E" not in text


def test_format_decimal_keeps_the_digits_written():
    assert format_decimal(Decimal("0.0125")) == "0.0125"
    assert format_decimal(Decimal("1913.000")) == "1913.000"
    assert format_decimal(Decimal("-0.00893444")) == "-0.00893444"
    assert format_decimal(Decimal("3.331349476038534e-04")) == "0.0003331349476038534"
    assert format_decimal(Decimal("4.94E-300")) == "4.94E-300"
    assert format_decimal(Decimal("1E+300")) == "1.0E+300"
    with pytest.raises(ValueError):
        format_decimal(Decimal("NaN"))


def test_layout_aligned_with_units_and_comments():
    text = write_opm(parse_opm(valid_text()))
    lines = text.splitlines()
    assert lines[0] == "CCSDS_OPM_VERS       = 3.0"
    assert "COMMENT invented test message" in lines
    assert "MAN_DV_1             = 0.0125 [km/s]" in lines
    assert "MAN_DELTA_MASS       = -3.3 [kg]" in lines
    assert "DRAG_AREA            = 4.2 [m**2]" in lines
    assert "DRAG_COEFF           = 2.2" in lines
    assert "USER_DEFINED_BURNPROOF_PLAN_ID = kite-3-raise-01" in lines


def _small(**header) -> OpmMessage:
    m = parse_opm(valid_text().replace("CCSDS_OPM_VERS = 3.0", "CCSDS_OPM_VERS = 3.0"))
    fields = {**m.header.__dict__, **header}
    return OpmMessage(
        OpmHeader(**fields),
        *[
            getattr(m, f)
            for f in (
                "metadata",
                "state",
                "keplerian",
                "spacecraft",
                "covariance",
                "maneuvers",
                "user_defined",
            )
        ],
    )


def test_version_2_by_default_and_3_when_a_message_id_is_carried():
    assert write_opm(_small(version="2.0", message_id=None)).startswith(
        "CCSDS_OPM_VERS       = 2.0\n"
    )
    assert write_opm(_small(version="2.0", message_id="X-1")).startswith(
        "CCSDS_OPM_VERS       = 3.0\n"
    )


@pytest.mark.parametrize(
    "change",
    [
        {"originator": "O" * 240},  # line over 254 characters
        {"originator": "caf\u00e9"},  # not ASCII
        {"comments": ("trailing blank ",)},  # a reader would drop it
        {"originator": ""},  # empty mandatory value
    ],
)
def test_what_cannot_be_written_faithfully_is_refused(change):
    with pytest.raises(ValueError):
        write_opm(_small(**change))


def test_epoch_in_another_time_system_than_the_metadata_is_refused():
    m = parse_opm(valid_text())
    state = OpmStateVector(
        parse_epoch("2031-05-02T00:00:37", "TAI"),
        *[getattr(m.state, f) for f in ("position_km", "velocity_km_s", "comments")],
    )
    bad = OpmMessage(m.header, m.metadata, state, None, m.spacecraft, None, m.maneuvers, ())
    with pytest.raises(ValueError, match="one time system"):
        write_opm(bad)


def test_utc_to_opm_epoch():
    epoch = utc_to_opm_epoch(np.datetime64("2031-05-02T04:10:00"))
    assert (epoch.text, epoch.time_system) == ("2031-05-02T04:10:00.000", "UTC")
    assert epoch.utc == np.datetime64("2031-05-02T04:10:00.000")
    assert epoch.utc.dtype == np.dtype("datetime64[ms]")
    for bad in (
        np.datetime64("NaT"),
        np.datetime64("2031-05-02T04:10:00.0001"),
        np.datetime64("1960-01-01"),
    ):
        with pytest.raises(ValueError):
            utc_to_opm_epoch(bad)
