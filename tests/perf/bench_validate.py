"""Benchmark: in-process validation of the demo plan, every check but execution-dispersion.

Run with ``.venv/bin/python tests/perf/bench_validate.py`` (or ``make bench``). A script,
not a test: nothing here asserts a timing. The engine is built as the service builds it
(``service.engine.build_engine``, the built-in ``default`` profile) with one difference:
the plugin policy denies ``execution-dispersion`` when that check is installed, because its
Monte Carlo has a benchmark of its own (``bench_dispersion.py``) and would otherwise dominate
the figure. The demo plan ``schemas/examples/kestrel-2-raise.json`` is parsed once with
``load_plan``; ``engine.validate`` is then timed over 1,000 runs after a warm-up, and the
median and 99th percentile are printed with a breakdown of the median run's parts (the
trajectory build and each check, timed separately on the same plan).

Target (issue 8): median under 5 ms.
"""

from __future__ import annotations

import argparse
import statistics
import time

from _bench import DEMO_PLAN, DISPERSION_CHECK, demo_plan_json, machine, percentile_ms, verdict

from service.dynamics.bodies import body_named
from service.engine import build_engine
from service.engine.core import fly
from service.engine.profiles import resolve_thresholds
from service.engine.registry import PluginPolicy
from service.plugin_api import Context
from service.schemas.plan import load_plan


def _median_ms(work, runs: int) -> float:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        work()
        times.append(time.perf_counter() - start)
    return 1000.0 * statistics.median(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=1000)
    parser.add_argument("--warm-up", type=int, default=50)
    args = parser.parse_args()

    installed = build_engine()
    registered = DISPERSION_CHECK in installed.registry.checks
    engine = build_engine(policy=PluginPolicy(deny=frozenset({DISPERSION_CHECK})))
    if not engine.ready:
        raise SystemExit(f"the engine is not ready: {engine.problems}")
    plan = load_plan(demo_plan_json())
    for _ in range(args.warm_up):
        engine.validate(plan)
    times = []
    for _ in range(args.runs):
        start = time.perf_counter()
        engine.validate(plan)
        times.append(time.perf_counter() - start)
    median_ms = percentile_ms(times, 50.0)
    p99_ms = percentile_ms(times, 99.0)

    # Where the time goes: the same plan's parts, each timed on its own.
    body = body_named(plan.central_body)
    profile = engine.profiles[plan.profile]
    thresholds = resolve_thresholds(profile, engine.registry, plan.rules)
    parts_runs = max(50, args.runs // 5)
    parts = [("trajectory build (fly)", _median_ms(lambda: fly(plan, body), parts_runs))]
    trajectory = fly(plan, body)
    context = Context(plan=plan, body=body, trajectory=trajectory, profile=profile.name)
    for check_id in sorted(thresholds):
        entry = engine.registry.checks[check_id]
        params = thresholds[check_id]
        parts.append(
            (
                f"check {check_id}",
                _median_ms(
                    lambda e=entry, p=params: list(e.check.evaluate(context, dict(p))), parts_runs
                ),
            )
        )

    print("bench_validate: in-process engine.validate of the demo plan")
    print(machine())
    print(
        f"plan: {DEMO_PLAN.name} ({len(plan.maneuvers)} burns); profile {plan.profile!r}; "
        f"checks run: {len(thresholds)}"
    )
    state = (
        "registered, denied by the plugin policy for this run" if registered else "not registered"
    )
    print(f"{DISPERSION_CHECK}: {state}")
    print(f"{'what':<44}{'ms':>10}")
    print(f"{'validate, median of ' + f'{args.runs:,}' + ' runs':<44}{median_ms:>10.2f}")
    print(f"{'validate, 99th percentile':<44}{p99_ms:>10.2f}")
    print(f"{'validate, fastest run':<44}{1000.0 * min(times):>10.2f}")
    print("parts (each timed alone, median):")
    for name, ms in parts:
        print(f"  {name:<42}{ms:>10.3f}")
    print(f"target: median under 5 ms: {verdict(median_ms < 5.0)} ({median_ms:.2f} ms)")


if __name__ == "__main__":
    main()
