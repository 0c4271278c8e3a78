"""What a maneuver plan really does: masses, burn times and every coast arc's orbit.

The builder takes an initial state, a spacecraft mass and a list of burns in any
order, orders them by ignition, and applies each as an impulse at its mid-point
(ignition + duration / 2), the duration being the exact constant-thrust burn
time from the rocket equation. Between impulses the spacecraft coasts on
two-body orbits (optionally with secular J2 drift). Optionally each burn is
also flown as a finite burn so that the impulsive model's error can be judged.

The output is exactly what a report and the flight-rule checks need, computed
once: checks read it and never propagate for themselves.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Literal

import numpy as np

from service.dynamics import rocket
from service.dynamics.arcs import lowest_point, swept_angle_rad
from service.dynamics.bodies import Body
from service.dynamics.elements import (
    Elements,
    apoapsis_radius_km,
    periapsis_radius_km,
    period_s,
    specific_energy_km2_s2,
    state_to_elements,
)
from service.dynamics.epochs import add_seconds, seconds_between
from service.dynamics.finite_burn import FiniteBurn, FiniteBurnResult, simulate_finite_burns
from service.dynamics.frames import local_to_inertial
from service.dynamics.kepler import propagate
from service.dynamics.secular import propagate_j2_secular

CoastModel = Literal["two-body", "j2-secular"]


@dataclass(frozen=True)
class EngineSpec:
    """An engine as the trajectory needs it: thrust in newtons, specific impulse in seconds."""

    id: str
    thrust_n: float
    isp_s: float


@dataclass(frozen=True)
class BurnSpec:
    """One planned burn: engine start epoch (UTC), engine, frame and delta-v components in m/s."""

    id: str
    ignition: np.datetime64
    engine: EngineSpec
    frame: str
    delta_v_m_s: tuple[float, float, float]


@dataclass(frozen=True)
class BurnResult:
    """A burn as flown by the model: masses, duration, epochs and the velocity change applied."""

    id: str
    engine_id: str
    frame: str
    delta_v_m_s: float
    delta_v_inertial_m_s: np.ndarray
    propellant_kg: float
    duration_s: float
    mass_before_kg: float
    mass_after_kg: float
    ignition: np.datetime64
    centre: np.datetime64
    cutoff: np.datetime64
    r_ignition_km: np.ndarray
    r_centre_km: np.ndarray
    r_cutoff_km: np.ndarray
    v_before_km_s: np.ndarray
    v_after_km_s: np.ndarray
    burn_arc_rad: float
    finite_burn: FiniteBurnResult | None
    finite_burn_skipped: str | None = None


@dataclass(frozen=True)
class Arc:
    """One coast arc: from an impulse (or the plan epoch) to the next impulse (None: open-ended).

    Elements are osculating at the arc's start. ``apoapsis_altitude_km`` and
    ``period_s`` are None for unbound arcs. ``lowest_altitude_km`` is the
    lowest altitude actually flown between ``start`` and ``end`` (for the
    open-ended last arc: over the next periapsis passage, if any).
    """

    index: int
    after_maneuver: str | None
    start: np.datetime64
    end: np.datetime64 | None
    r_start_km: np.ndarray
    v_start_km_s: np.ndarray
    r_end_km: np.ndarray | None
    v_end_km_s: np.ndarray | None
    elements: Elements
    bound: bool
    specific_energy_km2_s2: float
    periapsis_radius_km: float
    periapsis_altitude_km: float
    apoapsis_altitude_km: float | None
    period_s: float | None
    lowest_altitude_km: float
    lowest_altitude_epoch: np.datetime64

    @property
    def semi_major_axis_km(self) -> float:
        return float(self.elements.a_km)

    @property
    def eccentricity(self) -> float:
        return float(self.elements.e)

    @property
    def inclination_rad(self) -> float:
        return float(self.elements.i_rad)


@dataclass(frozen=True)
class Trajectory:
    """The plan as flown by the model: burns in ignition order and the arcs between them."""

    body: Body
    epoch: np.datetime64
    initial_mass_kg: float
    coast_model: CoastModel
    maneuvers: tuple[BurnResult, ...]
    arcs: tuple[Arc, ...]

    @property
    def total_delta_v_m_s(self) -> float:
        return float(sum(burn.delta_v_m_s for burn in self.maneuvers))

    @property
    def total_propellant_kg(self) -> float:
        return float(sum(burn.propellant_kg for burn in self.maneuvers))

    @property
    def final_mass_kg(self) -> float:
        return self.maneuvers[-1].mass_after_kg if self.maneuvers else self.initial_mass_kg

    def states_at(self, epochs) -> tuple[np.ndarray, np.ndarray]:
        """Inertial states (N, 3) km and km/s at ``epochs`` (datetime64, any order) on the plan.

        Each epoch is placed on the last arc that has started by then (arc 0 before the
        plan epoch) and coasted from that arc's start with the trajectory's coast model:
        the impulsive model, so inside a burn the state jumps at its mid-point. One
        vectorised propagation for all the epochs (two-body), or one per arc touched
        (secular J2).
        """
        times = np.atleast_1d(np.asarray(epochs, dtype="datetime64[ms]"))
        if times.shape == (1,) and self.coast_model == "two-body":
            # One epoch (a root search asks for one at a time): the same coast, less overhead.
            k = self._arc_index_one(times[0])
            arc = self.arcs[k]
            dt_s = float(seconds_between(arc.start, times[0]))
            mu = self.body.mu_km3_s2
            self._refuse_unless_orbit(k)
            r_one, v_one = propagate(arc.r_start_km, arc.v_start_km_s, dt_s, mu)
            return np.reshape(r_one, (1, 3)), np.reshape(v_one, (1, 3))
        starts = self._arc_starts
        if self._arc_starts_ordered and times.ndim == 1:
            # The last arc that has started: a binary search when the starts are in order.
            index = np.maximum(np.searchsorted(starts, times, side="right") - 1, 0)
        else:
            started = starts[:, None] <= times[None, :]
            last = len(self.arcs) - 1 - np.argmax(started[::-1], axis=0)
            index = np.where(started.any(axis=0), last, 0)
        touched = np.unique(index)
        if touched.size > 1 and self._one_call_ready and not np.isnat(times).any():
            try:
                return self._coast_from_arcs(times, index, touched)
            except (ValueError, ArithmeticError, RuntimeError):
                pass  # the arc-by-arc coast below raises as it always has
        r_km = np.empty((times.size, 3))
        v_km_s = np.empty((times.size, 3))
        for k in touched:
            mask = index == k
            arc = self.arcs[int(k)]
            dt_s = np.asarray(seconds_between(arc.start, times[mask]), dtype=float)
            r_km[mask], v_km_s[mask] = _coast_many(
                arc.r_start_km, arc.v_start_km_s, dt_s, self.body, self.coast_model
            )
        return r_km, v_km_s

    @functools.cached_property
    def _one_call_ready(self) -> bool:
        """Two-body arcs that start on whole milliseconds: coasted in one call from any arcs."""
        if self.coast_model != "two-body":
            return False
        unit = np.dtype("datetime64[ms]")
        return all(isinstance(a.start, np.datetime64) and a.start.dtype == unit for a in self.arcs)

    def _coast_from_arcs(self, times: np.ndarray, index: np.ndarray, touched: np.ndarray):
        """Every epoch coasted from its own arc's start state in one vectorised call.

        The same two-body coast as arc by arc; the Newton iteration of a batch runs until its
        last sample settles, so a sample can come out a rounding unit apart from an
        arc-by-arc batch, never more.
        """
        mu = self.body.mu_km3_s2
        for k in touched:
            self._refuse_unless_orbit(int(k))
        r0_km, v0_km_s = self._arc_start_states
        dt_s = (times - self._arc_starts[index]) / np.timedelta64(1, "ms") / 1000.0
        return propagate(r0_km[index], v0_km_s[index], dt_s, mu)

    def _refuse_unless_orbit(self, k: int) -> None:
        """The refusal ``_coast_many`` makes (no elements, no coast), once per arc: it depends
        on the arc's start state alone."""
        if k not in self._arcs_with_elements:
            arc = self.arcs[k]
            state_to_elements(arc.r_start_km, arc.v_start_km_s, self.body.mu_km3_s2)
            self._arcs_with_elements.add(k)

    @functools.cached_property
    def _arcs_with_elements(self) -> set[int]:
        return set()

    @functools.cached_property
    def _arc_start_states(self) -> tuple[np.ndarray, np.ndarray]:
        r0_km = np.array([np.asarray(arc.r_start_km, dtype=float) for arc in self.arcs])
        v0_km_s = np.array([np.asarray(arc.v_start_km_s, dtype=float) for arc in self.arcs])
        return r0_km, v0_km_s

    @functools.cached_property
    def _arc_starts(self) -> np.ndarray:
        return np.array([arc.start for arc in self.arcs], dtype="datetime64[ms]")

    @functools.cached_property
    def _arc_starts_ordered(self) -> bool:
        # Overlapping burns can put an impulse before the previous one's.
        starts = self._arc_starts
        return bool(np.all(starts[1:] >= starts[:-1]))

    def _arc_index_one(self, time: np.datetime64) -> int:
        """Index of the last arc that has started at ``time`` (arc 0 before the plan epoch)."""
        starts = self._arc_starts
        if self._arc_starts_ordered:
            return max(int(np.searchsorted(starts, time, side="right")) - 1, 0)
        started = np.flatnonzero(starts <= time)
        return int(started[-1]) if started.size else 0


