"""deploy/Dockerfile without a docker engine: what it copies exists, and what it sets is right.

The file is parsed the way the Dockerfile reference describes it (instructions, line
continuations with a backslash, exec-form JSON arrays, ``ARG`` defaults in ``FROM``), and
its ``.dockerignore`` is applied to every source it copies from the build context.
"""

from __future__ import annotations

import fnmatch
import importlib
import json
import re
import shlex
import subprocess
import sys
import tomllib

import pytest

from tests.deploy import gunicorn_process as gp
from tests.deploy.dockerfile_parse import Instruction, final_stage, parse

REPO = gp.REPO
DOCKERFILE = REPO / "deploy" / "Dockerfile"
DOCKERIGNORE = REPO / "deploy" / "Dockerfile.dockerignore"


@pytest.fixture(scope="module")
def instructions() -> list[Instruction]:
    return parse(DOCKERFILE.read_text("utf-8"))


def _env(instructions: list[Instruction]) -> dict[str, str]:
    """The final stage's ENV settings (``KEY=VALUE`` pairs, shell-quoted values allowed)."""
    values: dict[str, str] = {}
    for instruction in final_stage(instructions, "ENV"):
        for pair in shlex.split(instruction.arguments):
            key, sep, value = pair.partition("=")
            assert sep, f"ENV {pair!r}: use the KEY=VALUE form"
            values[key] = value
    return values


def _ignored(relative: str, patterns: list[str]) -> bool:
    """Whether .dockerignore excludes ``relative`` or a directory above it (``**`` any depth)."""
    parts = relative.strip("/").split("/")
    prefixes = ["/".join(parts[: n + 1]) for n in range(len(parts))]
    excluded = False
    for pattern in patterns:
        negate = pattern.startswith("!")
        pattern = pattern.lstrip("!").strip("/")
        variants = {pattern, pattern.replace("**/", "")}
        if any(fnmatch.fnmatchcase(p, v) for p in prefixes for v in variants):
            excluded = not negate
    return excluded


def _ignore_patterns() -> list[str]:
    lines = DOCKERIGNORE.read_text("utf-8").splitlines()
    return [line.strip() for line in lines if line.strip() and not line.startswith("#")]


def _copies(instructions: list[Instruction]) -> list[tuple[Instruction, list[str], str]]:
    """(instruction, sources, destination) of every COPY/ADD from the build context."""
    found = []
    for instruction in instructions:
        if instruction.keyword not in ("COPY", "ADD"):
            continue
        words = instruction.exec_form() or shlex.split(instruction.arguments)
        flags = [w for w in words if w.startswith("--")]
        paths = [w for w in words if not w.startswith("--")]
        if any(flag.startswith("--from=") for flag in flags):
            continue  # from another stage, not the context
        found.append((instruction, paths[:-1], paths[-1]))
    return found


def test_the_dockerfile_parses_into_a_two_stage_build(instructions):
    stages = [i for i in instructions if i.keyword == "FROM"]
    assert len(stages) == 2
    assert stages[0].arguments.endswith(" AS build")


def test_every_copied_source_exists_and_is_not_ignored(instructions):
    patterns = _ignore_patterns()
    copies = _copies(instructions)
    assert copies, "the Dockerfile copies nothing from the context"
    for instruction, sources, _ in copies:
        assert instruction.keyword == "COPY", "ADD fetches URLs and unpacks archives: use COPY"
        for source in sources:
            assert (REPO / source).exists(), f"{instruction.keyword} {source}: no such path"
            assert not _ignored(source, patterns), f"{source} is excluded by the .dockerignore"


def test_the_dockerignore_keeps_the_heavy_and_private_parts_out():
    patterns = _ignore_patterns()
    for path in (".venv/bin/python", ".git/config", "tests/deploy/test_dockerfile.py"):
        assert _ignored(path, patterns), path
    for path in ("service/engine/__pycache__/core.cpython-311.pyc", "burnproof.egg-info/PKG-INFO"):
        assert _ignored(path, patterns), path
    for path in ("service/wsgi.py", "plugins/periapsis.py", "deploy/gunicorn.conf.py"):
        assert not _ignored(path, patterns), path


