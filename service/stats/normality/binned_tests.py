"""The chi-square goodness-of-fit test of a histogram against a fitted normal.

References
----------
.. [1] Cochran, W. G. (1954). Some methods for strengthening the common chi-square
       tests. *Biometrics* 10(4), 417-451. doi:10.2307/3001616 (expected counts of at least 5).
.. [2] Cramér, H. (1946). *Mathematical Methods of Statistics*. Princeton. Section 30.3:
       with parameters estimated from the grouped data by maximum likelihood, X^2 has
       k - 1 - 2 degrees of freedom.
"""

from __future__ import annotations

import math

import numpy as np

from ..histogram import Histogram, NormalFit, bin_probabilities
from ..pvalues import chi2_upper
from ..results import Method
from .result import TestResult, not_applicable, outcome

CHI_SQUARE = Method(
    "Pearson chi-square test of the binned counts against a normal fitted by grouped-data "
    "maximum likelihood, the outer bins extended to +-inf; classes pooled until every "
    "expected count is at least 5; k - 3 degrees of freedom",
    "Cochran (1954), Biometrics 10(4):417-451; Cramer (1946), Mathematical Methods of Statistics, section 30.3",
)
MIN_EXPECTED = 5.0  # [1], common practice


def _merge_classes(observed: np.ndarray, expected: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Pool adjacent classes left to right until each expected count reaches MIN_EXPECTED;
    a short last group joins the one before it."""
    groups_o, groups_e = [], []
    acc_o = acc_e = 0.0
    for o, e in zip(observed, expected):
        acc_o += o
        acc_e += e
        if acc_e >= MIN_EXPECTED:
            groups_o.append(acc_o)
            groups_e.append(acc_e)
            acc_o = acc_e = 0.0
    if acc_e > 0 or acc_o > 0:
        if groups_e:
            groups_o[-1] += acc_o
            groups_e[-1] += acc_e
        else:
            groups_o.append(acc_o)
            groups_e.append(acc_e)
    return np.array(groups_o), np.array(groups_e)


def chi_square_test(h: Histogram, fit: NormalFit, alpha: float) -> TestResult:
    edges = h.edges.copy()
    edges[0], edges[-1] = -math.inf, math.inf
    z = (edges - fit.mean) / fit.sd
    expected = h.n * bin_probabilities(z[:-1], z[1:])
    observed, expected = _merge_classes(h.counts, expected)
    df = observed.size - 3
    if df < 1:
        return not_applicable(
            CHI_SQUARE,
            f"after pooling classes to expected counts of at least {MIN_EXPECTED:g}, {observed.size} classes remain; "
            "the test needs at least 4 (more bins or more data)",
        )
    statistic = float(np.sum((observed - expected) ** 2 / expected))
    reason = None if fit.converged else "the grouped-data fit stopped at its iteration limit"
    return outcome(CHI_SQUARE, statistic, chi2_upper(statistic, df), alpha, reason=reason)
