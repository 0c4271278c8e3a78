"""Harbourlight Orbital's own flight rules, as a burnproof plugin.

Each module here is one entry point in the ``burnproof`` group and exposes a
``register_checks`` hook. ``burns_per_day`` holds ``max-burns-per-day``.
"""

__version__ = "1.0.0"
