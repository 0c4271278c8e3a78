"""A bounded load test of gunicorn with deploy/gunicorn.conf.py on 127.0.0.1.

Eight concurrent clients send 400 requests (hard stop at 60 s): the demo plans of
schemas/examples/ and a mix of bad requests. Asserted: every request answered, none with a
5xx, no connection dropped, every body whole (Content-Length matches, JSON parses) and each
answer the one expected for its request. The latency and throughput table is printed
(``pytest -rA`` or ``-s`` shows it; ``make bench`` runs tests/perf/bench_load.py, the same
load as a script) and never asserted.
"""

from __future__ import annotations

import pytest

from tests.deploy import gunicorn_process as gp
from tests.deploy.load import run_load

TOTAL_REQUESTS = 400
CLIENTS = 8
DEADLINE_S = 60.0


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    with gp.running(tmp_path_factory.mktemp("load"), workers=2) as server:
        outcome = run_load(server.port, TOTAL_REQUESTS, CLIENTS, DEADLINE_S)
        assert server.process.poll() is None, server.log_tail()  # it is still up after
    print(f"\nload test, gunicorn with 2 sync workers on 127.0.0.1:\n{outcome.table()}")
    return outcome


def test_every_request_was_answered_within_the_bound(result):
    assert len(result.outcomes) == TOTAL_REQUESTS


def test_no_5xx_and_no_dropped_connection(result):
    assert result.server_errors == 0
    assert result.dropped == 0


def test_every_answer_is_whole_and_the_expected_one(result):
    faults = [(o.case.name, o.status, o.fault) for o in result.faults]
    assert faults == []


def test_the_mix_had_every_kind_of_request(result):
    answered = {(o.case.name, o.status) for o in result.outcomes}
    statuses = {status for _, status in answered}
    assert statuses == {200, 400, 404, 415, 422}
    assert len({name for name, _ in answered}) == len(answered)  # one status per kind
