"""A third-party plugin package, installed with pip and served end to end over HTTP.

``tests/example_plugin`` is a complete plugin distribution, Harbourlight Orbital's
``harbourlight-burnproof-rules``. It is installed offline (``--no-index``, and
``--no-build-isolation`` so the build uses this environment's setuptools) into a
temporary directory, never into the environment running the tests. A real
``burnproof serve`` on 127.0.0.1 then finds it through the ``burnproof``
entry-point group because that directory is on its ``PYTHONPATH``, exactly as it
would find a package installed in its own site-packages.
"""

from __future__ import annotations

import contextlib
import importlib.util
import json
import os
import re
import shutil
import socket
import subprocess
import sys
import textwrap
import time
import tomllib
import types
import urllib.error
import urllib.request
from collections.abc import Iterator
from importlib.metadata import distributions
from pathlib import Path

import pytest

from service.engine import build_engine
from service.schemas import load_plan
from tests.plans import valid_plan

REPO = Path(__file__).resolve().parents[2]
PACKAGE = REPO / "tests" / "example_plugin"
CHECK = "max-burns-per-day"
DISTRIBUTION = "harbourlight-burnproof-rules"
GUIDE = (REPO / "DEVELOPERS.md").read_text("utf-8")


@pytest.fixture(scope="module")
def site_dir(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The package installed by pip into a directory of its own; returns that directory.

    The source is copied first: setuptools builds in the source tree and leaves
    ``build/`` and an ``.egg-info`` there, which must never appear in the repository
    (an ``.egg-info`` on ``sys.path`` would register the plugin in every test).
    """
    work = tmp_path_factory.mktemp("example-plugin")
    source, target = work / "source", work / "site"
    shutil.copytree(
        PACKAGE,
        source,
        ignore=shutil.ignore_patterns(
            "tests", "conftest.py", "__pycache__", "build", "*.egg-info", ".pytest_cache"
        ),
    )
    command = [
        sys.executable,
        "-m",
        "pip",
        "install",
        "--no-deps",
        "--no-build-isolation",
        "--no-index",
        "--no-cache-dir",
        "--disable-pip-version-check",
        "--target",
        str(target),
        str(source),
    ]
    env = {**os.environ, "PIP_CONFIG_FILE": os.devnull, "PIP_NO_INPUT": "1"}
    done = subprocess.run(command, capture_output=True, text=True, env=env, timeout=300)
    output = done.stdout + done.stderr
    hint = (
        "\nsetuptools before 70.1 needs the separate 'wheel' package to build a wheel; "
        "the test extras must pin setuptools>=70.1"
        if "bdist_wheel" in output
        else ""
    )
    if done.returncode != 0:
        pytest.fail(f"pip install failed with {done.returncode}:\n{output[-4000:]}{hint}")
    return target


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def _request(url: str, body: dict | None = None) -> tuple[int, dict]:
    data = None if body is None else json.dumps(body).encode()
    request = urllib.request.Request(url, data=data, method="GET" if body is None else "POST")
    request.add_header("Content-Type", "application/json")
    try:
        with urllib.request.urlopen(request, timeout=60) as response:
            return response.status, json.loads(response.read())
    except urllib.error.HTTPError as error:
        return error.code, json.loads(error.read() or b"{}")


@contextlib.contextmanager
def serving(site: Path, log: Path, **settings: str) -> Iterator[str]:
    """``burnproof serve`` on 127.0.0.1 with ``site`` on its path; yields the base URL.

    ``settings`` are extra environment variables (``BURNPROOF_PLUGINS_DENY`` ...);
    any the caller's environment sets are cleared first. The server is always
    stopped, and its port must be free again afterwards.
    """
    port = _free_port()
    base = f"http://127.0.0.1:{port}"
    env = {key: value for key, value in os.environ.items() if not key.startswith("BURNPROOF_")}
    env["PYTHONPATH"] = os.pathsep.join(filter(None, [str(site), env.get("PYTHONPATH")]))
    env.update(settings)
    command = [sys.executable, "-m", "service.cli", "serve", "--host", "127.0.0.1"]
    with log.open("wb") as out:
        process = subprocess.Popen(
            [*command, "--port", str(port)],
            cwd=REPO,
            env=env,
            stdout=out,
            stderr=subprocess.STDOUT,
            stdin=subprocess.DEVNULL,
        )
    try:
        deadline = time.monotonic() + 60.0
        while True:
            if process.poll() is not None:
                pytest.fail(f"server exited with {process.returncode}:\n{log.read_text()[-4000:]}")
            with contextlib.suppress(OSError):
                if _request(base + "/healthz")[0] == 200:
                    break
            if time.monotonic() > deadline:
                pytest.fail(f"no /healthz within 60 s:\n{log.read_text()[-4000:]}")
            time.sleep(0.2)
        yield base
    finally:
        process.terminate()
        try:
            process.wait(timeout=15)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait(timeout=15)
    with pytest.raises(OSError):
        socket.create_connection(("127.0.0.1", port), timeout=1).close()


def plan_with_burns(*ignitions: str) -> dict:
    """The shared test plan (400 km circular) with a 0.4 m/s trim at each ignition."""
    plan = valid_plan()
    del plan["rules"], plan["target_orbit"]
    plan["plan_id"] = "gannet-2-station-keeping-12"
    plan["spacecraft"]["engines"] = plan["spacecraft"]["engines"][:1]
    plan["maneuvers"] = [
        {
            "id": f"trim-{number}",
            "ignition": ignition,
            "engine": "main",
            "frame": "TNW",
            "delta_v_m_s": [0.4, 0.0, 0.0],
        }
        for number, ignition in enumerate(ignitions, start=1)
    ]
    return plan


def _ours(report: dict) -> list[dict]:
    return [finding for finding in report["findings"] if finding["check"] == CHECK]


def test_pip_installed_the_distribution_with_its_entry_point(site_dir):
    (dist,) = [d for d in distributions(path=[str(site_dir)]) if d.name == DISTRIBUTION]
    assert dist.version == "1.0.0"
    (point,) = dist.entry_points.select(group="burnproof")
    assert (point.name, point.value) == (CHECK, "harbourlight_rules.burns_per_day")
    assert (site_dir / "harbourlight_rules" / "burns_per_day.py").is_file()


def test_the_installed_plugin_is_served_end_to_end(site_dir, tmp_path):
    with serving(site_dir, tmp_path / "server.log") as base:
        status, ready = _request(base + "/readyz")
        assert (status, ready) == (200, {"ready": True})

        status, body = _request(base + "/v1/checks")
        assert status == 200
        catalogue = {entry["id"]: entry for entry in body["checks"]}
        assert {"burn-sequence", "propellant-budget", CHECK} <= set(catalogue)
        ours = catalogue[CHECK]
        assert ours["source"] == "harbourlight_rules.burns_per_day"
        assert ours["distribution"] == DISTRIBUTION
        assert ours["version"] == "1"
        assert ours["profiles"] == ["default"]
        (parameter,) = ours["parameters"]
        assert {key: parameter[key] for key in ("name", "default", "unit", "stricter")} == {
            "name": "max_burns_per_day",
            "default": 4,
            "unit": "count",
            "stricter": "lower",
        }

        # six burns, four hours apart: all six ignite within 24 h of the first
        every_4_h = [f"2031-05-02T{hour:02d}:00:00Z" for hour in (1, 5, 9, 13, 17, 21)]
        status, report = _request(base + "/v1/validations", plan_with_burns(*every_4_h))
        assert status == 200, report
        (finding,) = _ours(report)
        assert finding["status"] == "fail"
        assert (finding["value"], finding["limit"], finding["maneuver"]) == (6, 4, "trim-5")
        assert finding["message"].startswith(
            "6 burns ignite in the 24 h from 2031-05-02T01:00:00Z ('trim-1', "
        )
        assert finding["message"].endswith(", 2 more than the limit of 4")
        assert report["verdict"] == "fail"

        # three burns about 8 h apart; the second at 09:30, where its along-track thrust is
        # 107 deg from the Sun (at 09:00 it would be 17 deg, inside sun-exclusion's cone)
        every_8_h = [f"2031-05-02T{time}:00Z" for time in ("01:00", "09:30", "17:00")]
        status, report = _request(base + "/v1/validations", plan_with_burns(*every_8_h))
        assert status == 200, report
        (finding,) = _ours(report)
        assert finding["status"] == "pass"
        assert finding["message"] == (
            "the busiest 24 h, from 2031-05-02T01:00:00Z, has 3 burns, within the limit of 4"
        )
        # the built-in checks judge the same plan; the plugin changes nothing of theirs
        assert {f["check"] for f in report["findings"]} >= {"burn-sequence", CHECK}
        assert report["verdict"] == "pass", [f for f in report["findings"] if f["status"] != "pass"]


@pytest.mark.parametrize(
    ("settings", "listed"),
    [
        ({"BURNPROOF_PLUGINS_DENY": DISTRIBUTION}, False),
        ({"BURNPROOF_PLUGINS_ALLOW": f"other-rules, {CHECK}"}, True),
        ({"BURNPROOF_PLUGINS_ALLOW": "other-rules"}, False),
    ],
    ids=["denied-by-distribution", "allowed-by-entry-point", "not-on-the-allow-list"],
)
def test_a_site_allow_or_deny_list_decides_whether_it_loads(site_dir, tmp_path, settings, listed):
    with serving(site_dir, tmp_path / "server.log", **settings) as base:
        status, body = _request(base + "/v1/checks")
        assert status == 200
        ids = {entry["id"] for entry in body["checks"]}
        assert (CHECK in ids) is listed
        assert "burn-sequence" in ids  # burnproof's own checks are never refused by an allow list
        assert _request(base + "/readyz") == (200, {"ready": True})


def _guide_block(section: str, language: str) -> str:
    """The first ``language`` code block under the DEVELOPERS.md heading ``section``."""
    text = GUIDE.split(f"\n### {section}\n", 1)[1].split("\n### ", 1)[0]
    match = re.search(rf"^( *)```{language}\n(.*?)^\1```", text, re.M | re.S)
    assert match, f"no {language} block under {section!r}"
    return textwrap.dedent(match.group(2))


def _example_module() -> types.ModuleType:
    """The example check module loaded from its file, without putting it on ``sys.path``."""
    path = PACKAGE / "harbourlight_rules" / "burns_per_day.py"
    spec = importlib.util.spec_from_file_location("harbourlight_example_burns_per_day", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_the_guide_hook_example_runs_as_written():
    module = types.ModuleType("guide_example")
    exec(compile(_guide_block("The hook", "python"), "DEVELOPERS.md", "exec"), module.__dict__)
    engine = build_engine(extra_plugins=[module], entry_points=False)
    assert engine.problems == []
    plan = plan_with_burns("2031-05-02T01:00:00Z", "2031-05-02T05:00:00Z")
    (finding,) = engine.validate(load_plan(plan))["findings"]
    assert (finding["check"], finding["status"], finding["value"]) == ("max-burns", "pass", 2)


def test_the_guide_packaging_example_matches_the_example_package():
    guide = tomllib.loads(_guide_block("Packaging and installing", "toml"))
    package = tomllib.loads((PACKAGE / "pyproject.toml").read_text("utf-8"))
    assert guide["project"]["entry-points"] == package["project"]["entry-points"]
    assert guide["project"]["name"] == package["project"]["name"] == DISTRIBUTION
    assert guide["build-system"] == package["build-system"]


def test_a_site_profile_sets_the_plugin_threshold_as_the_guide_shows(tmp_path):
    snippet = _guide_block("Parameters, profiles and requests", "toml")
    (tmp_path / "harbourlight-ops.toml").write_text(
        'name = "harbourlight-ops"\ndescription = "Harbourlight Orbital operations"\n' + snippet
    )
    engine = build_engine(
        extra_plugins=[_example_module()], entry_points=False, profile_dir=str(tmp_path)
    )
    assert engine.problems == []
    plan = plan_with_burns(*(f"2031-05-02T{hour:02d}:00:00Z" for hour in (1, 7, 13, 19)))
    plan["profile"] = "harbourlight-ops"
    (finding,) = engine.validate(load_plan(plan))["findings"]
    assert (finding["status"], finding["value"], finding["limit"]) == ("fail", 4, 3)
