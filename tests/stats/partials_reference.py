"""Shard partials computed the way a caller's batch engine would, as the tests' reference.

A batch engine reduces one shard in two passes: the mean first, then the sums of the
powers of the deviations from it. ``partials_of`` does exactly that, independently of
``service.stats`` (it imports nothing from it):

* ``mean = fsum(x) / n`` -- the sum correctly rounded (``math.fsum``, Shewchuk's
  algorithm), then one division, so the mean is within one unit in the last place of
  the exact mean even when the values share a large offset;
* ``mk = fsum((x - mean)**k)`` for k = 2, 3, 4, the definition of the partials in the
  design contract ("mk is the sum of (x - mean)^k over the shard");
* ``min`` and ``max`` of the shard.

Its own tests (``tests/stats/test_partials.py::TestPartialsReference``) check it against
exact rational arithmetic (``tests/stats/exact.py``) and against ``scipy.stats.moment``.
"""

from __future__ import annotations

import math

import numpy as np


def partials_of(values) -> dict:
    """``{n, mean, m2, m3, m4, min, max}`` of one shard, as plain Python numbers (JSON-ready)."""
    x = np.asarray(values, dtype=np.float64)
    if x.ndim != 1 or x.size == 0:
        raise ValueError("partials_of needs a non-empty one-dimensional array")
    n = int(x.size)
    mean = math.fsum(x.tolist()) / n
    d = x - mean
    d2 = d * d
    return {
        "n": n,
        "mean": mean,
        "m2": math.fsum(d2.tolist()),
        "m3": math.fsum((d2 * d).tolist()),
        "m4": math.fsum((d2 * d2).tolist()),
        "min": float(x.min()),
        "max": float(x.max()),
    }


def as_request(parts: list[dict], *, with_extremes: bool = True) -> list[dict]:
    """The partials as the API's ``partials`` array (optionally without min and max)."""
    if with_extremes:
        return [dict(p) for p in parts]
    return [{k: v for k, v in p.items() if k not in ("min", "max")} for p in parts]
