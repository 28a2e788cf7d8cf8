"""How much a non-rejection is worth: the power of each primary test against a
reference alternative, by n.

The reference alternative is a gamma distribution with shape 4 (skewness 1, excess
kurtosis 1.5): a moderate, practically relevant skew. The table is our own simulation,
printed by ``tests/benchmarks/power_table.py`` (seeded, 4000 replications per cell,
so each entry has a standard error of at most 0.008); rerun it and paste its output
here after changing a test.
"""

from __future__ import annotations

import math

from ..results import Unavailable

# Power at least this high counts as adequate (common practice: 80% power).
ADEQUATE_POWER = 0.80
# From the n where the test detects the reference alternative this reliably, a
# rejection paired with small shape magnitudes can be called a minor departure.
HIGH_POWER = 0.99

# Printed by tests/benchmarks/power_table.py 4000 (seed 20261202).
N_GRID = (8, 10, 15, 20, 25, 30, 40, 50, 60, 70, 80, 100, 150, 200, 300)
POWER = {
    "shapiro_wilk": {
        0.01: (0.035, 0.048, 0.076, 0.116, 0.177, 0.23, 0.345, 0.465, 0.558, 0.662, 0.745, 0.849, 0.981, 0.997, 1.0),
        0.05: (0.115, 0.14, 0.209, 0.289, 0.372, 0.448, 0.565, 0.685, 0.782, 0.848, 0.897, 0.954, 0.997, 1.0, 1.0),
        0.1: (0.188, 0.227, 0.302, 0.404, 0.497, 0.57, 0.693, 0.781, 0.862, 0.91, 0.948, 0.982, 1.0, 1.0, 1.0),
    },
    "anderson_darling": {
        0.01: (0.03, 0.039, 0.066, 0.098, 0.136, 0.174, 0.26, 0.356, 0.441, 0.533, 0.594, 0.72, 0.927, 0.978, 0.999),
        0.05: (0.11, 0.13, 0.188, 0.243, 0.304, 0.368, 0.478, 0.579, 0.666, 0.739, 0.803, 0.878, 0.982, 0.996, 1.0),
        0.1: (0.187, 0.221, 0.278, 0.353, 0.426, 0.492, 0.597, 0.686, 0.775, 0.832, 0.878, 0.932, 0.99, 1.0, 1.0),
    },
    "dagostino_pearson": {
        0.01: (0.067, 0.079, 0.112, 0.14, 0.188, 0.221, 0.292, 0.378, 0.437, 0.515, 0.585, 0.681, 0.907, 0.981, 0.999),
        0.05: (0.125, 0.146, 0.196, 0.242, 0.31, 0.354, 0.443, 0.538, 0.626, 0.71, 0.777, 0.87, 0.985, 0.998, 1.0),
        0.1: (0.166, 0.193, 0.257, 0.315, 0.394, 0.45, 0.553, 0.653, 0.736, 0.819, 0.876, 0.942, 0.996, 1.0, 1.0),
    },
}


def power_against_skewness_one(test: str, n: int, alpha: float) -> float | Unavailable:
    """Interpolated (in log n) power of ``test`` at level ``alpha`` for sample size n."""
    by_alpha = POWER.get(test)
    if not by_alpha:
        return Unavailable(f"no power table for {test}")
    if alpha not in by_alpha:
        return Unavailable(f"the power table covers alpha in {sorted(by_alpha)} only")
    row = by_alpha[alpha]
    if n < N_GRID[0]:
        return Unavailable(f"the power table starts at n={N_GRID[0]}")
    if n >= N_GRID[-1]:
        return row[-1]
    for k in range(len(N_GRID) - 1):
        lo, hi = N_GRID[k], N_GRID[k + 1]
        if lo <= n <= hi:
            t = (math.log(n) - math.log(lo)) / (math.log(hi) - math.log(lo))
            return round(row[k] + t * (row[k + 1] - row[k]), 3)
    raise AssertionError("unreachable")


def adequate_n(test: str, alpha: float, power: float = ADEQUATE_POWER) -> int | None:
    """Smallest tabulated n at which ``test`` reaches ``power``, or None."""
    row = POWER.get(test, {}).get(alpha)
    if row is None:
        return None
    for n, p in zip(N_GRID, row):
        if p >= power:
            return n
    return None
