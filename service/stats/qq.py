"""What a normal Q-Q plot needs: plotting positions, normal quantiles, the fitted line,
and a simultaneous confidence band.

The band inverts the Lilliefors test: with estimated mean and sd, every point of the
empirical distribution function lies within D_crit of the fitted normal's cdf with
probability 1 - alpha when the data are normal, so the band for the i-th order statistic is
mean + sd * Phi^{-1}(i/n - D_crit) to mean + sd * Phi^{-1}((i-1)/n + D_crit). D_crit is found by inverting the
Dallal-Wilkinson approximation of Lilliefors' distribution (valid for alpha <= 0.1).

References
----------
.. [1] Lilliefors, H. W. (1967). JASA 62(318), 399-402.
.. [2] Dallal, G. E. and Wilkinson, L. (1986). The American Statistician 40(4), 294-296.
.. [3] Blom, G. (1958). Statistical Estimates and Transformed Beta-Variables. Wiley
       (plotting positions (i - 3/8) / (n + 1/4)).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import optimize, special

from .forms import Sample
from .moments import central_moments
from .normality.edf_tests import dallal_wilkinson_p

BAND_METHOD = ("simultaneous band from the Lilliefors critical value (Kolmogorov-Smirnov with estimated mean and sd; "
               "Dallal-Wilkinson approximation), mapped to the quantile scale")


@dataclass(frozen=True, eq=False)
class QQ:
    theoretical: np.ndarray  # standard normal quantiles at Blom's positions
    sample: np.ndarray  # the sorted values
    mean: float
    sd: float
    lower: np.ndarray  # band (NaN where it leaves the [0, 1] probability range)
    upper: np.ndarray
    level: float
    critical: float
    method: str


def lilliefors_critical(n: int, alpha: float) -> float:
    """D with Dallal-Wilkinson tail probability alpha ([2]; alpha <= 0.1)."""
    return float(optimize.brentq(lambda d: dallal_wilkinson_p(d, n) - alpha, 1e-6, 1.0, xtol=1e-12))


def qq(sample: Sample, alpha: float = 0.05) -> QQ:
    s = sample.sorted
    n = s.size
    m = central_moments(s)
    i = np.arange(1, n + 1)
    p = (i - 0.375) / (n + 0.25)  # [3]
    d = lilliefors_critical(max(n, 5), min(alpha, 0.1))
    # The test accepts when the fitted cdf at x_(i) lies in [i/n - D, (i-1)/n + D] for
    # every i (the EDF steps), so those are the band's ends on the probability scale.
    low_p, high_p = i / n - d, (i - 1) / n + d
    with np.errstate(invalid="ignore", divide="ignore"):
        lo = np.where(low_p > 0, m.mean + m.sd * special.ndtri(np.clip(low_p, 1e-300, 1)), np.nan)
        hi = np.where(high_p < 1, m.mean + m.sd * special.ndtri(np.clip(high_p, 0, 1 - 1e-16)), np.nan)
    return QQ(special.ndtri(p), s, m.mean, m.sd, lo, hi, 1 - min(alpha, 0.1), d, BAND_METHOD)
