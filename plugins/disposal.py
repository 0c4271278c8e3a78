"""disposal: where an end-of-life plan leaves the spacecraft, against the IADC guidelines.

Judged only when the plan says it is a disposal (``end_of_life: true``) and only around the
Earth, on the final arc's orbit (the orbit the spacecraft is left on), after the IADC Space
Debris Mitigation Guidelines, IADC-02-01 (section numbers in ``service.dynamics.disposal``):

- low Earth orbit, the final perigee at or below 2000 km (the LEO protected region, section
  3.3.2): a perigee at or below ``reentry_perigee_altitude_km`` is a controlled re-entry and
  passes; otherwise the post-mission orbital lifetime is estimated with the orbit-averaged drag
  decay of ``service.dynamics.decay`` (King-Hele 1987; Vallado 4th ed. Table 8-4 exponential
  atmosphere, mean solar activity) with B = Cd A / m at the mass after the last burn, and judged
  against ``max_lifetime_years`` (25 years, section 5.3.2), warning above ``warn_fraction`` of
  it. Solar activity changes lifetimes by a factor of several; every lifetime finding says so.
- the geostationary region, when the initial orbit (arc 0) or the final orbit reaches the
  geostationary protected region's altitude band (GEO altitude +/- 200 km), i.e. a GEO
  spacecraft being retired: the final perigee must be at least the IADC minimum increase
  235 km + 1000 CR A/m (section 5.3.1; CR and A from the spacecraft's ``reflectivity_coefficient``
  and ``srp_area_m2``, m the mass after the last burn) above the geostationary altitude, with a
  warning margin ``geo_margin_km``; the eccentricity at most ``max_eccentricity``; and the orbit
  must stay clear of the protected region (altitude and latitude band, section 3.3.2).
- anything else (an orbit in neither protected region, e.g. medium Earth orbit, or one that
  escapes the Earth): a warning that no IADC protected-region rule applies here and the
  operator's own rules must decide.

The LEO test comes first: an orbit whose perigee is in the LEO region is judged by its decay or
re-entry even when its apogee reaches the geostationary band (a transfer orbit); the lifetime
finding then also warns that it crosses that band and that the decay model leaves out the
luni-solar perturbations that dominate such orbits.

Missing inputs fail closed: without the spacecraft's SRP data (GEO) or drag data (LEO) the rule
cannot be judged, and the finding names the fields to add. Altitudes are above the Earth's
equatorial-radius sphere, as everywhere in burnproof.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping

from service.dynamics.decay import DEFAULT_MAX_YEARS, orbital_lifetime_years
from service.dynamics.disposal import (
    GEO_ALTITUDE_KM,
    GEO_PROTECTED_LATITUDE_RAD,
    GEO_PROTECTED_LOWER_ALTITUDE_KM,
    GEO_PROTECTED_UPPER_ALTITUDE_KM,
    IADC_GEO_BASE_PERIGEE_INCREASE_KM,
    IADC_GEO_MAX_ECCENTRICITY,
    IADC_GEO_SRP_COEFFICIENT_KM,
    IADC_LEO_MAX_LIFETIME_YEARS,
    LEO_PROTECTED_UPPER_ALTITUDE_KM,
    can_enter_geo_protected_region,
    can_enter_leo_protected_region,
    iadc_geo_min_perigee_increase_km,
)
from service.plugin_api import Arc, Check, Context, Finding, Parameter, Status, hookimpl

_GEO_REGION = (
    f"the geostationary protected region ({GEO_PROTECTED_LOWER_ALTITUDE_KM:.1f} to "
    f"{GEO_PROTECTED_UPPER_ALTITUDE_KM:.1f} km altitude, latitude +/-"
    f"{math.degrees(GEO_PROTECTED_LATITUDE_RAD):.0f} deg; IADC-02-01 section 3.3.2)"
)
_OWN_RULES = "the operator's own disposal rules must decide"


def _positive(params: Mapping[str, object], name: str) -> float:
    value = float(params[name])
    if not value > 0.0:
        raise ValueError(f"parameter {name} must be greater than 0, got {value!r}")
    return value


def _non_negative(params: Mapping[str, object], name: str) -> float:
    value = float(params[name])
    if not value >= 0.0:
        raise ValueError(f"parameter {name} must be at least 0, got {value!r}")
    return value


def _reaches_geo_band(arc: Arc) -> bool:
    """Whether a bound arc's altitude range [perigee, apogee] overlaps the GEO protected band."""
    return arc.bound and bool(
        can_enter_geo_protected_region(
            arc.periapsis_altitude_km, arc.apoapsis_altitude_km, arc.inclination_rad
        )
    )


