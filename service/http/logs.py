"""Structured logs on stderr: one JSON object per line (or plain text), with the logging module.

``BURNPROOF_LOG_FORMAT`` is ``json`` (default) or ``text``; ``BURNPROOF_LOG_LEVEL`` a
level name of the logging module (default ``INFO``). A JSON line always has ``time``
(UTC, ISO 8601, milliseconds), ``level``, ``logger``, ``event`` and ``message``, then the
record's extra fields (``check_id`` for a check's traceback, the request fields for the
request line), and ``traceback`` when an exception is attached.

The handler goes on the ``burnproof`` and ``service`` loggers (ours), not on the root
logger, and records still propagate, so a host's own handlers (pytest's, a log agent's)
see them too. Logging is process-wide: configuring it again (every ``create_app``)
updates the one handler in place instead of adding another.

A check that broke in a request is logged on ``burnproof.checks`` with ``check_id`` and
``request_id``: ERROR with its traceback when it raised, WARNING when it broke the
contract, overran its budget or was not run for want of time.

Plan bodies are never logged: the request line carries the plan's digest and verdict,
and at DEBUG a second line gives the body's declared size in bytes, never its content.
"""

from __future__ import annotations

import json
import logging
import sys
import uuid
from collections.abc import Mapping
from datetime import UTC, datetime

from service.engine.observe import CheckRun

LOGGER_NAMES = ("burnproof", "service")
LEVEL_VARIABLE = "BURNPROOF_LOG_LEVEL"
FORMAT_VARIABLE = "BURNPROOF_LOG_FORMAT"
FORMATS = ("json", "text")
REQUEST_ID_HEADER = "X-Request-ID"
MAX_REQUEST_ID_CHARS = 128

request_log = logging.getLogger("burnproof.http")
check_log = logging.getLogger("burnproof.checks")

# Attributes every LogRecord has; anything else on a record came in through ``extra``.
_STANDARD_ATTRIBUTES = frozenset(
    logging.LogRecord("", logging.INFO, "", 0, "", (), None).__dict__
) | {"message", "asctime", "taskName"}


def utc_time(created_s: float) -> str:
    """A record's time as ISO 8601 UTC with milliseconds: ``2026-12-02T09:15:04.123Z``."""
    stamp = datetime.fromtimestamp(created_s, UTC).isoformat(timespec="milliseconds")
    return stamp.replace("+00:00", "Z")


def extra_fields(record: logging.LogRecord) -> dict[str, object]:
    """The fields a caller attached with ``extra=``, in the order they were given."""
    return {
        key: value
        for key, value in record.__dict__.items()
        if key not in _STANDARD_ATTRIBUTES and not key.startswith("_") and key != "event"
    }


class JsonFormatter(logging.Formatter):
    """One JSON object per record, on one line (control characters escaped by ``json``)."""

    def format(self, record: logging.LogRecord) -> str:
        document: dict[str, object] = {
            "time": utc_time(record.created),
            "level": record.levelname,
            "logger": record.name,
            "event": getattr(record, "event", "log"),
        }
        document.update(extra_fields(record))
        document["message"] = record.getMessage()
        if record.exc_info:
            document["traceback"] = self.formatException(record.exc_info)
        if record.stack_info:
            document["stack"] = self.formatStack(record.stack_info)
        return json.dumps(document, default=str, separators=(",", ":"))


class TextFormatter(logging.Formatter):
    """``time level logger message key=value ...`` for a human at a terminal."""

    def format(self, record: logging.LogRecord) -> str:
        fields = " ".join(
            f"{key}={json.dumps(value, default=str)}" for key, value in extra_fields(record).items()
        )
        line = f"{utc_time(record.created)} {record.levelname} {record.name} {record.getMessage()}"
        line = f"{line} {fields}" if fields else line
        if record.exc_info:
            line += "\n" + self.formatException(record.exc_info)
        return line


class StderrHandler(logging.StreamHandler):
    """Writes to whatever ``sys.stderr`` is at the time of the record (as logging.lastResort).

    A handler that kept the stream it was made with would write to a closed file once a
    test harness swapped stderr out and back.
    """

    def __init__(self) -> None:
        logging.Handler.__init__(self)

    @property
    def stream(self):  # type: ignore[override]
        return sys.stderr


def parse_level(text: str) -> int:
    """A level name (any case) to its number; ValueError naming the setting otherwise."""
    level = logging.getLevelNamesMapping().get(text.strip().upper())
    if level is None:
        names = ", ".join(("DEBUG", "INFO", "WARNING", "ERROR", "CRITICAL"))
        raise ValueError(f"{LEVEL_VARIABLE} must be a level name ({names}), not {text!r}")
    return level


def parse_format(text: str) -> str:
    chosen = text.strip().lower()
    if chosen not in FORMATS:
        raise ValueError(f"{FORMAT_VARIABLE} must be one of {', '.join(FORMATS)}, not {text!r}")
    return chosen


def configure_logging(settings: Mapping[str, object]) -> None:
    """Point our loggers at one stderr handler with the chosen format and level.

    ``settings`` holds ``BURNPROOF_LOG_LEVEL`` and ``BURNPROOF_LOG_FORMAT`` (either may be
    missing); a bad value is a ValueError naming the setting, raised before anything changes.
    """
    level = parse_level(str(settings.get(LEVEL_VARIABLE) or "INFO"))
    chosen = parse_format(str(settings.get(FORMAT_VARIABLE) or "json"))
    formatter = JsonFormatter() if chosen == "json" else TextFormatter()
    for name in LOGGER_NAMES:
        logger = logging.getLogger(name)
        handler = next((h for h in logger.handlers if isinstance(h, StderrHandler)), None)
        if handler is None:
            handler = StderrHandler()
            logger.addHandler(handler)
        handler.setFormatter(formatter)
        logger.setLevel(level)


def request_id_from(header: str | None) -> tuple[str, bool]:
    """The request's id and whether a given one was refused.

    An incoming ``X-Request-ID`` is kept when it is 1 to 128 printable ASCII characters
    without spaces (``!`` to ``~``); otherwise a fresh one is made (uuid4, 32 hex digits),
    so nothing a client sends can break a log line or a response header.
    """
    if header is None:
        return uuid.uuid4().hex, False
    if 1 <= len(header) <= MAX_REQUEST_ID_CHARS and all("!" <= c <= "~" for c in header):
        return header, False
    return uuid.uuid4().hex, True


def log_request(fields: Mapping[str, object], body_bytes: int | None) -> None:
    """The request's one INFO line (``event`` ``request``), and at DEBUG the body's size."""
    message = f"{fields['method']} {fields['path']} {fields['status']}"
    request_log.info(message, extra={"event": "request", **fields})
    if request_log.isEnabledFor(logging.DEBUG):
        request_log.debug(
            "request body size",
            extra={
                "event": "request_body",
                "request_id": fields["request_id"],
                "body_bytes": body_bytes,
            },
        )


def log_check_problem(run: CheckRun, request_id: str | None) -> None:
    """One line for a check that did not end ``ok``; with the traceback when it raised."""
    extra = {"event": "check_" + run.outcome, "check_id": run.check_id, "request_id": request_id}
    if run.error is not None:
        error = run.error
        check_log.error(
            "check %s raised %s",
            run.check_id,
            type(error).__name__,
            exc_info=(type(error), error, error.__traceback__),
            extra=extra,
        )
    else:
        check_log.warning("check %s: %s", run.check_id, run.message, extra=extra)
