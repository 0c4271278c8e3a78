"""Runs each enabled check in its own guard and turns what it returns into findings.

A check that raises, returns something that is not an iterable of findings,
gives a finding with a non-finite number, or runs past its time budget becomes
one ``error`` finding for that check; the other checks still run. Checks run
on a worker thread, not the caller's, so that the request can answer when one
hangs: the caller hands a request's checks to one worker, which runs them one
after another, and sleeps until they are done or one overruns its budget.
Workers are kept for the process and reused (a thread per check, and a handoff
per check, cost about a tenth of a millisecond each); a worker whose check
overruns is abandoned (Python cannot stop it), leaves the pool, and finishes or
hangs on its own, which is why gunicorn recycles workers (``max_requests``); a
fresh worker carries on with the next check.

Findings are ordered by plan position (plan-wide
first, then by burn, each arc with the burn that opened it), then check id, then the
order the check emitted them: never by plugin registration order.

An optional observer (``service.engine.observe``) is told each check's outcome, time,
and the exception of a check that raised, so a face can log the traceback with the check
id. The runner itself logs nothing: the command line promises one line per problem on
stderr, never a traceback, and the error finding already says what went wrong.
"""

from __future__ import annotations

import logging
import math
import os
import queue
import threading
import time
from collections.abc import Callable, Mapping

from service.engine.observe import CheckObserver, CheckRun, count_by_status
from service.engine.registry import RegisteredCheck
from service.plugin_api import Context, Finding, Status


def _error(check_id: str, message: str) -> Finding:
    return Finding(status=Status.ERROR, message=message, check=check_id)


def _raised(check_id: str, error: Exception) -> Finding:
    return _error(check_id, f"check failed: {type(error).__name__}: {error}")


def _finding_fault(item: object, maneuver_ids: set[str], arc_count: int) -> str | None:
    if not isinstance(item, Finding):
        return f"returned {type(item).__name__} where a Finding was expected"
    if not isinstance(item.status, Status):
        return f"returned a finding with status {item.status!r}, not a Status"
    if not isinstance(item.message, str) or not item.message:
        return "returned a finding without a message"
    for name in ("value", "limit"):
        number = getattr(item, name)
        if number is None:
            continue
        if isinstance(number, bool) or not isinstance(number, int | float):
            return f"returned a finding whose {name} is {type(number).__name__}, not a number"
        if not math.isfinite(number):
            return f"returned a finding whose {name} is {number!r}, not a finite number"
    if item.unit is not None and not isinstance(item.unit, str):
        return "returned a finding whose unit is not a string"
    if item.maneuver is not None and item.maneuver not in maneuver_ids:
        return f"returned a finding for unknown maneuver {item.maneuver!r}"
    if item.arc is not None and (
        isinstance(item.arc, bool) or not isinstance(item.arc, int) or not 0 <= item.arc < arc_count
    ):
        return f"returned a finding for unknown arc {item.arc!r}"
    return None


class _Overran(Exception):
    pass


class _Job:
    """One call of ``work`` handed to a worker, and what came of it."""

    def __init__(self, work: Callable[[], list]) -> None:
        self.work = work
        self.done = threading.Event()
        self.lock = threading.Lock()
        self.abandoned = False
        self.value: object = None
        self.error: BaseException | None = None

    def run(self) -> bool:
        """Run the work; True when the caller is still waiting for it (the worker stays)."""
        try:
            self.value = self.work()
        except BaseException as error:  # handed back to the caller's guard below
            self.error = error
        with self.lock:
            self.done.set()
            return not self.abandoned

    def abandon(self) -> bool:
        """Give up on the job unless it has just finished; True when it is given up."""
        with self.lock:
            if self.done.is_set():
                return False
            self.abandoned = True
            return True


