"""Write an OpmMessage as OPM KVN text that parse_opm reads back to an equal message.

Layout: CCSDS 502.0-B-3 section 7 (one 'KEYWORD = value' per line, keywords padded so the
'=' signs align, units in square brackets after a blank as 7.7.1.1 allows, COMMENT lines
where 7.8.7 allows them, a blank line between blocks (7.3.5), "\\n" line ends, ASCII only,
lines of at most 254 characters (7.3.2)).

Version: CCSDS_OPM_VERS is written as the message's header says ("2.0" unless it was read
or built as 3.0), except that a header carrying MESSAGE_ID or CLASSIFICATION is written as
3.0, the first version that has them. 2.0 is the default because more ground software reads
it; the content burnproof writes (state, spacecraft, maneuvers) is the same in both.

Numbers: a Decimal is written in plain notation when its exponent is moderate (digits kept
exactly, trailing zeros included) and otherwise as d.ddd...E+nn; both read back to the same
Decimal value. What cannot be written faithfully (a line over 254 characters, non-ASCII,
a comment with trailing blanks, a non-finite number) is a ValueError, never a silent change.
"""

from __future__ import annotations

from decimal import Decimal

from service.ccsds import opm_tables as tables
from service.ccsds.kvn import MAX_LINE_CHARS
from service.ccsds.opm_model import OpmEpoch, OpmMessage

_WIDTH = 20  # keyword column: MAN_EPOCH_IGNITION (18) fits with room


def format_decimal(value: Decimal) -> str:
    """KVN text for `value` that Decimal() reads back equal: plain up to 30 characters.

    >>> format_decimal(Decimal("0.0125")), format_decimal(Decimal("3.5E-40"))
    ('0.0125', '3.5E-40')
    """
    if not isinstance(value, Decimal) or not value.is_finite():
        raise ValueError(f"{value!r} is not a finite Decimal")
    plain = format(value, "f")
    if len(plain) <= 30:
        return plain
    text = format(value, "E")  # mantissa d[.ddd]E+nn
    mantissa, exponent = text.split("E")
    if "." not in mantissa:
        mantissa += ".0"
    return f"{mantissa}E{exponent}"


class _Lines:
    def __init__(self) -> None:
        self.out: list[str] = []

    def add(self, keyword: str, value: str, unit: str | None = None) -> None:
        if value is None or value == "":
            raise ValueError(f"{keyword} has no value to write")
        text = f"{keyword.ljust(_WIDTH)} = {value}" + (f" [{unit}]" if unit else "")
        self.line(text, keyword)

    def number(self, key: tables.Key, value: Decimal | None) -> None:
        if value is not None:
            self.add(key.name, format_decimal(value), key.unit)

    def comments(self, comments: tuple[str, ...]) -> None:
        for comment in comments:
            if comment != comment.rstrip():
                raise ValueError(f"COMMENT {comment!r} ends in blanks, which a reader drops")
            self.line(f"COMMENT {comment}" if comment else "COMMENT", "COMMENT")

    def line(self, text: str, keyword: str) -> None:
        if len(text) > MAX_LINE_CHARS:
            raise ValueError(f"{keyword}: the line would be {len(text)} characters (max 254)")
        if not all(" " <= c <= "~" for c in text):
            raise ValueError(f"{keyword}: only printable ASCII can be written")
        self.out.append(text)

    def blank(self) -> None:
        self.out.append("")


def _epoch(lines: _Lines, keyword: str, epoch: OpmEpoch, time_system: str) -> None:
    if epoch.time_system != time_system.upper():
        raise ValueError(
            f"{keyword} is in {epoch.time_system} but TIME_SYSTEM is {time_system}: "
            "an OPM has one time system"
        )
    lines.add(keyword, epoch.text)


