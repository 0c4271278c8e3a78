"""The command line: the same engine call as the HTTP API, offline, with exit codes for pipelines.

    burnproof validate PLAN [--spacecraft FILE] [--profile NAME]
                       [--format json|text|junit|opm] [--output FILE]
    burnproof serve [--host 127.0.0.1] [--port 8080]
    burnproof checks [--format json|text]

Exit codes: 0 the plan passed or passed with warnings; 1 it failed; 2 it could not
be read or validated (missing file, malformed JSON, an invalid plan, an engine that
is not ready, a validation past the compute budget), a usage error, or a server that
could not start. Problems go to stderr as one line each, never as a traceback.

``validate`` reads a JSON plan or a CCSDS OPM in KVN (recognised by its first keyword,
``CCSDS_OPM_VERS``), which needs ``--spacecraft FILE``: the spacecraft description, JSON or
TOML (``service.ccsds.spacecraft``), because engines are never in an OPM. ``--format opm``
writes the validated plan as an OPM (``service.ccsds.convert``); a plan that failed is not
written (exit 1, one line saying so). OPM errors are one line each: the file, the line
number, the keyword and what is wrong.

``validate`` applies a compute budget only when ``BURNPROOF_COMPUTE_BUDGET_S`` is set
(offline runs are not cut short unless asked); the service always applies one.
"""

from __future__ import annotations

import argparse
import os
import signal
import sys
import threading
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from service import __version__
from service.ccsds.convert import PlanFailed, describe_key, is_opm, load_opm_plan, write_plan_opm
from service.ccsds.spacecraft import parse_description
from service.engine import EngineNotReady, PlanInvalid
from service.engine.budget import ComputeBudget, budget_from_environment
from service.engine.core import engine_from_environment
from service.engine.errors import ComputeBudgetExceeded
from service.engine.render import catalogue_to_text, to_json_bytes, to_junit, to_text
from service.schemas import MalformedJson, load_plan, parse_json_bytes

EXIT_OK = 0
EXIT_FAIL = 1
EXIT_UNUSABLE = 2

PROG = "burnproof"

RENDERERS: dict[str, Callable[[dict], bytes]] = {
    "json": to_json_bytes,
    "text": lambda report: to_text(report).encode(),
    "junit": lambda report: to_junit(report).encode(),
}


class _Stop(Exception):
    """Raised from the SIGTERM handler so ``serve`` unwinds like it does on Ctrl-C."""


def _say(message: str) -> None:
    print(f"{PROG}: {message}", file=sys.stderr)


def _engine(source: Any) -> Any:
    """The engine to use: built from the environment as the service does, or the one given."""
    if source is None:
        return engine_from_environment(os.environ)
    if callable(source) and not hasattr(source, "validate"):
        return source()
    return source


def _not_ready(problems: Sequence[str]) -> int:
    for problem in problems or ["no checks are registered"]:
        _say(f"not ready: {problem}")
    return EXIT_UNUSABLE


def _plan_invalid(error: PlanInvalid, label: str | None = None) -> int:
    """The same field messages as the API's 422 ``errors``, one ``path: message`` per line;
    an OPM's as ``FILE: line 42, MAN_DV_1: message``."""
    lines = [
        f"{label}: {describe_key(path)}: {message}"
        if label is not None and path.startswith("opm")
        else f"{path}: {message}"
        for path, messages in error.errors.items()
        for message in messages
    ]
    for line in lines or [f"plan: {error.detail}"]:
        print(line, file=sys.stderr)
    return EXIT_UNUSABLE


def _write(payload: bytes, output: str | None) -> None:
    if output is None or output == "-":
        sys.stdout.flush()
        stream = getattr(sys.stdout, "buffer", None)
        if stream is None:  # a text-only stand-in for stdout
            sys.stdout.write(payload.decode())
        else:
            stream.write(payload)
        sys.stdout.flush()
    else:
        Path(output).write_bytes(payload)


def _read(source: str) -> bytes:
    if source == "-":
        return sys.stdin.buffer.read()
    return Path(source).read_bytes()