class _Worker:
    """A daemon thread that runs one job at a time until a job of its overruns."""

    def __init__(self) -> None:
        self.jobs: queue.SimpleQueue[_Job | _Drive | None] = queue.SimpleQueue()
        threading.Thread(target=self._serve, name="burnproof-check", daemon=True).start()

    def _serve(self) -> None:
        # Ends on None (a surplus worker let go) or after a job its caller gave up on.
        while (job := self.jobs.get()) is not None and job.run():
            pass


# Idle workers of this process, reused by every engine; a worker is taken out while it runs
# a job, so a hung check never holds up another. More idle ones than this are let go.
_MAX_IDLE = 16
_idle: list[_Worker] = []
_idle_lock = threading.Lock()


def _forget_workers() -> None:
    # A forked child (a gunicorn worker) has none of its parent's threads.
    global _idle_lock
    _idle.clear()
    _idle_lock = threading.Lock()


os.register_at_fork(after_in_child=_forget_workers)


def _take_worker() -> _Worker:
    with _idle_lock:
        if _idle:
            return _idle.pop()
    return _Worker()


def _return_worker(worker: _Worker) -> None:
    with _idle_lock:
        if len(_idle) < _MAX_IDLE:
            _idle.append(worker)
            return
    worker.jobs.put(None)


def _within(budget_s: float, work: Callable[[], list]) -> list:
    """``work()`` on a worker thread; ``_Overran`` if it has not returned after ``budget_s``."""
    job = _Job(work)
    worker = _take_worker()
    worker.jobs.put(job)
    finished = job.done.wait(budget_s if math.isfinite(budget_s) else None)
    if not finished and job.abandon():
        raise _Overran
    _return_worker(worker)
    if job.error is not None:
        raise job.error
    return job.value  # type: ignore[return-value]


def run_check(
    entry: RegisteredCheck,
    context: Context,
    params: Mapping[str, object],
    budget_s: float = math.inf,
) -> list[Finding]:
    """One check's findings, or a single ``error`` finding saying how it broke."""
    check_id = entry.check.id
    try:
        items = _within(budget_s, lambda: list(entry.check.evaluate(context, dict(params))))
    except _Overran:
        return [_error(check_id, f"check did not finish within its {budget_s:.3g} s time budget")]
    except Exception as error:
        return [_raised(check_id, error)]
    return _accepted(check_id, items, context)[0]


def _accepted(check_id: str, items: list, context: Context) -> tuple[list[Finding], bool]:
    """What a check returned, checked against the contract and stamped with its id.

    The flag is True when the check broke the contract (the findings are then its one
    ``error`` finding saying how).
    """
    maneuver_ids = {burn.id for burn in context.trajectory.maneuvers}
    arc_count = len(context.trajectory.arcs)
    findings = []
    for item in items:
        fault = _finding_fault(item, maneuver_ids, arc_count)
        if fault:
            return [_error(check_id, f"check broke its contract: it {fault}")], True
        findings.append(
            Finding(
                status=item.status,
                message=item.message,
                value=None if item.value is None else float(item.value),
                limit=None if item.limit is None else float(item.limit),
                unit=item.unit,
                maneuver=item.maneuver,
                arc=item.arc,
                check=check_id,
            )
        )
    if not findings:
        return [Finding(Status.SKIPPED, "check returned no findings", check=check_id)], False
    return findings, False


