"""Central moments, the three conventions for skewness and excess kurtosis, and their
standard errors under normality.

Conventions (Joanes & Gill 1998, who name them):

* ``g1 = m3 / m2**1.5`` and ``g2 = m4 / m2**2 - 3``: the moment coefficients (biased),
  what ``scipy.stats.skew(bias=True)`` and ``kurtosis(bias=True)`` return.
* ``G1`` and ``G2``: the adjusted Fisher–Pearson coefficients, what spreadsheet
  functions SKEW and KURT and ``scipy.stats.skew(bias=False)`` return.
* ``b1 = m3 / s**3`` and ``b2 = m4 / s**4 - 3`` with the sample (n-1) standard deviation.

Kurtosis is always *excess* kurtosis here: 0 for a normal distribution.

References
----------
.. [1] Joanes, D. N. and Gill, C. A. (1998). Comparing measures of sample skewness and
       kurtosis. *Journal of the Royal Statistical Society D* 47(1), 183-189.
       doi:10.1111/1467-9884.00122
.. [2] Chan, T. F., Golub, G. H. and LeVeque, R. J. (1983). Algorithms for computing the
       sample variance: analysis and recommendations. *The American Statistician* 37(3),
       242-247. doi:10.1080/00031305.1983.10483115
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

SKEWNESS_CONVENTIONS = ("G1", "g1", "b1")
KURTOSIS_CONVENTIONS = ("G2", "g2", "b2")

# The largest n a summary, a set of partials or a histogram may claim: beyond it the
# small-sample corrections of the shape statistics lose all precision.
MAX_N = 10**15
# Relative slack on the feasibility bounds of claimed moments (Pearson, Dalen, Bhatia-Davis):
# numbers computed in floating point, or rounded to a few digits, may miss an exact bound
# (common practice: a few hundred ulps).
FEASIBILITY_SLACK = 1e-9


@dataclass(frozen=True)
class Moments:
    """Sample size, mean, second central moment ``m2 = (1/n) sum((x - mean)**2)`` and the
    standardised shape ``g1 = m3 / m2**1.5`` and ``g2 = m4 / m2**2 - 3``.

    The shape is kept standardised because it is scale-free: computing it from scaled
    deviations never overflows, where ``m4`` itself would for values beyond about 1e77.
    ``g1`` and ``g2`` are ``None`` when the input did not carry them (a summary that gives
    no skewness or kurtosis) or n is too small to define them (n < 3, n < 4).
    """

    n: int
    mean: float
    m2: float
    g1: float | None = None
    g2: float | None = None
    # The mean as anchor + offset: the anchor is a float near the data (so x - anchor is
    # exact, Sterbenz) and the offset is small, so the pair holds the mean to more than
    # double precision when the data share a large offset (values near 1e13, sd 0.1).
    anchor: float | None = None
    offset: float = 0.0

    def centred(self, values: np.ndarray) -> np.ndarray:
        """``values - mean``, without the rounding of the mean itself."""
        if self.anchor is None:
            return values - self.mean
        return (values - self.anchor) - self.offset

    @property
    def variance(self) -> float:
        """Sample variance with the n-1 divisor."""
        return self.m2 * self.n / (self.n - 1)

    @property
    def sd(self) -> float:
        """Sample standard deviation with the n-1 divisor."""
        return math.sqrt(self.variance)

    @property
    def population_sd(self) -> float:
        return math.sqrt(self.m2)

    def skewness(self, convention: str) -> float | None:
        return None if self.g1 is None else skewness_from_g1(self.g1, self.n, convention)

    def excess_kurtosis(self, convention: str) -> float | None:
        return None if self.g2 is None else kurtosis_from_g2(self.g2, self.n, convention)


def central_moments(values: np.ndarray) -> Moments:
    """Mean and central moments by the corrected two-pass algorithm.

    The first pass gives a provisional mean; the deviations from it are exact for
    data whose values share a large offset (Sterbenz), and their own mean corrects
    the provisional one ([2], eq. 1.7) before the powers are summed. Values near 1e7
    with a spread of 0.1 keep about 15 significant digits in every moment. The shape
    is computed from the deviations divided by a power of two near their largest
    magnitude (an exact scaling), so fourth powers cannot overflow or underflow.
    """
    x = np.asarray(values, dtype=np.float64)
    n = int(x.shape[0])
    provisional = float(x.mean())
    d = x - provisional
    correction = float(d.mean())
    d -= correction
    mean = provisional + correction
    largest = float(np.max(np.abs(d))) if n else 0.0
    if largest == 0.0:
        return Moments(n=n, mean=mean, m2=0.0, anchor=provisional, offset=correction)
    scale = 2.0 ** math.frexp(largest)[1]
    d /= scale
    d2 = d * d
    c2 = float(d2.mean())
    m2 = c2 * scale * scale
    g1 = float(np.dot(d2, d)) / n / c2**1.5 if n >= 3 else None
    g2 = float(np.dot(d2, d2)) / n / (c2 * c2) - 3.0 if n >= 4 else None
    return Moments(n=n, mean=mean, m2=m2, g1=g1, g2=g2, anchor=provisional, offset=correction)


def skewness_from_g1(g1: float, n: int, convention: str) -> float:
    """Convert the moment coefficient g1 to ``convention`` ([1], eqs. 1-3)."""
    if convention == "g1":
        return g1
    if convention == "G1":
        return g1 * math.sqrt(n * (n - 1)) / (n - 2)
    if convention == "b1":
        return g1 * ((n - 1) / n) ** 1.5
    raise ValueError(f"unknown skewness convention {convention!r}; use one of {SKEWNESS_CONVENTIONS}")


def g1_from_skewness(value: float, n: int, convention: str) -> float:
    """Inverse of :func:`skewness_from_g1`."""
    return value / skewness_from_g1(1.0, n, convention)


def kurtosis_from_g2(g2: float, n: int, convention: str) -> float:
    """Convert the excess moment coefficient g2 to ``convention`` ([1], eqs. 4-6)."""
    if convention == "g2":
        return g2
    if convention == "G2":
        return (n - 1) / ((n - 2) * (n - 3)) * ((n + 1) * g2 + 6.0)
    if convention == "b2":
        return (g2 + 3.0) * (1.0 - 1.0 / n) ** 2 - 3.0
    raise ValueError(f"unknown kurtosis convention {convention!r}; use one of {KURTOSIS_CONVENTIONS}")


def g2_from_kurtosis(value: float, n: int, convention: str) -> float:
    """Inverse of :func:`kurtosis_from_g2`."""
    if convention == "g2":
        return value
    if convention == "G2":
        return (value * (n - 2) * (n - 3) / (n - 1) - 6.0) / (n + 1)
    if convention == "b2":
        return (value + 3.0) * (n / (n - 1)) ** 2 - 3.0
    raise ValueError(f"unknown kurtosis convention {convention!r}; use one of {KURTOSIS_CONVENTIONS}")


def se_skewness(n: int) -> float:
    """Standard error of G1 for a sample of n from a normal distribution (n >= 3).

    ``sqrt(6n(n-1) / ((n-2)(n+1)(n+3)))``, the exact variance of G1 under normality
    ([1], section 3). It does not hold for non-normal data.
    """
    if n < 3:
        raise ValueError(f"se_skewness requires n >= 3; got n={n}")
    return math.sqrt(6.0 * n * (n - 1) / ((n - 2) * (n + 1) * (n + 3)))


def se_kurtosis(n: int) -> float:
    """Standard error of G2 for a sample of n from a normal distribution (n >= 4).

    ``2 * se_skewness(n) * sqrt((n**2 - 1) / ((n - 3)(n + 5)))``, the exact variance of
    G2 under normality ([1], section 3). It does not hold for non-normal data.
    """
    if n < 4:
        raise ValueError(f"se_kurtosis requires n >= 4; got n={n}")
    return 2.0 * se_skewness(n) * math.sqrt((n * n - 1.0) / ((n - 3) * (n + 5)))
