"""End to end through a real gunicorn process on 127.0.0.1, started and stopped here."""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
pytestmark = pytest.mark.e2e


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _request(url: str, body: bytes | None = None, content_type: str = "application/json"):
    req = urllib.request.Request(url, data=body, headers={"Content-Type": content_type} if body else {})
    try:
        with urllib.request.urlopen(req, timeout=10) as r:
            return r.status, r.headers.get_content_type(), r.read()
    except urllib.error.HTTPError as e:
        return e.code, e.headers.get_content_type(), e.read()


@pytest.fixture(scope="module")
def server():
    port = _free_port()
    env = {**os.environ, "SHAPEGAUGE_BIND": f"127.0.0.1:{port}", "SHAPEGAUGE_WORKERS": "2"}
    gunicorn = Path(sys.executable).with_name("gunicorn")
    proc = subprocess.Popen(
        [str(gunicorn), "-c", str(ROOT / "docker" / "gunicorn.conf.py"), "service:create_app()"],
        cwd=ROOT, env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
    )
    base = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 30
    while True:
        try:
            if _request(base + "/healthz")[0] == 200:
                break
        except OSError:
            pass
        if proc.poll() is not None or time.monotonic() > deadline:
            proc.kill()
            pytest.fail("gunicorn did not start:\n" + proc.stdout.read().decode(errors="replace"))
        time.sleep(0.2)
    yield base, proc
    if proc.poll() is None:
        proc.kill()
        proc.wait(10)


def test_demo_diagnosis(server):
    base, _ = server
    body = (ROOT / "service" / "api" / "examples" / "demo.json").read_bytes()
    status, ctype, data = _request(base + "/v1/normality", body)
    assert (status, ctype) == (200, "application/json")
    doc = json.loads(data)
    assert doc["input"]["missing"] == 2
    assert doc["verdict"]["label"] == "not_normal"


def test_csv_body_and_problem(server):
    base, _ = server
    status, _, data = _request(base + "/v1/describe", b"x\n1\n2\n4\n8\n", "text/csv")
    assert status == 200 and json.loads(data)["input"]["label"] == "x"
    status, ctype, data = _request(base + "/v1/describe", b'{"values": [1, "a"]}')
    assert (status, ctype) == (422, "application/problem+json")
    assert json.loads(data)["errors"][0]["pointer"] == "/values/1"


def test_column_client_example(server, tmp_path):
    """The README's macro-style client posts a column with blanks and error cells and
    reads the flat CSV answer back."""
    base, _ = server
    cells = tmp_path / "cells.csv"
    cells.write_text("cooling_h\n11.2\n\n12.9\n#N/A\n10.4\n13.8\n9.9\n12.1\n10.8\n11.7\n")
    client = ROOT / "openapi" / "examples" / "column_client.py"
    out = subprocess.run(
        [sys.executable, str(client), str(cells), "--url", base, "--keys", "input.n", "input.missing", "input.label", "verdict.label"],
        capture_output=True, text=True, timeout=60, check=True,
    ).stdout
    rows = dict(line.split(",", 1) for line in out.splitlines())
    assert rows == {"input.n": "8", "input.missing": "2", "input.label": "cooling_h", "verdict.label": "inconclusive"}


def test_sigterm_stops_cleanly(server):
    _, proc = server
    proc.send_signal(signal.SIGTERM)
    assert proc.wait(30) == 0
