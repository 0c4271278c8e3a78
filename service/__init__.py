"""burnproof: checks a spacecraft's orbit-maneuver plan against flight rules before uplink."""

__version__ = "0.1.0"
