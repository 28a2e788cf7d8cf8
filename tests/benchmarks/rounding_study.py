"""How coarse rounding must be before normality tests reject normal data for it.

Normal samples rounded to a step u (in sd units) at several n; the primary test's
rejection rate at the 5% level. The "rounded-data" warning (service/stats/profile.py)
fires from u/sd * sqrt(n) >= 1.5, where this study first sees rates near 10%.

    .venv/bin/python tests/benchmarks/rounding_study.py
"""

from __future__ import annotations

import numpy as np

from service.stats.forms import Sample
from service.stats.normality.battery import run_tests


def main() -> None:
    rng = np.random.default_rng(11)
    print("n       u/sd   u*sqrt(n)  rejection rate at 5%")
    for n, reps in ((100, 400), (500, 400), (2000, 300), (5000, 200), (20000, 100), (100000, 40)):
        for u in (0.01, 0.05, 0.1, 0.2, 0.5):
            rejected = 0
            for _ in range(reps):
                tests = run_tests(Sample(np.round(rng.normal(size=n) / u) * u), 0.05)
                primary = tests.shapiro_wilk if n <= 5000 else tests.anderson_darling
                rejected += primary.p_value < 0.05
            print(f"{n:<7} {u:<6} {u * np.sqrt(n):<10.2f} {rejected / reps:.3f}")


if __name__ == "__main__":
    main()
