"""P-values from reference distributions, computed once here and reused by every test.

Every p-value goes through survival functions (never ``1 - cdf``) and is clipped to
[0, 1], so no approximation can hand a caller a probability outside that range.
"""

from __future__ import annotations

import math

from scipy import special


def clip_probability(p: float) -> float:
    if math.isnan(p):
        raise ValueError("a p-value came out as NaN")
    return min(1.0, max(0.0, float(p)))


def two_sided_normal(z: float) -> float:
    """P(|Z| >= |z|) for a standard normal Z: 2 * sf(|z|) = erfc(|z| / sqrt 2)."""
    return clip_probability(special.erfc(abs(z) / math.sqrt(2.0)))


def upper_normal(z: float) -> float:
    """P(Z >= z) for a standard normal Z."""
    return clip_probability(special.ndtr(-z))


def chi2_upper(statistic: float, df: float) -> float:
    """P(X >= statistic) for X chi-square with ``df`` degrees of freedom."""
    return clip_probability(special.chdtrc(df, statistic))