def burn_end_positions_km(trajectory: Trajectory, burns: Sequence[BurnResult]) -> np.ndarray:
    """Positions (2N, 3) km at each burn's ignition and cutoff: ``states_at`` of those epochs.

    The builder has already coasted there: a burn's ``r_ignition_km`` is its arc's start
    state coasted to the ignition, and ``r_cutoff_km`` the post-impulse state coasted to the
    cutoff, the very coasts ``states_at`` makes when the ignition lies on the burn's own arc
    and the cutoff on the next (the usual case; overlapping burns are not). Those are read
    from the burns, the rest computed by ``states_at``; two-body coasts only.
    """
    epochs = np.array([[b.ignition, b.cutoff] for b in burns], dtype="datetime64[ms]")
    epochs = epochs.reshape(-1)
    if trajectory.coast_model != "two-body" or not burns:
        return trajectory.states_at(epochs)[0]
    own = {id(burn): index for index, burn in enumerate(trajectory.maneuvers)}
    r_km = np.empty((epochs.size, 3))
    missing = []
    for row, burn in enumerate(burns):
        k = own.get(id(burn), -2)  # -2: not one of this trajectory's burns
        ends = ((burn.ignition, k, burn.r_ignition_km), (burn.cutoff, k + 1, burn.r_cutoff_km))
        for column, (epoch, arc_index, r_end_km) in enumerate(ends):
            at = 2 * row + column
            if k >= 0 and trajectory._arc_index_one(np.datetime64(epoch, "ms")) == arc_index:
                r_km[at] = r_end_km
            else:
                missing.append(at)
    if missing:
        r_km[missing] = trajectory.states_at(epochs[missing])[0]
    return r_km