class Disposal(Check):
    id = "disposal"
    version = "1"
    summary = (
        "end-of-life orbit: GEO graveyard perigee (IADC 235 km + 1000 CR A/m), eccentricity and "
        "protected region, or LEO orbital lifetime or controlled re-entry"
    )
    parameters = {
        "geo_margin_km": Parameter(
            50.0,
            "km",
            "higher",
            "warn band above the IADC minimum graveyard perigee: 1 m/s of error in the last "
            "burn moves the opposite apsis by about 55 km at the geostationary radius "
            "(4 a dv / v, from the vis-viva equation), and end-of-life propellant gauging is "
            "uncertain (common practice)",
        ),
        "max_eccentricity": Parameter(
            IADC_GEO_MAX_ECCENTRICITY,
            "",
            "lower",
            "eccentricity of a geostationary graveyard orbit at most 0.003, so that its perigee "
            "stays above the protected region as perturbations act (IADC-02-01 section 5.3.1, "
            "from memory)",
        ),
        "reentry_perigee_altitude_km": Parameter(
            50.0,
            "km",
            "lower",
            "a final perigee at or below 50 km is a controlled re-entry: the air there, about "
            "1e-3 kg/m^3 (Vallado 4th ed. Table 8-4), is some 50 times denser than at 80 km, so "
            "the spacecraft comes down within its first perigee pass on a steep, predictable "
            "path (common practice)",
        ),
        "max_lifetime_years": Parameter(
            IADC_LEO_MAX_LIFETIME_YEARS,
            "yr",
            "lower",
            "post-mission orbital lifetime in low Earth orbit at most 25 years (IADC-02-01 "
            "section 5.3.2, from memory); a site may set a shorter one, e.g. 5 years",
        ),
        "warn_fraction": Parameter(
            0.8,
            "fraction",
            "lower",
            "warn when the estimated lifetime exceeds this fraction of the maximum: solar "
            "activity changes lifetimes by a factor of several (common practice)",
        ),
    }

    def evaluate(self, context: Context, params: Mapping[str, object]) -> Iterator[Finding]:
        if not context.plan.end_of_life:
            yield Finding(
                Status.SKIPPED,
                "the plan is not marked as an end-of-life disposal (end_of_life is false)",
            )
            return
        if context.body.name != "earth":
            yield Finding(
                Status.SKIPPED,
                f"the IADC disposal rules are written for Earth orbit; the central body is "
                f"{context.body.name!r}",
            )
            return
        arcs = context.trajectory.arcs
        initial, final = arcs[0], arcs[-1]
        if not final.bound:
            yield Finding(
                Status.WARN,
                f"the final orbit is unbound (eccentricity {final.eccentricity:.4f}): the "
                "spacecraft leaves Earth orbit, where no IADC protected-region rule applies; "
                + _OWN_RULES,
                arc=final.index,
            )
            return
        if can_enter_leo_protected_region(final.periapsis_altitude_km, final.apoapsis_altitude_km):
            yield from _low_earth_orbit(context, final, params)
        elif _reaches_geo_band(initial) or _reaches_geo_band(final):
            yield from _geostationary(context, final, params)
        else:
            yield Finding(
                Status.WARN,
                f"the final orbit (perigee {final.periapsis_altitude_km:.1f} km, apogee "
                f"{final.apoapsis_altitude_km:.1f} km) lies in neither IADC protected region "
                f"(low Earth orbit up to {LEO_PROTECTED_UPPER_ALTITUDE_KM:.0f} km, or "
                f"{_GEO_REGION}), and the plan did not start in the geostationary region: no IADC "
                f"region rule applies; {_OWN_RULES}",
                final.periapsis_altitude_km,
                None,
                "km",
                arc=final.index,
            )


def _geostationary(context: Context, final: Arc, params: Mapping[str, object]) -> Iterator[Finding]:
    margin_km = _non_negative(params, "geo_margin_km")
    max_e = _non_negative(params, "max_eccentricity")
    yield _graveyard_perigee(context, final, margin_km)
    e = final.eccentricity
    if e > max_e:
        status = Status.FAIL
        message = (
            f"graveyard eccentricity {e:.3g} is {e - max_e:.3g} above the {max_e:g} maximum "
            "(IADC-02-01 section 5.3.1)"
        )
    else:
        status = Status.PASS
        message = (
            f"graveyard eccentricity {e:.3g} is within the {max_e:g} maximum "
            "(IADC-02-01 section 5.3.1)"
        )
    yield Finding(status, message, e, max_e, "", arc=final.index)
    yield _clear_of_geo_region(final)


