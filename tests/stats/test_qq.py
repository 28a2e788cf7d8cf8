"""service.stats.qq: what a normal Q-Q plot needs.

The band's critical value against statsmodels' Dallal-Wilkinson approximation of
Lilliefors' distribution and against Lilliefors' (1967) table; Blom's plotting
positions; the fitted line; the band against the inversion of the Lilliefors test; and a
seeded simulation of how often a normal sample lies entirely inside the band.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats
from statsmodels.stats._lilliefors import pval_lf
from statsmodels.stats.diagnostic import lilliefors as sm_lilliefors

from service.stats.forms import Sample
from service.stats.qq import lilliefors_critical, qq


def band_of(x, alpha: float = 0.05):
    return qq(Sample.from_array(np.asarray(x, dtype=float)), alpha)


class TestLillieforsCritical:
    @pytest.mark.parametrize("alpha", [0.01, 0.05, 0.10])
    @pytest.mark.parametrize("n", [5, 10, 20, 50, 100, 101, 500, 5000])
    def test_dallal_wilkinson_tail_equals_alpha(self, n, alpha):
        d = lilliefors_critical(n, alpha)
        # Reference: statsmodels.stats._lilliefors.pval_lf (Dallal & Wilkinson 1986,
        # with the (n/100)^0.49 rescaling above n = 100): its tail probability at our
        # critical value is alpha.
        assert_allclose(pval_lf(d, n), alpha, rtol=1e-8)

    @pytest.mark.parametrize("n, expected", [
        # Lilliefors (1967), Table 1, alpha = 0.05, recalled from memory: 0.337 (n=5),
        # 0.258 (10), 0.190 (20), 0.161 (30), 0.886/sqrt(n) beyond 30. His table came
        # from 1000 simulated samples and runs slightly low (Dallal & Wilkinson 1986):
        # tolerance 0.01.
        (5, 0.337),
        (10, 0.258),
        (20, 0.190),
        (30, 0.161),
        (100, 0.886 / math.sqrt(100)),
    ])
    def test_lilliefors_table(self, n, expected):
        assert abs(lilliefors_critical(n, 0.05) - expected) < 0.01

    @pytest.mark.parametrize("n", [10, 50, 400])
    def test_smaller_alpha_wider_band(self, n):
        # A smaller alpha needs a larger D (the tail probability falls as D grows).
        assert lilliefors_critical(n, 0.01) > lilliefors_critical(n, 0.05) > lilliefors_critical(n, 0.10)


class TestPositionsAndLine:
    @pytest.mark.parametrize("n, seed", [(3, 1), (17, 2), (250, 3)])
    def test_blom_positions(self, n, seed):
        x = np.random.default_rng(seed).gamma(2.0, size=n)
        q = band_of(x)
        # Blom (1958): positions (i - 3/8) / (n + 1/4); normal quantiles by scipy.stats.norm.ppf.
        i = np.arange(1, n + 1)
        assert_allclose(q.theoretical, stats.norm.ppf((i - 0.375) / (n + 0.25)), rtol=1e-13, atol=1e-15)
        assert_allclose(q.sample, np.sort(x), rtol=0, atol=0)

    @pytest.mark.parametrize("seed", [4, 5])
    def test_fitted_mean_and_sd(self, seed):
        x = np.random.default_rng(seed).normal(10.0, 3.0, 80)
        q = band_of(x)
        # Lilliefors (1967): the normal with the sample mean and sample sd; numpy with
        # ddof=1 (as statsmodels.stats.diagnostic.lilliefors standardises).
        assert_allclose([q.mean, q.sd], [x.mean(), x.std(ddof=1)], rtol=1e-13)

    def test_level_and_critical(self):
        q = band_of(np.random.default_rng(6).normal(size=40), alpha=0.05)
        # Reference: pval_lf at the reported critical value is alpha = 0.05.
        assert q.level == 0.95
        assert_allclose(pval_lf(q.critical, 40), 0.05, rtol=1e-8)

    def test_alpha_above_the_formula_range(self):
        # Dallal & Wilkinson (1986) fit their formula for tail probabilities up to 0.1
        # (recalled from memory): a wider request falls back to 0.1.
        q = band_of(np.random.default_rng(7).normal(size=40), alpha=0.2)
        assert q.level == pytest.approx(0.9, abs=1e-15)
        assert_allclose(pval_lf(q.critical, 40), 0.1, rtol=1e-8)


def lilliefors_band(x: np.ndarray, d: float) -> tuple[np.ndarray, np.ndarray]:
    """The set of samples that the Lilliefors test accepts, on the quantile scale.

    D = max_i max(i/n - F(x_(i)), F(x_(i)) - (i-1)/n) with F the fitted normal cdf
    (Lilliefors 1967; statsmodels.stats.diagnostic.lilliefors), so D <= d if and only if
    i/n - d <= F(x_(i)) <= (i-1)/n + d for every i: x_(i) between
    mean + sd Phi^{-1}(i/n - d) and mean + sd Phi^{-1}((i-1)/n + d); NaN where the bound
    leaves (0, 1) (no bound on that side).
    """
    n = x.size
    mean, sd = x.mean(), x.std(ddof=1)
    i = np.arange(1, n + 1)
    lo_p, hi_p = i / n - d, (i - 1) / n + d
    with np.errstate(invalid="ignore", divide="ignore"):
        lower = np.where(lo_p > 0, mean + sd * stats.norm.ppf(np.clip(lo_p, 1e-300, 1)), np.nan)
        upper = np.where(hi_p < 1, mean + sd * stats.norm.ppf(np.clip(hi_p, 0, 1 - 1e-16)), np.nan)
    return lower, upper


class TestBand:
    @pytest.mark.parametrize("seed", [8, 9])
    def test_bounds_around_the_line(self, seed):
        # Where both bounds exist they enclose the fitted line mean + sd * z (the band
        # is symmetric in probability about the fitted normal; common practice).
        q = band_of(np.random.default_rng(seed).normal(size=60))
        line = q.mean + q.sd * q.theoretical
        both = ~np.isnan(q.lower) & ~np.isnan(q.upper)
        assert both.sum() > 30
        assert np.all(q.lower[both] < line[both]) and np.all(line[both] < q.upper[both])

    @pytest.mark.parametrize("n, seed", [(20, 10), (200, 11)])
    def test_band_inverts_the_lilliefors_test(self, n, seed):
        x = np.random.default_rng(seed).normal(size=n)
        q = band_of(x)
        lower, upper = lilliefors_band(np.sort(x), q.critical)
        assert_allclose(q.lower, lower, rtol=1e-12, equal_nan=True)
        assert_allclose(q.upper, upper, rtol=1e-12, equal_nan=True)

    @pytest.mark.parametrize("n, seed", [(20, 12), (200, 13)])
    def test_reference_band_matches_statsmodels(self, n, seed):
        # The reference band above is right: over seeded normal samples, "inside
        # lilliefors_band" agrees with statsmodels' lilliefors D <= d, sample by sample.
        rng = np.random.default_rng(seed)
        d = lilliefors_critical(n, 0.05)
        agree = []
        for _ in range(300):
            x = np.sort(rng.normal(size=n))
            lower, upper = lilliefors_band(x, d)
            inside = not np.any((x < lower) | (x > upper))
            statistic, _ = sm_lilliefors(x, dist="norm", pvalmethod="approx")
            agree.append(inside == (statistic <= d))
        assert all(agree)


COVERAGE_DRAWS = 2000
# 3 binomial standard errors of a 95% proportion from 2000 draws: 3 sqrt(0.05 0.95 / 2000).
COVERAGE_TOL = 3 * math.sqrt(0.05 * 0.95 / COVERAGE_DRAWS)


class TestCoverage:
    """A 95% simultaneous band holds a whole normal sample about 95% of the time
    (Lilliefors 1967: P(D <= D_crit) = 0.95 under normality, with mean and sd fitted).
    Reference: that probability, 0.95; tolerance 3 binomial standard errors of 2000
    seeded samples (0.0146). test_critical_value_calibrated shows that the critical
    value itself holds its level at the sizes where the band does not."""

    @pytest.mark.parametrize("n, seed", [
        pytest.param(20, 20),
        pytest.param(50, 50),
        (1000, 1000),
    ])
    def test_share_of_normal_samples_inside(self, n, seed):
        rng = np.random.default_rng(seed)
        inside = 0
        for _ in range(COVERAGE_DRAWS):
            q = band_of(rng.normal(size=n))
            inside += not np.any((q.sample < q.lower) | (q.sample > q.upper))
        assert abs(inside / COVERAGE_DRAWS - 0.95) < COVERAGE_TOL, inside / COVERAGE_DRAWS

    @pytest.mark.parametrize("n, seed", [(20, 21), (50, 51)])
    def test_critical_value_calibrated(self, n, seed):
        # Lilliefors' D (his definition, as statsmodels.stats.diagnostic.lilliefors
        # computes it: sample mean and sd with ddof=1) of 2000 seeded normal samples,
        # vectorised: P(D <= lilliefors_critical(n, 0.05)) is 0.95 within the tolerance.
        x = np.sort(np.random.default_rng(seed).normal(size=(COVERAGE_DRAWS, n)), axis=1)
        z = (x - x.mean(axis=1, keepdims=True)) / x.std(axis=1, ddof=1, keepdims=True)
        f = stats.norm.cdf(z)
        i = np.arange(1, n + 1)
        d = np.maximum((i / n - f).max(axis=1), (f - (i - 1) / n).max(axis=1))
        assert abs(np.mean(d <= lilliefors_critical(n, 0.05)) - 0.95) < COVERAGE_TOL
