"""The CPU-only image, built and run for real with podman, then cleaned up.

Facts of the machines this runs on (checked when this test was written): no Docker
engine and no reachable container registry, but as root Debian's podman builds and runs
images with the runc runtime, explicit ulimits and its own storage folders. The base
image is made locally by debootstrap from the Debian mirror apt is configured with, and
cached between runs; pip inside the build reaches the package registry through the
host's CA bundle, mounted for the build only (never copied into the image).

Skipped only where no container engine can run (not root, no apt to install one, or the
engine refuses to start a container).
"""

from __future__ import annotations

import json
import os
import re
import resource
import shutil
import subprocess
import time
import urllib.request
from pathlib import Path

import pytest

from .servers import ROOT, free_port

CACHE = Path(os.environ.get("XDG_CACHE_HOME", Path.home() / ".cache")) / "shapegauge"
BASE_TAR = CACHE / "base-bookworm.tar"
CA_BUNDLE = Path("/etc/ssl/certs/ca-certificates.crt")
pytestmark = [pytest.mark.e2e, pytest.mark.container]


def _run(cmd, timeout=900, **kw):
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, **kw)


def _ensure_tools() -> str | None:
    """Install podman, runc and debootstrap when missing; the reason to skip, or None."""
    if os.name != "posix" or os.geteuid() != 0:
        return "needs root to run podman with its own storage"
    wanted = ["podman", "runc", "debootstrap"]
    if all(shutil.which(t) for t in wanted):
        return None
    if not shutil.which("apt-get"):
        return "podman is missing and there is no apt-get to install it"
    env = {**os.environ, "DEBIAN_FRONTEND": "noninteractive"}
    _run(["apt-get", "update", "-q"], env=env)
    done = _run(["apt-get", "install", "-y", "-q", "podman", "runc", "debootstrap"], env=env)
    if done.returncode != 0 or not all(shutil.which(t) for t in wanted):
        return f"could not install podman: {done.stderr[-500:]}"
    return None


def _debian_mirror() -> str:
    """The mirror apt already uses (read from its sources, never written down here)."""
    for path in [Path("/etc/apt/sources.list"), *sorted(Path("/etc/apt/sources.list.d").glob("*"))]:
        if not path.is_file() or path.suffix not in ("", ".list", ".sources"):
            continue
        text = path.read_text()
        for match in re.finditer(r"^URIs:\s*(\S+)|^deb\s+(?:\[[^\]]*\]\s+)?(\S+)", text, re.M):
            uri = match.group(1) or match.group(2)
            if "security" not in uri and "debian" in uri:
                return uri
    raise RuntimeError("no Debian mirror in apt's sources")


@pytest.fixture(scope="module")
def podman(tmp_path_factory):
    reason = _ensure_tools()
    if reason:
        pytest.skip(reason)
    work = tmp_path_factory.mktemp("podman")
    hard_nofile = resource.getrlimit(resource.RLIMIT_NOFILE)[1]
    hard_nproc = resource.getrlimit(resource.RLIMIT_NPROC)[1]
    nofile = 4096 if hard_nofile == resource.RLIM_INFINITY else min(4096, hard_nofile)
    nproc = 4096 if hard_nproc == resource.RLIM_INFINITY else min(4096, hard_nproc)
    conf = work / "containers.conf"
    conf.write_text(
        "[containers]\n"
        f'default_ulimits = ["nofile={nofile}:{nofile}", "nproc={nproc}:{nproc}"]\n'
        "[engine]\n"
        'runtime = "runc"\ncgroup_manager = "cgroupfs"\nevents_logger = "file"\n'
    )
    base = ["podman", "--root", str(work / "root"), "--runroot", str(work / "runroot"), "--storage-driver", "vfs"]
    env = {**os.environ, "CONTAINERS_CONF": str(conf)}

    def pod(*args, timeout=900, check=True):
        done = _run([*base, *args], timeout=timeout, env=env)
        if check and done.returncode != 0:
            raise AssertionError(f"podman {' '.join(args[:3])} failed:\n{done.stdout[-2000:]}\n{done.stderr[-3000:]}")
        return done

    yield pod
    pod("system", "reset", "--force", check=False, timeout=300)
    shutil.rmtree(work, ignore_errors=True)


