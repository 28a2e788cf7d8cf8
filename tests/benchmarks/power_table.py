"""Simulate the power table in service/stats/normality/power.py.

Power of each primary test against a gamma distribution with shape 4 (skewness 1,
excess kurtosis 1.5), the reference alternative the verdict uses to say how much a
non-rejection is worth at a given n. Seeded: the same command prints the same table.

    .venv/bin/python tests/benchmarks/power_table.py [replications]
"""

from __future__ import annotations

import sys

import numpy as np

from service.stats.forms import Sample
from service.stats.normality.battery import run_tests

N_GRID = (8, 10, 15, 20, 25, 30, 40, 50, 60, 70, 80, 100, 150, 200, 300)
ALPHAS = (0.01, 0.05, 0.10)
TESTS = ("shapiro_wilk", "anderson_darling", "dagostino_pearson")


def main(replications: int = 4000) -> None:
    rng = np.random.default_rng(20261202)
    table = {t: {a: [] for a in ALPHAS} for t in TESTS}
    for n in N_GRID:
        p = {t: np.empty(replications) for t in TESTS}
        for r in range(replications):
            sample = Sample(rng.gamma(4.0, size=n))
            results = run_tests(sample, alpha=0.05)
            for t in TESTS:
                p[t][r] = getattr(results, t).p_value
        for t in TESTS:
            for a in ALPHAS:
                table[t][a].append(round(float(np.mean(p[t] < a)), 3))
    print(f"N_GRID = {N_GRID}")
    print("POWER = {")
    for t in TESTS:
        print(f'    "{t}": {{')
        for a in ALPHAS:
            print(f"        {a}: {tuple(table[t][a])},")
        print("    },")
    print("}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 4000)
