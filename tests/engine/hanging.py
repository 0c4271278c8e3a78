"""A check body that hangs until its test ends, for the isolation, budget and metrics tests.

Import ``hangs`` and the autouse fixture ``release_hung_checks`` together: the fixture
releases every hung check when its test finishes, so no worker thread outlives the run.
"""

from __future__ import annotations

import threading

import pytest

from service.plugin_api import Finding, Status

RELEASE = threading.Event()


def hangs(context, params):
    RELEASE.wait(30.0)  # released by release_hung_checks at the end of the test
    return [Finding(Status.PASS, "late")]


@pytest.fixture(autouse=True)
def release_hung_checks():
    RELEASE.clear()
    yield
    RELEASE.set()
