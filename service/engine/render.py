"""One validation report, three renderings: JSON for machines, text for people, JUnit for CI.

Each function takes the report dict the engine returns (CONTRACT.md section 2) and
is deterministic: the same report always gives the same bytes, so a rendered report
can be diffed and archived beside its plan digest. Nothing here judges a plan; the
verdict and the findings are shown exactly as the engine gave them.
"""

from __future__ import annotations

import json
import math
import re
import textwrap
import unicodedata
import xml.etree.ElementTree as ET
from collections.abc import Callable, Mapping, Sequence
from typing import Any

Report = Mapping[str, Any]

SUMMARY_KEYS = ("pass", "warn", "fail", "error", "skipped")
# Worst first: what needs a person's attention leads the findings section.
SEVERITY_ORDER = ("error", "fail", "warn", "pass", "skipped")
TEXT_WIDTH = 100
XML_DECLARATION = '<?xml version="1.0" encoding="UTF-8"?>\n'
# Characters XML 1.0 cannot carry at all, not even escaped.
_NOT_XML = re.compile("[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")
# Symbols a flight-dynamics message is likely to hold, spelled out for a plain-ASCII terminal.
_ASCII_SPELLING = str.maketrans(
    {"\u00b0": " deg", "\u00b5": "u", "\u03bc": "u", "\u00b1": "+/-", "\u00d7": "x",
     "\u2013": "-", "\u2014": "-", "\u2212": "-", "\u2018": "'", "\u2019": "'",
     "\u201c": '"', "\u201d": '"', "\u2026": "...", "\u2264": "<=", "\u2265": ">="}
)  # fmt: skip


def to_json_bytes(report: Report) -> bytes:
    """UTF-8 JSON, indented by two, keys in the report's own order, a trailing newline; no NaN."""
    return (json.dumps(report, ensure_ascii=False, allow_nan=False, indent=2) + "\n").encode()


# ---------------------------------------------------------------- text


def _ascii(value: object) -> str:
    """One table cell's worth of plain ASCII: control characters become spaces, accents drop."""
    text = str(value).translate(_ASCII_SPELLING)
    text = "".join(" " if unicodedata.category(c) == "Cc" else c for c in text)
    text = "".join(c for c in unicodedata.normalize("NFKD", text) if not unicodedata.combining(c))
    return text.encode("ascii", "backslashreplace").decode("ascii")


def _fixed(value: object, decimals: int) -> str:
    """A table number with fixed decimals so a column lines up; ``-`` for null."""
    if value is None:
        return "-"
    if isinstance(value, bool) or not isinstance(value, int | float):
        return _ascii(value)
    if not math.isfinite(value):
        return str(value)
    text = f"{value:.{decimals}f}"
    return text[1:] if text.startswith("-") and float(text) == 0.0 else text


def _compact(value: object) -> str:
    """A finding's value or limit as a person writes it: ``142.3``, ``250``, ``1.2000e-05``."""
    if value is None:
        return "-"
    if isinstance(value, bool):
        return "true" if value else "false"
    if not isinstance(value, int | float):
        return _ascii(value)
    if isinstance(value, int) or not math.isfinite(value):
        return str(value)
    if value == 0.0:
        return "0"
    if abs(value) >= 1e7 or abs(value) < 1e-3:
        return f"{value:.4e}"
    return f"{value:.4f}".rstrip("0").rstrip(".")


def _with_unit(value: object, unit: object) -> str:
    text = _compact(value)
    return f"{text} {_ascii(unit)}" if value is not None and unit else text


def _table(headers: Sequence[str], rows: Sequence[Sequence[str]], right: set[int]) -> list[str]:
    """Fixed-width columns two spaces apart; the last column is never padded."""
    widths = [max([len(h)] + [len(r[i]) for r in rows]) for i, h in enumerate(headers)]

    def line(cells: Sequence[str]) -> str:
        parts = []
        for i, cell in enumerate(cells):
            if i == len(cells) - 1 and i not in right:
                parts.append(cell)
            else:
                parts.append(cell.rjust(widths[i]) if i in right else cell.ljust(widths[i]))
        return "  ".join(parts).rstrip()

    return [line(headers), line(["-" * w for w in widths])] + [line(r) for r in rows]


def _subject(finding: Mapping[str, Any]) -> str:
    """What a finding is about: its maneuver, else its coast arc, else the whole plan."""
    if finding.get("maneuver") is not None:
        return str(finding["maneuver"])
    if finding.get("arc") is not None:
        return f"arc {finding['arc']}"
    return "plan"


def _maneuver_lines(maneuvers: Sequence[Mapping[str, Any]]) -> list[str]:
    headers = ("id", "engine", "dv m/s", "propellant kg", "duration s", "ignition")
    rows = [
        (
            _ascii(m.get("id")),
            _ascii(m.get("engine")),
            _fixed(m.get("delta_v_m_s"), 3),
            _fixed(m.get("propellant_kg"), 3),
            _fixed(m.get("duration_s"), 3),
            _ascii(m.get("ignition", "-")),
        )
        for m in maneuvers
    ]
    return _table(headers, rows, right={2, 3, 4}) if rows else ["(no maneuvers)"]


