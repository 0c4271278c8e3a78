"""Split an ODM text into numbered 'KEYWORD = value' and COMMENT lines, with the line rules.

Source: CCSDS 502.0-B-3 "Orbit Data Messages" (April 2023), section 7.3 (lines) and 7.4
(keyword = value notation); CCSDS 502.0-B-2 (November 2009) has the same rules in its syntax
section (from memory). Checked here, each with the 1-based line number:

- 7.3.2: an OPM line must not exceed 254 ASCII characters (line terminators excluded);
- 7.3.4: only printable ASCII (0x20-0x7E); TAB and every other control character refused;
- 7.3.5: blank lines anywhere, ignored;
- 7.3.7: lines end in CR, LF, CR LF or LF CR (nothing else splits a line);
- 7.4.3-7.4.7: one assignment per line, keyword upper case without blanks, white space
  around the keyword and '=' and at the end of the line not significant;
- 7.8.5: a comment line is 'COMMENT' then a blank, the rest being the comment (its inner
  and leading white space kept; trailing white space dropped under 7.4.7).

The lexer knows no OPM keyword: opm_reader gives the lines their meaning.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

MAX_LINE_CHARS = 254  # CCSDS 502.0-B-3 section 7.3.2
_TERMINATOR = re.compile(r"\r\n|\n\r|\r|\n")  # CCSDS 502.0-B-3 section 7.3.7
_KEYWORD = re.compile(r"[A-Z0-9_]+")  # upper case, digits and underscores (7.4.4, annex F6)


class OpmError(ValueError):
    """One thing wrong with an OPM: where (line, keyword) and what.

    str(error) is "line 42, MAN_DV_1: <what is wrong>", the line and keyword parts left out
    when unknown (None).
    """

    def __init__(self, message: str, line: int | None = None, keyword: str | None = None):
        self.line = line
        self.keyword = keyword
        self.message = message
        super().__init__(str(self))

    def __str__(self) -> str:
        where = []
        if self.line is not None:
            where.append(f"line {self.line}")
        if self.keyword is not None:
            where.append(self.keyword)
        return f"{', '.join(where)}: {self.message}" if where else self.message

    def __repr__(self) -> str:
        return f"OpmError({self.message!r}, line={self.line!r}, keyword={self.keyword!r})"


class OpmErrors(ValueError):
    """Every error the reader found in one message, in line order."""

    def __init__(self, errors: tuple[OpmError, ...] | list[OpmError]):
        self.errors = tuple(errors)
        super().__init__("; ".join(str(e) for e in self.errors))


@dataclass(frozen=True)
class KvnLine:
    """One non-blank line: a comment (keyword 'COMMENT') or a 'KEYWORD = value' assignment.

    `value` is the text right of '=' with surrounding white space removed (for a comment:
    the text after 'COMMENT '). Units are not split off here: only numeric keywords have them.
    """

    number: int
    keyword: str
    value: str

    @property
    def is_comment(self) -> bool:
        return self.keyword == "COMMENT"


def split_lines(text: str) -> list[str]:
    """Split on the four terminators of 7.3.7 only (str.splitlines would also split on
    form feeds, vertical tabs and Unicode separators, which are errors here, not line ends)."""
    lines = _TERMINATOR.split(text)
    if lines and lines[-1] == "":
        lines.pop()
    return lines


def _character_error(raw: str, number: int) -> OpmError | None:
    for column, char in enumerate(raw, start=1):
        if not (" " <= char <= "~"):
            what = "a TAB" if char == "\t" else f"character U+{ord(char):04X}"
            return OpmError(
                f"{what} at column {column}: only printable ASCII and blanks are allowed "
                "(CCSDS 502.0-B-3 7.3.4)",
                number,
            )
    return None


def lex(text: str) -> tuple[list[KvnLine], list[OpmError]]:
    """Return the non-blank lines of `text` as KvnLine, and the line-rule errors found.

    Every line is checked, so one call reports all its bad lines, not just the first.
    """
    lines: list[KvnLine] = []
    errors: list[OpmError] = []
    for number, raw in enumerate(split_lines(text), start=1):
        if len(raw) > MAX_LINE_CHARS:
            errors.append(
                OpmError(
                    f"line is {len(raw)} characters long; an OPM line must not exceed "
                    f"{MAX_LINE_CHARS} (CCSDS 502.0-B-3 7.3.2)",
                    number,
                    _guess_keyword(raw),
                )
            )
            continue
        bad_char = _character_error(raw, number)
        if bad_char is not None:
            bad_char.keyword = _guess_keyword(raw)
            errors.append(OpmError(bad_char.message, number, bad_char.keyword))
            continue
        stripped = raw.strip()
        if not stripped:
            continue
        line, error = _parse_line(stripped, number)
        if error is not None:
            errors.append(error)
        elif line is not None:
            lines.append(line)
    return lines, errors


def _guess_keyword(raw: str) -> str | None:
    head = raw.strip().split("=", 1)[0].strip().split(" ", 1)[0]
    return head if head and _KEYWORD.fullmatch(head) else None


def _parse_line(stripped: str, number: int) -> tuple[KvnLine | None, OpmError | None]:
    if stripped == "COMMENT":
        return KvnLine(number, "COMMENT", ""), None
    if stripped.startswith("COMMENT "):
        return KvnLine(number, "COMMENT", stripped[len("COMMENT ") :]), None
    if "=" not in stripped:
        head = stripped.split(" ", 1)[0]
        return None, OpmError(
            "not a 'KEYWORD = value' line nor a COMMENT line (CCSDS 502.0-B-3 7.4.1, 7.8.5)",
            number,
            head if _KEYWORD.fullmatch(head) else None,
        )
    keyword, value = (part.strip() for part in stripped.split("=", 1))
    if not keyword:
        return None, OpmError("'=' with no keyword before it", number)
    if not _KEYWORD.fullmatch(keyword):
        if _KEYWORD.fullmatch(keyword.upper()):
            message = "keywords must be upper case (CCSDS 502.0-B-3 7.4.4)"
        else:
            message = (
                "a keyword is upper-case letters, digits and underscores, without blanks "
                "(CCSDS 502.0-B-3 7.4.4); one assignment per line (7.4.3)"
            )
        return None, OpmError(message, number, keyword)
    return KvnLine(number, keyword, value), None
