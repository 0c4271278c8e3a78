"""The years in which the Sun can be placed: shared by the checks that need the Sun's direction.

``service.dynamics.sun`` holds for UTC epochs in 1950-2050 (its docstring) and raises outside
them; a plan may run to 2200. A check skips, saying why, rather than break on such a plan.
"""

from __future__ import annotations

import numpy as np

from service.dynamics.epochs import format_utc

SUN_MODEL_YEARS = (1950, 2050)


def sun_model_gap(epochs: np.ndarray) -> str | None:
    """Why the Sun cannot be placed at ``epochs`` (outside the model's years), or None."""
    times = np.asarray(epochs, dtype="datetime64[ms]").reshape(-1)
    years = times.astype("datetime64[Y]").astype(int) + 1970
    first, last = SUN_MODEL_YEARS
    outside = (years < first) | (years > last)
    if not outside.any():
        return None
    when = format_utc(times[int(np.argmax(outside))])
    return (
        f"the Sun model holds for {first} to {last} only and the plan burns at {when}, so the "
        "Sun's direction cannot be judged"
    )
