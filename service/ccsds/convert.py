"""OPM <-> plan: an Orbit Parameter Message and a spacecraft description to a JSON plan, and back.

CCSDS 502.0-B-2 "Orbit Data Messages" (Blue Book, November 2009) and 502.0-B-3 (April 2023),
section 3 (the OPM), from memory where no clause is quoted.

Read side, ``plan_document(message, description, text=...)``: the JSON plan a client would
POST (CONTRACT.md section 1), which then goes through ``load_plan`` and the engine like any
other, so every JSON rule applies. ``load_opm_plan`` does all of it and keeps OPM line
numbers on the errors (``opm.line.<n>.<KEYWORD>``).

- ``central_body`` from CENTER_NAME: EARTH, MOON, MARS; any other centre is refused.
- ``epoch`` and ``initial_state`` from the state vector (km, km/s, exact Decimal -> float via
  the text). REF_FRAME EME2000 -> "EME2000", GCRF -> "GCRF", ICRF -> "GCRF" (the ICRF's axes
  centred on the body are the GCRF's to well below this model's fidelity; GCRF and EME2000
  differ by about 20 milliarcseconds and are taken as one frame, see DEVELOPERS.md); every
  other frame is refused, because evaluating a rotating or of-date frame as inertial would
  silently rotate the state. When the message says it was written by burnproof from a plan
  given in elements (``USER_DEFINED_BURNPROOF_INITIAL_STATE = ELEMENTS``), the Keplerian block
  is the initial state instead (its GM must be burnproof's for the body).
- maneuvers in OPM order: ignition in UTC (``...Z``), MAN_REF_FRAME RTN and TNW kept (RSW is
  another name for RTN in the standard's frame list, from memory), EME2000 kept, GCRF and ICRF
  -> "GCRF", others refused; ``delta_v_m_s`` = MAN_DV_i km/s scaled exactly
  (``Decimal.scaleb(3)``); ``declared_duration_s`` = MAN_DURATION and
  ``declared_propellant_kg`` = -MAN_DELTA_MASS, unless the message says burnproof computed them
  (``USER_DEFINED_BURNPROOF_MAN_VALUES = COMPUTED``): then the planner's own declared values,
  if any, are in ``USER_DEFINED_BURNPROOF_MAN_<n>_DECLARED_DURATION`` (s) and
  ``..._DECLARED_PROPELLANT`` (kg used, positive).
- ids and engines: the description's, else ``USER_DEFINED_BURNPROOF_MAN_<n>_ID`` /
  ``..._ENGINE``, else ``burn-<n>`` and the default engine (an explicit ``default_engine`` of
  the description wins over the message's engines; the only engine comes last).
- ``plan_id``: the description's, else ``USER_DEFINED_BURNPROOF_PLAN_ID``, else MESSAGE_ID,
  else OBJECT_NAME. ``profile``: the description's, else ``USER_DEFINED_BURNPROOF_PROFILE``.

Write side, ``plan_to_opm(plan, report)``: an ``OpmMessage`` of a validated plan (verdict pass
or warn; ``PlanFailed`` otherwise) with the COMPUTED MAN_DURATION and MAN_DELTA_MASS, the
parameters above so a reader without the description still gets ids and engines, and COMMENT
lines with the verdict, digest, profile and cautions. Numbers go out as
``Decimal(repr(value))`` (delta-v ``.scaleb(-3)`` to km/s), so reading back gives the same floats.
"""

from service.ccsds.opm_to_plan import (
    OpmInvalid,
    describe_key,
    error_key,
    is_opm,
    load_opm_plan,
    plan_document,
)
from service.ccsds.plan_to_opm import PlanFailed, plan_to_opm, write_plan_opm

__all__ = [
    "OpmInvalid",
    "PlanFailed",
    "describe_key",
    "error_key",
    "is_opm",
    "load_opm_plan",
    "plan_document",
    "plan_to_opm",
    "write_plan_opm",
]
