"""deploy/k8s/*.yaml: valid against the bundled Kubernetes schemas, and consistent with the app.

Validation is offline, with the JSON schemas that the ``kubernetes-validate`` package ships
(strict mode: an unknown or misspelt field is an error). The rest checks what a schema
cannot: the probes hit routes the app serves, the ConfigMap's profile is the repository's
and loads, the grace period outlasts the drain, the pod is locked down, the selectors meet.
"""

from __future__ import annotations

import copy
import hashlib
import re
from pathlib import Path

import pytest
import yaml
from kubernetes_validate import utils as kv

from service.app import create_app
from service.engine import build_engine
from service.engine.profiles import load_profile_dir, load_profile_text
from tests.deploy.dockerfile_parse import final_stage, parse
from tests.deploy.gunicorn_process import REPO, load_conf

K8S = REPO / "deploy" / "k8s"
PROFILE_FILE = REPO / "deploy" / "profiles" / "ops-conservative.toml"
KUBERNETES_VERSION = "1.37.0"  # the newest schemas kubernetes-validate 1.37.0 bundles
EXAMPLE_TOKEN = "example-token-do-not-use"
MANIFESTS = ("deployment", "service", "hpa", "pdb", "configmap", "secret")


def _documents() -> list[tuple[str, dict]]:
    found = []
    for stem in MANIFESTS:
        path = K8S / f"{stem}.yaml"
        for document in yaml.safe_load_all(path.read_text("utf-8")):
            if document is not None:
                found.append((path.name, document))
    return found


DOCUMENTS = _documents()


def _one(kind: str, name: str | None = None) -> dict:
    [document] = [
        d
        for _, d in DOCUMENTS
        if d["kind"] == kind and (name is None or d["metadata"]["name"] == name)
    ]
    return document


@pytest.fixture(scope="module")
def deployment() -> dict:
    return _one("Deployment")


@pytest.fixture(scope="module")
def pod(deployment) -> dict:
    return deployment["spec"]["template"]["spec"]


@pytest.fixture(scope="module")
def container(pod) -> dict:
    [only] = pod["containers"]
    return only


@pytest.fixture(scope="module")
def env(container) -> dict[str, str]:
    return {item["name"]: item["value"] for item in container["env"]}


@pytest.fixture(scope="module")
def mounts(container, pod) -> dict[str, dict]:
    """mountPath -> the volume mounted there."""
    volumes = {volume["name"]: volume for volume in pod["volumes"]}
    return {mount["mountPath"]: volumes[mount["name"]] for mount in container["volumeMounts"]}


@pytest.fixture(scope="module")
def conf() -> dict:
    return load_conf()


def test_every_file_in_deploy_k8s_is_checked():
    assert sorted(p.stem for p in K8S.glob("*.yaml")) == sorted(MANIFESTS)
    kinds = sorted(d["kind"] for _, d in DOCUMENTS)
    expected = ["ConfigMap", "ConfigMap", "Deployment", "HorizontalPodAutoscaler"]
    assert kinds == [*expected, "PodDisruptionBudget", "Secret", "Service"]


@pytest.mark.parametrize(
    ("filename", "document"),
    DOCUMENTS,
    ids=[f"{name}:{doc['kind']}/{doc['metadata']['name']}" for name, doc in DOCUMENTS],
)
def test_valid_against_the_bundled_schemas_in_strict_mode(filename, document):
    assert kv.validate(document, KUBERNETES_VERSION, strict=True) == "1.37"


def test_strict_mode_refuses_an_unknown_field(deployment):
    misspelt = copy.deepcopy(deployment)
    misspelt["spec"]["template"]["spec"]["containers"][0]["readinesProbe"] = {}
    with pytest.raises(kv.ValidationError):
        kv.validate(misspelt, KUBERNETES_VERSION, strict=True)


# --- the pod and the app ----------------------------------------------------------------


