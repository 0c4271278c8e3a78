"""A small Dockerfile reader for the tests: instructions as the Dockerfile reference defines them.

Continuation lines (a trailing backslash) are joined, comment lines dropped (also inside a
continued instruction), and each instruction keeps the index of the ``FROM`` it follows.
"""

from __future__ import annotations

import json
from dataclasses import dataclass


@dataclass(frozen=True)
class Instruction:
    keyword: str
    arguments: str
    stage: int  # index of the FROM it belongs to

    def exec_form(self) -> list[str] | None:
        text = self.arguments.strip()
        return json.loads(text) if text.startswith("[") else None


def parse(text: str) -> list[Instruction]:
    """The instructions of a Dockerfile, continuation lines joined and comments dropped."""
    instructions: list[Instruction] = []
    logical = ""
    stage = -1
    for line in text.splitlines():
        stripped = line.strip()
        if not logical and (not stripped or stripped.startswith("#")):
            continue
        if logical and stripped.startswith("#"):
            continue  # a comment line inside a continued instruction is dropped
        if stripped.endswith("\\"):
            logical += stripped[:-1] + " "
            continue
        logical += stripped
        keyword, _, arguments = logical.partition(" ")
        keyword = keyword.upper()
        if keyword == "FROM":
            stage += 1
        instructions.append(Instruction(keyword, arguments.strip(), stage))
        logical = ""
    assert not logical, "the Dockerfile ends inside a continued line"
    return instructions


def final_stage(instructions: list[Instruction], keyword: str) -> list[Instruction]:
    """The instructions named ``keyword`` in the last stage (the image that runs)."""
    last_stage = max(i.stage for i in instructions)
    return [i for i in instructions if i.keyword == keyword and i.stage == last_stage]
