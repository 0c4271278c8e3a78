"""Plan + report -> OPM: a validated plan as an Orbit Parameter Message, computed values in.

The rules are listed in ``service.ccsds.convert``; CCSDS 502.0-B-2 (November 2009) and
502.0-B-3 (April 2023), section 3, from memory where no clause is quoted.
"""

from __future__ import annotations

import textwrap
from collections.abc import Mapping
from decimal import Decimal

import numpy as np

from service import __version__
from service.ccsds.opm_to_plan import PREFIX, decimal_of
from service.dynamics.bodies import body_named
from service.dynamics.elements import elements_from_semi_major_axis, elements_to_state
from service.engine.plan import CartesianState, Plan

ORIGINATOR = "BURNPROOF"
COMMENT_WIDTH = 96  # COMMENT text per line; long words (digests) are never split


class PlanFailed(Exception):
    """A plan whose verdict is ``fail`` is not written as an OPM."""

    def __init__(self, report: Mapping) -> None:
        self.verdict = report.get("verdict")
        self.summary = dict(report.get("summary", {}))
        counts = ", ".join(f"{count} {status}" for status, count in self.summary.items())
        self.detail = (
            f"plan {report.get('plan_id')!r} failed validation ({counts}); a failed plan is not "
            "written as an OPM: fix it, or ask for the report (application/json)"
        )
        super().__init__(self.detail)


def _kvn_value(value: str) -> str | None:
    """``value`` when a KVN line can carry it unchanged (printable ASCII, no edge blanks)."""
    if value and value == value.strip() and all(" " <= c <= "~" for c in value):
        return value
    return None


def _ascii(text: str) -> str:
    return "".join(c if " " <= c <= "~" else "?" for c in text)


def _comments(report: Mapping, notes: list[str]) -> tuple[str, ...]:
    summary = report.get("summary", {})
    provenance = report.get("provenance", {})
    counts = ", ".join(f"{count} {status}" for status, count in summary.items())
    paragraphs = [
        f"Written by burnproof {__version__} from plan {report.get('plan_id')!r}: verdict "
        f"{report.get('verdict')} ({counts}).",
        f"Plan digest {provenance.get('plan_digest')}.",
        f"Profile {provenance.get('profile')} ({provenance.get('profile_digest')}).",
        "MAN_DURATION and MAN_DELTA_MASS are burnproof's, computed from the engines.",
        *notes,
        *(f"Caution: {caution}" for caution in report.get("cautions", ())),
    ]
    lines: list[str] = []
    for paragraph in paragraphs:
        lines.extend(
            textwrap.wrap(_ascii(paragraph), COMMENT_WIDTH, break_long_words=False) or [""]
        )
    return tuple(lines)


def _initial_state(plan: Plan) -> tuple[str, list[Decimal], list[Decimal], dict | None]:
    state = plan.initial_state
    if isinstance(state, CartesianState):
        position = [decimal_of(value) for value in state.position_km]
        velocity = [decimal_of(value) for value in state.velocity_km_s]
        return state.frame, position, velocity, None
    mu = body_named(plan.central_body).mu_km3_s2
    elements = elements_from_semi_major_axis(
        state.semi_major_axis_km,
        state.eccentricity,
        np.radians(state.inclination_deg),
        np.radians(state.raan_deg),
        np.radians(state.arg_periapsis_deg),
        np.radians(state.true_anomaly_deg),
    )
    r_km, v_km_s = elements_to_state(elements, mu)
    kepler = {
        "semi_major_axis_km": decimal_of(state.semi_major_axis_km),
        "eccentricity": decimal_of(state.eccentricity),
        "inclination_deg": decimal_of(state.inclination_deg),
        "ra_of_asc_node_deg": decimal_of(state.raan_deg),
        "arg_of_pericenter_deg": decimal_of(state.arg_periapsis_deg),
        "true_anomaly_deg": decimal_of(state.true_anomaly_deg),
        "mean_anomaly_deg": None,
        "gm_km3_s2": decimal_of(mu),
    }
    # Cartesian from the elements, to the millimetre and micrometre per second
    position = [Decimal(f"{value:.6f}") for value in r_km]
    velocity = [Decimal(f"{value:.9f}") for value in v_km_s]
    return "GCRF", position, velocity, kepler


