"""A tiny run of the benchmarks, so they keep working (their numbers are not judged
here: speed targets live in tests/benchmarks/ and the README, never in pass/fail)."""

from __future__ import annotations

import pytest

from tests.benchmarks import bench_http, bench_load

pytestmark = pytest.mark.e2e


def test_http_benchmark_runs():
    result = bench_http.main(quick=True)
    assert {r["endpoint"] for r in result["rows"]} == set(bench_http.ENDPOINTS)
    assert all(r["ours_ms"] > 0 and r["straightforward_ms"] > 0 for r in result["rows"])
    assert result["peak_rss_mb_per_worker"]


def test_load_benchmark_runs():
    out = bench_load.main(seconds=3, max_requests=60, write=False)
    assert out["shapegauge"].failures == 0 and out["straightforward"].failures == 0
