"""The one engine call both faces use: plan in, trajectory built once, checks run, report out."""

from __future__ import annotations

import hashlib
import math
import types
from collections.abc import Iterable, Mapping

import numpy as np

from service.dynamics.bodies import Body, body_named
from service.dynamics.elements import elements_from_semi_major_axis, elements_to_state
from service.dynamics.trajectory import BurnSpec, EngineSpec, Trajectory, build_trajectory
from service.engine.budget import ComputeBudget
from service.engine.errors import EngineNotReady, PlanInvalid
from service.engine.observe import CheckObserver
from service.engine.plan import CartesianState, GroundStation, Plan
from service.engine.profiles import Profile, Thresholds, load_profiles, resolve_thresholds
from service.engine.registry import PluginPolicy, Registry, build_registry
from service.engine.report import build_report
from service.engine.runner import run_checks
from service.plugin_api import Context


def initial_state_km(plan: Plan, body: Body) -> tuple[np.ndarray, np.ndarray]:
    """The plan's initial inertial state in km and km/s, whichever form it was given in."""
    state = plan.initial_state
    if isinstance(state, CartesianState):
        return np.array(state.position_km, dtype=float), np.array(state.velocity_km_s, dtype=float)
    elements = elements_from_semi_major_axis(
        state.semi_major_axis_km,
        state.eccentricity,
        math.radians(state.inclination_deg),
        math.radians(state.raan_deg),
        math.radians(state.arg_periapsis_deg),
        math.radians(state.true_anomaly_deg),
    )
    r_km, v_km_s = elements_to_state(elements, body.mu_km3_s2)
    return np.asarray(r_km, dtype=float), np.asarray(v_km_s, dtype=float)


def fly(plan: Plan, body: Body) -> Trajectory:
    """Build the plan's trajectory once; physics the model cannot fly becomes a PlanInvalid."""
    engines = {
        engine.id: EngineSpec(engine.id, engine.thrust_n, engine.isp_s)
        for engine in plan.spacecraft.engines
    }
    burns = [
        BurnSpec(m.id, m.ignition, engines[m.engine], m.frame, m.delta_v_m_s)
        for m in plan.maneuvers
    ]
    try:
        # Floating-point overflow or 0/0 anywhere in the core is an error, never a silent
        # inf or NaN that a check might read as a pass.
        with np.errstate(over="raise", divide="raise", invalid="raise", under="ignore"):
            r_km, v_km_s = initial_state_km(plan, body)
            return build_trajectory(
                body, plan.epoch, r_km, v_km_s, plan.spacecraft.wet_mass_kg, burns
            )
    except (ValueError, ArithmeticError, RuntimeError, RuntimeWarning) as error:
        raise PlanInvalid(
            {"plan": [f"the trajectory cannot be computed from this plan: {error}"]}
        ) from error


def request_seed(plan_digest: str, profile_digest: str) -> int:
    """The request's random seed: the first 8 bytes (big-endian) of SHA-256 over both digests.

    The digests are joined by a newline before hashing. The plan digest covers the request's
    ``rules``, the profile digest the profile's rules, so the same request under the same
    profile always gets the same seed, and a different plan gets an unrelated one.
    """
    data = f"{plan_digest}\n{profile_digest}".encode()
    return int.from_bytes(hashlib.sha256(data).digest()[:8], "big")


def read_only(thresholds: Thresholds) -> Mapping[str, Mapping[str, object]]:
    """A read-only copy of resolved thresholds for the context: check id -> parameter -> value."""
    return types.MappingProxyType(
        {check_id: types.MappingProxyType(dict(values)) for check_id, values in thresholds.items()}
    )


def _station_conflicts(profile: Profile, plan: Plan) -> dict[str, list[str]]:
    """A plan station may not reuse the id of a station in the profile's network."""
    network: dict[str, GroundStation] = {station.id: station for station in profile.stations}
    return {
        f"ground_stations.{index}.id": [
            f"station {station.id!r} is already in profile {profile.name!r}; give the plan's "
            "station an id of its own"
        ]
        for index, station in enumerate(plan.ground_stations)
        if station.id in network
    }