# A burn longer than this, or sweeping a whole orbit, is no impulse at all: the burn-duration
# check fails it on its arc, and integrating it would cost time without bound.
MAX_FINITE_BURN_S = 86400.0


def _finite_burn_out_of_reach(duration_s: float, burn_arc_rad: float) -> str | None:
    """Why the finite-burn comparison is not integrated for this burn, or None to integrate it."""
    if duration_s > MAX_FINITE_BURN_S:
        return (
            f"the burn lasts {duration_s:.0f} s, beyond the {MAX_FINITE_BURN_S:.0f} s for which "
            "the finite-burn comparison is computed"
        )
    if burn_arc_rad >= 2.0 * np.pi:
        return "the burn sweeps a whole orbit or more; the finite-burn comparison is not computed"
    return None


def _coast(r_km, v_km_s, dt_s: float, body: Body, coast_model: CoastModel, elements=None):
    if dt_s == 0.0:
        return np.array(r_km, dtype=float), np.array(v_km_s, dtype=float)
    if elements is None:
        elements = state_to_elements(r_km, v_km_s, body.mu_km3_s2)
    closed = elements.e < 1.0
    if coast_model == "j2-secular" and closed:
        return propagate_j2_secular(r_km, v_km_s, dt_s, body)
    return propagate(r_km, v_km_s, dt_s, body.mu_km3_s2)


def _coast_many(r_km, v_km_s, dt_s: np.ndarray, body: Body, coast_model: CoastModel):
    """One state coasted to many offsets (N,) in one vectorised call."""
    closed = state_to_elements(r_km, v_km_s, body.mu_km3_s2).e < 1.0
    if coast_model == "j2-secular" and closed:
        r, v = propagate_j2_secular(r_km, v_km_s, dt_s, body)
    else:
        r, v = propagate(r_km, v_km_s, dt_s, body.mu_km3_s2)
    return np.reshape(r, (-1, 3)), np.reshape(v, (-1, 3))


