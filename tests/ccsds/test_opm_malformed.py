"""Malformed OPMs: each is refused with the line number and keyword of its fault.

Every case starts from the invented valid message of opm_samples (line numbers in its
comments) and breaks one thing. The clause of CCSDS 502.0-B-3 that makes it an error is
named beside each case.
"""

import pytest

from service.ccsds.opm import OpmErrors, parse_opm
from tests.ccsds.opm_samples import inserted, replaced, valid_text

CASES = [
    # (id, text, line, keyword, words in the message)
    ("missing mandatory keyword (table 3-2)", replaced(7, None), 7, "OBJECT_ID", "missing"),
    ("missing state component (table 3-3)", replaced(14, None), 14, "Z", "missing"),
    ("missing ORIGINATOR at the end of header", replaced(4, None), 4, "ORIGINATOR", "missing"),
    ("repeated keyword (7.4.8)", inserted(13, "Y = 1.0"), 14, "Y", "repeated"),
    ("repeated keyword after its block", inserted(20, "X = 1.0"), 21, "X", "repeated"),
    (
        "repeated user-defined name",
        inserted(29, "USER_DEFINED_BURNPROOF_PLAN_ID = again"),
        30,
        "USER_DEFINED_BURNPROOF_PLAN_ID",
        "repeated",
    ),
    ("unknown frame (3.2.3.3)", replaced(9, "REF_FRAME = J2001"), 9, "REF_FRAME", "frame"),
    ("mixed-case frame (7.5.3)", replaced(9, "REF_FRAME = Gcrf"), 9, "REF_FRAME", "frame"),
    (
        "unknown maneuver frame (3.2.4.11)",
        replaced(25, "MAN_REF_FRAME = LVLH"),
        25,
        "MAN_REF_FRAME",
        "frame",
    ),
    ("bad epoch (7.5.10)", replaced(11, "EPOCH = 2031-13-02T00:00:00"), 11, "EPOCH", "month"),
    ("epoch not a time code", replaced(11, "EPOCH = 2031/05/02 00:00"), 11, "EPOCH", "time code"),
    (
        "day of year 366 in 2031",
        replaced(22, "MAN_EPOCH_IGNITION = 2031-366T00:00:00"),
        22,
        "MAN_EPOCH_IGNITION",
        "day of year",
    ),
    ("leap second epoch", replaced(11, "EPOCH = 2016-12-31T23:59:60"), 11, "EPOCH", "leap"),
    ("epoch before 1972", replaced(11, "EPOCH = 1971-12-31T00:00:00"), 11, "EPOCH", "1972"),
    ("bad CREATION_DATE", replaced(3, "CREATION_DATE = yesterday"), 3, "CREATION_DATE", "time"),
    ("wrong unit (7.7.1.1)", replaced(26, "MAN_DV_1 = 12.5 [m/s]"), 26, "MAN_DV_1", "unit"),
    ("unit in the wrong case", replaced(12, "X = 6778.137 [KM]"), 12, "X", "unit"),
    (
        "unit on a dimensionless value",
        replaced(20, "DRAG_COEFF = 2.2 [n/a]"),
        20,
        "DRAG_COEFF",
        "unit",
    ),
    (
        "positive MAN_DELTA_MASS (3.2.4.7)",
        replaced(24, "MAN_DELTA_MASS = 3.3 [kg]"),
        24,
        "MAN_DELTA_MASS",
        "positive",
    ),
    ("negative MAN_DURATION", replaced(23, "MAN_DURATION = -1.0"), 23, "MAN_DURATION", "negative"),
    (
        "line over 254 characters (7.3.2)",
        replaced(6, "OBJECT_NAME = " + "K" * 241),
        6,
        "OBJECT_NAME",
        "255 characters",
    ),
    ("value missing (7.5.1)", replaced(8, "CENTER_NAME ="), 8, "CENTER_NAME", "no value"),
    ("number missing", replaced(16, "Y_DOT = [km/s]"), 16, "Y_DOT", "not a number"),
    ("number with no digit after the point (7.5.6)", replaced(13, "Y = 1."), 13, "Y", "number"),
    ("NaN is not a number", replaced(13, "Y = NaN"), 13, "Y", "number"),
    (
        "unknown keyword (7.9.2.1)",
        inserted(20, "BALLISTIC_COEFF = 1.0"),
        21,
        "BALLISTIC_COEFF",
        "unknown",
    ),
    ("lower-case keyword (7.4.4)", replaced(18, "mass = 602.0"), 18, "mass", "upper case"),
    (
        "maneuver block incomplete (3.2.4.8)",
        replaced(24, None),
        24,
        "MAN_DELTA_MASS",
        "incomplete",
    ),
    (
        "maneuver block out of order",
        replaced(25, "MAN_DV_1 = 0.0125").replace(
            "MAN_DV_1 = 0.0125 [km/s]", "MAN_REF_FRAME = TNW"
        ),
        25,
        "MAN_REF_FRAME",
        "incomplete",
    ),
    (
        "maneuver block without MAN_EPOCH_IGNITION",
        replaced(22, None),
        22,
        "MAN_DURATION",
        "MAN_EPOCH_IGNITION",
    ),
    (
        "maneuver block cut short at the end",
        replaced(28, None).replace("USER_DEFINED_BURNPROOF_PLAN_ID = kite-3-raise-01\n", ""),
        27,
        "MAN_DV_3",
        "missing",
    ),
    (
        "state vector out of order",
        replaced(12, "Y = 0.0").replace("Y = 0.0 [km]", "X = 1.0"),
        13,
        "X",
        "out of order",
    ),
    ("blocks out of order (7.4.8)", inserted(28, "MASS = 1.0"), 29, "MASS", "repeated"),
    ("non-ASCII (7.3.4)", replaced(6, "OBJECT_NAME = KITE\u00a03"), 6, "OBJECT_NAME", "U+00A0"),
    ("TAB (7.3.4)", replaced(6, "OBJECT_NAME =\tKITE 3"), 6, "OBJECT_NAME", "TAB"),
    (
        "TRUE_ANOMALY and MEAN_ANOMALY both given",
        inserted(
            17,
            "SEMI_MAJOR_AXIS = 6778.137\nECCENTRICITY = 0.0\nINCLINATION = 51.6\n"
            "RA_OF_ASC_NODE = 0.0\nARG_OF_PERICENTER = 0.0\nTRUE_ANOMALY = 0.0\n"
            "MEAN_ANOMALY = 0.0\nGM = 398600.4418",
        ),
        24,
        "MEAN_ANOMALY",
        "both",
    ),
    (
        "Keplerian block incomplete (3.1.2)",
        inserted(17, "SEMI_MAJOR_AXIS = 6778.137\nECCENTRICITY = 0.0"),
        20,
        "INCLINATION",
        "missing",
    ),
    ("refused time system TDB", replaced(10, "TIME_SYSTEM = TDB"), 10, "TIME_SYSTEM", "TDB"),
    ("refused time system UT1", replaced(10, "TIME_SYSTEM = UT1"), 10, "TIME_SYSTEM", "UT1"),
    ("unknown time system", replaced(10, "TIME_SYSTEM = LOCAL"), 10, "TIME_SYSTEM", "3.2.3.2"),
    (
        "Z with TIME_SYSTEM TAI",
        replaced(10, "TIME_SYSTEM = TAI").replace(
            "EPOCH = 2031-05-02T00:00:00.000", "EPOCH = 2031-05-02T00:00:00Z"
        ),
        11,
        "EPOCH",
        "'Z'",
    ),
    ("comment inside a block (7.8.7)", inserted(13, "COMMENT no"), 14, "COMMENT", "inside"),
    ("comment at the end", valid_text() + "COMMENT trailing\n", 30, "COMMENT", "end"),
    (
        "comment before user-defined",
        inserted(28, "COMMENT about the id"),
        29,
        "COMMENT",
        "not allowed",
    ),
    ("first line not the version (7.3.6)", replaced(1, None), 1, "COMMENT", "first"),
    ("unknown version", replaced(1, "CCSDS_OPM_VERS = 1.0"), 1, "CCSDS_OPM_VERS", "version"),
    ("maneuver without MASS (3.2.4.9)", replaced(18, None), 21, "MASS", "3.2.4.9"),
    (
        "no state vector",
        "\n".join(valid_text().splitlines()[:10]) + "\n",
        10,
        "EPOCH",
        "absent",
    ),
    ("not a keyword line", inserted(5, "JUST SOME TEXT"), 6, "JUST", "KEYWORD = value"),
]


@pytest.mark.parametrize(
    ("text", "line", "keyword", "words"),
    [case[1:] for case in CASES],
    ids=[case[0] for case in CASES],
)
def test_malformed_message_names_line_and_keyword(text, line, keyword, words):
    with pytest.raises(OpmErrors) as caught:
        parse_opm(text)
    first = caught.value.errors[0]
    assert (first.line, first.keyword) == (line, keyword), str(caught.value)
    assert words in first.message, first.message
    assert str(first).startswith(f"line {line}, {keyword}: ")


def test_the_valid_base_message_reads():
    assert parse_opm(valid_text()).metadata.object_name == "KITE 3"


def test_empty_message():
    with pytest.raises(OpmErrors) as caught:
        parse_opm("\n \n")
    assert caught.value.errors[0].line is None
    assert "empty" in str(caught.value)


@pytest.mark.parametrize("junk", ["\x00\xff" * 40, '{"plan_id": 1}', "<opm/>", "=" * 300])
def test_garbage_is_an_opm_error_never_another_exception(junk):
    with pytest.raises(OpmErrors):
        parse_opm(junk)
