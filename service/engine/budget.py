"""The compute budget of one validation: a wall-clock deadline the engine checks itself against.

A face (the HTTP app, the command line) starts a ``ComputeBudget`` when a validation
begins and hands it to ``Engine.validate``. The engine looks at it before and after the
trajectory build, which no profile budget covers, and caps the profile's request budget
for the checks by what is left. Nothing is ever interrupted: a check that overruns is
abandoned by the runner and becomes an ``error`` finding, as with the profile budgets.

``BURNPROOF_COMPUTE_BUDGET_S`` sets the budget in seconds (default 20, below gunicorn's
30 s worker ``timeout`` so a slow plan gets a problem document, never a killed worker).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

from service.engine.errors import ComputeBudgetExceeded

ENVIRONMENT_VARIABLE = "BURNPROOF_COMPUTE_BUDGET_S"
DEFAULT_COMPUTE_BUDGET_S = 20.0


def parse_budget_s(text: object, name: str = ENVIRONMENT_VARIABLE) -> float:
    """A budget in seconds from a setting: a positive finite number, else ValueError naming it."""
    try:
        seconds = float(text)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number of seconds, not {text!r}") from None
    if not math.isfinite(seconds) or seconds <= 0.0:
        raise ValueError(f"{name} must be a positive finite number of seconds, not {text!r}")
    return seconds


def budget_from_environment(environ: Mapping[str, str]) -> float | None:
    """``BURNPROOF_COMPUTE_BUDGET_S`` in seconds, or None when it is not set (or blank)."""
    text = environ.get(ENVIRONMENT_VARIABLE, "").strip()
    return parse_budget_s(text) if text else None


@dataclass(frozen=True)
class ComputeBudget:
    """``seconds`` of wall-clock time from ``started`` (a ``clock`` reading, monotonic seconds)."""

    seconds: float
    started: float
    clock: Callable[[], float] = field(default=time.monotonic, repr=False, compare=False)

    @classmethod
    def start(cls, seconds: float, clock: Callable[[], float] = time.monotonic) -> ComputeBudget:
        """A budget of ``seconds`` that starts now."""
        return cls(seconds, clock(), clock)

    def elapsed_s(self) -> float:
        return self.clock() - self.started

    def left_s(self) -> float:
        """Seconds left before the deadline; zero or less once it has passed."""
        return self.seconds - self.elapsed_s()

    def require(self, stage: str) -> float:
        """The seconds left, or ``ComputeBudgetExceeded`` (saying ``stage``) when none are."""
        elapsed_s = self.elapsed_s()
        left_s = self.seconds - elapsed_s
        if left_s <= 0.0:
            raise ComputeBudgetExceeded(self.seconds, elapsed_s, stage)
        return left_s
