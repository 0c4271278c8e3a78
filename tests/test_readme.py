"""README.md stays true: its demo results are what the engine says today."""

import re
from pathlib import Path

import pytest

from service.cli import main

REPO = Path(__file__).resolve().parent.parent
README = (REPO / "README.md").read_text("utf-8")


@pytest.mark.parametrize(
    ("example", "exit_code"), [("kestrel-2-raise.json", 0), ("tern-4-bad.json", 1)]
)
def test_the_readme_shows_each_demo_result_as_the_engine_gives_it(example, exit_code, capsys):
    code = main(["validate", str(REPO / "schemas" / "examples" / example), "--format", "text"])
    out = capsys.readouterr().out
    assert code == exit_code
    verdict = re.search(r"^verdict: \w+$", out, re.M).group(0)
    summary = re.search(r"^summary: .+$", out, re.M).group(0)
    prompt = f"$ .venv/bin/burnproof validate schemas/examples/{example} --format text"
    section = README.split(prompt, 1)[1].split("```", 1)[0]
    assert verdict in section and summary in section
    for line in section.splitlines():
        if line.startswith("  ") and ("  plan  " in line or "  arc " in line or "lower-1" in line):
            message = re.split(r"\s{2,}", line.strip())[-1]
            assert message in out, message


def test_the_readme_names_both_set_up_commands():
    assert "make run" in README and "make test" in README