def _arc_lines(arcs: Sequence[Mapping[str, Any]]) -> list[str]:
    headers = ("arc", "after", "periapsis alt km", "apoapsis alt km", "period s")
    headers += ("lowest alt km", "lowest at")
    rows = [
        (
            _ascii(a.get("index", i)),
            "(start)" if a.get("after_maneuver") is None else _ascii(a["after_maneuver"]),
            _fixed(a.get("periapsis_altitude_km"), 3),
            _fixed(a.get("apoapsis_altitude_km"), 3),
            _fixed(a.get("period_s"), 3),
            _fixed(a.get("lowest_altitude_km"), 3),
            _ascii(a.get("lowest_altitude_epoch", "-")),
        )
        for i, a in enumerate(arcs)
    ]
    return _table(headers, rows, right={0, 2, 3, 4, 5}) if rows else ["(no arcs)"]


def _finding_lines(findings: Sequence[Mapping[str, Any]]) -> list[str]:
    if not findings:
        return ["(no findings)"]
    extra = list(dict.fromkeys(str(f.get("status")) for f in findings))
    order = list(SEVERITY_ORDER) + [s for s in extra if s not in SEVERITY_ORDER]
    lines: list[str] = []
    for status in order:
        group = [f for f in findings if str(f.get("status")) == status]
        if not group:
            continue
        if lines:
            lines.append("")
        lines.append(f"{_ascii(status).upper()} ({len(group)})")
        rows = [
            (
                _ascii(f.get("check")),
                _ascii(_subject(f)),
                _with_unit(f.get("value"), f.get("unit")),
                _with_unit(f.get("limit"), f.get("unit")),
                _ascii(f.get("message", "")),
            )
            for f in group
        ]
        table = _table(("check", "on", "value", "limit", "message"), rows, right=set())
        lines += ["  " + line for line in table]
    return lines


def to_text(report: Report) -> str:
    """A report for a person's terminal: header, maneuvers, arcs, findings worst first, cautions."""
    summary = report.get("summary") or {}
    provenance = report.get("provenance") or {}
    totals = report.get("totals") or {}
    lines = [
        f"burnproof report for plan {_ascii(report.get('plan_id', '?'))}",
        f"verdict: {_ascii(report.get('verdict', '?')).upper()}",
        "summary: " + ", ".join(f"{summary.get(key, 0)} {key}" for key in SUMMARY_KEYS),
    ]
    if provenance:
        lines.append(
            f"profile: {_ascii(provenance.get('profile', '?'))}   "
            f"plan digest: {_ascii(provenance.get('plan_digest', '?'))}   "
            f"service: {_ascii(provenance.get('service_version', '?'))}"
        )
    if totals:
        lines.append(
            f"totals: dv {_fixed(totals.get('delta_v_m_s'), 3)} m/s, "
            f"propellant {_fixed(totals.get('propellant_kg'), 3)} kg, "
            f"remaining {_fixed(totals.get('propellant_remaining_kg'), 3)} kg, "
            f"final mass {_fixed(totals.get('final_mass_kg'), 3)} kg"
        )
    sections: list[tuple[str, list[str]]] = [
        ("Maneuvers", _maneuver_lines(report.get("maneuvers") or [])),
        ("Arcs", _arc_lines(report.get("arcs") or [])),
        ("Findings", _finding_lines(report.get("findings") or [])),
    ]
    cautions = report.get("cautions") or []
    if cautions:
        wrapped = [
            textwrap.fill(
                _ascii(c),
                TEXT_WIDTH,
                initial_indent="- ",
                subsequent_indent="  ",
                break_on_hyphens=False,
                break_long_words=False,
            )
            for c in cautions
        ]
        sections.append(("Cautions", "\n".join(wrapped).split("\n")))
    for title, body in sections:
        lines += ["", title, *body]
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------- JUnit


def _xml(value: object) -> str:
    """Text XML 1.0 can carry; ElementTree does the escaping of what remains."""
    return _NOT_XML.sub("\ufffd", str(value))


def _detail(finding: Mapping[str, Any]) -> str:
    lines = [str(finding.get("message", ""))]
    if finding.get("value") is not None:
        lines.append(f"value: {_with_unit(finding['value'], finding.get('unit'))}")
    if finding.get("limit") is not None:
        lines.append(f"limit: {_with_unit(finding['limit'], finding.get('unit'))}")
    return _xml("\n".join(lines))