def test_probes_hit_routes_the_app_serves(container, monkeypatch):
    for name in ("BURNPROOF_AUTH", "BURNPROOF_DRAIN_FILE", "BURNPROOF_PROFILE_DIR"):
        monkeypatch.delenv(name, raising=False)
    client = create_app({"TESTING": True}, engine=build_engine()).test_client()
    ports = {port["name"]: port["containerPort"] for port in container["ports"]}
    paths = {}
    for probe in ("startupProbe", "livenessProbe", "readinessProbe"):
        action = container[probe]["httpGet"]
        assert action["port"] in ports, f"{probe} names no port of the container"
        paths[probe] = action["path"]
        assert client.get(action["path"]).status_code == 200
    assert paths == {
        "startupProbe": "/healthz",
        "livenessProbe": "/healthz",
        "readinessProbe": "/readyz",
    }


def test_liveness_tolerates_a_worker_busy_past_gunicorns_timeout(container, conf):
    probe = container["livenessProbe"]
    assert probe["periodSeconds"] * probe["failureThreshold"] > conf["timeout"]
    assert probe["timeoutSeconds"] < probe["periodSeconds"]


def test_grace_period_outlasts_the_prestop_pause_and_gunicorns_graceful_timeout(
    pod, container, conf, env
):
    command = container["lifecycle"]["preStop"]["exec"]["command"]
    assert command[:2] == ["/bin/sh", "-c"]
    match = re.fullmatch(r"touch (\S+) && sleep (\d+)", command[2])
    assert match, command
    drain_file, pause_s = match.group(1), int(match.group(2))
    assert drain_file == env["BURNPROOF_DRAIN_FILE"]  # the file readyz looks for
    assert pause_s >= container["readinessProbe"]["periodSeconds"]  # readiness sees it first
    assert pod["terminationGracePeriodSeconds"] > pause_s + conf["graceful_timeout"]


def test_the_container_port_is_the_bind_address_and_the_service_targets_it(container, env):
    [port] = container["ports"]
    assert env["BURNPROOF_BIND"] == f"0.0.0.0:{port['containerPort']}"
    service = _one("Service")
    [exposed] = service["spec"]["ports"]
    assert exposed["targetPort"] in (port["name"], port["containerPort"])


def test_the_command_is_the_images(container):
    [cmd] = final_stage(parse((REPO / "deploy" / "Dockerfile").read_text("utf-8")), "CMD")
    assert container["args"] == cmd.exec_form()


def test_pod_security_is_restricted_and_the_root_read_only(pod, container):
    pod_security = pod["securityContext"]
    assert pod_security["runAsNonRoot"] is True
    assert pod_security["seccompProfile"] == {"type": "RuntimeDefault"}
    assert pod_security["runAsUser"] >= 1000 and pod_security["fsGroup"] >= 1000
    security = container["securityContext"]
    assert security["allowPrivilegeEscalation"] is False
    assert security["capabilities"] == {"drop": ["ALL"]}
    assert security["readOnlyRootFilesystem"] is True
    assert security.get("privileged", False) is False
    assert pod["automountServiceAccountToken"] is False


def test_the_pod_runs_as_the_images_user(pod):
    [user] = final_stage(parse((REPO / "deploy" / "Dockerfile").read_text("utf-8")), "USER")
    uid, _, gid = user.arguments.partition(":")
    security = pod["securityContext"]
    assert (security["runAsUser"], security["runAsGroup"]) == (int(uid), int(gid))


def test_the_writable_places_are_emptydirs(env, mounts):
    assert "emptyDir" in mounts["/tmp"]
    assert env["BURNPROOF_DRAIN_FILE"].startswith("/tmp/")
    metrics = mounts[env["PROMETHEUS_MULTIPROC_DIR"]]
    assert metrics["emptyDir"]["medium"] == "Memory"


def test_resources_are_requested_and_limited(container):
    resources = container["resources"]
    for kind in ("requests", "limits"):
        assert set(resources[kind]) == {"cpu", "memory"}


