"""Rendering a hand-made report: JSON bytes, the text table, JUnit XML, the checks catalogue."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import pytest

from service.engine.render import catalogue_to_text, to_json_bytes, to_junit, to_text
from tests.cli.sample_report import REPORT, finding, report

# ---------------------------------------------------------------- JSON


def test_json_round_trips_with_keys_in_report_order_and_a_trailing_newline():
    raw = to_json_bytes(REPORT)
    assert raw.endswith(b"}\n")
    assert json.loads(raw) == REPORT
    assert list(json.loads(raw)) == list(REPORT)
    assert raw.startswith(b'{\n  "plan_id": "kestrel-2-phasing",\n  "verdict": "fail"')


def test_json_is_deterministic_and_keeps_non_ascii_as_utf8():
    sample = report(plan_id="kestrel-2-\u00e9t\u00e9")
    assert to_json_bytes(sample) == to_json_bytes(report(plan_id="kestrel-2-\u00e9t\u00e9"))
    assert "kestrel-2-\u00e9t\u00e9".encode() in to_json_bytes(sample)


def test_json_refuses_nan():
    with pytest.raises(ValueError):
        to_json_bytes(report(totals={"delta_v_m_s": float("nan")}))


# ---------------------------------------------------------------- text


def test_text_has_header_verdict_and_summary_counts():
    text = to_text(REPORT)
    lines = text.splitlines()
    assert lines[0] == "burnproof report for plan kestrel-2-phasing"
    assert lines[1] == "verdict: FAIL"
    assert lines[2] == "summary: 2 pass, 1 warn, 2 fail, 1 error, 1 skipped"
    assert "profile: default" in text


def test_text_contains_every_finding_message_and_every_check():
    text = to_text(REPORT)
    for item in REPORT["findings"]:
        assert item["message"] in text
        assert item["check"] in text


def test_text_groups_findings_worst_first():
    text = to_text(REPORT)
    headings = ["ERROR (1)", "FAIL (2)", "WARN (1)", "PASS (2)", "SKIPPED (1)"]
    positions = [text.index(heading) for heading in headings]
    assert positions == sorted(positions)
    assert text.index("Maneuvers") < text.index("Arcs") < text.index("Findings")
    assert text.index("Findings") < positions[0] < text.index("Cautions")


def test_text_tables_show_maneuvers_and_arcs_with_fixed_decimals():
    lines = to_text(REPORT).splitlines()
    header = next(line for line in lines if line.startswith("id "))
    assert header.split() == ["id", "engine", "dv", "m/s", "propellant", "kg", "duration", "s",
                              "ignition"]  # fmt: skip
    row = next(line for line in lines if line.startswith("lift-1 "))
    assert row.split() == ["lift-1", "main", "12.500", "3.361", "341.100", "2031-05-02T01:00:00Z"]
    arc_rows = [line for line in lines if line.lstrip().startswith(("0  ", "1  "))]
    assert arc_rows[0].split()[:6] == ["0", "(start)", "400.000", "400.000", "5553.600", "400.000"]
    # an unbound arc has no apoapsis and no period
    assert arc_rows[1].split()[:6] == ["1", "lift-1", "142.300", "-", "-", "142.300"]


def test_text_columns_line_up():
    lines = to_text(REPORT).splitlines()
    start = lines.index("FAIL (2)")
    header, rule, first, second = lines[start + 1 : start + 5]
    assert set(rule.strip()) <= {"-", " "}
    for line in (first, second):
        assert line.index("200 km") == header.index("limit")  # the value column has one width
    assert first.index("periapsis 142.3") == header.index("message")
    assert "142.3 km" in first and "200 km" in first


def test_text_is_plain_ascii_stable_without_colour_or_trailing_space():
    sample = report(plan_id="kestrel \u00e9\x1b[31m")
    sample["findings"].append(finding("warn", "pointing 12.0\u00b0 from the Sun\nsecond line"))
    text = to_text(sample)
    assert text == to_text(sample)
    text.encode("ascii")  # raises if anything is not ASCII
    assert "\x1b" not in text
    assert "12.0 deg from the Sun second line" in text
    assert "kestrel e" in text
    assert all(line == line.rstrip() for line in text.splitlines())
    assert text.endswith("\n")


def test_text_with_no_findings_maneuvers_or_arcs():
    text = to_text(report(verdict="pass", findings=[], maneuvers=[], arcs=[]))
    assert "verdict: PASS" in text
    assert "(no findings)" in text and "(no maneuvers)" in text and "(no arcs)" in text


def test_text_shows_cautions():
    text = to_text(REPORT)
    tail = text[text.index("Cautions") :]
    assert "- burnproof supports, and never replaces" in tail
    assert "- Results come from a model" in tail
    assert max(len(line) for line in tail.splitlines()) <= 100


def test_text_wraps_cautions_without_splitting_hyphenated_words():
    # "mid-" would still fit on the first line; "mid-points" does not.
    text = to_text(report(cautions=["x" * 73 + " impulses at burn mid-points here"]))
    tail = text[text.index("Cautions") :].splitlines()
    assert tail[1:] == ["- " + "x" * 73 + " impulses at burn", "  mid-points here"]


# ---------------------------------------------------------------- JUnit


def _suite(xml_text: str) -> ET.Element:
    root = ET.fromstring(xml_text.encode())
    assert root.tag == "testsuite"
    return root


def test_junit_parses_with_one_testcase_per_finding_and_the_right_counts():
    suite = _suite(to_junit(REPORT))
    assert suite.get("name") == "burnproof"
    cases = suite.findall("testcase")
    assert len(cases) == len(REPORT["findings"]) == int(suite.get("tests"))
    assert suite.get("failures") == "2"
    assert suite.get("errors") == "1"
    assert suite.get("skipped") == "1"
    assert len(suite.findall("testcase/failure")) == 2
    assert len(suite.findall("testcase/error")) == 1
    assert len(suite.findall("testcase/skipped")) == 1


def test_junit_names_classes_and_properties():
    suite = _suite(to_junit(REPORT))
    properties = {p.get("name"): p.get("value") for p in suite.iter("property")}
    assert properties["plan_id"] == "kestrel-2-phasing"
    assert properties["verdict"] == "fail"
    assert properties["plan_digest"] == REPORT["provenance"]["plan_digest"]
    names = [(c.get("classname"), c.get("name")) for c in suite.findall("testcase")]
    assert names == [
        ("burnproof.periapsis-floor", "periapsis-floor arc 0 #1"),
        ("burnproof.burn-duration", "burn-duration lift-1 #1"),
        ("burnproof.periapsis-floor", "periapsis-floor lift-1 #1"),
        ("burnproof.periapsis-floor", "periapsis-floor lift-1 #2"),
        ("burnproof.propellant-budget", "propellant-budget lift-1 #1"),
        ("burnproof.sun-exclusion", "sun-exclusion plan #1"),
        ("burnproof.eclipse-at-burn", "eclipse-at-burn plan #1"),
    ]


def test_junit_outcome_elements_carry_the_messages_escaped():
    suite = _suite(to_junit(REPORT))
    cases = suite.findall("testcase")
    assert list(cases[0]) == []  # pass: a plain testcase
    assert cases[1].find("system-out").text == (
        "WARN: finite-burn loss 0.8 m/s is above the 0.5 m/s advisory"
    )
    failure = cases[2].find("failure")
    assert failure.get("message") == REPORT["findings"][2]["message"]  # <&>" survive the trip
    assert "value: 142.3 km" in failure.text and "limit: 200 km" in failure.text
    assert cases[5].find("error").get("message").startswith("check failed: ZeroDivisionError")
    assert cases[6].find("skipped").get("message") == "no ephemeris for this body"
    assert "never replaces" in suite.find("system-out").text


def test_junit_is_deterministic_and_declares_utf8():
    first = to_junit(REPORT)
    assert first == to_junit(report())
    assert first.startswith('<?xml version="1.0" encoding="UTF-8"?>\n<testsuite ')


def test_junit_survives_characters_xml_cannot_carry():
    sample = report(findings=[finding("fail", "bad \x00\x07 byte \u00e9\nnext line")])
    suite = _suite(to_junit(sample))
    message = suite.find("testcase/failure").get("message")
    assert message == "bad \ufffd\ufffd byte \u00e9\nnext line"


def test_junit_counts_an_unknown_status_as_an_error():
    sample = report(findings=[finding("mystery", "what is this")])
    suite = _suite(to_junit(sample))
    assert suite.get("errors") == "1"
    assert "mystery" in suite.find("testcase/error").get("message")


def test_junit_with_no_findings():
    suite = _suite(to_junit(report(findings=[], verdict="pass")))
    assert suite.get("tests") == "0"
    assert suite.findall("testcase") == []


# ---------------------------------------------------------------- checks catalogue


def test_catalogue_text_lists_checks_and_parameters_with_units():
    catalogue = [
        {
            "id": "periapsis-floor",
            "version": "2",
            "source": "plugins.periapsis",
            "summary": "every arc's periapsis above the floor",
            "parameters": [
                {
                    "name": "min_altitude_km",
                    "default": 200.0,
                    "unit": "km",
                    "stricter": "higher",
                    "description": "lowest periapsis allowed",
                },
                {
                    "name": "strict",
                    "default": True,
                    "unit": "",
                    "stricter": None,
                    "description": "refuse escape",
                },
            ],
        },
        {"id": "bare", "version": "1", "source": "x", "summary": "s", "parameters": []},
    ]
    text = catalogue_to_text(catalogue)
    assert "periapsis-floor  version 2  (plugins.periapsis)" in text
    assert "every arc's periapsis above the floor" in text
    assert "min_altitude_km  200 km" in text
    assert "higher is stricter" in text
    assert "strict" in text and "true" in text
    assert "(no parameters)" in text
    assert catalogue_to_text([]) == "(no checks registered)\n"