class Engine:
    """Holds the checks and profiles found at start-up and validates plans against them."""

    def __init__(
        self, registry: Registry, profiles: dict[str, Profile], profile_problems: list[str] = ()
    ) -> None:
        self.registry = registry
        self.profiles = profiles
        self.profile_problems = list(profile_problems)

    @property
    def problems(self) -> list[str]:
        return list(self.registry.problems) + self.profile_problems

    @property
    def ready(self) -> bool:
        return not self.problems and bool(self.registry.checks)

    def _require_ready(self) -> None:
        if not self.ready:
            raise EngineNotReady(self.problems or ["no checks are registered"])

    def validate(
        self,
        plan: Plan,
        *,
        profile: str | None = None,
        budget: ComputeBudget | None = None,
        observer: CheckObserver | None = None,
    ) -> dict:
        """The report for ``plan`` under ``profile`` (default: the plan's own).

        ``budget`` (optional) is the face's compute budget for the whole validation:
        ``ComputeBudgetExceeded`` when it is spent before the trajectory build or by it;
        otherwise what is left caps the profile's request budget for the checks.
        ``observer`` (optional) is told each check's outcome and time
        (``service.engine.observe``); the report is the same with or without it.
        """
        self._require_ready()
        name = profile or plan.profile
        chosen = self.profiles.get(name)
        if chosen is None:
            known = ", ".join(sorted(self.profiles))
            raise PlanInvalid({"profile": [f"unknown profile {name!r}; known: {known}"]})
        errors = _station_conflicts(chosen, plan)
        try:
            thresholds = resolve_thresholds(chosen, self.registry, plan.rules)
        except PlanInvalid as refused:
            raise PlanInvalid({**refused.errors, **errors}) from None
        if errors:
            raise PlanInvalid(errors)
        body = body_named(plan.central_body)
        if budget is not None:
            budget.require("it was spent before the trajectory build")
        trajectory = fly(plan, body)
        request_budget_s, budget_label = chosen.request_time_budget_s, None
        if budget is not None:
            left_s = budget.require("the trajectory build ran past it, leaving the checks no time")
            if left_s < request_budget_s:
                request_budget_s = left_s
                budget_label = f"{budget.seconds:.3g} s compute budget"
        context = Context(
            plan=plan,
            body=body,
            trajectory=trajectory,
            profile=name,
            ground_stations=chosen.stations + plan.ground_stations,
            thresholds=read_only(thresholds),
            seed=request_seed(plan.digest, chosen.digest),
        )
        entries = [self.registry.checks[check_id] for check_id in thresholds]
        findings = run_checks(
            entries,
            context,
            thresholds,
            check_budget_s=chosen.check_time_budget_s,
            request_budget_s=request_budget_s,
            request_budget_label=budget_label,
            observer=observer,
        )
        return build_report(
            plan,
            trajectory,
            findings,
            profile_name=name,
            profile_digest=chosen.digest,
            checks=entries,
            thresholds=thresholds,
        )

    def checks_catalogue(self) -> list[dict]:
        """Every registered check with its source, parameters and the profiles that enable it."""
        catalogue = []
        for check_id, entry in sorted(self.registry.checks.items()):
            catalogue.append(
                {
                    "id": check_id,
                    "version": entry.check.version,
                    "source": entry.source,
                    "distribution": entry.origin.distribution,
                    "distribution_version": entry.origin.distribution_version,
                    "summary": entry.check.summary,
                    "parameters": [
                        {
                            "name": name,
                            "default": spec.default,
                            "unit": spec.unit,
                            "stricter": spec.stricter,
                            "description": spec.description,
                            "choices": None if spec.choices is None else list(spec.choices),
                            "minimum": spec.minimum,
                            "maximum": spec.maximum,
                        }
                        for name, spec in sorted(entry.parameters.items())
                    ],
                    "profiles": sorted(
                        p.name
                        for p in self.profiles.values()
                        if check_id in p.enabled_checks(self.registry)
                    ),
                }
            )
        return catalogue

    def profile_document(self, name: str) -> dict | None:
        profile = self.profiles.get(name)
        if profile is None:
            return None
        return {**profile.document(), "digest": profile.digest}

    def profiles_catalogue(self) -> list[dict]:
        return [self.profile_document(name) for name in sorted(self.profiles)]  # type: ignore[misc]


def build_engine(
    *,
    extra_plugins: Iterable[object] = (),
    entry_points: bool = True,
    profile_dir: str | None = None,
    policy: PluginPolicy | None = None,
) -> Engine:
    """Load the allowed plugins and the profiles; problems are kept for readiness, not raised.

    ``profile_dir`` holds a site's profile TOML files (the faces pass the
    ``BURNPROOF_PROFILE_DIR`` environment variable); ``policy`` the site's plugin
    allow and deny lists (``BURNPROOF_PLUGINS_ALLOW``, ``BURNPROOF_PLUGINS_DENY``).
    """
    registry = build_registry(
        extra_plugins=extra_plugins,
        entry_points_group="burnproof" if entry_points else None,
        policy=policy,
    )
    profiles, problems = load_profiles(registry, profile_dir)
    return Engine(registry, profiles, problems)


def engine_from_environment(environ: Mapping[str, str]) -> Engine:
    """The engine a face builds from its environment variables (see ``build_engine``)."""
    return build_engine(
        profile_dir=environ.get("BURNPROOF_PROFILE_DIR") or None,
        policy=PluginPolicy.from_text(
            environ.get("BURNPROOF_PLUGINS_ALLOW"), environ.get("BURNPROOF_PLUGINS_DENY")
        ),
    )
