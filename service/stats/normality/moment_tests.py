"""Tests that depend on the sample only through n, g1 and g2.

Because they need nothing else, a summary (n, mean, sd, skewness, kurtosis) or merged
shard partials give exactly the same results as the raw values would.

References
----------
.. [1] D'Agostino, R. B. (1970). Transformation to normality of the null distribution
       of g1. *Biometrika* 57(3), 679-681. doi:10.1093/biomet/57.3.679
.. [2] Anscombe, F. J. and Glynn, W. J. (1983). Distribution of the kurtosis statistic
       b2 for normal samples. *Biometrika* 70(1), 227-234. doi:10.1093/biomet/70.1.227
.. [3] D'Agostino, R. B. and Pearson, E. S. (1973). Tests for departure from normality.
       Empirical results for the distributions of b2 and sqrt(b1). *Biometrika* 60(3),
       613-622. doi:10.1093/biomet/60.3.613
.. [4] D'Agostino, R. B., Belanger, A. and D'Agostino, R. B. Jr. (1990). A suggestion for
       using powerful and informative tests of normality. *The American Statistician*
       44(4), 316-321. doi:10.1080/00031305.1990.10475751
.. [5] Jarque, C. M. and Bera, A. K. (1987). A test for normality of observations and
       regression residuals. *International Statistical Review* 55(2), 163-172.
       doi:10.2307/1403192
"""

from __future__ import annotations

import math

from ..pvalues import chi2_upper, two_sided_normal
from ..results import Method
from .result import TestResult, not_applicable, outcome

SKEWNESS_TEST = Method(
    "D'Agostino skewness test (Johnson SU transformation of g1)",
    "D'Agostino (1970), Biometrika 57(3):679-681, doi:10.1093/biomet/57.3.679",
)
KURTOSIS_TEST = Method(
    "Anscombe-Glynn kurtosis test (Wilson-Hilferty transformation of b2)",
    "Anscombe & Glynn (1983), Biometrika 70(1):227-234, doi:10.1093/biomet/70.1.227",
)
OMNIBUS_TEST = Method(
    "D'Agostino-Pearson omnibus K-squared (sum of the two squared z statistics, chi-square 2 df)",
    "D'Agostino & Pearson (1973), Biometrika 60(3):613-622, doi:10.1093/biomet/60.3.613; "
    "D'Agostino, Belanger & D'Agostino (1990), Am. Stat. 44(4):316-321",
)
JARQUE_BERA = Method(
    "Jarque-Bera test (n/6 * (g1^2 + g2^2/4), chi-square 2 df)",
    "Jarque & Bera (1987), Int. Stat. Rev. 55(2):163-172, doi:10.2307/1403192",
)

SKEWNESS_MIN_N = 8
KURTOSIS_MIN_N = 5
KURTOSIS_ACCURATE_N = 20
# Our simulation (tests/benchmarks/calibration.py, 20 000 normal samples each): the
# chi-square approximation rejected 0.9% at n=10 and 2.6% at n=20 at the 5% level,
# and 1.8% at n=100 at the 1% level.
JARQUE_BERA_ACCURATE_N = 1000


def skewness_z(n: int, g1: float) -> float:
    """Standard normal deviate for g1 under normality ([1]; as in [4], eq. 1-8)."""
    y = g1 * math.sqrt((n + 1.0) * (n + 3.0) / (6.0 * (n - 2.0)))
    beta2 = 3.0 * (n * n + 27.0 * n - 70.0) * (n + 1.0) * (n + 3.0) / (
        (n - 2.0) * (n + 5.0) * (n + 7.0) * (n + 9.0)
    )
    w2 = -1.0 + math.sqrt(2.0 * (beta2 - 1.0))
    delta = 1.0 / math.sqrt(0.5 * math.log(w2))
    alpha = math.sqrt(2.0 / (w2 - 1.0))
    if y == 0.0:
        return 0.0
    ratio = y / alpha
    return delta * math.log(ratio + math.sqrt(ratio * ratio + 1.0))