class _Run:
    """One request's checks, run one after another by a worker while the caller keeps time.

    The caller hands the whole sequence to one worker and sleeps until it is done, waking
    only when a check's budget runs out: one thread handoff per request instead of two per
    check. A check that overruns is given up as before (an ``error`` finding), its worker is
    abandoned, and a fresh worker carries on with the next check. ``lock`` guards every
    field; ``generation`` names the worker whose results still count. ``runs`` holds each
    check's ``CheckRun`` when an observer wants them, else it is None and nothing is timed.
    """

    def __init__(
        self, entries, context, thresholds, check_budget_s, request_budget_s, clock, label, timed
    ):
        self.entries, self.context, self.thresholds = entries, context, thresholds
        self.check_budget_s, self.request_budget_s, self.clock = (
            check_budget_s,
            request_budget_s,
            clock,
        )
        self.budget_label = label or f"{request_budget_s:.3g} s time budget"
        self.lock = threading.Lock()
        self.changed = threading.Condition(self.lock)
        self.results: list[list[Finding] | None] = [None] * len(entries)
        self.runs: list[CheckRun | None] | None = [None] * len(entries) if timed else None
        self.next_index = 0
        # (index, monotonic start, budget, finished) of the check most recently started.
        self.current: tuple[int, float, float, bool] | None = None
        self.caller_wakes_at = math.inf
        # Before the first check starts, the earliest its budget can run out (with a clock
        # that runs on, as time.monotonic does): the caller sleeps until then unless the
        # worker, finding an earlier deadline, wakes it.
        self.first_wake = time.monotonic() + min(check_budget_s, request_budget_s)
        self.generation = 0
        self.finished = False
        self.raised: BaseException | None = None
        self.deadline = clock() + request_budget_s

    def drive(self, generation: int) -> bool:
        """Run the checks from ``next_index`` on; False when the caller gave up on this worker."""
        try:
            return self._drive(generation)
        except BaseException as error:  # the clock or the bookkeeping failed: the caller raises
            with self.lock:
                if self.generation != generation:
                    return False
                self.raised, self.finished = error, True
                self.changed.notify_all()
            return True

    def _drive(self, generation: int) -> bool:
        while True:
            with self.lock:
                if self.generation != generation:
                    return False
                index = self.next_index
                if index == len(self.entries):
                    self.finished = True
                    self.changed.notify_all()
                    return True
                self.next_index = index + 1
                entry = self.entries[index]
                left = self.deadline - self.clock()
                if left <= 0.0:
                    message = f"check not run: the request's {self.budget_label} ran out"
                    self.results[index] = [_error(entry.check.id, message)]
                    if self.runs is not None:
                        self.runs[index] = _not_ok(entry.check.id, 0.0, "not_run", message)
                    continue
                budget = min(self.check_budget_s, left)
                started = time.monotonic()
                self.current = (index, started, budget, False)
                if started + budget < self.caller_wakes_at:
                    self.changed.notify_all()  # the caller must wake sooner for this one
            if self.runs is None:
                findings, raised, outcome, failure = self._evaluate(entry)
            else:
                ticked = time.perf_counter()
                findings, raised, outcome, failure = self._evaluate(entry)
                seconds = time.perf_counter() - ticked
            with self.lock:
                if self.generation != generation:
                    return False  # the check overran and its error is already recorded
                self.results[index] = findings
                if self.runs is not None and findings is not None:
                    check_id = entry.check.id
                    self.runs[index] = CheckRun(
                        check_id,
                        seconds,
                        outcome,
                        count_by_status(findings),
                        findings[0].message if outcome == "error" else None,
                        failure,
                    )
                self.current = (index, started, budget, True)
                if raised is not None:
                    self.raised, self.finished = raised, True
                    self.changed.notify_all()
                    return True

    def _evaluate(
        self, entry: RegisteredCheck
    ) -> tuple[list[Finding] | None, BaseException | None, str, Exception | None]:
        """The check's findings, what it raised that is not its own failure, the outcome,
        and the exception of a check that raised."""
        check_id = entry.check.id
        params = self.thresholds[check_id]
        try:
            items = list(entry.check.evaluate(self.context, dict(params)))
        except Exception as error:
            return [_raised(check_id, error)], None, "error", error
        except BaseException as error:  # not the check's failure: the caller re-raises it
            return None, error, "error", None
        findings, broke = _accepted(check_id, items, self.context)
        return findings, None, "error" if broke else "ok", None

    def wait(self, worker: _Worker, job: _Drive) -> None:
        """Sleep until every check has findings; give up on each check that overruns."""
        with self.lock:
            while not self.finished:
                now = time.monotonic()
                current = self.current
                if current is None:
                    # Past that time, wait for the worker to say when its check started.
                    wakes_at = self.first_wake if now < self.first_wake else math.inf
                elif current[3]:
                    wakes_at = math.inf
                else:
                    index, started, budget, _ = current
                    wakes_at = started + budget
                    if now >= wakes_at:
                        check_id = self.entries[index].check.id
                        message = f"check did not finish within its {budget:.3g} s time budget"
                        if budget < self.check_budget_s:
                            message += f" (what was left of the request's {self.budget_label})"
                        self.results[index] = [_error(check_id, message)]
                        if self.runs is not None:
                            self.runs[index] = _not_ok(check_id, now - started, "timeout", message)
                        self.generation += 1
                        self.current, self.first_wake = None, math.inf
                        job.abandoned = True
                        worker, job = _take_worker(), _Drive(self, self.generation)
                        worker.jobs.put(job)
                        continue
                self.caller_wakes_at = wakes_at
                self.changed.wait(None if math.isinf(wakes_at) else wakes_at - now)
                self.caller_wakes_at = math.inf
        _return_worker(worker)


