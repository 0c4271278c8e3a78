"""CCSDS navigation data messages: the Orbit Parameter Message (OPM) in KVN, read and written.

See service.ccsds.opm for the standard (CCSDS 502.0-B-2 / B-3) and the public names.
"""

from service.ccsds.opm import (
    OpmEpoch,
    OpmError,
    OpmErrors,
    OpmHeader,
    OpmKeplerian,
    OpmManeuver,
    OpmMessage,
    OpmMetadata,
    OpmSpacecraft,
    OpmStateVector,
    parse_opm,
    utc_to_opm_epoch,
    write_opm,
)

__all__ = [
    "OpmEpoch",
    "OpmError",
    "OpmErrors",
    "OpmHeader",
    "OpmKeplerian",
    "OpmManeuver",
    "OpmMessage",
    "OpmMetadata",
    "OpmSpacecraft",
    "OpmStateVector",
    "parse_opm",
    "utc_to_opm_epoch",
    "write_opm",
]