def kurtosis_z(n: int, g2: float) -> float:
    """Standard normal deviate for b2 = g2 + 3 under normality ([2]; [4], eq. 9-15)."""
    b2 = g2 + 3.0
    mean = 3.0 * (n - 1.0) / (n + 1.0)
    var = 24.0 * n * (n - 2.0) * (n - 3.0) / ((n + 1.0) ** 2 * (n + 3.0) * (n + 5.0))
    x = (b2 - mean) / math.sqrt(var)
    root_beta1 = (
        6.0 * (n * n - 5.0 * n + 2.0) / ((n + 7.0) * (n + 9.0))
        * math.sqrt(6.0 * (n + 3.0) * (n + 5.0) / (n * (n - 2.0) * (n - 3.0)))
    )
    a = 6.0 + 8.0 / root_beta1 * (2.0 / root_beta1 + math.sqrt(1.0 + 4.0 / root_beta1**2))
    term1 = 1.0 - 2.0 / (9.0 * a)
    denom = 1.0 + x * math.sqrt(2.0 / (a - 4.0))
    if denom == 0.0:
        # The Wilson-Hilferty cube root is undefined exactly here; the deviate is
        # then as large as the transformation allows.
        return math.copysign(math.inf, x)
    term2 = math.copysign(abs((1.0 - 2.0 / a) / denom) ** (1.0 / 3.0), denom)
    return (term1 - term2) / math.sqrt(2.0 / (9.0 * a))


def _too_few(method: Method, minimum: int, n: int) -> TestResult:
    return not_applicable(method, f"requires at least {minimum} observations; only n={n} were given")


def skewness_test(n: int, g1: float | None, alpha: float) -> TestResult:
    if n < SKEWNESS_MIN_N:
        return _too_few(SKEWNESS_TEST, SKEWNESS_MIN_N, n)
    if g1 is None:
        return not_applicable(SKEWNESS_TEST, "the input carries no skewness")
    z = skewness_z(n, g1)
    return outcome(SKEWNESS_TEST, z, two_sided_normal(z), alpha)


def kurtosis_test(n: int, g2: float | None, alpha: float) -> TestResult:
    if n < KURTOSIS_MIN_N:
        return _too_few(KURTOSIS_TEST, KURTOSIS_MIN_N, n)
    if g2 is None:
        return not_applicable(KURTOSIS_TEST, "the input carries no kurtosis")
    z = kurtosis_z(n, g2)
    reason = None
    if n < KURTOSIS_ACCURATE_N:
        reason = f"the normal approximation is rough below n={KURTOSIS_ACCURATE_N} (n={n})"
    return outcome(KURTOSIS_TEST, z, two_sided_normal(z), alpha, reason=reason)


def dagostino_pearson(n: int, g1: float | None, g2: float | None, alpha: float) -> TestResult:
    if n < SKEWNESS_MIN_N:
        return _too_few(OMNIBUS_TEST, SKEWNESS_MIN_N, n)
    if g1 is None or g2 is None:
        return not_applicable(OMNIBUS_TEST, "needs both skewness and kurtosis")
    k2 = skewness_z(n, g1) ** 2 + kurtosis_z(n, g2) ** 2
    reason = None
    if n < KURTOSIS_ACCURATE_N:
        reason = f"the kurtosis part is rough below n={KURTOSIS_ACCURATE_N} (n={n})"
    return outcome(OMNIBUS_TEST, k2, chi2_upper(k2, 2), alpha, reason=reason)


def jarque_bera(n: int, g1: float | None, g2: float | None, alpha: float) -> TestResult:
    if n < 4:
        return _too_few(JARQUE_BERA, 4, n)
    if g1 is None or g2 is None:
        return not_applicable(JARQUE_BERA, "needs both skewness and kurtosis")
    jb = n / 6.0 * (g1 * g1 + g2 * g2 / 4.0)  # [5], eq. (2.4)
    reason = None
    if n < JARQUE_BERA_ACCURATE_N:
        reason = (
            "its chi-square approximation converges slowly: the actual rejection rate "
            f"differs from alpha below about n={JARQUE_BERA_ACCURATE_N} (n={n}), so it only supports"
        )
    return outcome(JARQUE_BERA, jb, chi2_upper(jb, 2), alpha, reason=reason)