def plan_to_opm(plan: Plan, report: Mapping, *, created: np.datetime64 | None = None):
    """The ``OpmMessage`` of a validated plan (verdict pass or warn), with burnproof's computed
    MAN_DURATION and MAN_DELTA_MASS; ``PlanFailed`` for any other verdict."""
    from service.ccsds import opm  # the reader's module

    if report.get("verdict") not in ("pass", "warn"):
        raise PlanFailed(report)
    created = np.datetime64("now", "ms") if created is None else created
    frame, position, velocity, kepler = _initial_state(plan)
    notes: list[str] = []
    user: list[tuple[str, str]] = []

    def carry(name: str, value: str) -> None:
        shown = _kvn_value(value)
        if shown is None:
            notes.append(
                f"{name} {value!r} cannot be written on a KVN line; give it in the "
                "spacecraft description."
            )
        else:
            user.append((PREFIX + name, shown))

    carry("PLAN_ID", plan.plan_id)
    carry("PROFILE", str(report.get("provenance", {}).get("profile", plan.profile)))
    if kepler is not None:
        user.append((PREFIX + "INITIAL_STATE", "ELEMENTS"))
        notes.append("The plan gave osculating elements: the state vector is computed from them.")
    user.append((PREFIX + "MAN_VALUES", "COMPUTED"))
    planned = {maneuver.id: maneuver for maneuver in plan.maneuvers}
    maneuvers = []
    for number, burn in enumerate(report.get("maneuvers", ()), start=1):
        maneuver = planned[burn["id"]]
        carry(f"MAN_{number}_ID", maneuver.id)
        carry(f"MAN_{number}_ENGINE", maneuver.engine)
        for name, value in (
            ("DECLARED_DURATION", maneuver.declared_duration_s),
            ("DECLARED_PROPELLANT", maneuver.declared_propellant_kg),
        ):
            if value is not None:
                user.append((f"{PREFIX}MAN_{number}_{name}", str(decimal_of(value))))
        maneuvers.append(
            opm.OpmManeuver(
                epoch_ignition=opm.utc_to_opm_epoch(maneuver.ignition),
                duration_s=decimal_of(burn["duration_s"]),
                delta_mass_kg=-decimal_of(burn["propellant_kg"]),
                ref_frame=maneuver.frame,
                dv_km_s=tuple(decimal_of(value).scaleb(-3) for value in maneuver.delta_v_m_s),
                line=0,
                comments=(f"burn {maneuver.id} on engine {maneuver.engine}"[:COMMENT_WIDTH],)
                if _kvn_value(maneuver.id) and _kvn_value(maneuver.engine)
                else (),
            )
        )
    spacecraft = plan.spacecraft
    name = _kvn_value(plan.plan_id) or "BURNPROOF-PLAN"
    optional = {
        "solar_rad_area_m2": spacecraft.srp_area_m2,
        "solar_rad_coeff": spacecraft.reflectivity_coefficient,
        "drag_area_m2": spacecraft.drag_area_m2,
        "drag_coeff": spacecraft.drag_coefficient,
    }
    return opm.OpmMessage(
        header=opm.OpmHeader(
            version=getattr(opm, "WRITE_VERSION", "3.0"),
            creation_date=opm.utc_to_opm_epoch(created).text,
            originator=ORIGINATOR,
            message_id=None,
            comments=_comments(report, notes),
        ),
        metadata=opm.OpmMetadata(
            object_name=name,
            object_id=name,
            center_name=plan.central_body.upper(),
            ref_frame=frame,
            ref_frame_epoch=None,
            time_system="UTC",
            comments=(),
        ),
        state=opm.OpmStateVector(
            epoch=opm.utc_to_opm_epoch(plan.epoch),
            position_km=tuple(position),
            velocity_km_s=tuple(velocity),
            comments=(),
        ),
        keplerian=None if kepler is None else opm.OpmKeplerian(**kepler, comments=()),
        spacecraft=opm.OpmSpacecraft(
            mass_kg=decimal_of(spacecraft.dry_mass_kg) + decimal_of(spacecraft.propellant_kg),
            **{
                key: None if value is None else decimal_of(value) for key, value in optional.items()
            },
            comments=(),
        ),
        covariance=None,
        maneuvers=tuple(maneuvers),
        user_defined=tuple(user),
    )


def write_plan_opm(plan: Plan, report: Mapping, *, created: np.datetime64 | None = None) -> str:
    """The KVN text of ``plan_to_opm`` (``PlanFailed`` for a failed plan)."""
    from service.ccsds.opm import write_opm

    return write_opm(plan_to_opm(plan, report, created=created))