class _Drive:
    """A worker's job: drive a ``_Run`` for one generation."""

    def __init__(self, run: _Run, generation: int) -> None:
        self.run_, self.generation_ = run, generation
        self.abandoned = False

    def run(self) -> bool:
        return self.run_.drive(self.generation_) and not self.abandoned


def run_checks(
    entries: list[RegisteredCheck],
    context: Context,
    thresholds: Mapping[str, Mapping[str, object]],
    *,
    check_budget_s: float = math.inf,
    request_budget_s: float = math.inf,
    clock: Callable[[], float] = time.monotonic,
    request_budget_label: str | None = None,
    observer: CheckObserver | None = None,
) -> list[Finding]:
    """Every check's findings in a deterministic order, within the request's time budget.

    Each check gets ``check_budget_s`` or what is left of ``request_budget_s``,
    whichever is less; a check left without time is an ``error`` finding saying so
    (``request_budget_label`` names that budget in the message, by default
    ``"<request_budget_s> s time budget"``). ``observer``, when given, is called with
    each check's ``CheckRun`` once all are done; it never changes the findings.
    """
    position = {burn.id: index + 1 for index, burn in enumerate(context.trajectory.maneuvers)}
    ordered = sorted(entries, key=lambda e: e.check.id)
    run = _Run(
        ordered,
        context,
        thresholds,
        check_budget_s,
        request_budget_s,
        clock,
        request_budget_label,
        observer is not None,
    )
    worker, job = _take_worker(), _Drive(run, 0)
    worker.jobs.put(job)
    run.wait(worker, job)
    if run.raised is not None:
        raise run.raised
    if run.runs is not None:
        _tell(observer, run.runs)
    keyed = []
    for findings in run.results:
        for sequence, finding in enumerate(findings or ()):
            if finding.maneuver is not None:
                where = position[finding.maneuver]
            elif finding.arc is not None:
                where = finding.arc
            else:
                where = 0
            keyed.append(((where, finding.check, sequence), finding))
    return [finding for _, finding in sorted(keyed, key=lambda pair: pair[0])]


def _not_ok(check_id: str, seconds: float, outcome: str, message: str) -> CheckRun:
    """The run of a check that became its one ``error`` finding without an exception."""
    return CheckRun(check_id, seconds, outcome, {"error": 1}, message)  # type: ignore[arg-type]


def _tell(observer: CheckObserver, runs: list[CheckRun | None]) -> None:
    """Hand each run to the observer; an observer that fails is logged, never propagated."""
    for check_run in runs:
        if check_run is None:
            continue
        try:
            observer(check_run)
        except Exception:
            logging.getLogger("burnproof.engine").exception(
                "the check observer failed on %s", check_run.check_id
            )