def cmd_validate(args: argparse.Namespace, engine_source: Any) -> int:
    label = "<stdin>" if args.plan == "-" else args.plan
    try:
        raw = _read(args.plan)
    except OSError as error:
        _say(f"cannot read {label}: {error.strerror or error}")
        return EXIT_UNUSABLE
    opm_input = is_opm(raw)
    if opm_input and args.spacecraft is None:
        _say(
            f"{label} is an OPM, which carries no engines: give the spacecraft description "
            "with --spacecraft FILE (JSON or TOML)"
        )
        return EXIT_UNUSABLE
    if not opm_input and args.spacecraft is not None:
        _say(f"--spacecraft is for an OPM plan; {label} is not one (no CCSDS_OPM_VERS first)")
        return EXIT_UNUSABLE
    try:
        if opm_input:
            plan = _load_opm(raw, args.spacecraft)
        else:
            plan = load_plan(parse_json_bytes(raw))
    except OSError as error:
        _say(f"cannot read {args.spacecraft}: {error.strerror or error}")
        return EXIT_UNUSABLE
    except MalformedJson as error:
        _say(f"{label}: {error}")  # says what is wrong and where (line, column)
        return EXIT_UNUSABLE
    except PlanInvalid as error:
        return _plan_invalid(error, label)
    try:
        budget_s = budget_from_environment(os.environ)
    except ValueError as error:
        _say(str(error))
        return EXIT_UNUSABLE
    engine = _engine(engine_source)
    if not engine.ready:
        return _not_ready(engine.problems)
    # Only given when set, so an engine double with the plain signature still fits.
    options = {} if budget_s is None else {"budget": ComputeBudget.start(budget_s)}
    try:
        report = engine.validate(plan, profile=args.profile, **options)
    except PlanInvalid as error:
        return _plan_invalid(error)
    except EngineNotReady as error:
        return _not_ready(error.problems)
    except ComputeBudgetExceeded as error:
        _say(f"{label}: {error}; raise BURNPROOF_COMPUTE_BUDGET_S to allow more")
        return EXIT_UNUSABLE
    if args.format == "opm":
        try:
            payload = write_plan_opm(plan, report).encode("ascii")
        except PlanFailed as error:
            _say(f"{label}: {error.detail}; nothing written")
            return EXIT_FAIL
    else:
        payload = RENDERERS[args.format](report)
    try:
        _write(payload, args.output)
    except BrokenPipeError:
        raise  # the reader of stdout went away: handled once, in main
    except OSError as error:
        _say(f"cannot write {args.output or 'stdout'}: {error.strerror or error}")
        return EXIT_UNUSABLE
    verdict = report.get("verdict")
    if args.output not in (None, "-"):
        summary = report.get("summary", {})
        counts = ", ".join(f"{summary.get(key, 0)} {key}" for key in summary)
        written = "the plan as an OPM" if args.format == "opm" else "report"
        _say(f"{report.get('plan_id')}: {verdict} ({counts}); {written} written to {args.output}")
    # Fail-closed: anything but an explicit pass or warn is a failure.
    return EXIT_OK if verdict in ("pass", "warn") else EXIT_FAIL


def _load_opm(raw: bytes, spacecraft: str):
    """The plan of an OPM file and its description file; raises PlanInvalid naming the fault."""
    description = parse_description(
        _read(spacecraft), toml=True if spacecraft.lower().endswith(".toml") else None
    )
    # Decoded leniently so that a stray non-ASCII byte is reported by line, not here.
    _, plan = load_opm_plan(raw.decode("utf-8", errors="replace"), description)
    return plan


def cmd_checks(args: argparse.Namespace, engine_source: Any) -> int:
    engine = _engine(engine_source)
    catalogue = engine.checks_catalogue()
    if args.format == "json":
        payload = to_json_bytes({"checks": catalogue})  # the body of GET /v1/checks
    else:
        payload = catalogue_to_text(catalogue).encode()
    _write(payload, None)
    return EXIT_OK if engine.ready else _not_ready(engine.problems)


def _url(host: str, port: int) -> str:
    return f"http://[{host}]:{port}/" if ":" in host else f"http://{host}:{port}/"


def _quiet_handler(base: type) -> type:
    """werkzeug's request handler without its access line: the app logs one JSON line per
    request itself (``service.http.logs``), so a second, differently shaped line would only
    confuse a log pipeline. werkzeug's error lines are kept."""

    class QuietHandler(base):
        def log_request(self, code: int | str = "-", size: int | str = "-") -> None:
            return None

    return QuietHandler