def _graveyard_perigee(context: Context, final: Arc, margin_km: float) -> Finding:
    """Final perigee against GEO altitude + 235 km + 1000 CR A/m with the final mass."""
    spacecraft = context.plan.spacecraft
    perigee_km = final.periapsis_altitude_km
    missing = [
        name
        for name in ("srp_area_m2", "reflectivity_coefficient")
        if getattr(spacecraft, name) is None
    ]
    if missing:
        fields = " and ".join(f"spacecraft.{name}" for name in missing)
        return Finding(
            Status.FAIL,
            f"cannot judge the graveyard perigee {perigee_km:.1f} km: the IADC minimum increase "
            f"{IADC_GEO_BASE_PERIGEE_INCREASE_KM:.0f} km + {IADC_GEO_SRP_COEFFICIENT_KM:.0f} CR "
            f"A/m (IADC-02-01 section 5.3.1) needs the spacecraft's solar radiation pressure "
            f"data; add {fields} to the plan",
            perigee_km,
            None,
            "km",
            arc=final.index,
        )
    cr = float(spacecraft.reflectivity_coefficient)
    area_m2 = float(spacecraft.srp_area_m2)
    mass_kg = float(context.trajectory.final_mass_kg)
    increase_km = float(iadc_geo_min_perigee_increase_km(cr, area_m2, mass_kg))
    floor_km = GEO_ALTITUDE_KM + increase_km
    rule = (
        f"the {floor_km:.1f} km IADC minimum (geostationary altitude {GEO_ALTITUDE_KM:.1f} km + "
        f"{increase_km:.1f} km = {IADC_GEO_BASE_PERIGEE_INCREASE_KM:.0f} km + "
        f"{IADC_GEO_SRP_COEFFICIENT_KM:.0f} x CR {cr:g} x A/m {area_m2 / mass_kg:.5f} m^2/kg, "
        f"A {area_m2:g} m^2 at the final mass {mass_kg:.1f} kg; IADC-02-01 section 5.3.1)"
    )
    if perigee_km < floor_km:
        status = Status.FAIL
        message = (
            f"graveyard perigee {perigee_km:.1f} km is {floor_km - perigee_km:.1f} km below {rule}"
        )
    elif perigee_km < floor_km + margin_km:
        status = Status.WARN
        message = (
            f"graveyard perigee {perigee_km:.1f} km is only {perigee_km - floor_km:.1f} km above "
            f"{rule}, inside the {margin_km:.1f} km margin"
        )
    else:
        status = Status.PASS
        message = (
            f"graveyard perigee {perigee_km:.1f} km is {perigee_km - floor_km:.1f} km above "
            f"{rule} and its {margin_km:.1f} km margin"
        )
    return Finding(status, message, perigee_km, floor_km, "km", arc=final.index)


def _clear_of_geo_region(final: Arc) -> Finding:
    perigee_km, apogee_km = final.periapsis_altitude_km, final.apoapsis_altitude_km
    orbit = f"the final orbit (perigee {perigee_km:.1f} km, apogee {apogee_km:.1f} km)"
    if not _reaches_geo_band(final):
        if perigee_km > GEO_PROTECTED_UPPER_ALTITUDE_KM:
            gap_km = perigee_km - GEO_PROTECTED_UPPER_ALTITUDE_KM
            return Finding(
                Status.PASS,
                f"{orbit} stays clear of {_GEO_REGION}: its perigee is {gap_km:.1f} km above the "
                "region's upper edge",
                perigee_km,
                GEO_PROTECTED_UPPER_ALTITUDE_KM,
                "km",
                arc=final.index,
            )
        gap_km = GEO_PROTECTED_LOWER_ALTITUDE_KM - apogee_km
        return Finding(
            Status.PASS,
            f"{orbit} stays clear of {_GEO_REGION}: its apogee is {gap_km:.1f} km below the "
            "region's lower edge",
            apogee_km,
            GEO_PROTECTED_LOWER_ALTITUDE_KM,
            "km",
            arc=final.index,
        )
    low = max(perigee_km, GEO_PROTECTED_LOWER_ALTITUDE_KM)
    high = min(apogee_km, GEO_PROTECTED_UPPER_ALTITUDE_KM)
    return Finding(
        Status.FAIL,
        f"{orbit} passes through {_GEO_REGION} between {low:.1f} and {high:.1f} km: its perigee "
        f"is {GEO_PROTECTED_UPPER_ALTITUDE_KM - perigee_km:.1f} km below the region's upper edge",
        perigee_km,
        GEO_PROTECTED_UPPER_ALTITUDE_KM,
        "km",
        arc=final.index,
    )


