"""Start and stop a real gunicorn process on 127.0.0.1 for end-to-end tests."""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_gunicorn(log_path: Path, workers: int = 2, env: dict | None = None,
                   app: str = "service:create_app()") -> tuple[str, subprocess.Popen]:
    """gunicorn with the project's config on a free loopback port, its log in a file
    (a pipe nobody reads would fill and block the access log)."""
    port = free_port()
    full_env = {**os.environ, "SHAPEGAUGE_BIND": f"127.0.0.1:{port}", "SHAPEGAUGE_WORKERS": str(workers),
                "OPENBLAS_NUM_THREADS": "1", **(env or {})}
    full_env.pop("PROMETHEUS_MULTIPROC_DIR", None)  # each server gets its own
    log = open(log_path, "w+b")
    gunicorn = Path(sys.executable).with_name("gunicorn")
    proc = subprocess.Popen([str(gunicorn), "-c", str(ROOT / "docker" / "gunicorn.conf.py"), app],
                            cwd=ROOT, env=full_env, stdout=log, stderr=subprocess.STDOUT)
    proc.log = log
    base = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 30
    while True:
        try:
            with urllib.request.urlopen(base + "/healthz", timeout=2) as r:
                if r.status == 200:
                    return base, proc
        except OSError:
            pass
        if proc.poll() is not None or time.monotonic() > deadline:
            proc.kill()
            log.seek(0)
            raise RuntimeError("gunicorn did not start:\n" + log.read().decode(errors="replace"))
        time.sleep(0.2)


def stop(proc: subprocess.Popen) -> None:
    if proc.poll() is None:
        proc.terminate()
        try:
            proc.wait(20)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait(10)


def worker_status(master: int, field: str) -> dict[int, int]:
    """A ``/proc/<pid>/status`` memory field (``VmRSS``, ``VmHWM``) in bytes for each of
    gunicorn's workers."""
    children = Path(f"/proc/{master}/task/{master}/children").read_text().split()
    out = {}
    for pid in map(int, children):
        for line in Path(f"/proc/{pid}/status").read_text().splitlines():
            if line.startswith(field + ":"):
                out[pid] = int(line.split()[1]) * 1024
    return out
