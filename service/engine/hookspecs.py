"""The hooks burnproof calls on plugins. Signatures only; hooks are called with keywords.

A hook may gain arguments in a later version of ``service.plugin_api`` but never
loses one.
"""

from __future__ import annotations

from collections.abc import Iterable

import pluggy

PROJECT = "burnproof"

hookspec = pluggy.HookspecMarker(PROJECT)


@hookspec
def register_checks() -> Iterable[object]:
    """Return the flight-rule check objects this plugin provides (``service.plugin_api.Check``)."""
