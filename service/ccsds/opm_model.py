"""The Orbit Parameter Message as plain frozen objects, numbers kept as the Decimal written.

Structure of CCSDS 502.0-B-3 (April 2023) section 3.2 / CCSDS 502.0-B-2 (November 2009)
section 3.2: header (table 3-1), metadata (table 3-2), data (table 3-3: state vector,
osculating Keplerian elements, spacecraft parameters, covariance, maneuvers, user-defined).
Units ride in the field names and are the standard's (km, km/s, deg, kg, m**2, s).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from decimal import Decimal

import numpy as np


@dataclass(frozen=True)
class OpmEpoch:
    """An epoch as written (ASCII time code A or B) and its UTC instant (datetime64[ms])."""

    text: str
    time_system: str  # "UTC" | "TAI" | "TT" | "GPS"
    utc: np.datetime64


@dataclass(frozen=True)
class OpmHeader:
    version: str  # "2.0" | "3.0"
    creation_date: str
    originator: str
    message_id: str | None
    comments: tuple[str, ...]
    classification: str | None = None  # 3.0 only (B-3 table 3-1); added, optional


@dataclass(frozen=True)
class OpmMetadata:
    object_name: str
    object_id: str
    center_name: str
    ref_frame: str
    ref_frame_epoch: str | None
    time_system: str
    comments: tuple[str, ...]


@dataclass(frozen=True)
class OpmStateVector:
    epoch: OpmEpoch
    position_km: tuple[Decimal, Decimal, Decimal]
    velocity_km_s: tuple[Decimal, Decimal, Decimal]
    comments: tuple[str, ...]


@dataclass(frozen=True)
class OpmKeplerian:
    semi_major_axis_km: Decimal
    eccentricity: Decimal
    inclination_deg: Decimal
    ra_of_asc_node_deg: Decimal
    arg_of_pericenter_deg: Decimal
    true_anomaly_deg: Decimal | None
    mean_anomaly_deg: Decimal | None
    gm_km3_s2: Decimal
    comments: tuple[str, ...]


@dataclass(frozen=True)
class OpmSpacecraft:
    mass_kg: Decimal | None
    solar_rad_area_m2: Decimal | None
    solar_rad_coeff: Decimal | None
    drag_area_m2: Decimal | None
    drag_coeff: Decimal | None
    comments: tuple[str, ...]


@dataclass(frozen=True)
class OpmManeuver:
    epoch_ignition: OpmEpoch
    duration_s: Decimal
    delta_mass_kg: Decimal  # <= 0
    ref_frame: str  # as written: RTN, TNW, RSW, EME2000, GCRF, ICRF ...
    dv_km_s: tuple[Decimal, Decimal, Decimal]
    line: int = field(compare=False)  # line of MAN_EPOCH_IGNITION; 0 when not read from text
    comments: tuple[str, ...]


@dataclass(frozen=True)
class OpmMessage:
    header: OpmHeader
    metadata: OpmMetadata
    state: OpmStateVector
    keplerian: OpmKeplerian | None
    spacecraft: OpmSpacecraft | None
    covariance: tuple[tuple[str, Decimal], ...] | None  # 21 (keyword, value), as read
    maneuvers: tuple[OpmManeuver, ...]
    user_defined: tuple[tuple[str, str], ...]  # ("BURNPROOF_PLAN_ID", "x"), order kept
    covariance_ref_frame: str | None = None  # COV_REF_FRAME (added, optional)
    covariance_comments: tuple[str, ...] = ()  # added, optional
