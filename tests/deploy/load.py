"""A bounded load against a server on 127.0.0.1: concurrent clients, demo plans and bad ones.

Used by tests/deploy/test_load.py (which asserts on what came back) and by
tests/perf/bench_load.py (which prints the same table). Every request knows the answer it
must get: the demo plans in schemas/examples/ a 200 report, and a mix of bad requests
their problem documents (400 malformed JSON, 422 invalid plan, 415 wrong media type, 404).
The load is bounded in count and in time; nothing here retries.
"""

from __future__ import annotations

import http.client
import json
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from tests.deploy import gunicorn_process as gp

JSON = "application/json"
PROBLEM = "application/problem+json"


@dataclass(frozen=True)
class Case:
    """One kind of request and the answer it must get; ``check`` returns a fault or None."""

    name: str
    method: str
    path: str
    body: bytes | None
    headers: dict[str, str]
    status: int
    media_type: str
    check: Callable[[object], str | None]


def _report_of(plan_id: str) -> Callable[[object], str | None]:
    def check(document: object) -> str | None:
        if not isinstance(document, dict) or document.get("plan_id") != plan_id:
            return f"not the report of {plan_id}"
        if document.get("verdict") not in ("pass", "warn", "fail"):
            return f"verdict {document.get('verdict')!r}"
        return None

    return check


def _problem_naming(*needles: str) -> Callable[[object], str | None]:
    def check(document: object) -> str | None:
        if not isinstance(document, dict) or not str(document.get("type", "")).startswith(
            "urn:burnproof:problem:"
        ):
            return "not a burnproof problem document"
        text = json.dumps(document)
        missing = [needle for needle in needles if needle not in text]
        return f"problem does not name {missing}" if missing else None

    return check


def cases() -> list[Case]:
    """The request mix: each demo plan, and one of each bad kind, in a fixed rotation."""
    plans = gp.example_plans()
    json_headers = {"Content-Type": JSON}
    mix = [
        Case(
            f"plan {name}",
            "POST",
            "/v1/validations",
            json.dumps(plan).encode(),
            json_headers,
            200,
            JSON,
            _report_of(plan["plan_id"]),
        )
        for name, plan in plans.items()
    ]
    invalid = plans["kestrel-2-raise"]
    invalid["spacecraft"]["dry_mass_kg"] = -1.0
    mix += [
        Case(
            "malformed JSON",
            "POST",
            "/v1/validations",
            b'{"plan_id": "kestrel-2", ',
            json_headers,
            400,
            PROBLEM,
            _problem_naming(),
        ),
        Case(
            "invalid plan",
            "POST",
            "/v1/validations",
            json.dumps(invalid).encode(),
            json_headers,
            422,
            PROBLEM,
            _problem_naming("spacecraft.dry_mass_kg"),
        ),
        Case(
            "wrong media type",
            "POST",
            "/v1/validations",
            json.dumps(plans["kestrel-2-raise"]).encode(),
            {"Content-Type": "text/plain"},
            415,
            PROBLEM,
            _problem_naming("text/plain"),
        ),
        Case("unknown route", "GET", "/v1/nothing-here", None, {}, 404, PROBLEM, _problem_naming()),
    ]
    return mix


@dataclass
class Outcome:
    case: Case
    seconds: float
    status: int | None = None
    fault: str | None = None  # None: the answer was the one expected, whole
    dropped: bool = False  # the connection failed or the body came short


