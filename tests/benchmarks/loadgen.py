"""A bounded load generator for loopback servers: a fixed number of client threads
sending until a request count or a deadline is reached, whichever comes first. It
stops by itself and only talks to 127.0.0.1. Each request has its own connection
(``Connection: close``): gunicorn's sync workers close the connection after every
response, and a client that reuses it races that close.

Used by the load benchmark (tests/benchmarks/bench_load.py) and the smoke test in the
suite (tests/e2e/test_gunicorn.py).
"""

from __future__ import annotations

import http.client
import statistics
import threading
import time
from dataclasses import dataclass


@dataclass(frozen=True)
class LoadResult:
    requests: int
    failures: int
    seconds: float
    latencies: tuple[float, ...]

    @property
    def throughput(self) -> float:
        return self.requests / self.seconds if self.seconds else 0.0

    def percentile(self, q: float) -> float:
        ordered = sorted(self.latencies)
        if not ordered:
            return float("nan")
        k = min(len(ordered) - 1, max(0, round(q / 100 * (len(ordered) - 1))))
        return ordered[k]

    def line(self) -> str:
        ms = [1000 * self.percentile(q) for q in (50, 95, 99)]
        return (f"{self.requests} requests, {self.failures} failed, {self.throughput:.1f}/s, "
                f"p50 {ms[0]:.1f} ms, p95 {ms[1]:.1f} ms, p99 {ms[2]:.1f} ms")


def run_load(port: int, path: str, body: bytes, *, clients: int, max_requests: int, max_seconds: float,
             content_type: str = "application/json") -> LoadResult:
    lock = threading.Lock()
    sent = [0]
    failures = [0]
    latencies: list[float] = []
    deadline = time.monotonic() + max_seconds

    def client() -> None:
        while time.monotonic() < deadline:
            with lock:
                if sent[0] >= max_requests:
                    return
                sent[0] += 1
            t0 = time.perf_counter()
            conn = http.client.HTTPConnection("127.0.0.1", port, timeout=30)
            try:
                conn.request("POST", path, body=body, headers={"Content-Type": content_type, "Connection": "close"})
                response = conn.getresponse()
                response.read()
                ok = response.status == 200
            except (OSError, http.client.HTTPException):
                ok = False
            finally:
                conn.close()
            elapsed = time.perf_counter() - t0
            with lock:
                latencies.append(elapsed)
                failures[0] += not ok

    start = time.monotonic()
    threads = [threading.Thread(target=client, daemon=True) for _ in range(clients)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(max_seconds + 60)
    return LoadResult(len(latencies), failures[0], time.monotonic() - start, tuple(latencies))


def median(values) -> float:
    return statistics.median(values)
