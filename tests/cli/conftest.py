"""Fixtures for the command-line tests."""

from __future__ import annotations

import json

import pytest


@pytest.fixture
def write_plan(tmp_path):
    """Write a plan (dict, or raw bytes) to a file and return its path as a string."""

    def write(plan, name: str = "plan.json") -> str:
        path = tmp_path / name
        path.write_bytes(plan if isinstance(plan, bytes) else json.dumps(plan).encode())
        return str(path)

    return write