def cmd_serve(args: argparse.Namespace, engine_source: Any) -> int:
    # Imported here: flask and werkzeug are only needed by the one command that serves.
    from werkzeug.serving import WSGIRequestHandler, make_server

    from service.app import create_app

    engine = _engine(engine_source)
    if not engine.ready:
        for problem in engine.problems or ["no checks are registered"]:
            _say(f"warning: not ready, /readyz answers 503: {problem}")
    app = create_app(engine=engine)
    try:
        server = make_server(
            args.host,
            args.port,
            app,
            threaded=True,
            request_handler=_quiet_handler(WSGIRequestHandler),
        )
    except SystemExit:  # werkzeug has printed why (port taken, address not found) and exits
        _say(f"cannot listen on {args.host}:{args.port}")
        return EXIT_UNUSABLE
    except OSError as error:
        _say(f"cannot listen on {args.host}:{args.port}: {error.strerror or error}")
        return EXIT_UNUSABLE
    previous = None
    if threading.current_thread() is threading.main_thread():

        def stop(signum: int, frame: object) -> None:
            raise _Stop

        previous = signal.signal(signal.SIGTERM, stop)
    print(f"{PROG} {__version__} serving on {_url(args.host, server.port)}", flush=True)
    try:
        server.serve_forever()
    except (KeyboardInterrupt, _Stop):
        pass
    finally:
        server.server_close()
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
    _say("stopped")
    return EXIT_OK


def _port(text: str) -> int:
    try:
        port = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a port number") from None
    if not 0 <= port <= 65535:
        raise argparse.ArgumentTypeError(f"{port} is not between 0 and 65535")
    return port


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog=PROG,
        description="Check a spacecraft's orbit-maneuver plan against flight rules before uplink.",
        epilog="Exit codes: 0 pass or warn, 1 fail, 2 the plan could not be read or validated.",
    )
    parser.add_argument("--version", action="version", version=f"{PROG} {__version__}")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    validate = commands.add_parser(
        "validate",
        help="validate one plan offline and write the report",
        description="Validate one plan with the same engine as the API and write its report. "
        "Exit 0 for pass or warn, 1 for fail, 2 when the plan cannot be read or validated "
        "(problems go to stderr as 'path: message' lines).",
    )
    validate.add_argument(
        "plan",
        metavar="PLAN",
        help="the plan: a JSON plan or a CCSDS OPM (KVN) file, or - for stdin",
    )
    validate.add_argument(
        "--spacecraft",
        metavar="FILE",
        help="the spacecraft description (JSON or TOML) an OPM plan needs: engines, "
        "maneuver ids and engines, plan fields an OPM cannot carry",
    )
    validate.add_argument(
        "--profile", metavar="NAME", help="flight-rule profile (default: the plan's own)"
    )
    validate.add_argument(
        "--format",
        choices=sorted([*RENDERERS, "opm"]),
        default="json",
        help="report format, or opm for the validated plan as a CCSDS OPM (default: json)",
    )
    validate.add_argument(
        "--output", metavar="FILE", help="write the report here instead of stdout"
    )
    validate.set_defaults(handler=cmd_validate)

    serve = commands.add_parser(
        "serve",
        help="run the HTTP API on this machine",
        description="Run the HTTP API on one machine with the embedded defaults (werkzeug, "
        "threaded) until Ctrl-C or SIGTERM. For production run gunicorn on the WSGI object "
        "service.wsgi:app with the configuration in deploy/.",
    )
    serve.add_argument("--host", default="127.0.0.1", help="address to bind (default: 127.0.0.1)")
    serve.add_argument(
        "--port", type=_port, default=8080, help="port to bind, 0 for any free one (default: 8080)"
    )
    serve.set_defaults(handler=cmd_serve)

    checks = commands.add_parser(
        "checks",
        help="list the registered checks",
        description="List every registered check: id, version, source, summary, and its "
        "parameters with defaults and units. Exit 2 if the engine is not ready.",
    )
    checks.add_argument(
        "--format", choices=("json", "text"), default="text", help="output format (default: text)"
    )
    checks.set_defaults(handler=cmd_checks)
    return parser


def main(argv: Sequence[str] | None = None, *, engine: Any = None) -> int:
    """Run one command and return its exit code.

    ``engine`` replaces the engine built from the installed plugins: an engine
    object, or a function of no arguments that returns one (tests use this).
    """
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exit_:  # --help, --version and usage errors
        return exit_.code if isinstance(exit_.code, int) else EXIT_UNUSABLE
    try:
        return args.handler(args, engine)
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:  # the reader went away (``| head``); nothing more to say
        # Point stdout at nowhere so the interpreter's final flush does not complain.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return EXIT_UNUSABLE
    except Exception as error:  # never a traceback on a terminal or in a CI log
        _say(f"internal error: {type(error).__name__}: {error}")
        return EXIT_UNUSABLE


if __name__ == "__main__":
    sys.exit(main())