def _arc(
    index: int,
    after: str | None,
    start: np.datetime64,
    end: np.datetime64 | None,
    r_start_km: np.ndarray,
    v_start_km_s: np.ndarray,
    end_state: tuple[np.ndarray, np.ndarray] | None,
    body: Body,
    elements: Elements | None = None,
) -> Arc:
    mu = body.mu_km3_s2
    if elements is None:
        elements = state_to_elements(r_start_km, v_start_km_s, mu)
    energy = float(specific_energy_km2_s2(r_start_km, v_start_km_s, mu))
    bound = bool(elements.e < 1.0)
    duration = None if end is None else max(float(seconds_between(start, end)), 0.0)
    lowest = lowest_point(
        r_start_km,
        v_start_km_s,
        duration,
        mu,
        r_end_km=None if end_state is None else end_state[0],
        elements=elements,
    )
    rp = float(periapsis_radius_km(elements))
    return Arc(
        index=index,
        after_maneuver=after,
        start=start,
        end=end,
        r_start_km=r_start_km,
        v_start_km_s=v_start_km_s,
        r_end_km=None if end_state is None else end_state[0],
        v_end_km_s=None if end_state is None else end_state[1],
        elements=elements,
        bound=bound,
        specific_energy_km2_s2=energy,
        periapsis_radius_km=rp,
        periapsis_altitude_km=float(body.altitude_km(rp)),
        apoapsis_altitude_km=float(body.altitude_km(apoapsis_radius_km(elements)))
        if bound
        else None,
        period_s=float(period_s(elements, mu)) if bound else None,
        lowest_altitude_km=float(body.altitude_km(lowest.radius_km)),
        lowest_altitude_epoch=add_seconds(start, lowest.time_from_start_s)
        if np.isfinite(lowest.time_from_start_s)
        else start,
    )


class _ElementsOnce:
    """``state_to_elements`` of each state the builder passes through, computed once.

    A burn's start state is asked for its elements up to five times (coasts to the
    ignition and the impulse, the arc's own elements, its lowest point, the burn's swept
    angle); the answer depends on the state alone. Keyed by the arrays themselves, which
    the builder never changes in place. ``lazy`` defers the computation to the first use,
    so that a state the builder would not convert is not converted (nor refused) sooner.
    """

    def __init__(self, mu_km3_s2: float) -> None:
        self.mu_km3_s2 = mu_km3_s2
        self.known: dict[tuple[int, int], tuple[np.ndarray, np.ndarray, Elements]] = {}

    def __call__(self, r_km: np.ndarray, v_km_s: np.ndarray) -> Elements:
        hit = self.known.get((id(r_km), id(v_km_s)))
        if hit is not None and hit[0] is r_km and hit[1] is v_km_s:
            return hit[2]
        elements = state_to_elements(r_km, v_km_s, self.mu_km3_s2)
        self.known[(id(r_km), id(v_km_s))] = (r_km, v_km_s, elements)
        return elements

    def lazy(self, r_km: np.ndarray, v_km_s: np.ndarray) -> _LazyElements:
        return _LazyElements(self, r_km, v_km_s)


class _LazyElements:
    """The elements of one state, computed by ``_ElementsOnce`` when first read."""

    def __init__(self, cache: _ElementsOnce, r_km: np.ndarray, v_km_s: np.ndarray) -> None:
        self.cache, self.r_km, self.v_km_s = cache, r_km, v_km_s

    @property
    def e(self) -> float | np.ndarray:
        return self.cache(self.r_km, self.v_km_s).e


