"""End to end through a real gunicorn process on 127.0.0.1, started and stopped here."""

from __future__ import annotations

import json
import signal
import subprocess
import sys
import urllib.error
import urllib.request

import pytest

from .servers import ROOT, start_gunicorn, worker_status
pytestmark = pytest.mark.e2e


def _request(url: str, body: bytes | None = None, content_type: str = "application/json"):
    req = urllib.request.Request(url, data=body, headers={"Content-Type": content_type} if body else {})
    try:
        with urllib.request.urlopen(req, timeout=10) as r:
            return r.status, r.headers.get_content_type(), r.read()
    except urllib.error.HTTPError as e:
        return e.code, e.headers.get_content_type(), e.read()


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    try:
        base, proc = start_gunicorn(tmp_path_factory.mktemp("gunicorn") / "server.log")
    except RuntimeError as e:
        pytest.fail(str(e))
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


def _metric(base: str, name: str, labels: str) -> float:
    _, _, text = _request(base + "/metrics")
    for line in text.decode().splitlines():
        if line.startswith(f"{name}{{{labels}}} "):
            return float(line.rsplit(" ", 1)[1])
    return 0.0


def test_metrics_add_up_across_workers(server):
    base, _ = server
    labels = 'endpoint="/v1/describe",method="POST",status="200"'
    before = _metric(base, "shapegauge_requests_total", labels)
    for _ in range(30):  # new connections each time, so both workers answer some
        assert _request(base + "/v1/describe", b'{"values": [1, 2, 4, 8, 9]}')[0] == 200
    assert _metric(base, "shapegauge_requests_total", labels) - before == 30


def test_bounded_load_smoke(server):
    """A short loopback load (clients = 2 x workers, at most 300 requests or 8 s): no
    failed request, and no worker's memory grows by more than 50 MB. The full load test
    is tests/benchmarks/bench_load.py."""
    from tests.benchmarks.loadgen import run_load

    base, proc = server
    port = int(base.rsplit(":", 1)[1])
    body = (ROOT / "service" / "api" / "examples" / "demo.json").read_bytes()
    run_load(port, "/v1/diagnose", body, clients=4, max_requests=40, max_seconds=5)  # warm up
    before = worker_status(proc.pid, "VmRSS")
    result = run_load(port, "/v1/diagnose", body, clients=4, max_requests=300, max_seconds=8)
    after = worker_status(proc.pid, "VmRSS")
    print("load smoke:", result.line())
    assert result.failures == 0 and result.requests > 0
    for pid, rss in after.items():
        assert rss - before.get(pid, rss) < 50 * 2**20, (pid, before, after)


def test_sigterm_stops_cleanly(server):
    """Runs last (it stops the server); it posts its own diagnosis, so it does not lean on
    the tests before it."""
    base, proc = server
    body = (ROOT / "service" / "api" / "examples" / "demo.json").read_bytes()
    assert _request(base + "/v1/diagnose", body)[0] == 200
    proc.send_signal(signal.SIGTERM)
    assert proc.wait(30) == 0
    proc.log.seek(0)
    lines = [json.loads(line) for line in proc.log.read().decode().splitlines() if line.startswith("{")]
    diagnoses = [line for line in lines if line["path"] == "/v1/diagnose"]
    assert diagnoses and all(line["status"] == 200 and line["n"] == "58" and line["request_id"] for line in diagnoses)
