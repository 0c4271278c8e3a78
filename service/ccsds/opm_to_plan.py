"""OPM -> plan: an Orbit Parameter Message and a spacecraft description become a JSON plan.

The rules (frames, centres, units, ids, declared values) are listed in ``service.ccsds.convert``;
CCSDS 502.0-B-2 (November 2009) and 502.0-B-3 (April 2023), section 3, from memory where no
clause is quoted.
"""

from __future__ import annotations

import re
from decimal import Decimal, InvalidOperation

from service.ccsds.spacecraft import DescriptionInvalid, load_description, propellant_kg
from service.dynamics.bodies import body_named
from service.dynamics.epochs import format_utc
from service.engine.errors import PlanInvalid
from service.engine.plan import Plan
from service.schemas import load_plan

CENTRES = {"EARTH": "earth", "MOON": "moon", "MARS": "mars"}
STATE_FRAMES = {"EME2000": "EME2000", "GCRF": "GCRF", "ICRF": "GCRF"}
MANEUVER_FRAMES = {
    "RTN": "RTN",
    "RSW": "RTN",
    "TNW": "TNW",
    "EME2000": "EME2000",
    "GCRF": "GCRF",
    "ICRF": "GCRF",
}
PREFIX = "BURNPROOF_"  # our USER_DEFINED_ parameters, without the USER_DEFINED_ part
_ROTATING = re.compile(r"^(ITRF.*|GRC|GTOD|TDR|PEF|IAU_.*|.*_FIXED|MCMF)$")
# Inertial, but with axes of another body's equator: no orientation model here to convert it.
_OTHER_AXES = {"MCI": "Mars' mean equator (Mars-centred inertial)"}
_OF_DATE = {"TEME", "TOD", "MOD", "TODEARTH", "GTOD", "B1950", "MEME2000"}
_LOCAL = {"RTN", "RSW", "TNW", "RIC", "LVLH", "QSW", "NTW", "VNC"}


class OpmInvalid(PlanInvalid):
    """An OPM that cannot be read or honestly evaluated; ``errors`` keyed ``opm.line.<n>.<KEY>``."""


def error_key(line: int | None, keyword: str | None) -> str:
    """``opm.line.42.MAN_DV_1``; ``opm.MAN_DV_1`` or ``opm`` when the line or keyword is unknown."""
    parts = ["opm"]
    if line is not None:
        parts += ["line", str(line)]
    if keyword:
        parts.append(keyword)
    return ".".join(parts)


def describe_key(key: str) -> str:
    """``opm.line.42.MAN_DV_1`` as people read it: ``line 42, MAN_DV_1``; other keys as they are."""
    match = re.fullmatch(r"opm(?:\.line\.(\d+))?(?:\.(.+))?", key)
    if not match:
        return key
    line, keyword = match.groups()
    words = [f"line {line}"] if line else []
    if keyword:
        words.append(keyword)
    return ", ".join(words) or "opm"


def _frame_refusal(frame: str, *, maneuver: bool) -> str:
    upper = frame.upper()
    if upper in _LOCAL and not maneuver:
        return "a local orbital frame is defined by the orbit itself and cannot hold the state"
    if upper in _OF_DATE:
        return (
            "an of-date or other-epoch frame: its axes move with precession and nutation (tens "
            "of arcseconds a year), so taking it as inertial GCRF/EME2000 would silently rotate "
            "the state; convert it to EME2000, GCRF or ICRF first"
        )
    if upper in _OTHER_AXES:
        return (
            f"an inertial frame on {_OTHER_AXES[upper]}, whose axes are tilted from the ICRF's; "
            "burnproof has no orientation model of that body to convert it: give the state in "
            "ICRF, GCRF or EME2000 axes"
        )
    if _ROTATING.match(upper):
        return (
            "a body-fixed rotating frame: its velocity is relative to the rotating body and its "
            "axes turn with it, while burnproof propagates in an inertial frame; convert it to "
            "EME2000, GCRF or ICRF first"
        )
    allowed = ", ".join(sorted(MANEUVER_FRAMES if maneuver else STATE_FRAMES))
    return f"not a frame burnproof can evaluate; accepted: {allowed}"


