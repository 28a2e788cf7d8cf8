"""Simulate the power table in service/stats/normality/power.py.

Power of every primary-capable test against a gamma distribution with shape 4 (skewness
1, excess kurtosis 1.5), the reference alternative the verdict uses to say how much a
non-rejection is worth at a given n and alpha. The chi-square test sees each sample as
a histogram with numpy's "auto" bins. Seeded: the same command prints the same table.

    .venv/bin/python tests/benchmarks/power_table.py [replications] > /tmp/power.txt
"""

from __future__ import annotations

import sys

import numpy as np

from service.stats.forms import Sample
from service.stats.histogram import check_histogram
from service.stats.normality.battery import TEST_NAMES, run_battery
from service.stats.profile import profile_of_histogram, profile_of_sample

N_GRID = (8, 10, 15, 20, 25, 30, 40, 50, 60, 70, 80, 100, 150, 200, 300, 500, 1000)
ALPHAS = (0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.2)


def main(replications: int = 4000) -> None:
    rng = np.random.default_rng(20261202)
    table = {t: {a: [] for a in ALPHAS} for t in TEST_NAMES}
    for n in N_GRID:
        p = {t: np.full(replications, np.nan) for t in TEST_NAMES}
        for r in range(replications):
            x = rng.gamma(4.0, size=n)
            for name, result in run_battery(profile_of_sample(Sample(x)), 0.05).as_dict().items():
                if result.applicable:
                    p[name][r] = result.p_value
            counts, edges = np.histogram(x, bins="auto")
            chi = run_battery(profile_of_histogram(check_histogram(edges, counts)), 0.05).chi_square
            if chi.applicable:
                p["chi_square"][r] = chi.p_value
        for t in TEST_NAMES:
            for a in ALPHAS:
                # A test that does not apply at this n detects nothing: counts as no rejection.
                table[t][a].append(round(float(np.mean(np.nan_to_num(p[t], nan=1.0) < a)), 3))
        print(f"# n={n} done", file=sys.stderr)
    print(f"N_GRID = {N_GRID}")
    print("POWER = {")
    for t in TEST_NAMES:
        print(f'    "{t}": {{')
        for a in ALPHAS:
            print(f"        {a}: {tuple(table[t][a])},")
        print("    },")
    print("}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 4000)