def _low_earth_orbit(
    context: Context, final: Arc, params: Mapping[str, object]
) -> Iterator[Finding]:
    reentry_km = _non_negative(params, "reentry_perigee_altitude_km")
    max_years = _positive(params, "max_lifetime_years")
    fraction = _positive(params, "warn_fraction")
    if fraction > 1.0:
        raise ValueError(f"parameter warn_fraction must be at most 1, got {fraction!r}")
    perigee_km, apogee_km = final.periapsis_altitude_km, final.apoapsis_altitude_km
    if perigee_km <= reentry_km:
        yield Finding(
            Status.PASS,
            f"controlled re-entry: final perigee {perigee_km:.1f} km is at or below the "
            f"{reentry_km:.1f} km re-entry altitude, so the spacecraft comes down within its first "
            "perigee pass",
            perigee_km,
            reentry_km,
            "km",
            arc=final.index,
        )
        return
    spacecraft = context.plan.spacecraft
    missing = [
        name for name in ("drag_area_m2", "drag_coefficient") if getattr(spacecraft, name) is None
    ]
    if missing:
        fields = " and ".join(f"spacecraft.{name}" for name in missing)
        yield Finding(
            Status.FAIL,
            f"cannot estimate the orbital lifetime from perigee {perigee_km:.1f} km, apogee "
            f"{apogee_km:.1f} km against the {max_years:g} yr maximum: the drag decay needs the "
            f"ballistic coefficient Cd A / m; add {fields} to the plan",
            None,
            max_years,
            "yr",
            arc=final.index,
        )
        return
    mass_kg = float(context.trajectory.final_mass_kg)
    b_m2_kg = float(spacecraft.drag_coefficient) * float(spacecraft.drag_area_m2) / mass_kg
    lifetime = orbital_lifetime_years(
        perigee_km, apogee_km, b_m2_kg, max_years=max(DEFAULT_MAX_YEARS, 2.0 * max_years)
    )
    orbit = (
        f"from perigee {perigee_km:.1f} km, apogee {apogee_km:.1f} km with B = Cd A / m = "
        f"{b_m2_kg:.5f} m^2/kg (Cd {spacecraft.drag_coefficient:g}, A "
        f"{spacecraft.drag_area_m2:g} m^2, final mass {mass_kg:.1f} kg)"
    )
    limit = f"the {max_years:g} yr maximum (IADC-02-01 section 5.3.2 or the site's rule)"
    model = f"; model: {lifetime.model}"
    warn_years = fraction * max_years
    if lifetime.years is None:
        value = lifetime.max_years
        status = Status.FAIL
        message = (
            f"estimated orbital lifetime more than {lifetime.max_years:g} years {orbit}, beyond "
            f"{limit}"
        )
    else:
        value = lifetime.years
        if value > max_years:
            status = Status.FAIL
            message = (
                f"estimated orbital lifetime {value:.2f} yr {orbit} is {value - max_years:.2f} yr "
                f"beyond {limit}"
            )
        elif value > warn_years:
            status = Status.WARN
            message = (
                f"estimated orbital lifetime {value:.2f} yr {orbit} is within {limit} but above "
                f"the {warn_years:.2f} yr warning level ({fraction:g} of it)"
            )
        else:
            status = Status.PASS
            message = f"estimated orbital lifetime {value:.2f} yr {orbit} is within {limit}"
    yield Finding(status, message + model, value, max_years, "yr", arc=final.index)
    if _reaches_geo_band(final):
        yield Finding(
            Status.WARN,
            f"the final orbit's apogee {apogee_km:.1f} km reaches {_GEO_REGION}: it crosses that "
            "region every revolution until it decays, and the lifetime model leaves out the "
            "luni-solar perturbations that dominate such eccentric orbits",
            apogee_km,
            GEO_PROTECTED_LOWER_ALTITUDE_KM,
            "km",
            arc=final.index,
        )


@hookimpl
def register_checks() -> list[Check]:
    return [Disposal()]