class _Lines:
    """Where each keyword stands in the message's text (1-based lines), for error keys."""

    def __init__(self, text: str | None) -> None:
        self.positions: dict[str, list[int]] = {}
        for number, line in enumerate((text or "").splitlines(), start=1):
            keyword = line.split("=", 1)[0].strip() if "=" in line else ""
            if keyword:
                self.positions.setdefault(keyword, []).append(number)

    def find(self, keyword: str, after: int | None = None) -> int | None:
        for number in self.positions.get(keyword, ()):
            if after is None or number >= after:
                return number
        return after if after is not None and keyword.startswith("MAN_") else None


def _number(value: Decimal) -> float:
    """A Decimal from the message as the float its text names (exact, shortest repr)."""
    number = float(str(value))
    return 0.0 if number == 0.0 else number


def decimal_of(value: float) -> Decimal:
    """The text ``repr`` gives a float, as a Decimal: reading it back gives the same float."""
    return Decimal(repr(float(value)))


def _user_defined(message) -> dict[str, str]:
    return {key: value for key, value in (message.user_defined or ())}


class _Reader:
    def __init__(self, message, description, text: str | None) -> None:
        self.message = message
        self.description = description
        self.lines = _Lines(text)
        self.user = _user_defined(message)
        self.errors: dict[str, list[str]] = {}

    def fault(self, keyword: str, problem: str, *, after: int | None = None) -> None:
        key = error_key(self.lines.find(keyword, after), keyword)
        self.errors.setdefault(key, []).append(problem)

    def ours(self, name: str) -> str | None:
        return self.user.get(PREFIX + name)

    def our_number(self, name: str) -> float | None:
        text = self.ours(name)
        if text is None or text.upper() == "NONE":
            return None
        try:
            value = Decimal(text)
        except InvalidOperation:
            value = None
        if value is None or not value.is_finite() or value < 0:
            self.fault(
                "USER_DEFINED_" + PREFIX + name,
                f"{text!r} is not a finite number at least 0 (or NONE)",
            )
            return None
        return _number(value)

    def central_body(self) -> str | None:
        centre = self.message.metadata.center_name
        body = CENTRES.get(centre.strip().upper())
        if body is None:
            self.fault(
                "CENTER_NAME",
                f"{centre!r} is not a central body burnproof models; it evaluates plans about "
                "EARTH, MOON or MARS",
            )
        return body

    def initial_state(self, body: str | None) -> dict | None:
        metadata = self.message.metadata
        frame = metadata.ref_frame.strip()
        mapped = STATE_FRAMES.get(frame.upper())
        if mapped is None:
            self.fault("REF_FRAME", f"{frame!r} is {_frame_refusal(frame, maneuver=False)}")
            return None
        if (self.ours("INITIAL_STATE") or "").upper() == "ELEMENTS":
            return self._elements(body)
        state = self.message.state
        return {
            "frame": mapped,
            "position_km": [_number(value) for value in state.position_km],
            "velocity_km_s": [_number(value) for value in state.velocity_km_s],
        }

    def _elements(self, body: str | None) -> dict | None:
        kepler = self.message.keplerian
        if kepler is None or kepler.true_anomaly_deg is None:
            self.fault(
                "USER_DEFINED_" + PREFIX + "INITIAL_STATE",
                "ELEMENTS needs the Keplerian elements block with TRUE_ANOMALY",
            )
            return None
        if body is not None:
            mu = decimal_of(body_named(body).mu_km3_s2)
            if kepler.gm_km3_s2 != mu:
                self.fault(
                    "GM",
                    f"{kepler.gm_km3_s2} km**3/s**2 is not burnproof's GM of the "
                    f"{body}, {mu} km**3/s**2, which the elements must be read with",
                )
        return {
            "elements": {
                "semi_major_axis_km": _number(kepler.semi_major_axis_km),
                "eccentricity": _number(kepler.eccentricity),
                "inclination_deg": _number(kepler.inclination_deg),
                "raan_deg": _number(kepler.ra_of_asc_node_deg),
                "arg_periapsis_deg": _number(kepler.arg_of_pericenter_deg),
                "true_anomaly_deg": _number(kepler.true_anomaly_deg),
            }
        }

    def maneuvers(self) -> list[dict]:
        items = []
        description = self.description
        links = description.maneuvers
        count = len(self.message.maneuvers)
        if links is not None and len(links) != count:
            self.errors.setdefault("maneuvers", []).append(
                f"the description lists {len(links)} maneuvers and the OPM has {count}; list "
                "one {id, engine} per OPM maneuver, in the OPM's order"
            )
            links = None
        computed = (self.ours("MAN_VALUES") or "").upper() == "COMPUTED"
        for index, maneuver in enumerate(self.message.maneuvers):
            number = index + 1
            link = links[index] if links is not None else None
            item = {
                "id": self._maneuver_id(link, number),
                "ignition": format_utc(maneuver.epoch_ignition.utc),
                "engine": self._engine(link, number, index),
                "frame": self._maneuver_frame(maneuver),
                "delta_v_m_s": [_number(value.scaleb(3)) for value in maneuver.dv_km_s],
            }
            if computed:
                duration = self.our_number(f"MAN_{number}_DECLARED_DURATION")
                used = self.our_number(f"MAN_{number}_DECLARED_PROPELLANT")
            else:
                duration = _number(maneuver.duration_s)
                used = _number(maneuver.delta_mass_kg.copy_abs())
            if duration is not None:
                item["declared_duration_s"] = duration
            if used is not None:
                item["declared_propellant_kg"] = used
            items.append(item)
        return items

    def _maneuver_id(self, link, number: int) -> str:
        if link is not None and link.id is not None:
            return link.id
        return self.ours(f"MAN_{number}_ID") or f"burn-{number}"

    def _engine(self, link, number: int, index: int) -> str | None:
        description = self.description
        if link is not None and link.engine is not None:
            return link.engine
        if description.default_engine_explicit:
            return description.default_engine
        engine = self.ours(f"MAN_{number}_ENGINE") or description.default_engine
        if engine is None:
            self.errors.setdefault(f"maneuvers.{index}.engine", []).append(
                "the spacecraft has several engines and neither the description (maneuvers, "
                "default_engine) nor the OPM names the one this burn uses; known: "
                + ", ".join(description.engine_ids)
            )
        return engine

    def _maneuver_frame(self, maneuver) -> str | None:
        frame = maneuver.ref_frame.strip()
        mapped = MANEUVER_FRAMES.get(frame.upper())
        if mapped is None:
            self.fault(
                "MAN_REF_FRAME",
                f"{frame!r} is {_frame_refusal(frame, maneuver=True)}",
                after=maneuver.line,
            )
        return mapped

    def plan_id(self) -> str:
        given = self.description.plan.get("plan_id")
        if given is not None:
            return given
        return (
            self.ours("PLAN_ID")
            or self.message.header.message_id
            or self.message.metadata.object_name
        )