@dataclass
class LoadResult:
    clients: int
    outcomes: list[Outcome] = field(default_factory=list)
    wall_s: float = 0.0

    @property
    def latencies_s(self) -> np.ndarray:
        return np.array([o.seconds for o in self.outcomes], dtype=float)

    def percentile_ms(self, q: float) -> float:
        return 1000.0 * float(np.percentile(self.latencies_s, q)) if self.outcomes else 0.0

    @property
    def server_errors(self) -> int:
        return sum(1 for o in self.outcomes if o.status is not None and o.status >= 500)

    @property
    def dropped(self) -> int:
        return sum(1 for o in self.outcomes if o.dropped)

    @property
    def faults(self) -> list[Outcome]:
        return [o for o in self.outcomes if o.fault is not None]

    @property
    def throughput_rps(self) -> float:
        return len(self.outcomes) / self.wall_s if self.wall_s > 0 else 0.0

    def table(self) -> str:
        rows = [
            ("requests", f"{len(self.outcomes)} by {self.clients} concurrent clients"),
            ("wall time", f"{self.wall_s:.2f} s"),
            ("throughput", f"{self.throughput_rps:.1f} requests/s"),
            ("latency p50", f"{self.percentile_ms(50):.1f} ms"),
            ("latency p99", f"{self.percentile_ms(99):.1f} ms"),
            ("latency max", f"{self.percentile_ms(100):.1f} ms"),
            ("5xx answers", str(self.server_errors)),
            ("dropped connections", str(self.dropped)),
            ("wrong or incomplete answers", str(len(self.faults))),
        ]
        for name in sorted({o.case.name for o in self.outcomes}):
            times = [o.seconds for o in self.outcomes if o.case.name == name]
            p50 = 1000.0 * float(np.percentile(times, 50))
            rows.append((f"  p50 {name}", f"{p50:.1f} ms ({len(times)} requests)"))
        width = max(len(label) for label, _ in rows)
        return "\n".join(f"{label.ljust(width)}  {value}" for label, value in rows)


def exchange(port: int, case: Case, timeout_s: float) -> Outcome:
    """Send one request on a fresh connection and judge the answer against ``case``."""
    started = time.perf_counter()
    connection = http.client.HTTPConnection(gp.HOST, port, timeout=timeout_s)
    try:
        connection.request(case.method, case.path, body=case.body, headers=case.headers)
        response = connection.getresponse()
        body = response.read()  # raises IncompleteRead when the body comes short
        declared = response.getheader("Content-Length")
        media = (response.getheader("Content-Type") or "").split(";")[0].strip()
    except (OSError, http.client.HTTPException) as error:
        seconds = time.perf_counter() - started
        return Outcome(case, seconds, fault=f"{type(error).__name__}: {error}", dropped=True)
    finally:
        connection.close()
    outcome = Outcome(case, time.perf_counter() - started, status=response.status)
    if declared is None or int(declared) != len(body):
        outcome.fault, outcome.dropped = f"Content-Length {declared}, {len(body)} bytes", True
        return outcome
    if (response.status, media) != (case.status, case.media_type):
        outcome.fault = f"{response.status} {media}, expected {case.status} {case.media_type}"
        return outcome
    try:
        document = json.loads(body)
    except ValueError as error:
        outcome.fault = f"body is not JSON: {error}"
        return outcome
    outcome.fault = case.check(document)
    return outcome


def run_load(port: int, total: int = 400, clients: int = 8, deadline_s: float = 60.0) -> LoadResult:
    """``total`` requests (the mix in rotation) by ``clients`` threads; stops at the deadline.

    Requests not sent by the deadline are simply missing from the result, so a hang shows
    as a short count rather than a test that never ends.
    """
    mix = cases()
    lock = threading.Lock()
    next_index = 0
    result = LoadResult(clients)
    deadline = time.monotonic() + deadline_s

    def client() -> None:
        nonlocal next_index
        while time.monotonic() < deadline:
            with lock:
                index = next_index
                next_index += 1
            if index >= total:
                return
            left_s = max(1.0, deadline - time.monotonic())
            outcome = exchange(port, mix[index % len(mix)], timeout_s=left_s)
            with lock:
                result.outcomes.append(outcome)

    threads = [threading.Thread(target=client, name=f"load-{n}") for n in range(clients)]
    started = time.perf_counter()
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=deadline_s + 30)
    result.wall_s = time.perf_counter() - started
    return result
