"""Throughput and tail latency under load: shapegauge against the straightforward stack.

Both under the same gunicorn config (2 sync workers, one BLAS thread each) on
loopback; clients = 2 x workers; each run stops at a fixed request count or duration,
whichever comes first. A full diagnosis of n = 1 000 values per request.

    OPENBLAS_NUM_THREADS=1 .venv/bin/python tests/benchmarks/bench_load.py [seconds] [max_requests]

Writes tests/benchmarks/results/load.md.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import orjson

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from tests.benchmarks.loadgen import run_load  # noqa: E402
from tests.e2e.servers import start_gunicorn, stop  # noqa: E402

RESULTS = Path(__file__).resolve().parent / "results"


def main(seconds: float = 20.0, max_requests: int = 4000, n: int = 1000, write: bool = True) -> dict:
    RESULTS.mkdir(exist_ok=True)
    body = orjson.dumps({"values": np.random.default_rng(7).gamma(4.0, 2.0, n) + 10.0}, option=orjson.OPT_SERIALIZE_NUMPY)
    out = {}
    for name, app in (("shapegauge", "service:create_app()"), ("straightforward", "tests.benchmarks.straightforward:create_app()")):
        base, proc = start_gunicorn(RESULTS / f"load-{name}.log", app=app)
        port = int(base.rsplit(":", 1)[1])
        try:
            run_load(port, "/v1/diagnose", body, clients=4, max_requests=40, max_seconds=5)  # warm up
            out[name] = run_load(port, "/v1/diagnose", body, clients=4, max_requests=max_requests, max_seconds=seconds)
        finally:
            stop(proc)
        print(name, out[name].line(), flush=True)
    if write:
        lines = [f"Load: POST /v1/diagnose with n = {n}, 4 clients against 2 workers, at most {max_requests} requests or {seconds:g} s.", "",
                 "| stack | requests | failed | throughput /s | p50 ms | p95 ms | p99 ms |", "| --- | ---: | ---: | ---: | ---: | ---: | ---: |"]
        for name, r in out.items():
            lines.append(f"| {name} | {r.requests} | {r.failures} | {r.throughput:.1f} | {1e3 * r.percentile(50):.1f} | "
                         f"{1e3 * r.percentile(95):.1f} | {1e3 * r.percentile(99):.1f} |")
        (RESULTS / "load.md").write_text("\n".join(lines) + "\n")
    return out


if __name__ == "__main__":
    args = [float(a) for a in sys.argv[1:3]]
    main(*(args[:1] or [20.0]), *([int(args[1])] if len(args) > 1 else []))