def plan_document(message, description, *, text: str | None = None) -> dict:
    """The JSON plan for an ``OpmMessage`` and a checked ``SpacecraftDescription``.

    ``text`` (the message as read) lets errors name the line of a keyword; ``OpmInvalid``
    for what the message says that cannot be honestly evaluated, ``DescriptionInvalid`` for
    the description. The result still has to pass ``load_plan``.
    """
    reader = _Reader(message, description, text)
    body = reader.central_body()
    initial_state = reader.initial_state(body)
    maneuvers = reader.maneuvers()
    mass = message.spacecraft.mass_kg if message.spacecraft is not None else None
    spacecraft = dict(description.spacecraft)
    try:
        spacecraft["propellant_kg"] = propellant_kg(description, mass)
    except DescriptionInvalid as error:
        for key, messages in error.errors.items():
            reader.errors.setdefault(key, []).extend(messages)
    if reader.errors:
        opm = {key: value for key, value in reader.errors.items() if key.startswith("opm")}
        raise (OpmInvalid if opm else DescriptionInvalid)(reader.errors)
    document = {
        "plan_id": reader.plan_id(),
        "central_body": body,
        "epoch": format_utc(message.state.epoch.utc),
        "initial_state": initial_state,
        "spacecraft": spacecraft,
        "maneuvers": maneuvers,
    }
    profile = reader.ours("PROFILE")
    if profile is not None:
        document["profile"] = profile
    document.update(description.plan)
    return document


