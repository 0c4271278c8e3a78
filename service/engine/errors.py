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
