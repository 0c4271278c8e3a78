"""Monte Carlo of burn execution errors: every arc's periapsis per sample, all samples at once.

Error model per burn (documented distributions, all independent, Gaussian):

- magnitude: |dv| (1 + eps) + eta, eps ~ N(0, sigma_fraction), eta ~ N(0, sigma_fixed_m_s);
  a draw below zero delivers nothing (an engine does not thrust backwards);
- pointing: the thrust direction is deflected by a 2-D Gaussian perpendicular to it, each
  axis with standard deviation sigma_pointing_rad, so the deflection angle follows a
  Rayleigh distribution whose 1-sigma radius is sigma_pointing_rad;
- ignition timing: the whole burn shifts by tau ~ N(0, sigma_timing_s); the centre also
  moves with the changed burn time (half the extra duration).

Burns are applied in sequence, each at the dispersed state the previous ones left, with
RTN and TNW components re-evaluated in that state, so errors carry into the next arc (the
impulsive model at the mid-point, as for the nominal plan; two-body coasts). Mass flows by
the rocket equation per sample. Every step is one numpy call over all samples.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from service.dynamics.bodies import G0_M_S2
from service.dynamics.epochs import seconds_between
from service.dynamics.frames import local_to_inertial
from service.dynamics.kepler import propagate
from service.dynamics.trajectory import BurnSpec, Trajectory


@dataclass(frozen=True)
class BurnErrors:
    """1-sigma execution errors of one burn (see the module docstring for the distributions)."""

    magnitude_fraction: float
    magnitude_fixed_m_s: float
    pointing_rad: float
    timing_s: float

    def __post_init__(self) -> None:
        for name in ("magnitude_fraction", "magnitude_fixed_m_s", "pointing_rad", "timing_s"):
            value = getattr(self, name)
            if not np.isfinite(value) or value < 0.0:
                raise ValueError(f"{name} must be a finite 1-sigma >= 0, got {value!r}")


@dataclass(frozen=True)
class Dispersion:
    """Per sample: periapsis altitude of every arc (arcs, N), whether it is bound, propellant."""

    periapsis_altitude_km: np.ndarray
    bound: np.ndarray
    propellant_kg: np.ndarray


def _periapsis_radius_km(r_km: np.ndarray, v_km_s: np.ndarray, mu: float):
    """p / (1 + e) from (N, 3) states, and whether each orbit is bound (Vallado 4th ed. ch. 2)."""
    h = np.cross(r_km, v_km_s)
    h2 = np.einsum("ij,ij->i", h, h)
    radius = np.linalg.norm(r_km, axis=1)
    e_vec = np.cross(v_km_s, h) / mu - r_km / radius[:, None]
    e = np.linalg.norm(e_vec, axis=1)
    energy = 0.5 * np.einsum("ij,ij->i", v_km_s, v_km_s) - mu / radius
    return h2 / mu / (1.0 + e), energy < 0.0


def _deflect(direction: np.ndarray, sigma_rad: float, rng: np.random.Generator) -> np.ndarray:
    """Unit vectors (N, 3) deflected from ``direction`` (N, 3) by a 2-D Gaussian angle."""
    helper = np.where(
        np.abs(direction[:, :1]) < 0.9, np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0])
    )
    first = np.cross(direction, helper)
    first /= np.linalg.norm(first, axis=1)[:, None]
    second = np.cross(direction, first)
    ax, ay = rng.normal(0.0, sigma_rad, size=(2, direction.shape[0]))
    angle = np.hypot(ax, ay)
    safe = np.where(angle > 0.0, angle, 1.0)
    lateral = (first * (ax / safe)[:, None] + second * (ay / safe)[:, None]) * np.sin(angle)[
        :, None
    ]
    return direction * np.cos(angle)[:, None] + lateral


def disperse(
    trajectory: Trajectory,
    burns: Sequence[BurnSpec],
    errors: Sequence[BurnErrors],
    samples: int,
    rng: np.random.Generator,
) -> Dispersion:
    """Fly the plan ``samples`` times with random execution errors; burns in ignition order.

    ``burns`` and ``errors`` follow ``trajectory.maneuvers``' order (the builder's).
    """
    if samples < 1:
        raise ValueError(f"samples must be at least 1, got {samples}")
    if len(burns) != len(trajectory.maneuvers) or len(errors) != len(burns):
        raise ValueError("one BurnSpec and one BurnErrors per burn of the trajectory")
    mu = trajectory.body.mu_km3_s2
    radius_km = trajectory.body.equatorial_radius_km
    first = trajectory.arcs[0]
    r = np.broadcast_to(first.r_start_km, (samples, 3)).copy()
    v = np.broadcast_to(first.v_start_km_s, (samples, 3)).copy()
    mass = np.full(samples, trajectory.initial_mass_kg)
    at_s = np.zeros(samples)  # each sample's epoch, seconds after the first arc's start
    rp, bound = _periapsis_radius_km(r, v, mu)
    periapses, bounds = [rp], [bound]
    for spec, nominal, error in zip(burns, trajectory.maneuvers, errors, strict=True):
        exhaust_m_s = spec.engine.isp_s * G0_M_S2
        planned = np.asarray(spec.delta_v_m_s, dtype=float)
        dv = nominal.delta_v_m_s * (1.0 + rng.normal(0.0, error.magnitude_fraction, samples))
        dv = np.maximum(dv + rng.normal(0.0, error.magnitude_fixed_m_s, samples), 0.0)
        propellant = -mass * np.expm1(-dv / exhaust_m_s)
        duration = propellant / (spec.engine.thrust_n / exhaust_m_s)
        ignition_s = float(seconds_between(first.start, nominal.ignition))
        ignition_s += rng.normal(0.0, error.timing_s, samples)
        centre_s = ignition_s + duration / 2.0
        r, v = propagate(r, v, centre_s - at_s, mu)
        r, v = np.reshape(r, (samples, 3)), np.reshape(v, (samples, 3))
        direction = np.asarray(local_to_inertial(planned, spec.frame, r, v), dtype=float)
        direction = np.reshape(direction, (samples, 3))
        direction /= np.linalg.norm(direction, axis=1)[:, None]
        v = v + _deflect(direction, error.pointing_rad, rng) * (dv / 1000.0)[:, None]
        mass = mass - propellant
        at_s = centre_s
        rp, bound = _periapsis_radius_km(r, v, mu)
        periapses.append(rp)
        bounds.append(bound)
    return Dispersion(
        periapsis_altitude_km=np.stack(periapses) - radius_km,
        bound=np.stack(bounds),
        propellant_kg=trajectory.initial_mass_kg - mass,
    )
