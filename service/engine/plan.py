"""The plan as plain typed objects: what the schema layer produces and the engine consumes.

Units ride in the names; angles here are degrees because they are the wire's
values, converted to radians once when the trajectory is built.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field

import numpy as np

Vector3 = tuple[float, float, float]

# Ground stations, the same limits for a plan's own and a profile's network.
MAX_GROUND_STATIONS = 64
STATION_ID_MAX_CHARS = 64
LATITUDE_RANGE_DEG = (-90.0, 90.0)  # both ends allowed
LONGITUDE_RANGE_DEG = (-180.0, 360.0)  # east positive; the upper end excluded
HEIGHT_RANGE_KM = (-0.5, 9.0)  # above the WGS 84 ellipsoid; both ends allowed
MIN_ELEVATION_RANGE_DEG = (0.0, 90.0)  # the station's mask; the upper end excluded
DEFAULT_MIN_ELEVATION_DEG = 5.0
PROTECTED_AXIS_RANGE_DEG = (0.0, 180.0)  # both ends allowed
# CR: 1 absorbs all sunlight, 2 reflects all of it straight back (Vallado 4th ed. section 8.6.4,
# from memory); both ends allowed.
REFLECTIVITY_COEFFICIENT_RANGE = (1.0, 2.0)


# An engine's own execution errors (1-sigma), each from 0 to this maximum inclusive: beyond
# them the number is a typo, not hardware (a 50 % magnitude error, a 30 deg pointing error).
EXECUTION_ERROR_MAXIMA = {
    "magnitude_fraction_1sigma": 0.5,
    "magnitude_fixed_m_s_1sigma": 100.0,
    "pointing_1sigma_deg": 30.0,
    "timing_1sigma_s": 3600.0,
}


@dataclass(frozen=True)
class ExecutionErrors:
    """An engine's 1-sigma execution errors as the plan gives them; ``None``: the profile's.

    Used by the execution-dispersion check in place of the profile's error model for
    this engine's burns, field by field.
    """

    magnitude_fraction_1sigma: float | None = None
    magnitude_fixed_m_s_1sigma: float | None = None
    pointing_1sigma_deg: float | None = None
    timing_1sigma_s: float | None = None


@dataclass(frozen=True)
class Engine:
    id: str
    thrust_n: float
    isp_s: float
    max_burn_s: float | None = None
    min_burn_s: float | None = None
    execution_errors: ExecutionErrors | None = None


@dataclass(frozen=True)
class Spacecraft:
    dry_mass_kg: float
    propellant_kg: float
    engines: tuple[Engine, ...]
    drag_area_m2: float | None = None
    drag_coefficient: float | None = None
    # The angle from the thrust axis of a body axis that must also keep out of the Sun
    # (a star-tracker boresight, a radiator normal). Roll about the thrust axis is not
    # planned, so a check takes the worst case over the cone of that half-angle.
    protected_axis_offset_deg: float | None = None
    # Solar radiation pressure, for the geostationary graveyard rule (IADC-02-01 section 5.3.1):
    # the area exposed to sunlight (m^2, attitude-averaged) and the reflectivity coefficient CR
    # (1 for a perfect absorber, 2 for a perfect mirror).
    srp_area_m2: float | None = None
    reflectivity_coefficient: float | None = None

    @property
    def wet_mass_kg(self) -> float:
        return self.dry_mass_kg + self.propellant_kg

    def engine(self, engine_id: str) -> Engine:
        for engine in self.engines:
            if engine.id == engine_id:
                return engine
        raise KeyError(engine_id)


@dataclass(frozen=True)
class CartesianState:
    """Body-centred inertial state; GCRF and EME2000 are one inertial frame at this fidelity."""

    frame: str
    position_km: Vector3
    velocity_km_s: Vector3


@dataclass(frozen=True)
class ElementsState:
    """Osculating classical elements at the plan epoch."""

    semi_major_axis_km: float
    eccentricity: float
    inclination_deg: float
    raan_deg: float
    arg_periapsis_deg: float
    true_anomaly_deg: float


@dataclass(frozen=True)
class Maneuver:
    id: str
    ignition: np.datetime64
    engine: str
    frame: str
    delta_v_m_s: Vector3
    # What the planner declared for this burn (an OPM's MAN_DURATION and -MAN_DELTA_MASS), for
    # the declared-burn-agreement check; None when not given. 0 s means an impulsive burn.
    declared_duration_s: float | None = None
    declared_propellant_kg: float | None = None


@dataclass(frozen=True)
class TargetOrbit:
    periapsis_altitude_km: float
    apoapsis_altitude_km: float
    tolerance_km: float = 5.0
    inclination_deg: float | None = None
    tolerance_deg: float = 0.05


@dataclass(frozen=True)
class GroundStation:
    """A ground station on the WGS 84 ellipsoid: geodetic latitude, east longitude, height.

    ``min_elevation_deg`` is its elevation mask: it sees the spacecraft when the
    elevation is at or above the mask.
    """

    id: str
    latitude_deg: float
    longitude_deg: float
    height_km: float
    min_elevation_deg: float = DEFAULT_MIN_ELEVATION_DEG

    def document(self) -> dict:
        return {
            "id": self.id,
            "latitude_deg": float(self.latitude_deg),
            "longitude_deg": float(self.longitude_deg),
            "height_km": float(self.height_km),
            "min_elevation_deg": float(self.min_elevation_deg),
        }


@dataclass(frozen=True)
class Plan:
    """A validated plan. ``digest`` is the SHA-256 of its canonical JSON (see ``plan_digest``)."""

    plan_id: str
    central_body: str
    epoch: np.datetime64
    initial_state: CartesianState | ElementsState
    spacecraft: Spacecraft
    maneuvers: tuple[Maneuver, ...]
    target_orbit: TargetOrbit | None
    profile: str
    rules: dict[str, dict[str, float]] = field(default_factory=dict)
    digest: str = ""
    ground_stations: tuple[GroundStation, ...] = ()
    # The plan is an end-of-life disposal: the disposal check judges where it leaves the
    # spacecraft (graveyard orbit, orbital lifetime or controlled re-entry).
    end_of_life: bool = False


def canonical_json(data: object) -> bytes:
    """Sorted keys, no insignificant white space, UTF-8: the bytes the digest is taken over."""
    return json.dumps(
        data, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False
    ).encode("utf-8")


def plan_digest(data: object) -> str:
    """``sha256:<hex>`` over the canonical JSON of the plan as received (CONTRACT.md section 2)."""
    return "sha256:" + hashlib.sha256(canonical_json(data)).hexdigest()
