"""The same plan gives the same bytes: twice in a row, and with its keys in another order."""

from __future__ import annotations

import json

from service.engine.render import to_json_bytes


def _reordered(node: object) -> object:
    """The same JSON value with every object's keys in reverse order."""
    if isinstance(node, dict):
        return {key: _reordered(node[key]) for key in reversed(list(node))}
    if isinstance(node, list):
        return [_reordered(item) for item in node]
    return node


def test_same_plan_twice_gives_identical_bytes(post_plan, plan):
    first = post_plan(plan)
    second = post_plan(plan)
    assert first.status_code == second.status_code == 200
    assert first.get_data() == second.get_data()


def test_reordered_keys_and_white_space_give_identical_bytes(post_plan, plan):
    compact = json.dumps(plan, separators=(",", ":")).encode()
    reordered = json.dumps(_reordered(plan), indent=4).encode()
    assert compact != reordered
    first, second = post_plan(compact), post_plan(reordered)
    assert first.status_code == second.status_code == 200
    assert first.get_data() == second.get_data()
    digest = first.get_json()["provenance"]["plan_digest"]
    assert digest == second.get_json()["provenance"]["plan_digest"]
    assert digest.startswith("sha256:") and len(digest) == len("sha256:") + 64


def test_a_different_plan_gives_a_different_digest(post_plan, plan):
    first = post_plan(plan).get_json()["provenance"]["plan_digest"]
    plan["maneuvers"][0]["delta_v_m_s"] = [2.6, 0.0, 0.0]
    assert post_plan(plan).get_json()["provenance"]["plan_digest"] != first


def test_report_bytes_are_the_command_line_json(post_plan, plan):
    plan["plan_id"] = "plover-1-élan"
    raw = post_plan(plan).get_data()
    assert "plover-1-élan".encode() in raw  # ensure_ascii=False
    assert json.loads(raw)["plan_id"] == "plover-1-élan"
    assert to_json_bytes(json.loads(raw)) == raw  # what `burnproof validate` prints
