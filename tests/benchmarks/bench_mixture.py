"""Mixture fitting, ours against scikit-learn's GaussianMixture, k = 1..4, same data.

Not part of the pass/fail suite. Both fit k = 1..4 and select by BIC. scikit-learn is
run twice: with its defaults (one start, tol 1e-3 per value) and with four starts and
tol 1e-6, the settings that reach the log-likelihood our fit reaches. Runs alternate
(A/B interleaved); medians of the repeats are reported, with each fit's summed
log-likelihood over k so that "faster" is compared at equal accuracy.

    OPENBLAS_NUM_THREADS=1 .venv/bin/python tests/benchmarks/bench_mixture.py [n] [repeats]
"""

from __future__ import annotations

import statistics
import sys
import time
import warnings

import numpy as np
from sklearn.exceptions import ConvergenceWarning
from sklearn.mixture import GaussianMixture

from service.stats.mixture import MixtureOptions, fit_mixtures, weighted_from_sorted


def ours(x: np.ndarray) -> tuple[float, list[float]]:
    s = np.sort(x)
    t0 = time.perf_counter()
    fit = fit_mixtures(weighted_from_sorted(s, s.mean(), s.std(ddof=1), MixtureOptions()))
    return time.perf_counter() - t0, [c.log_likelihood for c in fit.candidates]


def sklearn(x: np.ndarray, n_init: int, tol: float) -> tuple[float, list[float]]:
    col = x[:, None]
    t0 = time.perf_counter()
    lls = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConvergenceWarning)
        for k in range(1, 5):
            g = GaussianMixture(k, n_init=n_init, tol=tol, max_iter=1000, random_state=0).fit(col)
            lls.append(float(g.score(col) * x.size))
    return time.perf_counter() - t0, lls


def main(n: int = 100_000, repeats: int = 3) -> None:
    rng = np.random.default_rng(2026)
    cases = {
        "normal": rng.normal(10, 2, n),
        "two groups 4 sd apart": np.concatenate([rng.normal(0, 1, n * 6 // 10), rng.normal(4, 1, n - n * 6 // 10)]),
        "lognormal": rng.lognormal(0, 0.6, n),
    }
    print(f"n = {n}, medians of {repeats} interleaved runs")
    print(f"{'data':<24}{'ours s':>9}{'sk default s':>14}{'sk matched s':>14}{'ratio (matched)':>17}{'LL ours - sk':>14}")
    for name, x in cases.items():
        times = {"ours": [], "default": [], "matched": []}
        for _ in range(repeats):
            t, ll_ours = ours(x)
            times["ours"].append(t)
            t, _ = sklearn(x, 1, 1e-3)
            times["default"].append(t)
            t, ll_sk = sklearn(x, 4, 1e-6)
            times["matched"].append(t)
        med = {k: statistics.median(v) for k, v in times.items()}
        gap = sum(ll_ours) - sum(ll_sk)
        print(f"{name:<24}{med['ours']:>9.3f}{med['default']:>14.3f}{med['matched']:>14.3f}"
              f"{med['matched'] / med['ours']:>16.1f}x{gap:>14.1f}")


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
