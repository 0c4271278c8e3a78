"""Read an OPM in KVN into an OpmMessage, or say every line, keyword and fault that stops it.

Source: CCSDS 502.0-B-3 (April 2023) section 3 (OPM) and section 7 (syntax); versions 2.0
(CCSDS 502.0-B-2, November 2009) and 3.0. The walk goes through the blocks of tables 3-1..3-3
in the standard's order (7.4.8); within a block each keyword comes once and in order;
COMMENT lines only where 7.8.7 puts them (right after CCSDS_OPM_VERS, at the start of the
metadata, at the start of a data block). Value faults (number, unit, epoch, frame) are
collected for every line; the first fault of structure (order, repeat, missing keyword)
ends the walk, since what follows it cannot be placed.
"""

from __future__ import annotations

from decimal import Decimal
from typing import NoReturn

from service.ccsds import opm_tables as tables
from service.ccsds import time_systems
from service.ccsds.kvn import KvnLine, OpmError, OpmErrors, lex
from service.ccsds.opm_epoch import EpochError, check_time_code, parse_epoch
from service.ccsds.opm_model import (
    OpmEpoch,
    OpmMessage,
)

_NON_NEGATIVE = {
    "MASS",
    "SOLAR_RAD_AREA",
    "SOLAR_RAD_COEFF",
    "DRAG_AREA",
    "DRAG_COEFF",
    "MAN_DURATION",
    "ECCENTRICITY",
}


class _Stop(Exception):
    """A structural fault: the walk cannot go on."""


class _Chunk:
    """The lines of one block as read: its comments, {keyword: (line, value)} in order."""

    def __init__(self, block: tables.Block, comments: list[KvnLine]):
        self.block = block
        self.comments = tuple(c.value for c in comments)
        self.first_line = comments[0].number if comments else None
        self.values: dict[str, tuple[int, object]] = {}
        self.position = -1  # index in block.keys of the last keyword read
        self.last_line = 0