# plan field (after maneuvers.N. or at the top) -> the OPM keyword it came from
_MANEUVER_KEYWORDS = {
    "ignition": "MAN_EPOCH_IGNITION",
    "frame": "MAN_REF_FRAME",
    "delta_v_m_s": "MAN_DV_1",
    "declared_duration_s": "MAN_DURATION",
    "declared_propellant_kg": "MAN_DELTA_MASS",
}
_STATE_KEYWORDS = {
    "epoch": "EPOCH",
    "central_body": "CENTER_NAME",
    "initial_state.frame": "REF_FRAME",
    "initial_state.position_km": "X",
    "initial_state.velocity_km_s": "X_DOT",
    "initial_state.elements.semi_major_axis_km": "SEMI_MAJOR_AXIS",
    "initial_state.elements.eccentricity": "ECCENTRICITY",
    "initial_state.elements.inclination_deg": "INCLINATION",
    "initial_state.elements.raan_deg": "RA_OF_ASC_NODE",
    "initial_state.elements.arg_periapsis_deg": "ARG_OF_PERICENTER",
    "initial_state.elements.true_anomaly_deg": "TRUE_ANOMALY",
}


def _opm_origin(error: PlanInvalid, message, lines: _Lines) -> PlanInvalid:
    """``load_plan``'s errors on fields that came from the OPM, keyed by the OPM's line and
    keyword (the plan field kept in the message); the description's fields keep their paths."""
    rekeyed: dict[str, list[str]] = {}
    moved = False
    for path, messages in error.errors.items():
        key = path
        match = re.fullmatch(r"maneuvers\.(\d+)\.(\w+)(?:\..*)?", path)
        if match and match.group(2) in _MANEUVER_KEYWORDS:
            index = int(match.group(1))
            if index < len(message.maneuvers):
                keyword = _MANEUVER_KEYWORDS[match.group(2)]
                key = error_key(lines.find(keyword, message.maneuvers[index].line), keyword)
        elif path in _STATE_KEYWORDS:
            keyword = _STATE_KEYWORDS[path]
            key = error_key(lines.find(keyword), keyword)
        if key != path:
            moved = True
            messages = [f"{text} (plan field {path})" for text in messages]
        rekeyed.setdefault(key, []).extend(messages)
    return OpmInvalid(rekeyed) if moved else error


def load_opm_plan(text: str, description_data: object) -> tuple[dict, Plan]:
    """The plan document and the typed ``Plan`` for an OPM's text and a description's data.

    Raises ``OpmInvalid`` (a ``PlanInvalid``) for the message, ``DescriptionInvalid`` for
    the description, ``PlanInvalid`` for the plan they make; OPM errors keyed by line.
    """
    from service.ccsds.opm import OpmErrors, parse_opm  # the reader's module

    # Both are read before either is refused, so one answer names every fault of both.
    described: dict[str, list[str]] = {}
    try:
        description = load_description(description_data)
    except DescriptionInvalid as error:
        described = dict(error.errors)
    try:
        message = parse_opm(text)
    except OpmErrors as error:
        errors = dict(described)
        for item in error.errors:
            errors.setdefault(error_key(item.line, item.keyword), []).append(item.message)
        raise OpmInvalid(errors) from None
    if described:
        raise DescriptionInvalid(described)
    document = plan_document(message, description, text=text)
    try:
        return document, load_plan(document)
    except PlanInvalid as error:
        raise _opm_origin(error, message, _Lines(text)) from None


def is_opm(raw: bytes) -> bool:
    """An OPM in KVN: the first keyword (after blank lines) is CCSDS_OPM_VERS."""
    for line in raw.splitlines():
        stripped = line.strip()
        if stripped:
            return stripped.startswith(b"CCSDS_OPM_VERS")
    return False