def test_the_build_copies_everything_the_package_build_needs(instructions):
    project = tomllib.loads((REPO / "pyproject.toml").read_text("utf-8"))
    copied = {source.rstrip("/") for _, sources, _ in _copies(instructions) for source in sources}
    assert {"pyproject.toml", project["project"]["readme"]} <= copied
    for include in project["tool"]["setuptools"]["packages"]["find"]["include"]:
        assert include.rstrip("*") in copied, f"package {include} is not copied"
    install = [i for i in instructions if i.keyword == "RUN" and "pip install" in i.arguments]
    assert install, "nothing is installed"
    assert "-e " not in install[0].arguments and "--editable" not in install[0].arguments


def test_the_base_image_is_a_pinned_slim_python_of_the_suites_minor_version(instructions):
    args = {
        name: default
        for name, _, default in (
            i.arguments.partition("=") for i in instructions if i.keyword == "ARG" and i.stage < 0
        )
    }
    for stage in (i for i in instructions if i.keyword == "FROM"):
        image = stage.arguments.split()[0]
        if image.startswith("${"):
            image = args[image[2:-1]]
        match = re.fullmatch(r"python:(\d+)\.(\d+)\.(\d+)-slim-[a-z]+", image)
        assert match, f"{image}: pin the patch release and the Debian release of a slim image"
        assert tuple(map(int, match.groups()[:2])) == sys.version_info[:2]


def test_it_runs_as_a_fixed_numeric_non_root_user(instructions):
    [user] = final_stage(instructions, "USER")
    uid, _, gid = user.arguments.partition(":")
    assert uid.isdigit() and gid.isdigit(), "numeric, so runAsNonRoot can check it"
    assert int(uid) >= 1000 and int(gid) >= 1000
    created = " ".join(i.arguments for i in final_stage(instructions, "RUN"))
    assert f"--uid {uid}" in created and f"--gid {gid}" in created


def test_the_environment_matches_the_shared_interface(instructions):
    env = _env(instructions)
    assert env["BURNPROOF_BIND"] == "0.0.0.0:8080"
    assert env["BURNPROOF_AUTH"] == "bearer"  # authentication on by default in the container
    assert env["BURNPROOF_DRAIN_FILE"] == "/tmp/burnproof-draining"
    assert env["PROMETHEUS_MULTIPROC_DIR"].startswith("/tmp/")
    assert env["PYTHONDONTWRITEBYTECODE"] == "1"
    assert env["HOME"].startswith("/tmp")  # read-only root: nothing may write elsewhere
    [expose] = final_stage(instructions, "EXPOSE")
    assert expose.arguments == env["BURNPROOF_BIND"].rpartition(":")[2]


def test_the_command_is_gunicorn_with_the_copied_conf_and_an_importable_app(instructions):
    [cmd] = final_stage(instructions, "CMD")
    command = cmd.exec_form()
    assert command is not None, "exec form, so gunicorn is PID 1 and gets SIGTERM itself"
    assert command[:3] == ["gunicorn", "-c", "deploy/gunicorn.conf.py"]
    [workdir] = final_stage(instructions, "WORKDIR")
    destinations = {dest for _, _, dest in _copies(instructions)}
    assert f"{workdir.arguments}/{command[2]}" in destinations
    assert (REPO / command[2]).is_file()
    module, _, attribute = command[3].partition(":")
    app = getattr(importlib.import_module(module), attribute)
    assert callable(app) and app.name == "service.app"


def _healthcheck_code(instructions: list[Instruction]) -> str:
    [check] = final_stage(instructions, "HEALTHCHECK")
    flags, _, command = check.arguments.partition("CMD ")
    assert "--interval=" in flags and "--timeout=" in flags
    words = json.loads(command)
    assert words[:2] == ["python", "-c"]
    return words[2]


def test_the_healthcheck_asks_healthz_and_fails_when_nothing_answers(instructions, tmp_path):
    code = _healthcheck_code(instructions)
    assert "/healthz" in code
    env = gp.server_environment(tmp_path, gp.free_port(), 1, {})
    command = [sys.executable, "-c", code]
    refused = subprocess.run(command, env=env, capture_output=True, timeout=30)
    assert refused.returncode != 0
    with gp.running(tmp_path, workers=1) as server:
        env = gp.server_environment(tmp_path, server.port, 1, {})
        done = subprocess.run(command, env=env, capture_output=True, timeout=30)
        assert done.returncode == 0, done.stderr
