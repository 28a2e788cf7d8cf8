"""How often the verdict cries wolf, and how often it catches real departures.

By simulation: the share of samples the normality verdict calls not normal
(``normal: false``), on normal samples (the false-alarm rate, to be within alpha +- 1
point) and on skewed, heavy-tailed and bimodal samples (power), beside the naive rule
"not normal if any of the nine tests rejects". Seeded; prints a Markdown table for the
README.

    .venv/bin/python tests/benchmarks/calibration.py [replications]
"""

from __future__ import annotations

import sys

import numpy as np

from service.stats.forms import Sample
from service.stats.normality.battery import NormalityOptions, normality_of_sample

ALPHA = 0.05
SIZES = (20, 100, 1000, 5000)
ALTERNATIVES = {
    "normal": lambda rng, n: rng.normal(size=n),
    "skewed (gamma, shape 4)": lambda rng, n: rng.gamma(4.0, size=n),
    "heavy-tailed (t, 5 df)": lambda rng, n: rng.standard_t(5, size=n),
    "bimodal (two normals 3 sd apart)": lambda rng, n: rng.normal(size=n) + 3.0 * (rng.random(n) < 0.5),
}


def rates(draw, n: int, reps: int, rng) -> tuple[float, float, float]:
    verdict = naive = 0
    for _ in range(reps):
        report = normality_of_sample(Sample(draw(rng, n)), NormalityOptions(alpha=ALPHA))
        verdict += report.verdict.normal is False
        naive += any(t.reject for t in report.tests.as_dict().values() if t.applicable)
    p = verdict / reps
    return p, naive / reps, (p * (1 - p) / reps) ** 0.5


def main(reps: int = 2000) -> None:
    rng = np.random.default_rng(20261203)
    print(f"alpha = {ALPHA}; {reps} samples per cell (fewer at n = 5000: {max(reps // 4, 100)})")
    print()
    print("| data | n | verdict: not normal | naive any-test rule |")
    print("| --- | ---: | ---: | ---: |")
    for name, draw in ALTERNATIVES.items():
        for n in SIZES:
            r = max(reps // 4, 100) if n >= 5000 else reps
            p, naive, se = rates(draw, n, r, rng)
            print(f"| {name} | {n} | {p:.3f} (se {se:.3f}) | {naive:.3f} |", flush=True)


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 2000)
