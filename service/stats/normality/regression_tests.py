"""Correlation (regression) tests of the ordered sample against normal scores.

References
----------
.. [1] Shapiro, S. S. and Wilk, M. B. (1965). An analysis of variance test for normality
       (complete samples). *Biometrika* 52(3/4), 591-611. doi:10.1093/biomet/52.3-4.591
.. [2] Royston, P. (1995). Remark AS R94: A remark on algorithm AS 181: the W-test for
       normality. *Applied Statistics* 44(4), 547-551. doi:10.2307/2986146
.. [3] Shapiro, S. S. and Francia, R. S. (1972). An approximate analysis of variance test
       for normality. *JASA* 67(337), 215-216. doi:10.1080/01621459.1972.10481232
.. [4] Royston, P. (1993). A pocket-calculator algorithm for the Shapiro-Francia test for
       non-normality: an application to medicine. *Statistics in Medicine* 12(2),
       181-184. doi:10.1002/sim.4780120209
.. [5] Blom, G. (1958). *Statistical Estimates and Transformed Beta-Variables*. Wiley.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
from scipy import special, stats

from ..pvalues import upper_normal
from ..moments import Moments
from ..results import Method
from .result import TestResult, not_applicable, outcome

SHAPIRO_WILK = Method(
    "Shapiro-Wilk W with Royston's algorithm AS R94 for the coefficients and the p-value "
    "(scipy.stats.shapiro)",
    "Shapiro & Wilk (1965), Biometrika 52:591-611; Royston (1995), Appl. Stat. 44(4):547-551",
)
SHAPIRO_FRANCIA = Method(
    "Shapiro-Francia W' (squared correlation with Blom scores); p-value from Royston's "
    "normalising transformation of log(1 - W')",
    "Shapiro & Francia (1972), JASA 67:215-216; Royston (1993), Stat. Med. 12(2):181-184",
)

SHAPIRO_WILK_MAX_ACCURATE_N = 5000  # [2]: the p-value approximation is fitted up to here
SHAPIRO_FRANCIA_MIN_N = 5
SHAPIRO_FRANCIA_MAX_ACCURATE_N = 5000  # [4] fits the transformation for 5 <= n <= 5000


def shapiro_wilk(sorted_values: np.ndarray, alpha: float) -> TestResult:
    n = int(sorted_values.shape[0])
    if n < 3:
        return not_applicable(SHAPIRO_WILK, f"requires at least 3 observations; only n={n} were given")
    with warnings.catch_warnings():
        # scipy warns above n=5000; we say so in `reason` instead.
        warnings.simplefilter("ignore", UserWarning)
        result = stats.shapiro(sorted_values)
    reason = None
    if n > SHAPIRO_WILK_MAX_ACCURATE_N:
        reason = (
            f"W is exact but its p-value is an extrapolation above n={SHAPIRO_WILK_MAX_ACCURATE_N} "
            f"(n={n}, all values used)"
        )
    return outcome(SHAPIRO_WILK, result.statistic, result.pvalue, alpha, reason=reason)


def blom_scores(n: int) -> np.ndarray:
    """Approximate expected normal order statistics Phi^{-1}((i - 3/8)/(n + 1/4)) ([5]),
    computed for the lower half and mirrored (the scores are antisymmetric)."""
    half = (n + 1) // 2
    i = np.arange(1, half + 1)
    low = special.ndtri((i - 0.375) / (n + 0.25))
    scores = np.empty(n)
    scores[:half] = low
    scores[n - half:] = -low[::-1]
    if n % 2:
        scores[half - 1] = 0.0
    return scores


def shapiro_francia(sorted_values: np.ndarray, alpha: float, moments: Moments | None = None) -> TestResult:
    n = int(sorted_values.shape[0])
    if n < SHAPIRO_FRANCIA_MIN_N:
        return not_applicable(
            SHAPIRO_FRANCIA,
            f"requires at least {SHAPIRO_FRANCIA_MIN_N} observations; only n={n} were given",
        )
    m = blom_scores(n)
    d = moments.centred(sorted_values) if moments is not None else sorted_values - sorted_values.mean()
    # W' = (sum m_i x_(i))^2 / (sum m_i^2 * sum (x_i - mean)^2)   [3]; sum m_i = 0
    w = float(np.dot(m, d)) ** 2 / (float(np.dot(m, m)) * float(np.dot(d, d)))
    w = min(w, 1.0)
    # [4]: log(1 - W') is close to normal with these mean and sd.
    u = math.log(n)
    v = math.log(u)
    mu = -1.2725 + 1.0521 * (v - u)
    sigma = 1.0308 - 0.26758 * (v + 2.0 / u)
    if w >= 1.0:
        p = 1.0
    else:
        p = upper_normal((math.log(1.0 - w) - mu) / sigma)
    reason = None
    if n > SHAPIRO_FRANCIA_MAX_ACCURATE_N:
        reason = (
            f"the p-value transformation is fitted for n <= {SHAPIRO_FRANCIA_MAX_ACCURATE_N}; "
            f"it is extrapolated here (n={n})"
        )
    return outcome(SHAPIRO_FRANCIA, w, p, alpha, reason=reason)