class _Reader:
    def __init__(self, lines: list[KvnLine]):
        self.lines = lines
        self.errors: list[OpmError] = []
        self.chunks: list[_Chunk] = []
        self.time_system: str | None = None
        self.version: str | None = None

    def fail(self, message: str, line: int | None, keyword: str | None) -> None:
        self.errors.append(OpmError(message, line, keyword))

    def stop(self, message: str, line: int | None, keyword: str | None) -> NoReturn:
        self.fail(message, line, keyword)
        raise _Stop

    # -- structure ------------------------------------------------------------------------
    def walk(self) -> None:
        if not self.lines:
            self.stop("the message is empty", None, None)
        first = self.lines[0]
        if first.keyword != "CCSDS_OPM_VERS":
            self.stop(
                "the first non-blank line must be CCSDS_OPM_VERS (CCSDS 502.0-B-3 7.3.6)",
                first.number,
                first.keyword,
            )
        pending: list[KvnLine] = []
        current: _Chunk | None = None
        for line in self.lines:
            if line.is_comment:
                if (
                    current is not None
                    and current.block is tables.HEADER
                    and current.position == 0
                    and not pending
                ):
                    current.comments += (line.value,)  # right after CCSDS_OPM_VERS
                    continue
                pending.append(line)
                continue
            current = self.place(line, current, pending)
            pending = []
        if pending:
            self.stop(
                "COMMENT at the end of the message opens no logical block (7.8.7)",
                pending[0].number,
                "COMMENT",
            )
        if current is not None:
            self.close(current, None)
        self.require_blocks(len(tables.BLOCKS), self.lines[-1].number, None)

    def require_blocks(self, order: int, line: int, keyword: str | None) -> None:
        """Header, metadata and state vector must all come before block number `order`."""
        seen = {c.block.name for c in self.chunks}
        for block in (tables.HEADER, tables.METADATA, tables.STATE):
            if tables.BLOCKS.index(block) < order and block.name not in seen:
                where = "at the end of the message" if keyword is None else f"before {keyword}"
                self.stop(
                    f"missing mandatory keyword: the {block.name} block is absent {where}",
                    line,
                    block.keys[0].name,
                )

    def place(self, line: KvnLine, current: _Chunk | None, pending: list[KvnLine]) -> _Chunk:
        block = tables.block_of(line.keyword)
        if block is None:
            self.stop(
                "unknown keyword: not in CCSDS 502.0-B-3 tables 3-1, 3-2 or 3-3 (7.9.2.1)",
                line.number,
                line.keyword,
            )
        if current is not None and block is current.block and self.continues(current, line):
            if pending:
                self.stop(
                    f"COMMENT inside the {block.name} block: comments go only at the start of "
                    "a logical block (CCSDS 502.0-B-3 7.8.7)",
                    pending[0].number,
                    "COMMENT",
                )
            self.take(current, line)
            return current
        # a new block starts here
        if current is not None:
            self.close(current, line)
        order = tables.BLOCKS.index(block)
        done = tables.BLOCKS.index(current.block) if current is not None else -1
        if order < done or (order == done and block.name not in tables.REPEATABLE):
            seen = any(line.keyword in c.values for c in self.chunks)
            if seen:
                self.stop("repeated keyword", line.number, line.keyword)
            self.stop(
                f"out of order: the {block.name} block comes before the "
                f"{current.block.name if current else ''} block (CCSDS 502.0-B-3 7.4.8, "
                "table 3-3)",
                line.number,
                line.keyword,
            )
        if pending and not block.comments_at_start:
            self.stop(
                f"COMMENT is not allowed before the {block.name} block (CCSDS 502.0-B-3 "
                "table 3-3 gives it no COMMENT)",
                pending[0].number,
                "COMMENT",
            )
        self.require_blocks(order, line.number, line.keyword)
        chunk = _Chunk(block, pending)
        self.chunks.append(chunk)
        if block.keys and line.keyword != block.keys[0].name and block in (tables.MANEUVER,):
            self.stop(
                "a maneuver block must start with MAN_EPOCH_IGNITION and give all seven "
                "maneuver keywords in order (CCSDS 502.0-B-3 3.2.4.8)",
                line.number,
                line.keyword,
            )
        self.take(chunk, line)
        return chunk

    def continues(self, chunk: _Chunk, line: KvnLine) -> bool:
        """True when `line` belongs after what `chunk` holds (False: a new block starts)."""
        block = chunk.block
        if block is tables.USER_DEFINED:
            if line.keyword in chunk.values:
                self.stop("repeated user-defined keyword", line.number, line.keyword)
            return True
        if line.keyword in chunk.values:
            if block is tables.MANEUVER and line.keyword == "MAN_EPOCH_IGNITION":
                return False  # the next maneuver
            self.stop("repeated keyword", line.number, line.keyword)
        names = [k.name for k in block.keys]
        index = names.index(line.keyword)
        if block is tables.KEPLERIAN and line.keyword in tables.ANOMALIES:
            other = tables.ANOMALIES[1 - tables.ANOMALIES.index(line.keyword)]
            if other in chunk.values:
                self.stop(
                    f"TRUE_ANOMALY and MEAN_ANOMALY are both given; give one "
                    f"({other} is on line {chunk.values[other][0]})",
                    line.number,
                    line.keyword,
                )
            index = names.index("TRUE_ANOMALY")
        if index <= chunk.position:
            self.stop(
                f"out of order in the {block.name} block: {line.keyword} comes before "
                f"{names[chunk.position]} (CCSDS 502.0-B-3 7.4.8, 3.2.4.8)",
                line.number,
                line.keyword,
            )
        if block is tables.MANEUVER and index != chunk.position + 1:
            missing = names[chunk.position + 1]
            self.stop(
                f"maneuver block incomplete: {missing} must come before {line.keyword} "
                "(all seven maneuver keywords, in order: CCSDS 502.0-B-3 3.2.4.8)",
                line.number,
                missing,
            )
        return True

    def take(self, chunk: _Chunk, line: KvnLine) -> None:
        block = chunk.block
        if block is not tables.USER_DEFINED:
            names = [k.name for k in block.keys]
            index = names.index(line.keyword)
            chunk.position = (
                names.index("TRUE_ANOMALY") if line.keyword in tables.ANOMALIES else index
            )
        chunk.last_line = line.number
        chunk.values[line.keyword] = (line.number, self.value(block, line))

    def close(self, chunk: _Chunk, following: KvnLine | None) -> None:
        """Check a finished block for missing mandatory keywords."""
        block = chunk.block
        at = following.number if following is not None else chunk.last_line
        names = [k.name for k in block.keys]
        for index, key in enumerate(block.keys):
            if key.mandatory and key.name not in chunk.values:
                later = [ln for kw, (ln, _) in chunk.values.items() if names.index(kw) > index]
                at = min(later) if later else at  # where it should have stood
                where = "the message ends" if following is None else f"{following.keyword} starts"
                self.stop(
                    f"missing mandatory keyword of the {block.name} block before {where} "
                    "(CCSDS 502.0-B-3 tables 3-1..3-3)",
                    at,
                    key.name,
                )
        if block is tables.KEPLERIAN and not any(a in chunk.values for a in tables.ANOMALIES):
            self.stop("missing TRUE_ANOMALY or MEAN_ANOMALY (table 3-3)", at, "TRUE_ANOMALY")
        if block is tables.COVARIANCE and len(chunk.values) == 1:
            self.stop("COV_REF_FRAME without the covariance matrix", at, "CX_X")

    # -- values ---------------------------------------------------------------------------
    def value(self, block: tables.Block, line: KvnLine) -> object:
        keyword, raw = line.keyword, line.value
        if not raw:
            self.fail("no value after '=' (CCSDS 502.0-B-3 7.5.1)", line.number, keyword)
            return None
        if block is tables.USER_DEFINED:
            return raw
        key = block.key(keyword)
        if key.numeric:
            return self.number(key, raw, line.number)
        return self.text(keyword, raw, line.number)

    def number(self, key: tables.Key, raw: str, number: int) -> Decimal | None:
        text, unit = raw, None
        match = tables.UNIT_SUFFIX.match(raw)
        if match:
            text, unit = match["value"], match["unit"]
        if not tables.NUMBER.fullmatch(text):
            self.fail(
                f"{raw!r} is not a number (sign, digits, '.' with digits on both sides, "
                "optional exponent: CCSDS 502.0-B-3 7.5.4-7.5.7)",
                number,
                key.name,
            )
            return None
        if unit is not None and unit != key.unit:
            expected = f"[{key.unit}]" if key.unit else "no unit (n/a, 7.7.1.3)"
            self.fail(
                f"unit [{unit}] is not the standard's {expected}; units must match exactly, "
                "case included, and are never converted (CCSDS 502.0-B-3 7.7.1.1)",
                number,
                key.name,
            )
            return None
        value = Decimal(text)
        if key.name in _NON_NEGATIVE and value < 0:
            self.fail(f"{text} is negative; it must be >= 0", number, key.name)
        if key.name == "MAN_DELTA_MASS" and value > 0:
            self.fail(
                f"{text} kg is positive; the mass change of a maneuver is negative "
                "(CCSDS 502.0-B-3 3.2.4.7)",
                number,
                key.name,
            )
        if key.name == "GM" and value <= 0:
            self.fail(f"{text} must be > 0", number, key.name)
        return value

    def text(self, keyword: str, raw: str, number: int) -> object:
        if keyword == "CCSDS_OPM_VERS":
            if raw not in tables.VERSIONS:
                self.stop(
                    f"version {raw!r} is not read; versions 2.0 (CCSDS 502.0-B-2) and 3.0 "
                    "(CCSDS 502.0-B-3) are",
                    number,
                    keyword,
                )
            self.version = raw
        elif keyword in tables.ONLY_IN_3 and self.version != "3.0":
            self.fail(
                f"{keyword} is not in an OPM version {self.version} header (it came with "
                "CCSDS 502.0-B-3; declare CCSDS_OPM_VERS = 3.0)",
                number,
                keyword,
            )
        elif keyword in ("CREATION_DATE", "REF_FRAME_EPOCH"):
            self.time_code(keyword, raw, number)
        elif keyword == "TIME_SYSTEM":
            return self.time_system_value(raw, number)
        elif keyword == "REF_FRAME":
            self.frame(keyword, raw, number, tables.REF_FRAMES, "3.2.3.3")
        elif keyword in ("MAN_REF_FRAME", "COV_REF_FRAME"):
            self.frame(keyword, raw, number, tables.MAN_REF_FRAMES, "3.2.3.3 and 3.2.4.11")
        elif keyword in ("EPOCH", "MAN_EPOCH_IGNITION"):
            return self.epoch(keyword, raw, number)
        return raw

    def time_code(self, keyword: str, raw: str, number: int) -> None:
        try:
            check_time_code(raw)
        except EpochError as error:
            self.fail(f"{raw!r}: {error}", number, keyword)

    def time_system_value(self, raw: str, number: int) -> str:
        upper = _normative(raw)
        if upper not in tables.TIME_SYSTEMS:
            self.fail(
                f"{raw!r} is not a time system of CCSDS 502.0-B-3 3.2.3.2", number, "TIME_SYSTEM"
            )
        elif upper not in time_systems.SUPPORTED:
            self.fail(
                f"time system {raw} is refused: burnproof puts only "
                f"{', '.join(time_systems.SUPPORTED)} on UTC (with the published offsets and "
                "leap seconds), and will not reinterpret another",
                number,
                "TIME_SYSTEM",
            )
        else:
            self.time_system = upper
        return raw

    def frame(self, keyword: str, raw: str, number: int, names: tuple, where: str) -> None:
        if _normative(raw) not in names:
            self.fail(
                f"{raw!r} is not a frame the standard names in {where} ({', '.join(names)})",
                number,
                keyword,
            )

    def epoch(self, keyword: str, raw: str, number: int) -> OpmEpoch | None:
        if self.time_system is None:
            return None  # TIME_SYSTEM missing or refused: already reported
        try:
            return parse_epoch(raw, self.time_system)
        except EpochError as error:
            self.fail(f"{raw!r}: {error}", number, keyword)
            return None


def _normative(raw: str) -> str | None:
    """A normative text value is all upper or all lower case (7.5.3); None when mixed."""
    if raw == raw.upper() or raw == raw.lower():
        return raw.upper()
    return None


def parse_opm(text: str) -> OpmMessage:
    """Read an OPM (KVN, version 2.0 or 3.0); raises OpmErrors naming line and keyword."""
    lines, errors = lex(text)
    if errors:
        raise OpmErrors(errors)
    reader = _Reader(lines)
    try:
        reader.walk()
    except _Stop:
        pass
    if reader.errors:
        raise OpmErrors(sorted(reader.errors, key=lambda e: e.line or 0))
    message, errors = _build(reader.chunks)
    if errors:
        raise OpmErrors(errors)
    return message


def _build(chunks: list[_Chunk]) -> tuple[OpmMessage | None, list[OpmError]]:
    from service.ccsds.opm_build import build  # the assembly of checked blocks

    return build(chunks)
