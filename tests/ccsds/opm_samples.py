"""An invented OPM (spacecraft and orbit of our own) used as the base of several tests."""

# Line numbers matter: the malformed-message table names them.
VALID_LINES = [
    "CCSDS_OPM_VERS = 3.0",  # 1
    "COMMENT invented test message",  # 2
    "CREATION_DATE = 2031-04-30T12:00:00",  # 3
    "ORIGINATOR = BURNPROOF-TEST",  # 4
    "MESSAGE_ID = KITE-3-0007",  # 5
    "OBJECT_NAME = KITE 3",  # 6
    "OBJECT_ID = 2030-777B",  # 7
    "CENTER_NAME = EARTH",  # 8
    "REF_FRAME = GCRF",  # 9
    "TIME_SYSTEM = UTC",  # 10
    "EPOCH = 2031-05-02T00:00:00.000",  # 11
    "X = 6778.137 [km]",  # 12
    "Y = 0.0 [km]",  # 13
    "Z = 0.0 [km]",  # 14
    "X_DOT = 0.0 [km/s]",  # 15
    "Y_DOT = 7.6686 [km/s]",  # 16
    "Z_DOT = 0.0 [km/s]",  # 17
    "MASS = 602.0 [kg]",  # 18
    "DRAG_AREA = 4.2 [m**2]",  # 19
    "DRAG_COEFF = 2.2",  # 20
    "COMMENT raise perigee",  # 21
    "MAN_EPOCH_IGNITION = 2031-05-02T01:00:00.000",  # 22
    "MAN_DURATION = 331.5 [s]",  # 23
    "MAN_DELTA_MASS = -3.3 [kg]",  # 24
    "MAN_REF_FRAME = TNW",  # 25
    "MAN_DV_1 = 0.0125 [km/s]",  # 26
    "MAN_DV_2 = 0.0 [km/s]",  # 27
    "MAN_DV_3 = 0.0 [km/s]",  # 28
    "USER_DEFINED_BURNPROOF_PLAN_ID = kite-3-raise-01",  # 29
]


def valid_text() -> str:
    return "\n".join(VALID_LINES) + "\n"


def replaced(line: int, new: str | None) -> str:
    """The valid message with 1-based line `line` replaced (None: removed)."""
    lines = list(VALID_LINES)
    if new is None:
        del lines[line - 1]
    else:
        lines[line - 1] = new
    return "\n".join(lines) + "\n"


def inserted(after: int, new: str) -> str:
    lines = list(VALID_LINES)
    lines.insert(after, new)
    return "\n".join(lines) + "\n"
