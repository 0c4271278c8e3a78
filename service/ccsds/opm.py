"""CCSDS Orbit Parameter Message (OPM), KVN: the model, the reader and the writer.

CCSDS 502.0-B-2 "Orbit Data Messages" (Blue Book, November 2009) and CCSDS 502.0-B-3
(April 2023), OPM versions 2.0 and 3.0. This module is the face of the package; the work is
done in kvn (lines), opm_reader/opm_build (structure, values), opm_epoch and time_systems
(epochs on UTC), opm_writer (text out). Pure Python and numpy: no web framework here.
"""

from service.ccsds.kvn import OpmError, OpmErrors
from service.ccsds.opm_epoch import utc_to_opm_epoch as _utc_to_opm_epoch
from service.ccsds.opm_model import (
    OpmEpoch,
    OpmHeader,
    OpmKeplerian,
    OpmManeuver,
    OpmMessage,
    OpmMetadata,
    OpmSpacecraft,
    OpmStateVector,
)
from service.ccsds.opm_reader import parse_opm
from service.ccsds.opm_writer import write_opm

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


def utc_to_opm_epoch(t) -> OpmEpoch:
    """A UTC instant as an OPM epoch (time code A, millisecond digits, TIME_SYSTEM UTC).

    Raises OpmError (a ValueError) for NaT, sub-millisecond digits or dates before 1972.
    """
    from service.ccsds.opm_epoch import EpochError

    try:
        return _utc_to_opm_epoch(t)
    except EpochError as error:
        raise OpmError(str(error)) from None
