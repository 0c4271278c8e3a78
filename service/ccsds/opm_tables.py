"""The OPM keyword tables: which keywords, in which order and block, with which unit.

Source: CCSDS 502.0-B-3 (April 2023) tables 3-1 (header), 3-2 (metadata), 3-3 (data) and
the value sets of 3.2.3.2 (TIME_SYSTEM), 3.2.3.3 (REF_FRAME) and 3.2.4.11 (MAN_REF_FRAME,
COV_REF_FRAME); CCSDS 502.0-B-2 (November 2009) has the same tables less CLASSIFICATION and
MESSAGE_ID in the header (from memory: both arrived with B-3). Units are written exactly as
the tables write them (7.7.1.1: "must exactly match ... including lower/upper case").
"""

from __future__ import annotations

import re
from dataclasses import dataclass


@dataclass(frozen=True)
class Key:
    """One keyword of a block: its unit (None = n/a), whether numeric, whether mandatory."""

    name: str
    unit: str | None = None
    numeric: bool = True
    mandatory: bool = True


def _text(name: str, mandatory: bool = True) -> Key:
    return Key(name, None, numeric=False, mandatory=mandatory)


@dataclass(frozen=True)
class Block:
    """A logical block of table 3-1/3-2/3-3, its keywords in the standard's order."""

    name: str
    keys: tuple[Key, ...]
    comments_at_start: bool = True  # COMMENT lines may open the block (7.8.7)

    def key(self, name: str) -> Key:
        return next(k for k in self.keys if k.name == name)


HEADER = Block(
    "header",
    (
        _text("CCSDS_OPM_VERS"),
        _text("CLASSIFICATION", mandatory=False),
        _text("CREATION_DATE"),
        _text("ORIGINATOR"),
        _text("MESSAGE_ID", mandatory=False),
    ),
    comments_at_start=False,  # only right after CCSDS_OPM_VERS (table 3-1)
)
METADATA = Block(
    "metadata",
    (
        _text("OBJECT_NAME"),
        _text("OBJECT_ID"),
        _text("CENTER_NAME"),
        _text("REF_FRAME"),
        _text("REF_FRAME_EPOCH", mandatory=False),
        _text("TIME_SYSTEM"),
    ),
)
STATE = Block(
    "state vector",
    (
        _text("EPOCH"),
        Key("X", "km"),
        Key("Y", "km"),
        Key("Z", "km"),
        Key("X_DOT", "km/s"),
        Key("Y_DOT", "km/s"),
        Key("Z_DOT", "km/s"),
    ),
)
# TRUE_ANOMALY and MEAN_ANOMALY share one place in the order: exactly one of them is given.
KEPLERIAN = Block(
    "Keplerian elements",
    (
        Key("SEMI_MAJOR_AXIS", "km"),
        Key("ECCENTRICITY"),
        Key("INCLINATION", "deg"),
        Key("RA_OF_ASC_NODE", "deg"),
        Key("ARG_OF_PERICENTER", "deg"),
        Key("TRUE_ANOMALY", "deg", mandatory=False),
        Key("MEAN_ANOMALY", "deg", mandatory=False),
        Key("GM", "km**3/s**2"),
    ),
)
ANOMALIES = ("TRUE_ANOMALY", "MEAN_ANOMALY")
SPACECRAFT = Block(
    "spacecraft parameters",
    (
        Key("MASS", "kg", mandatory=False),  # conditional: needed when maneuvers (3.2.4.9)
        Key("SOLAR_RAD_AREA", "m**2", mandatory=False),
        Key("SOLAR_RAD_COEFF", mandatory=False),
        Key("DRAG_AREA", "m**2", mandatory=False),
        Key("DRAG_COEFF", mandatory=False),
    ),
)
_COV_AXES = ("X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT")


def _cov_unit(row: int, col: int) -> str:
    velocity = (row >= 3) + (col >= 3)
    return ("km**2", "km**2/s", "km**2/s**2")[velocity]


COVARIANCE_KEYS = tuple(
    f"C{_COV_AXES[r]}_{_COV_AXES[c]}" for r in range(6) for c in range(r + 1)
)  # lower triangle, row by row (3.2.4.10)
COVARIANCE = Block(
    "covariance",
    (
        _text("COV_REF_FRAME", mandatory=False),
        *(
            Key(f"C{_COV_AXES[r]}_{_COV_AXES[c]}", _cov_unit(r, c))
            for r in range(6)
            for c in range(r + 1)
        ),
    ),
)
MANEUVER = Block(
    "maneuver",
    (
        _text("MAN_EPOCH_IGNITION"),
        Key("MAN_DURATION", "s"),
        Key("MAN_DELTA_MASS", "kg"),
        _text("MAN_REF_FRAME"),
        Key("MAN_DV_1", "km/s"),
        Key("MAN_DV_2", "km/s"),
        Key("MAN_DV_3", "km/s"),
    ),
)
USER_PREFIX = "USER_DEFINED_"
USER_DEFINED = Block("user-defined parameters", (), comments_at_start=False)  # no COMMENT row

BLOCKS = (HEADER, METADATA, STATE, KEPLERIAN, SPACECRAFT, COVARIANCE, MANEUVER, USER_DEFINED)
REPEATABLE = {MANEUVER.name}  # 3.2.4.8
BLOCK_OF = {key.name: block for block in BLOCKS for key in block.keys}


def block_of(keyword: str) -> Block | None:
    """The block a keyword belongs to, or None for a keyword no OPM table has."""
    if keyword.startswith(USER_PREFIX) and len(keyword) > len(USER_PREFIX):
        return USER_DEFINED
    return BLOCK_OF.get(keyword)


VERSIONS = ("2.0", "3.0")  # CCSDS 502.0-B-3 section 7.9.1 (1.0 is another layout: refused)
ONLY_IN_3 = ("CLASSIFICATION", "MESSAGE_ID")

# 3.2.3.2. Only the first four can be put on UTC here; the rest are named in the refusal.
TIME_SYSTEMS = ("GMST", "GPS", "MET", "MRT", "SCLK", "TAI", "TCB", "TDB", "TCG", "TT", "UT1", "UTC")
# 3.2.3.3 (REF_FRAME). The SANA registry (annex B) lists more; they are refused until named here.
REF_FRAMES = (
    "EME2000",
    "GCRF",
    "GRC",
    "ICRF",
    "ITRF2000",
    "ITRF-93",
    "ITRF-97",
    "MCI",
    "TDR",
    "TEME",
    "TOD",
)
LOCAL_FRAMES = ("RSW", "RTN", "TNW")  # 3.2.4.11
MAN_REF_FRAMES = LOCAL_FRAMES + REF_FRAMES  # B-2 figure 3-2 uses EME2000 for a maneuver

# 7.5.4-7.5.7: optional sign, digits, a decimal point with digits on both sides, optional
# exponent. Deliberately lenient on two points, stated in the docs: more than 16 digits, and
# an exponent mantissa not of the form d.ddd, are read as written (they are unambiguous).
NUMBER = re.compile(r"[+-]?\d+(\.\d+)?([eE][+-]?\d+)?")
UNIT_SUFFIX = re.compile(r"^(?P<value>\S+)\s+\[(?P<unit>[^\]]*)\]$")