def build_trajectory(
    body: Body,
    epoch: np.datetime64,
    r0_km,
    v0_km_s,
    initial_mass_kg: float,
    burns: Sequence[BurnSpec],
    *,
    coast_model: CoastModel = "two-body",
    finite_burns: bool = True,
) -> Trajectory:
    """Fly the plan once with the impulsive model and return its burns and arcs.

    Burns are ordered by ignition (then id, so equal ignitions stay
    deterministic). Each burn's mass before is the previous burn's mass after;
    the rocket equation is applied whether or not the tanks hold enough (the
    budget is judged by a check, not here). The delta-v frame (RTN, TNW) is
    evaluated at the pre-impulse state at the mid-point epoch.

    Parameters: ``body`` the central body; ``epoch`` the plan epoch (UTC, ms);
    ``r0_km``, ``v0_km_s`` the inertial state at ``epoch``; ``initial_mass_kg``
    wet mass at ``epoch``; ``coast_model`` two-body or with secular J2 drift
    (closed orbits only; unbound arcs coast two-body); ``finite_burns`` also
    integrate each burn as a finite burn for comparison.
    """
    if coast_model not in ("two-body", "j2-secular"):
        raise ValueError(f"unknown coast model {coast_model!r}; use 'two-body' or 'j2-secular'")
    if not np.isfinite(initial_mass_kg) or initial_mass_kg <= 0.0:
        raise ValueError(f"initial mass must be positive and finite, got {initial_mass_kg} kg")
    ordered = sorted(burns, key=lambda burn: (burn.ignition, burn.id))
    r_km = np.array(r0_km, dtype=float)
    v_km_s = np.array(v0_km_s, dtype=float)
    arc_start, after, mass_kg = epoch, None, float(initial_mass_kg)
    results: list[BurnResult] = []
    to_fly: dict[int, FiniteBurn] = {}  # index in results -> the burn to fly with finite thrust
    arcs: list[Arc] = []
    elements_of = _ElementsOnce(body.mu_km3_s2)
    for burn in ordered:
        dv_local = np.asarray(burn.delta_v_m_s, dtype=float)
        dv_m_s = float(np.linalg.norm(dv_local))
        engine = burn.engine
        duration = float(rocket.burn_duration_s(mass_kg, dv_m_s, engine.thrust_n, engine.isp_s))
        propellant = float(rocket.propellant_for_delta_v_kg(mass_kg, dv_m_s, engine.isp_s))
        centre = add_seconds(burn.ignition, duration / 2.0)
        cutoff = add_seconds(burn.ignition, duration)
        coast_s = float(seconds_between(arc_start, centre))
        r_c, v_before = _coast(
            r_km, v_km_s, coast_s, body, coast_model, elements_of.lazy(r_km, v_km_s)
        )
        arcs.append(
            _arc(
                len(arcs),
                after,
                arc_start,
                centre,
                r_km,
                v_km_s,
                (r_c, v_before),
                body,
                elements_of(r_km, v_km_s),
            )
        )
        dv_inertial = np.asarray(
            local_to_inertial(dv_local, burn.frame, r_c, v_before), dtype=float
        )
        v_after = v_before + dv_inertial / 1000.0
        to_ignition = float(seconds_between(arc_start, burn.ignition))
        r_ign, v_ign = _coast(
            r_km, v_km_s, to_ignition, body, coast_model, elements_of.lazy(r_km, v_km_s)
        )
        after_centre_s = float(seconds_between(centre, cutoff))
        r_cut, _ = _coast(
            r_c, v_after, after_centre_s, body, coast_model, elements_of.lazy(r_c, v_after)
        )
        mu = body.mu_km3_s2
        burn_arc = swept_angle_rad(r_ign, v_ign, float(seconds_between(burn.ignition, centre)), mu)
        burn_arc += swept_angle_rad(
            r_c, v_after, after_centre_s, mu, elements=elements_of(r_c, v_after)
        )
        skipped = None
        if finite_burns and dv_m_s > 0.0:
            skipped = _finite_burn_out_of_reach(duration, burn_arc)
            if skipped is None:  # flown after the loop, all such burns together
                to_fly[len(results)] = FiniteBurn(
                    r_ign, v_ign, mass_kg, dv_inertial, engine.thrust_n, engine.isp_s
                )
        results.append(
            BurnResult(
                id=burn.id,
                engine_id=engine.id,
                frame=burn.frame,
                delta_v_m_s=dv_m_s,
                delta_v_inertial_m_s=dv_inertial,
                propellant_kg=propellant,
                duration_s=duration,
                mass_before_kg=mass_kg,
                mass_after_kg=mass_kg - propellant,
                ignition=burn.ignition,
                centre=centre,
                cutoff=cutoff,
                r_ignition_km=r_ign,
                r_centre_km=r_c,
                r_cutoff_km=r_cut,
                burn_arc_rad=burn_arc,
                v_before_km_s=v_before,
                v_after_km_s=v_after,
                finite_burn=None,
                finite_burn_skipped=skipped,
            )
        )
        r_km, v_km_s, arc_start, after = r_c, v_after, centre, burn.id
        mass_kg -= propellant
    arcs.append(
        _arc(len(arcs), after, arc_start, None, r_km, v_km_s, None, body, elements_of(r_km, v_km_s))
    )
    flown = simulate_finite_burns(list(to_fly.values()), body.mu_km3_s2)
    for index, finite in zip(to_fly, flown, strict=True):
        results[index] = replace(results[index], finite_burn=finite)
    return Trajectory(
        body=body,
        epoch=epoch,
        initial_mass_kg=float(initial_mass_kg),
        coast_model=coast_model,
        maneuvers=tuple(results),
        arcs=tuple(arcs),
    )
