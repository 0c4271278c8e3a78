"""Assemble checked OPM blocks (from opm_reader) into an OpmMessage, with the cross-block rules.

Cross-block rule: CCSDS 502.0-B-3 3.2.4.9 -- when the OPM has a maneuver, the conditional
spacecraft parameter MASS must be given.
"""

from __future__ import annotations

from service.ccsds import opm_tables as tables
from service.ccsds.kvn import OpmError
from service.ccsds.opm_model import (
    OpmHeader,
    OpmKeplerian,
    OpmManeuver,
    OpmMessage,
    OpmMetadata,
    OpmSpacecraft,
    OpmStateVector,
)


def _v(chunk, name):
    entry = chunk.values.get(name)
    return None if entry is None else entry[1]


def build(chunks) -> tuple[OpmMessage | None, list[OpmError]]:
    by_name: dict[str, list] = {}
    for chunk in chunks:
        by_name.setdefault(chunk.block.name, []).append(chunk)

    def one(block):
        found = by_name.get(block.name)
        return found[0] if found else None

    head, meta, state = one(tables.HEADER), one(tables.METADATA), one(tables.STATE)
    header = OpmHeader(
        version=_v(head, "CCSDS_OPM_VERS"),
        creation_date=_v(head, "CREATION_DATE"),
        originator=_v(head, "ORIGINATOR"),
        message_id=_v(head, "MESSAGE_ID"),
        comments=head.comments,
        classification=_v(head, "CLASSIFICATION"),
    )
    metadata = OpmMetadata(
        object_name=_v(meta, "OBJECT_NAME"),
        object_id=_v(meta, "OBJECT_ID"),
        center_name=_v(meta, "CENTER_NAME"),
        ref_frame=_v(meta, "REF_FRAME"),
        ref_frame_epoch=_v(meta, "REF_FRAME_EPOCH"),
        time_system=_v(meta, "TIME_SYSTEM"),
        comments=meta.comments,
    )
    state_vector = OpmStateVector(
        epoch=_v(state, "EPOCH"),
        position_km=(_v(state, "X"), _v(state, "Y"), _v(state, "Z")),
        velocity_km_s=(_v(state, "X_DOT"), _v(state, "Y_DOT"), _v(state, "Z_DOT")),
        comments=state.comments,
    )
    kep = one(tables.KEPLERIAN)
    keplerian = None
    if kep is not None:
        keplerian = OpmKeplerian(
            semi_major_axis_km=_v(kep, "SEMI_MAJOR_AXIS"),
            eccentricity=_v(kep, "ECCENTRICITY"),
            inclination_deg=_v(kep, "INCLINATION"),
            ra_of_asc_node_deg=_v(kep, "RA_OF_ASC_NODE"),
            arg_of_pericenter_deg=_v(kep, "ARG_OF_PERICENTER"),
            true_anomaly_deg=_v(kep, "TRUE_ANOMALY"),
            mean_anomaly_deg=_v(kep, "MEAN_ANOMALY"),
            gm_km3_s2=_v(kep, "GM"),
            comments=kep.comments,
        )
    sc = one(tables.SPACECRAFT)
    spacecraft = None
    if sc is not None:
        spacecraft = OpmSpacecraft(
            mass_kg=_v(sc, "MASS"),
            solar_rad_area_m2=_v(sc, "SOLAR_RAD_AREA"),
            solar_rad_coeff=_v(sc, "SOLAR_RAD_COEFF"),
            drag_area_m2=_v(sc, "DRAG_AREA"),
            drag_coeff=_v(sc, "DRAG_COEFF"),
            comments=sc.comments,
        )
    cov = one(tables.COVARIANCE)
    maneuvers = tuple(
        OpmManeuver(
            epoch_ignition=_v(m, "MAN_EPOCH_IGNITION"),
            duration_s=_v(m, "MAN_DURATION"),
            delta_mass_kg=_v(m, "MAN_DELTA_MASS"),
            ref_frame=_v(m, "MAN_REF_FRAME"),
            dv_km_s=(_v(m, "MAN_DV_1"), _v(m, "MAN_DV_2"), _v(m, "MAN_DV_3")),
            line=m.values["MAN_EPOCH_IGNITION"][0],
            comments=m.comments,
        )
        for m in by_name.get(tables.MANEUVER.name, [])
    )
    errors = []
    if maneuvers and (spacecraft is None or spacecraft.mass_kg is None):
        errors.append(
            OpmError(
                "MASS must be given when the OPM has a maneuver (CCSDS 502.0-B-3 3.2.4.9)",
                maneuvers[0].line,
                "MASS",
            )
        )
    user = one(tables.USER_DEFINED)
    message = OpmMessage(
        header=header,
        metadata=metadata,
        state=state_vector,
        keplerian=keplerian,
        spacecraft=spacecraft,
        covariance=(
            tuple((k, _v(cov, k)) for k in tables.COVARIANCE_KEYS) if cov is not None else None
        ),
        maneuvers=maneuvers,
        user_defined=(
            tuple((k[len(tables.USER_PREFIX) :], v[1]) for k, v in user.values.items())
            if user is not None
            else ()
        ),
        covariance_ref_frame=_v(cov, "COV_REF_FRAME") if cov is not None else None,
        covariance_comments=cov.comments if cov is not None else (),
    )
    return (None, errors) if errors else (message, [])
