"""GET /metrics: prometheus_client exposition, counts that move by the right amounts, and the
multiprocess mode that sums gunicorn workers."""

from __future__ import annotations

import dataclasses
import json
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest
from prometheus_client import CONTENT_TYPE_LATEST, CollectorRegistry
from prometheus_client.multiprocess import MultiProcessCollector
from prometheus_client.parser import text_string_to_metric_families

from service.app import create_app
from service.http.metrics import CHECK_BUCKETS_S, REQUEST_BUCKETS_S, Metrics
from tests.cli.helpers import gate_engine, plan_with
from tests.engine.hanging import hangs, release_hung_checks  # noqa: F401 (autouse)
from tests.engine.test_engine import _engine, _Fixed, _ok, _raises

ROOT = Path(__file__).resolve().parents[2]
GATE = "cli-delta-v-gate"  # the test check of tests/cli/helpers.py: fails a burn over 100 m/s

EXPECTED_FAMILIES = {
    "burnproof_http_requests": "counter",
    "burnproof_http_request_duration_seconds": "histogram",
    "burnproof_validations": "counter",
    "burnproof_findings": "counter",
    "burnproof_check_duration_seconds": "histogram",
    "burnproof_check_errors": "counter",
}


def _scrape(client) -> dict[tuple[str, frozenset], float]:
    """Every sample of GET /metrics, parsed by prometheus_client: (name, labels) -> value."""
    response = client.get("/metrics")
    assert response.status_code == 200
    assert response.content_type == CONTENT_TYPE_LATEST
    samples = {}
    for family in text_string_to_metric_families(response.get_data(as_text=True)):
        for sample in family.samples:
            samples[(sample.name, frozenset(sample.labels.items()))] = sample.value
    return samples


def _value(samples, name: str, **labels) -> float:
    return samples.get((name, frozenset(labels.items())), 0.0)


def _post(client, plan: dict):
    return client.post(
        "/v1/validations", data=json.dumps(plan), headers={"Content-Type": "application/json"}
    )


def _app(engine, **config):
    return create_app({"TESTING": True, **config}, engine=engine)


def test_the_exposition_parses_and_names_follow_the_conventions(client):
    response = client.get("/metrics")
    assert response.content_type == CONTENT_TYPE_LATEST
    families = {
        family.name: family.type
        for family in text_string_to_metric_families(response.get_data(as_text=True))
    }
    for name, kind in EXPECTED_FAMILIES.items():
        assert families.get(name) == kind, (name, families)
    assert all(name.startswith("burnproof_") for name in families)
    samples = _scrape(client)
    for verdict in ("pass", "warn", "fail"):  # present before the first report
        assert ("burnproof_validations_total", frozenset({("verdict", verdict)})) in samples


def test_counts_move_by_the_right_amounts():
    client = _app(gate_engine()).test_client()
    before = _scrape(client)
    assert _post(client, plan_with(12.5)).get_json()["verdict"] == "pass"
    assert _post(client, plan_with(90.0)).get_json()["verdict"] == "warn"
    assert _post(client, plan_with(150.0)).get_json()["verdict"] == "fail"
    assert _post(client, plan_with(150.0)).get_json()["verdict"] == "fail"
    assert _post(client, {"plan_id": "x"}).status_code == 422
    assert client.get("/no/such/path").status_code == 404
    assert client.get("/v1/profiles/default").status_code == 200
    assert client.get("/v1/profiles/nope").status_code == 404
    after = _scrape(client)

    def moved(name, **labels):
        return _value(after, name, **labels) - _value(before, name, **labels)

    requests = "burnproof_http_requests_total"
    assert moved(requests, method="POST", route="/v1/validations", status="200") == 4
    assert moved(requests, method="POST", route="/v1/validations", status="422") == 1
    assert moved(requests, method="GET", route="(unmatched)", status="404") == 1
    assert moved(requests, method="GET", route="/v1/profiles/<name>", status="200") == 1
    assert moved(requests, method="GET", route="/v1/profiles/<name>", status="404") == 1
    assert moved(requests, method="GET", route="/metrics", status="200") == 1  # the first scrape
    histogram = "burnproof_http_request_duration_seconds"
    assert moved(histogram + "_count", method="POST", route="/v1/validations") == 5
    assert moved(histogram + "_bucket", method="POST", route="/v1/validations", le="+Inf") == 5
    assert moved(histogram + "_sum", method="POST", route="/v1/validations") > 0.0
    for verdict, count in (("pass", 1), ("warn", 1), ("fail", 2)):
        assert moved("burnproof_validations_total", verdict=verdict) == count
    # Each gate report: one plan-wide pass and one finding for its one burn.
    findings = "burnproof_findings_total"
    assert moved(findings, check=GATE, status="pass") == 1 + 1 + 1 + 1 + 1
    assert moved(findings, check=GATE, status="warn") == 1
    assert moved(findings, check=GATE, status="fail") == 2
    assert moved("burnproof_check_duration_seconds_count", check=GATE) == 4
    assert moved("burnproof_check_errors_total", check=GATE, kind="error") == 0
    # No plan id ever becomes a label value.
    assert not any("plan_id" in dict(labels) for _, labels in after)
    assert not any(plan_with()["plan_id"] in dict(labels).values() for _, labels in after)


