"""Tests on the empirical distribution function, with mean and sd estimated from the
sample (the composite case).

All three work from one standardisation of the sorted sample. Plain
Kolmogorov–Smirnov p-values are far too conservative when the parameters are
estimated; Lilliefors' null distribution is used instead.

References
----------
.. [1] Stephens, M. A. (1974). EDF statistics for goodness of fit and some comparisons.
       *JASA* 69(347), 730-737. doi:10.1080/01621459.1974.10480196
.. [2] D'Agostino, R. B. and Stephens, M. A., eds. (1986). *Goodness-of-Fit Techniques*.
       Marcel Dekker. Table 4.9 (p-values for the modified A^2 and W^2, case 3).
.. [3] Lilliefors, H. W. (1967). On the Kolmogorov-Smirnov test for normality with mean
       and variance unknown. *JASA* 62(318), 399-402. doi:10.1080/01621459.1967.10482916
.. [4] Dallal, G. E. and Wilkinson, L. (1986). An analytic approximation to the
       distribution of Lilliefors's test statistic for normality. *The American
       Statistician* 40(4), 294-296. doi:10.1080/00031305.1986.10475419
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

from ..moments import Moments
from ..results import Method
from .result import TestResult, not_applicable, outcome

ANDERSON_DARLING = Method(
    "Anderson-Darling A^2, composite normal case; p-value from Stephens' formulas for the "
    "modified statistic A*^2 = A^2 (1 + 0.75/n + 2.25/n^2)",
    "Stephens (1974), JASA 69:730-737; D'Agostino & Stephens (1986), Goodness-of-Fit "
    "Techniques, Table 4.9",
)
LILLIEFORS = Method(
    "Lilliefors test (Kolmogorov-Smirnov D with estimated mean and sd); p-value from the "
    "Dallal-Wilkinson analytic approximation, valid for p <= 0.10, reported as a bound above",
    "Lilliefors (1967), JASA 62:399-402; Dallal & Wilkinson (1986), Am. Stat. 40(4):294-296",
)
CRAMER_VON_MISES = Method(
    "Cramer-von Mises W^2, composite normal case; p-value from Stephens' formulas for the "
    "modified statistic W*^2 = W^2 (1 + 0.5/n)",
    "Stephens (1974), JASA 69:730-737; D'Agostino & Stephens (1986), Goodness-of-Fit "
    "Techniques, Table 4.9",
)

EDF_MIN_N = 8  # [2] gives the modifications for n >= 8 (recalled from memory)
# Beyond this modified statistic the fitted formulas leave the range they were fitted
# on; the p-value is reported as a bound at the edge.
_AD_FORMULA_EDGE = 10.0
_CVM_FORMULA_EDGE = 1.0
_LILLIEFORS_VALID_P = 0.10


class Standardised:
    """The sorted sample standardised with its mean and sample sd, and the normal
    cdf of each value, computed once for all EDF tests."""

    def __init__(self, sorted_values: np.ndarray, moments: Moments):
        self.n = int(sorted_values.shape[0])
        self.z = moments.centred(sorted_values) / moments.sd
        self.cdf = special.ndtr(self.z)


def _log_tails(std: Standardised) -> tuple[np.ndarray, np.ndarray]:
    """log F(z) and log(1 - F(z)) for the sorted z, cheaply: from the cdf already known
    where it keeps precision (log F for z > -30, log1p(-F) for z <= 0), and from the
    survival function or log_ndtr only where it does not (the far tails)."""
    z, cdf = std.z, std.cdf
    log_cdf = np.log(np.maximum(cdf, np.finfo(float).tiny))
    far_low = z < -30.0
    if far_low.any():
        log_cdf[far_low] = special.log_ndtr(z[far_low])
    upper = z > 0.0  # the sorted z: a tail block
    log_sf = np.empty_like(z)
    log_sf[~upper] = np.log1p(-cdf[~upper])
    if upper.any():
        log_sf[upper] = special.log_ndtr(-z[upper])
    return log_cdf, log_sf


def _ad_p_value(a_star: float) -> float:
    # [2], Table 4.9, case 3 (mean and variance unknown).
    if a_star < 0.2:
        return 1.0 - math.exp(-13.436 + 101.14 * a_star - 223.73 * a_star**2)
    if a_star < 0.34:
        return 1.0 - math.exp(-8.318 + 42.796 * a_star - 59.938 * a_star**2)
    if a_star < 0.6:
        return math.exp(0.9177 - 4.279 * a_star - 1.38 * a_star**2)
    return math.exp(1.2937 - 5.709 * a_star + 0.0186 * a_star**2)


def _cvm_p_value(w_star: float) -> float:
    # [2], Table 4.9, case 3 (mean and variance unknown).
    if w_star < 0.0275:
        return 1.0 - math.exp(-13.953 + 775.5 * w_star - 12542.61 * w_star**2)
    if w_star < 0.051:
        return 1.0 - math.exp(-5.903 + 179.546 * w_star - 1515.29 * w_star**2)
    if w_star < 0.092:
        return math.exp(0.886 - 31.62 * w_star + 10.897 * w_star**2)
    return math.exp(1.111 - 34.242 * w_star + 12.832 * w_star**2)


def anderson_darling(std: Standardised, alpha: float) -> TestResult:
    n = std.n
    if n < EDF_MIN_N:
        return not_applicable(ANDERSON_DARLING, f"requires at least {EDF_MIN_N} observations; only n={n} were given")
    i = np.arange(1, n + 1)
    log_cdf, log_sf = _log_tails(std)
    # A^2 = -n - (1/n) sum (2i-1) [ln F(z_i) + ln(1 - F(z_{n+1-i}))]   [1], eq. (4)
    a2 = -n - float(np.dot(2 * i - 1, log_cdf + log_sf[::-1])) / n
    a_star = a2 * (1.0 + 0.75 / n + 2.25 / n**2)
    if a_star > _AD_FORMULA_EDGE:
        return outcome(ANDERSON_DARLING, a2, _ad_p_value(_AD_FORMULA_EDGE), alpha, bound="<")
    return outcome(ANDERSON_DARLING, a2, _ad_p_value(a_star), alpha)


def cramer_von_mises(std: Standardised, alpha: float) -> TestResult:
    n = std.n
    if n < EDF_MIN_N:
        return not_applicable(CRAMER_VON_MISES, f"requires at least {EDF_MIN_N} observations; only n={n} were given")
    i = np.arange(1, n + 1)
    # W^2 = 1/(12n) + sum (F(z_i) - (2i-1)/(2n))^2   [1], eq. (5)
    w2 = 1.0 / (12.0 * n) + float(np.sum((std.cdf - (2 * i - 1) / (2.0 * n)) ** 2))
    w_star = w2 * (1.0 + 0.5 / n)
    if w_star > _CVM_FORMULA_EDGE:
        return outcome(CRAMER_VON_MISES, w2, _cvm_p_value(_CVM_FORMULA_EDGE), alpha, bound="<")
    return outcome(CRAMER_VON_MISES, w2, _cvm_p_value(w_star), alpha)


def dallal_wilkinson_p(d: float, n: int) -> float:
    """Approximate upper tail of Lilliefors' D ([4], eq. 1; n > 100 rescaled as there)."""
    if n > 100:
        d = d * (n / 100.0) ** 0.49
        n = 100
    return math.exp(
        -7.01256 * d * d * (n + 2.78019)
        + 2.99587 * d * math.sqrt(n + 2.78019)
        - 0.122119
        + 0.974598 / math.sqrt(n)
        + 1.67997 / n
    )


def lilliefors(std: Standardised, alpha: float) -> TestResult:
    n = std.n
    if n < 5:
        return not_applicable(LILLIEFORS, f"requires at least 5 observations; only n={n} were given")
    i = np.arange(1, n + 1)
    d_plus = float(np.max(i / n - std.cdf))
    d_minus = float(np.max(std.cdf - (i - 1) / n))
    d = max(d_plus, d_minus)
    p = dallal_wilkinson_p(d, n)
    if p > _LILLIEFORS_VALID_P:
        return outcome(LILLIEFORS, d, _LILLIEFORS_VALID_P, alpha, bound=">")
    return outcome(LILLIEFORS, d, p, alpha)