@pytest.fixture(scope="module")
def image(podman):
    if not BASE_TAR.exists():
        CACHE.mkdir(parents=True, exist_ok=True)
        rootfs = CACHE / "rootfs-build"
        shutil.rmtree(rootfs, ignore_errors=True)
        done = _run(["debootstrap", "--variant=minbase", "--include=python3,python3-venv,ca-certificates",
                     "bookworm", str(rootfs), _debian_mirror()], timeout=1200)
        assert done.returncode == 0, done.stderr[-3000:]
        partial = BASE_TAR.with_suffix(".partial")  # renamed once whole: a cut run leaves no broken cache
        done = _run(["tar", "-C", str(rootfs), "-cf", str(partial), "."], timeout=600)
        assert done.returncode == 0, done.stderr
        os.replace(partial, BASE_TAR)
        shutil.rmtree(rootfs, ignore_errors=True)
    podman("import", str(BASE_TAR), "localhost/shapegauge-base:bookworm")
    podman(
        "build", "--format", "docker", "-f", str(ROOT / "docker" / "Dockerfile"),
        "--build-arg", "BASE_IMAGE=localhost/shapegauge-base:bookworm",
        "-v", f"{CA_BUNDLE}:{CA_BUNDLE}:ro",
        "-t", "localhost/shapegauge:test", str(ROOT),
        timeout=1500,
    )
    return "localhost/shapegauge:test"


def _get(url: str, body: bytes | None = None):
    req = urllib.request.Request(url, data=body, headers={"Content-Type": "application/json"} if body else {})
    with urllib.request.urlopen(req, timeout=10) as r:
        return r.status, r.read()


def test_image_runs_diagnoses_and_stops_cleanly(podman, image):
    port = free_port()
    started = podman("run", "-d", "--name", "shapegauge-test", "-p", f"127.0.0.1:{port}:8080",
                     "--read-only", "--tmpfs", "/tmp", image, check=False)
    if started.returncode != 0 and "permission" in started.stderr.lower():
        pytest.skip(f"the container engine cannot start containers here: {started.stderr[-300:]}")
    assert started.returncode == 0, started.stderr
    try:
        deadline = time.monotonic() + 60
        while True:
            try:
                status, body = _get(f"http://127.0.0.1:{port}/healthz")
                if status == 200:
                    break
            except OSError:
                pass
            assert time.monotonic() < deadline, podman("logs", "shapegauge-test", check=False).stderr[-2000:]
            time.sleep(0.5)
        demo = (ROOT / "service" / "api" / "examples" / "demo.json").read_bytes()
        status, body = _get(f"http://127.0.0.1:{port}/v1/diagnose", demo)
        doc = json.loads(body)
        assert status == 200 and doc["verdict"]["label"] == "skewed" and doc["input"]["missing"] == 2
        assert podman("healthcheck", "run", "shapegauge-test", check=False).returncode == 0
        user = podman("exec", "shapegauge-test", "python3", "-c", "import os; print(os.getuid())").stdout.strip()
        assert user == "10001"
        # SIGTERM: gunicorn finishes what is in flight and exits 0.
        podman("stop", "--time", "25", "shapegauge-test")
        code = podman("inspect", "shapegauge-test", "--format", "{{.State.ExitCode}}").stdout.strip()
        assert code == "0"
        logs = podman("logs", "shapegauge-test").stdout
        access = [json.loads(line) for line in logs.splitlines() if line.startswith("{")]
        diag = next(line for line in access if line["path"] == "/v1/diagnose")
        assert diag["status"] == 200 and diag["n"] == "58" and diag["request_id"]
    finally:
        podman("rm", "--force", "shapegauge-test", check=False)


def test_image_has_no_compiler_and_no_pip_cache(podman, image):
    listing = podman("run", "--rm", "--entrypoint", "sh", image, "-c",
                     "command -v gcc cc || true; ls /root/.cache/pip 2>/dev/null || true", check=False)
    assert listing.stdout.strip() == ""
