"""Sample quantiles by the nine definitions of Hyndman & Fan, on sorted data.

Definition 7 (linear interpolation between order statistics) is numpy's default and
the one spreadsheet functions QUARTILE.INC and PERCENTILE.INC use; it is ours too.

References
----------
.. [1] Hyndman, R. J. and Fan, Y. (1996). Sample quantiles in statistical packages.
       *The American Statistician* 50(4), 361-365. doi:10.1080/00031305.1996.10473566
"""

from __future__ import annotations

import numpy as np

# Definition number -> numpy's name for it (numpy.quantile's `method`).
DEFINITIONS = {
    "hf1": "inverted_cdf",
    "hf2": "averaged_inverted_cdf",
    "hf3": "closest_observation",
    "hf4": "interpolated_inverted_cdf",
    "hf5": "hazen",
    "hf6": "weibull",
    "hf7": "linear",
    "hf8": "median_unbiased",
    "hf9": "normal_unbiased",
}

DESCRIPTIONS = {
    "hf1": "Hyndman & Fan definition 1: inverse of the empirical distribution function",
    "hf2": "Hyndman & Fan definition 2: as 1, averaging at discontinuities",
    "hf3": "Hyndman & Fan definition 3: nearest even order statistic",
    "hf4": "Hyndman & Fan definition 4: linear interpolation of the empirical distribution function",
    "hf5": "Hyndman & Fan definition 5: piecewise linear with knots at (k - 1/2)/n",
    "hf6": "Hyndman & Fan definition 6: p(k) = k/(n+1), as spreadsheet QUARTILE.EXC",
    "hf7": "Hyndman & Fan definition 7: p(k) = (k-1)/(n-1), numpy's default and spreadsheet QUARTILE.INC",
    "hf8": "Hyndman & Fan definition 8: approximately median-unbiased, the authors' recommendation",
    "hf9": "Hyndman & Fan definition 9: approximately unbiased for normal data",
}

# [1], section 2: for the continuous definitions 4-9 the quantile sits at position
# h = n*p + m(p) (1-based) between order statistics, with m given per definition.
_OFFSET = {
    "hf4": lambda p: 0.0 * p,
    "hf5": lambda p: 0.5 + 0.0 * p,
    "hf6": lambda p: p,
    "hf7": lambda p: 1.0 - p,
    "hf8": lambda p: (p + 1.0) / 3.0,
    "hf9": lambda p: p / 4.0 + 3.0 / 8.0,
}


def quantiles_sorted(sorted_values: np.ndarray, probs, definition: str = "hf7") -> np.ndarray:
    """Quantiles of already sorted data for probabilities ``probs`` in [0, 1].

    Continuous definitions 4-9 are evaluated directly on the sorted array, in time
    independent of n; definitions 1-3 go through ``numpy.quantile``.
    """
    if definition not in DEFINITIONS:
        raise ValueError(f"unknown quantile definition {definition!r}; use one of {sorted(DEFINITIONS)}")
    p = np.atleast_1d(np.asarray(probs, dtype=np.float64))
    n = sorted_values.shape[0]
    if definition not in _OFFSET:
        return np.quantile(sorted_values, p, method=DEFINITIONS[definition])
    h = n * p + _OFFSET[definition](p)  # 1-based position, [1] eq. (3)
    j = np.floor(h)
    g = h - j
    lower = np.clip(j, 1, n).astype(np.int64) - 1
    upper = np.clip(j + 1, 1, n).astype(np.int64) - 1
    a, b = sorted_values[lower], sorted_values[upper]
    # numpy's lerp: from the nearer end, so equal neighbours give exactly that value and
    # the result never leaves [a, b].
    diff = b - a
    return np.where(g >= 0.5, b - diff * (1.0 - g), a + diff * g)