def test_histogram_buckets_are_cumulative_and_end_in_inf():
    client = _app(gate_engine()).test_client()
    for _ in range(3):
        _post(client, plan_with(12.5))
    samples = _scrape(client)
    name = "burnproof_http_request_duration_seconds_bucket"
    counts = [
        _value(samples, name, method="POST", route="/v1/validations", le=str(edge))
        for edge in (*REQUEST_BUCKETS_S, "+Inf")
    ]
    assert counts == sorted(counts) and counts[-1] == 3
    checks = [
        _value(samples, "burnproof_check_duration_seconds_bucket", check=GATE, le=str(edge))
        for edge in (*CHECK_BUCKETS_S, "+Inf")
    ]
    assert checks == sorted(checks) and checks[-1] == 3


def test_a_check_that_raises_is_counted_as_an_error():
    client = _app(_engine(_Fixed("good-one", _ok), _Fixed("broken-one", _raises))).test_client()
    plan = plan_with(12.5)
    assert _post(client, plan).get_json()["verdict"] == "fail"
    assert _post(client, plan).get_json()["verdict"] == "fail"
    samples = _scrape(client)
    errors = "burnproof_check_errors_total"
    assert _value(samples, errors, check="broken-one", kind="error") == 2
    assert _value(samples, errors, check="broken-one", kind="timeout") == 0
    assert _value(samples, errors, check="good-one", kind="error") == 0
    assert _value(samples, "burnproof_findings_total", check="broken-one", status="error") == 2
    assert _value(samples, "burnproof_findings_total", check="good-one", status="pass") == 2
    assert _value(samples, "burnproof_check_duration_seconds_count", check="broken-one") == 2
    assert _value(samples, "burnproof_validations_total", verdict="fail") == 2


def test_a_check_that_overruns_is_counted_as_a_timeout():
    engine = _engine(_Fixed("a-hangs", hangs), _Fixed("b-good", _ok))
    profile = engine.profiles["default"]
    engine.profiles["default"] = dataclasses.replace(
        profile, check_time_budget_s=0.2, request_time_budget_s=0.2
    )
    client = _app(engine).test_client()
    assert _post(client, plan_with(12.5)).get_json()["verdict"] == "fail"
    samples = _scrape(client)
    errors = "burnproof_check_errors_total"
    assert _value(samples, errors, check="a-hangs", kind="timeout") == 1
    # b-good never started: the request's budget had run out; counted as a time-out too.
    assert _value(samples, errors, check="b-good", kind="timeout") == 1
    assert _value(samples, "burnproof_check_duration_seconds_count", check="a-hangs") == 1
    # the time waited before giving up: about the 0.2 s budget (what was left of it when the
    # check started, so a little under on a slow machine); only its presence is the point
    assert _value(samples, "burnproof_check_duration_seconds_sum", check="a-hangs") >= 0.15
    assert _value(samples, "burnproof_check_duration_seconds_count", check="b-good") == 0


