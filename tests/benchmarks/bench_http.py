"""End-to-end latency under gunicorn: shapegauge against the straightforward stack.

Both run with the same gunicorn config (2 sync workers, one BLAS thread each) on
loopback ports. For each n and endpoint the two servers get the same body, requests
alternating (A/B interleaved), one at a time; medians are reported with their ratio,
beside the floor: an endpoint that only parses the body with orjson and sorts the
values. After the run, the peak resident memory (VmHWM) of every shapegauge worker is
read from /proc. Bounded in requests and time; loopback only.

    OPENBLAS_NUM_THREADS=1 .venv/bin/python tests/benchmarks/bench_http.py [--quick]

Writes tests/benchmarks/results/http.json, http.md and cost_vs_n.svg.
"""

from __future__ import annotations

import http.client
import json
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import orjson

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from tests.e2e.servers import start_gunicorn, stop, worker_status  # noqa: E402

RESULTS = Path(__file__).resolve().parent / "results"
ENDPOINTS = ("describe", "normality", "modality", "diagnose")
SIZES = (100, 1_000, 10_000, 100_000, 1_000_000)
REPEATS = {100: 15, 1_000: 15, 10_000: 11, 100_000: 7, 1_000_000: 3}
BUDGET_SECONDS = 900


def post(port: int, path: str, body: bytes) -> float:
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=300)
    t0 = time.perf_counter()
    conn.request("POST", path, body=body, headers={"Content-Type": "application/json", "Connection": "close"})
    response = conn.getresponse()
    response.read()
    elapsed = time.perf_counter() - t0
    conn.close()
    if response.status != 200:
        raise RuntimeError(f"{path} answered {response.status}")
    return elapsed


def main(quick: bool = False) -> dict:
    RESULTS.mkdir(exist_ok=True)
    sizes = (100, 1_000) if quick else SIZES
    ours_base, ours = start_gunicorn(RESULTS / "ours.log")
    ref_base, ref = start_gunicorn(RESULTS / "straightforward.log",
                                   env={"GUNICORN_CMD_ARGS": ""}, app="tests.benchmarks.straightforward:create_app()")
    ours_port, ref_port = int(ours_base.rsplit(":", 1)[1]), int(ref_base.rsplit(":", 1)[1])
    rng = np.random.default_rng(2026)
    started = time.monotonic()
    rows = []
    try:
        for n in sizes:
            x = rng.gamma(4.0, 2.0, n) + 10.0
            body = orjson.dumps({"values": x}, option=orjson.OPT_SERIALIZE_NUMPY)
            repeats = 2 if quick else REPEATS[n]
            floor = [post(ref_port, "/floor", body) for _ in range(repeats)]
            for endpoint in ENDPOINTS:
                path = f"/v1/{endpoint}"
                post(ours_port, path, body), post(ref_port, path, body)  # warm up both
                a, b = [], []
                for _ in range(repeats):
                    a.append(post(ours_port, path, body))
                    b.append(post(ref_port, path, body))
                    if time.monotonic() - started > BUDGET_SECONDS:
                        break
                rows.append({"n": n, "endpoint": endpoint, "ours_ms": 1e3 * statistics.median(a),
                             "straightforward_ms": 1e3 * statistics.median(b), "floor_ms": 1e3 * statistics.median(floor)})
                print(json.dumps(rows[-1]), flush=True)
        rss = list(worker_status(ours.pid, "VmHWM").values())
    finally:
        stop(ours)
        stop(ref)
    result = {"rows": rows, "peak_rss_mb_per_worker": [r / 2**20 for r in rss]}
    if not quick:
        (RESULTS / "http.json").write_text(json.dumps(result, indent=1))
        (RESULTS / "http.md").write_text(markdown(result))
        plot(result, RESULTS / "cost_vs_n.svg")
    return result


def markdown(result: dict) -> str:
    lines = ["| n | endpoint | shapegauge ms | straightforward ms | ratio | floor ms (parse + sort) | shapegauge / floor |",
             "| ---: | --- | ---: | ---: | ---: | ---: | ---: |"]
    for r in result["rows"]:
        lines.append(f"| {r['n']:,} | {r['endpoint']} | {r['ours_ms']:.1f} | {r['straightforward_ms']:.1f} | "
                     f"{r['straightforward_ms'] / r['ours_ms']:.1f}x | {r['floor_ms']:.1f} | {r['ours_ms'] / r['floor_ms']:.1f} |")
    peaks = ", ".join(f"{p:.0f}" for p in result["peak_rss_mb_per_worker"])
    lines.append("")
    lines.append(f"Peak resident memory per shapegauge worker after the run (VmHWM): {peaks} MB.")
    return "\n".join(lines) + "\n"


def plot(result: dict, path: Path) -> None:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    matplotlib.rcParams.update({"svg.hashsalt": "shapegauge", "svg.fonttype": "none"})
    fig, ax = plt.subplots(figsize=(6.4, 4.0))
    rows = [r for r in result["rows"] if r["endpoint"] == "diagnose"]
    n = [r["n"] for r in rows]
    ax.loglog(n, [r["ours_ms"] for r in rows], "o-", label="shapegauge diagnose")
    ax.loglog(n, [r["straightforward_ms"] for r in rows], "s--", label="straightforward stack")
    ax.loglog(n, [r["floor_ms"] for r in rows], "^:", label="floor: parse + sort")
    ref = np.array(n, dtype=float)
    scale = rows[-1]["ours_ms"] / (ref[-1] * np.log(ref[-1]))
    ax.loglog(ref, scale * ref * np.log(ref), color="0.6", linewidth=0.8, label="n log n (through the last point)")
    ax.set_xlabel("values per request (n)")
    ax.set_ylabel("median latency, ms (2 gunicorn workers, loopback)")
    ax.set_title("Cost of a full diagnosis against n")
    ax.legend(frameon=False, fontsize=8)
    fig.tight_layout()
    fig.savefig(path, format="svg", metadata={"Date": None})
    plt.close(fig)


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
