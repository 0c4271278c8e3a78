"""CCSDS navigation data messages: the Orbit Parameter Message (OPM) in KVN, read and written.

``service.ccsds.opm`` is the face of the reader and writer (CCSDS 502.0-B-2 / B-3) and
``service.ccsds.convert`` the face of the conversion to and from a burnproof plan.
"""
