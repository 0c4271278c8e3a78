"""Errors the engine raises for the faces (HTTP, command line) to turn into problems."""

from __future__ import annotations


class PlanInvalid(Exception):
    """The plan cannot be evaluated; ``errors`` maps field paths to messages naming the fault."""

    def __init__(self, errors: dict[str, list[str]], detail: str | None = None) -> None:
        self.errors = {path: list(messages) for path, messages in sorted(errors.items())}
        first = next(iter(self.errors.items()), ("plan", ["is invalid"]))
        self.detail = detail or f"{first[0]}: {first[1][0]}"
        super().__init__(self.detail)


class EngineNotReady(Exception):
    """Start-up found problems (a plugin that failed to load, a duplicate check id, ...)."""

    def __init__(self, problems: list[str]) -> None:
        self.problems = list(problems)
        super().__init__("; ".join(self.problems) or "not ready")


class ComputeBudgetExceeded(Exception):
    """A validation ran past the face's compute budget before its checks could get any time.

    Raised by the engine when the budget was already spent before the trajectory build, or
    when the build ran past it (the checks would be left with no time). ``budget_s`` is the
    whole budget in seconds, ``elapsed_s`` the time spent when it was found out, ``stage``
    says where, in words. The faces turn it into a 503 problem (HTTP) or exit code 2 (CLI).
    """

    def __init__(self, budget_s: float, elapsed_s: float, stage: str) -> None:
        self.budget_s = float(budget_s)
        self.elapsed_s = float(elapsed_s)
        self.stage = stage
        super().__init__(
            f"validating this plan did not finish within the {self.budget_s:.3g} s compute "
            f"budget: {stage} ({self.elapsed_s:.3g} s elapsed)"
        )