def write_opm(message: OpmMessage) -> str:
    """The OPM as KVN text (ASCII, '\\n' line ends, lines <= 254 characters)."""
    out = _Lines()
    head, meta = message.header, message.metadata
    version = "3.0" if (head.message_id or head.classification) else head.version
    out.add("CCSDS_OPM_VERS", version)
    out.comments(head.comments)
    if head.classification:
        out.add("CLASSIFICATION", head.classification)
    out.add("CREATION_DATE", head.creation_date)
    out.add("ORIGINATOR", head.originator)
    if head.message_id:
        out.add("MESSAGE_ID", head.message_id)
    out.blank()
    out.comments(meta.comments)
    out.add("OBJECT_NAME", meta.object_name)
    out.add("OBJECT_ID", meta.object_id)
    out.add("CENTER_NAME", meta.center_name)
    out.add("REF_FRAME", meta.ref_frame)
    if meta.ref_frame_epoch:
        out.add("REF_FRAME_EPOCH", meta.ref_frame_epoch)
    out.add("TIME_SYSTEM", meta.time_system)
    out.blank()
    state = message.state
    out.comments(state.comments)
    _epoch(out, "EPOCH", state.epoch, meta.time_system)
    for key, value in zip(
        tables.STATE.keys[1:], state.position_km + state.velocity_km_s, strict=True
    ):
        out.number(key, value)
    if message.keplerian is not None:
        kep = message.keplerian
        out.blank()
        out.comments(kep.comments)
        values = {
            "SEMI_MAJOR_AXIS": kep.semi_major_axis_km,
            "ECCENTRICITY": kep.eccentricity,
            "INCLINATION": kep.inclination_deg,
            "RA_OF_ASC_NODE": kep.ra_of_asc_node_deg,
            "ARG_OF_PERICENTER": kep.arg_of_pericenter_deg,
            "TRUE_ANOMALY": kep.true_anomaly_deg,
            "MEAN_ANOMALY": kep.mean_anomaly_deg,
            "GM": kep.gm_km3_s2,
        }
        if (kep.true_anomaly_deg is None) == (kep.mean_anomaly_deg is None):
            raise ValueError("Keplerian elements need exactly one of true and mean anomaly")
        for key in tables.KEPLERIAN.keys:
            out.number(key, values[key.name])
    if message.spacecraft is not None:
        sc = message.spacecraft
        out.blank()
        out.comments(sc.comments)
        values = (
            sc.mass_kg,
            sc.solar_rad_area_m2,
            sc.solar_rad_coeff,
            sc.drag_area_m2,
            sc.drag_coeff,
        )
        for key, value in zip(tables.SPACECRAFT.keys, values, strict=True):
            out.number(key, value)
    if message.covariance is not None:
        out.blank()
        out.comments(message.covariance_comments)
        if message.covariance_ref_frame:
            out.add("COV_REF_FRAME", message.covariance_ref_frame)
        if [k for k, _ in message.covariance] != list(tables.COVARIANCE_KEYS):
            raise ValueError("the covariance must be the 21 lower-triangle terms, in order")
        for key, (_, value) in zip(tables.COVARIANCE.keys[1:], message.covariance, strict=True):
            out.number(key, value)
    for maneuver in message.maneuvers:
        out.blank()
        out.comments(maneuver.comments)
        _epoch(out, "MAN_EPOCH_IGNITION", maneuver.epoch_ignition, meta.time_system)
        keys = {k.name: k for k in tables.MANEUVER.keys}
        out.number(keys["MAN_DURATION"], maneuver.duration_s)
        out.number(keys["MAN_DELTA_MASS"], maneuver.delta_mass_kg)
        out.add("MAN_REF_FRAME", maneuver.ref_frame)
        for n, value in enumerate(maneuver.dv_km_s, start=1):
            out.number(keys[f"MAN_DV_{n}"], value)
    if message.user_defined:
        out.blank()
        for name, value in message.user_defined:
            out.add(tables.USER_PREFIX + name, value)
    return "\n".join(out.out) + "\n"
