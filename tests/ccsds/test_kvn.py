"""The KVN line rules of CCSDS 502.0-B-3 section 7.3-7.4 and 7.8.5 (service/ccsds/kvn.py)."""

import pytest

from service.ccsds.kvn import MAX_LINE_CHARS, OpmError, OpmErrors, lex, split_lines


def test_the_four_line_terminators_of_7_3_7_and_nothing_else():
    assert split_lines("A = 1\rB = 2\nC = 3\r\nD = 4\n\rE = 5\n") == [
        "A = 1",
        "B = 2",
        "C = 3",
        "D = 4",
        "E = 5",
    ]
    # a form feed or a Unicode line separator is not a line end (str.splitlines would split)
    assert split_lines("A = 1\x0cB = 2") == ["A = 1\x0cB = 2"]
    assert split_lines("A = 1\u2028B") == ["A = 1\u2028B"]


def test_blank_lines_are_ignored_and_numbers_kept():
    lines, errors = lex("\n  \nCCSDS_OPM_VERS = 2.0\n\nORIGINATOR   =   X Y  \n")
    assert errors == []
    assert [(line.number, line.keyword, line.value) for line in lines] == [
        (3, "CCSDS_OPM_VERS", "2.0"),
        (5, "ORIGINATOR", "X Y"),
    ]


def test_comment_keeps_inner_and_leading_blanks_but_not_trailing():
    lines, errors = lex("COMMENT   two  blanks   \nCOMMENT\n")
    assert errors == []
    assert [line.value for line in lines] == ["  two  blanks", ""]
    assert all(line.is_comment for line in lines)


def test_line_of_exactly_254_characters_is_accepted_and_255_refused():
    ok = "OBJECT_NAME = " + "A" * (MAX_LINE_CHARS - len("OBJECT_NAME = "))
    assert len(ok) == 254
    assert lex(ok)[1] == []
    _, errors = lex("X = 1\n" + ok + "B\n")
    assert len(errors) == 1
    assert (errors[0].line, errors[0].keyword) == (2, "OBJECT_NAME")
    assert "255 characters" in errors[0].message and "7.3.2" in errors[0].message


@pytest.mark.parametrize(
    ("text", "column"),
    [("OBJECT_NAME = K\u00e9TE", 16), ("X =\t1.0", 4), ("OBJECT_NAME = A\x00", 16)],
)
def test_non_ascii_and_control_characters_name_line_and_column(text, column):
    _, errors = lex("A = 1\n" + text)
    assert errors[0].line == 2
    assert f"column {column}" in errors[0].message


def test_every_bad_line_is_reported_not_only_the_first():
    _, errors = lex("A = \u00e9\nB = 1\nlower = 2\nNOEQUALS\n")
    assert [(e.line, e.keyword) for e in errors] == [(1, "A"), (3, "lower"), (4, "NOEQUALS")]
    assert "upper case" in errors[1].message


def test_keyword_with_a_blank_is_refused():
    _, errors = lex("OBJECT NAME = X\n")
    assert errors[0].line == 1 and "without blanks" in errors[0].message


def test_error_text_names_line_and_keyword():
    assert str(OpmError("bad", 42, "MAN_DV_1")) == "line 42, MAN_DV_1: bad"
    assert str(OpmError("bad", None, "MASS")) == "MASS: bad"
    assert str(OpmError("bad")) == "bad"
    both = OpmErrors([OpmError("a", 1, "X"), OpmError("b", 2, "Y")])
    assert str(both) == "line 1, X: a; line 2, Y: b"
    assert isinstance(both, ValueError)