def test_auth_is_on_and_reads_the_mounted_secret(env, mounts):
    assert env["BURNPROOF_AUTH"] == "bearer"
    token_file = Path(env["BURNPROOF_TOKEN_FILE"])
    volume = mounts[str(token_file.parent)]
    secret = _one("Secret", volume["secret"]["secretName"])
    text = secret["stringData"][token_file.name]
    digests = [line.strip() for line in text.splitlines() if line.strip()]
    digests = [line for line in digests if not line.startswith("#")]
    assert digests and all(re.fullmatch(r"[0-9a-f]{64}", line) for line in digests)
    # the example is the digest of an obviously example token, and the file says to replace it
    assert digests == [hashlib.sha256(EXAMPLE_TOKEN.encode()).hexdigest()]
    source = (K8S / "secret.yaml").read_text("utf-8")
    assert "MUST REPLACE" in source and 'printf %s "$TOKEN" | sha256sum' in source


def test_settings_come_from_the_configmap(container, conf):
    [source] = container["envFrom"]
    settings = _one("ConfigMap", source["configMapRef"]["name"])["data"]
    assert all(isinstance(value, str) for value in settings.values())
    assert set(settings) <= {
        "BURNPROOF_LOG_LEVEL",
        "BURNPROOF_LOG_FORMAT",
        "BURNPROOF_METRICS_AUTH",
        "BURNPROOF_COMPUTE_BUDGET_S",
    }
    assert float(settings["BURNPROOF_COMPUTE_BUDGET_S"]) < conf["timeout"]


# --- the profile ------------------------------------------------------------------------


def test_the_configmap_carries_the_repositorys_profile_verbatim(env, mounts):
    volume = mounts[env["BURNPROOF_PROFILE_DIR"]]
    data = _one("ConfigMap", volume["configMap"]["name"])["data"]
    assert data == {PROFILE_FILE.name: PROFILE_FILE.read_text("utf-8")}


def test_the_configmaps_profile_loads_with_the_service_loader(env, mounts, tmp_path):
    volume = mounts[env["BURNPROOF_PROFILE_DIR"]]
    data = _one("ConfigMap", volume["configMap"]["name"])["data"]
    registry = build_engine().registry
    for key, text in data.items():  # as the kubelet lays the keys out: one file per key
        (tmp_path / key).write_text(text, "utf-8")
        profile = load_profile_text(text, key, registry)
        assert f"{profile.name}.toml" == key
    profiles, problems = load_profile_dir(str(tmp_path), registry)
    assert problems == []
    assert sorted(profiles) == ["ops-conservative"]
    rules = profiles["ops-conservative"]
    assert rules.thresholds["periapsis-floor"]["earth_min_altitude_km"] == 250.0
    assert [station.id for station in rules.stations] == ["tern-north", "tern-south"]


# --- scaling and disruption -------------------------------------------------------------


def test_selectors_meet_the_pod_labels(deployment):
    labels = deployment["spec"]["template"]["metadata"]["labels"]
    selector = deployment["spec"]["selector"]["matchLabels"]
    assert selector.items() <= labels.items()
    assert _one("Service")["spec"]["selector"].items() <= labels.items()
    assert _one("PodDisruptionBudget")["spec"]["selector"]["matchLabels"] == selector
    target = _one("HorizontalPodAutoscaler")["spec"]["scaleTargetRef"]
    assert (target["apiVersion"], target["kind"], target["name"]) == (
        deployment["apiVersion"],
        "Deployment",
        deployment["metadata"]["name"],
    )


def test_the_autoscaler_scales_on_cpu_and_waits_before_scaling_down(deployment):
    spec = _one("HorizontalPodAutoscaler")["spec"]
    [metric] = spec["metrics"]
    assert metric["resource"]["name"] == "cpu"
    assert metric["resource"]["target"]["type"] == "Utilization"
    assert 0 < metric["resource"]["target"]["averageUtilization"] <= 100
    assert spec["behavior"]["scaleDown"]["stabilizationWindowSeconds"] >= 60
    assert spec["minReplicas"] <= deployment["spec"]["replicas"] <= spec["maxReplicas"]


def test_the_disruption_budget_leaves_a_pod_serving_and_never_blocks_a_drain(deployment):
    budget = _one("PodDisruptionBudget")["spec"]
    minimum = _one("HorizontalPodAutoscaler")["spec"]["minReplicas"]
    assert 1 <= budget["minAvailable"] < minimum  # one pod may always be evicted
