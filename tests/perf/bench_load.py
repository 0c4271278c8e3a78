"""Benchmark: concurrent load on gunicorn with deploy/gunicorn.conf.py, as deployed.

Run with ``.venv/bin/python tests/perf/bench_load.py`` (or ``make bench``). A script, not a
test: it prints, it asserts nothing about timings. It starts
``gunicorn -c deploy/gunicorn.conf.py service.wsgi:app`` on 127.0.0.1 (a free port, two
sync workers, authentication off, a temporary metrics directory), sends the same bounded
load as tests/deploy/test_load.py (by default 400 requests from 8 concurrent clients, the
demo plans and a mix of bad requests, stopped at 60 s whatever happens), prints latency
percentiles, throughput and error counts, and stops gunicorn. It exits 1 if any answer
was a 5xx, dropped, incomplete or not the expected one.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

from _bench import ROOT, machine

sys.path.insert(0, str(ROOT))  # the repository, for tests.deploy

from tests.deploy import gunicorn_process as gp
from tests.deploy.load import run_load


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--requests", type=int, default=400)
    parser.add_argument("--clients", type=int, default=8)
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--deadline-s", type=float, default=60.0)
    options = parser.parse_args()
    print(machine())
    with tempfile.TemporaryDirectory() as tmp:
        with gp.running(Path(tmp), workers=options.workers) as server:
            result = run_load(server.port, options.requests, options.clients, options.deadline_s)
    print(f"gunicorn -c deploy/gunicorn.conf.py, {options.workers} sync workers, 127.0.0.1")
    print(result.table())
    for outcome in result.faults[:10]:
        print(f"fault: {outcome.case.name}: {outcome.fault}")
    bad = result.server_errors or result.dropped or result.faults
    return 1 if bad or len(result.outcomes) < options.requests else 0


if __name__ == "__main__":
    sys.exit(main())