def _outcome(case: ET.Element, finding: Mapping[str, Any]) -> str:
    """Add the status element a CI tool reads; returns the counter it goes to (or "")."""
    status = finding.get("status")
    message = _xml(finding.get("message", ""))
    if status in ("fail", "error"):
        tag = "failure" if status == "fail" else "error"
        ET.SubElement(case, tag, {"message": message, "type": status}).text = _detail(finding)
        return "failures" if status == "fail" else "errors"
    if status == "skipped":
        ET.SubElement(case, "skipped", {"message": message})
        return "skipped"
    if status == "warn":
        ET.SubElement(case, "system-out").text = f"WARN: {message}"
        return ""
    if status == "pass":
        return ""
    # A status this renderer does not know is shown as an error, never as a pass.
    attributes = {"message": _xml(f"unknown status {status!r}: {message}"), "type": _xml(status)}
    ET.SubElement(case, "error", attributes).text = _detail(finding)
    return "errors"


_PROPERTIES: tuple[tuple[str, Callable[[Report], object]], ...] = (
    ("plan_id", lambda r: r.get("plan_id")),
    ("verdict", lambda r: r.get("verdict")),
    ("profile", lambda r: (r.get("provenance") or {}).get("profile")),
    ("plan_digest", lambda r: (r.get("provenance") or {}).get("plan_digest")),
    ("profile_digest", lambda r: (r.get("provenance") or {}).get("profile_digest")),
    ("service_version", lambda r: (r.get("provenance") or {}).get("service_version")),
    ("plugin_api_version", lambda r: (r.get("provenance") or {}).get("plugin_api_version")),
)


def to_junit(report: Report) -> str:
    """JUnit XML: one ``testsuite`` named burnproof, one ``testcase`` per finding, in report order.

    A test case is named ``<check> <maneuver | arc N | plan> #<n>``, ``n`` counting
    from 1 among findings with the same check and subject, so names are unique and
    stay the same from run to run while the plan does.
    """
    findings = list(report.get("findings") or [])
    counts = {"failures": 0, "errors": 0, "skipped": 0}
    suite = ET.Element("testsuite", {"name": "burnproof", "tests": str(len(findings))})
    properties = ET.SubElement(suite, "properties")
    for name, get in _PROPERTIES:
        value = get(report)
        if value is not None:
            ET.SubElement(properties, "property", {"name": name, "value": _xml(value)})
    seen: dict[tuple[str, str], int] = {}
    for finding in findings:
        check = str(finding.get("check") or "unknown")
        subject = _subject(finding)
        number = seen[(check, subject)] = seen.get((check, subject), 0) + 1
        case = ET.SubElement(
            suite,
            "testcase",
            {"classname": _xml(f"burnproof.{check}"), "name": _xml(f"{check} {subject} #{number}")},
        )
        counter = _outcome(case, finding)
        if counter:
            counts[counter] += 1
    cautions = report.get("cautions") or []
    if cautions:
        ET.SubElement(suite, "system-out").text = _xml("\n".join(str(c) for c in cautions))
    for name in ("failures", "errors", "skipped"):
        suite.set(name, str(counts[name]))
    ET.indent(suite, space="  ")
    return XML_DECLARATION + ET.tostring(suite, encoding="unicode") + "\n"


def _described(parameter: Mapping[str, Any]) -> str:
    """The description, with the allowed values of a choice and the bounds of a number."""
    text = str(parameter.get("description") or "")
    choices = parameter.get("choices")
    low, high = parameter.get("minimum"), parameter.get("maximum")
    allowed = ""
    if choices:
        allowed = "one of " + ", ".join(str(choice) for choice in choices)
    elif low is not None and high is not None:
        allowed = f"from {low} to {high}"
    elif low is not None:
        allowed = f"at least {low}"
    elif high is not None:
        allowed = f"at most {high}"
    if allowed:
        text = f"{text} ({allowed})" if text else allowed
    return text


def catalogue_to_text(catalogue: Sequence[Mapping[str, Any]]) -> str:
    """The registered checks for a person: id, version, source, summary, parameters with units."""
    if not catalogue:
        return "(no checks registered)\n"
    lines: list[str] = []
    for entry in catalogue:
        if lines:
            lines.append("")
        lines.append(
            f"{_ascii(entry.get('id'))}  version {_ascii(entry.get('version'))}  "
            f"({_ascii(entry.get('source'))})"
        )
        lines.append(f"  {_ascii(entry.get('summary', ''))}")
        parameters = entry.get("parameters") or []
        if isinstance(parameters, Mapping):
            parameters = [{"name": name, **dict(spec)} for name, spec in parameters.items()]
        rows = [
            (
                _ascii(p.get("name")),
                _with_unit(p.get("default"), p.get("unit")),
                "-" if p.get("stricter") is None else f"{_ascii(p['stricter'])} is stricter",
                _ascii(_described(p)),
            )
            for p in parameters
        ]
        if rows:
            table = _table(("parameter", "default", "direction", "description"), rows, set())
            lines += ["  " + line for line in table]
        else:
            lines.append("  (no parameters)")
    return "\n".join(lines) + "\n"