def test_an_unknown_method_is_one_label_value():
    client = _app(gate_engine()).test_client()
    assert client.open("/healthz", method="BREW").status_code == 405
    samples = _scrape(client)
    requests = "burnproof_http_requests_total"
    assert _value(samples, requests, method="OTHER", route="(unmatched)", status="405") == 1
    assert not any(dict(labels).get("method") == "BREW" for _, labels in samples)


def test_each_app_has_its_own_registry():
    first, second = _app(gate_engine()).test_client(), _app(gate_engine()).test_client()
    _post(first, plan_with(12.5))
    assert _value(_scrape(first), "burnproof_validations_total", verdict="pass") == 1
    assert _value(_scrape(second), "burnproof_validations_total", verdict="pass") == 0


def test_multiprocess_mode_needs_the_directory_before_the_library_is_imported(tmp_path):
    # This process imported prometheus_client without PROMETHEUS_MULTIPROC_DIR: in-memory values.
    with pytest.raises(RuntimeError, match="PROMETHEUS_MULTIPROC_DIR was set after"):
        Metrics(str(tmp_path))


_WORKER = textwrap.dedent(
    """
    import json, sys
    from service.app import create_app
    from tests.cli.helpers import gate_engine, plan_with

    client = create_app({"TESTING": True}, engine=gate_engine()).test_client()
    for delta_v_m_s in json.loads(sys.argv[1]):
        response = client.post(
            "/v1/validations", data=json.dumps(plan_with(delta_v_m_s)),
            headers={"Content-Type": "application/json"},
        )
        assert response.status_code == 200, response.get_data()
    if len(sys.argv) > 2:  # the scraping process: print its own /metrics
        sys.stdout.write(client.get("/metrics").get_data(as_text=True))
    """
)


def _worker(directory: Path, delta_vs: list[float], scrape: bool = False) -> str:
    env = {**os.environ, "PROMETHEUS_MULTIPROC_DIR": str(directory), "BURNPROOF_LOG_LEVEL": "ERROR"}
    argv = [sys.executable, "-c", _WORKER, json.dumps(delta_vs)] + (["scrape"] if scrape else [])
    done = subprocess.run(argv, cwd=ROOT, env=env, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return done.stdout


def test_two_processes_write_and_one_collector_reads_the_sum(tmp_path):
    directory = tmp_path / "prometheus"
    directory.mkdir()
    _worker(directory, [12.5, 12.5, 150.0])  # worker 1: 2 pass, 1 fail
    _worker(directory, [90.0, 150.0])  # worker 2: 1 warn, 1 fail
    assert len(list(directory.glob("*.db"))) >= 2  # one set of files per process

    registry = CollectorRegistry()
    MultiProcessCollector(registry, path=str(directory))
    samples = {
        (sample.name, frozenset(sample.labels.items())): sample.value
        for family in registry.collect()
        for sample in family.samples
    }
    for verdict, count in (("pass", 2), ("warn", 1), ("fail", 2)):
        assert _value(samples, "burnproof_validations_total", verdict=verdict) == count
    requests = "burnproof_http_requests_total"
    assert _value(samples, requests, method="POST", route="/v1/validations", status="200") == 5
    histogram = "burnproof_http_request_duration_seconds_count"
    assert _value(samples, histogram, method="POST", route="/v1/validations") == 5
    assert _value(samples, "burnproof_check_duration_seconds_count", check=GATE) == 5

    # A third process in multiprocess mode serves the sum of all three at its /metrics.
    text = _worker(directory, [12.5], scrape=True)
    served = {
        (sample.name, frozenset(sample.labels.items())): sample.value
        for family in text_string_to_metric_families(text)
        for sample in family.samples
    }
    assert _value(served, "burnproof_validations_total", verdict="pass") == 3
    assert _value(served, requests, method="POST", route="/v1/validations", status="200") == 6
