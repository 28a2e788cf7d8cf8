"""Tests for service.stats.histogram and the chi-square test of a histogram
(normality/binned_tests.py): binned moments and quantiles against the raw values they
were binned from, the grouped-data normal fit against an independent maximisation,
the chi-square statistic against scipy, pooling, and invalid histograms."""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize, stats

from service.stats.histogram import (
    InvalidHistogram,
    binned_quantile,
    check_histogram,
    fit_normal,
)
from service.stats.normality.battery import normality
from service.stats.normality.binned_tests import MIN_EXPECTED, _merge_classes, chi_square_test
from service.stats.profile import profile_of_histogram
from service.stats.results import Unavailable

# A large seeded normal sample: mean 50, sd 4, n = 200 000 (np.random.default_rng(2024)),
# binned with numpy.histogram into bins of width H = 0.8 (a fifth of the sd) on [30, 70].
N, MU, SIGMA, H, SEED = 200_000, 50.0, 4.0, 0.8, 2024


@lru_cache(maxsize=None)
def _big() -> np.ndarray:
    x = np.random.default_rng(SEED).normal(MU, SIGMA, N)
    x.flags.writeable = False
    return x


def big_histogram(edges=None):
    x = _big()
    if edges is None:
        edges = np.arange(30.0, 70.0 + 1e-9, H)
    counts, edges = np.histogram(x, bins=edges)
    return x, check_histogram(edges, counts)


def open_histogram(cut: float):
    """The big sample with open-ended outer bins beyond MU -+ cut * SIGMA."""
    inner = np.arange(MU - cut * SIGMA, MU + cut * SIGMA + 1e-9, H)
    return big_histogram(np.concatenate([[-np.inf], inner, [np.inf]]))


def grouped_nll(theta, edges, counts):
    """Minus the grouped-data normal log-likelihood sum c_i log(Phi(b_i) - Phi(a_i)),
    the outer bins extended to -+inf, computed with scipy.stats.norm (independent of
    the code under test)."""
    mu, sd = theta
    if not sd > 0:
        return np.inf
    e = np.asarray(edges, dtype=float).copy()
    e[0], e[-1] = -np.inf, np.inf
    p = np.diff(stats.norm.cdf(e, mu, sd))
    if (p <= 0).any():
        return np.inf
    return -float(np.sum(counts * np.log(p)))


def pooled(observed, expected, minimum=5.0):
    """Cochran's rule written out: pool adjacent classes from the left until the expected
    count reaches `minimum`; a short remainder joins the last pooled class."""
    obs, exp, o_acc, e_acc = [], [], 0.0, 0.0
    for o, e in zip(observed, expected):
        o_acc, e_acc = o_acc + o, e_acc + e
        if e_acc >= minimum:
            obs.append(o_acc)
            exp.append(e_acc)
            o_acc = e_acc = 0.0
    if e_acc > 0 or o_acc > 0:
        obs[-1] += o_acc
        exp[-1] += e_acc
    return np.array(obs), np.array(exp)


class TestBinnedMoments:
    def test_mean(self):
        x, h = big_histogram()
        m = profile_of_histogram(h).moments
        # Reference: numpy.mean of the raw values. A value's place within its bin is close
        # to uniform, sd H/sqrt(12) (Sheppard 1898), so the midpoint mean differs from the
        # raw mean by about H/sqrt(12 n); tolerance 5 times that.
        assert abs(m.mean - np.mean(x)) <= 5 * H / math.sqrt(12 * N)

    def test_sd_without_sheppard(self):
        x, h = big_histogram()
        p = profile_of_histogram(h, sheppard=False)
        # Reference: numpy.std(ddof=1) of the raw values; grouping adds H^2/12 to the
        # variance (Sheppard 1898; Kendall & Stuart 1977, 3.18), so the binned sd exceeds
        # the raw sd by about H^2 / (24 sd). Tolerance: 4 H / sqrt(12 n) (the sampling noise
        # of the within-bin offsets, as for the mean).
        s = float(np.std(x, ddof=1))
        assert p.sheppard_applied is False
        assert abs(p.moments.sd - math.sqrt(s * s + H * H / 12)) <= 4 * H / math.sqrt(12 * N)
        assert p.moments.sd - s > 0.5 * H * H / (24 * s)

    def test_sheppard_brings_the_sd_closer(self):
        x, h = big_histogram()
        plain = profile_of_histogram(h, sheppard=False)
        corrected = profile_of_histogram(h, sheppard=True)
        s = float(np.std(x, ddof=1))
        # Reference: numpy.std(ddof=1) of the raw values; tolerance as above.
        assert corrected.sheppard_applied is True
        assert abs(corrected.moments.sd - s) <= 4 * H / math.sqrt(12 * N)
        assert abs(corrected.moments.sd - s) < 0.25 * abs(plain.moments.sd - s)
        # Kendall & Stuart (1977), 3.18: the corrected m2 is the grouped m2 - H^2/12.
        assert_allclose(corrected.moments.m2, plain.moments.m2 - H * H / 12, rtol=1e-12)

    def test_shape(self):
        x, h = big_histogram()
        m = profile_of_histogram(h, sheppard=True).moments
        # Reference: scipy.stats.skew / kurtosis(bias=False) of the raw values. Grouping
        # changes g1 and g2 only at order (H/sd)^4 for a normal (Kendall & Stuart 1977,
        # 3.18-3.20); the tolerance is the sampling noise of the within-bin offsets, of the
        # order sqrt(6/n) (recalled from memory: the se of g1 under normality), halved.
        assert abs(m.skewness("G1") - stats.skew(x, bias=False)) <= 0.5 * math.sqrt(6 / N)
        assert abs(m.excess_kurtosis("G2") - stats.kurtosis(x, bias=False)) <= 0.5 * math.sqrt(24 / N)

    def test_sheppard_needs_equal_widths(self):
        _, h = big_histogram(np.concatenate([np.arange(30.0, 50.0, 0.8), np.arange(50.0, 70.01, 1.0)]))
        p = profile_of_histogram(h, sheppard=True)
        assert p.sheppard_applied is False
        assert [n.code for n in p.notices] == ["sheppard-not-applied"]


class TestBinnedQuantiles:
    @pytest.mark.parametrize("prob", [0.25, 0.5, 0.75, 0.1, 0.95])
    def test_close_to_numpy(self, prob):
        x, h = big_histogram()
        # Reference: numpy.quantile (default linear) of the raw values. Linear interpolation
        # of the normal cdf within a bin is off by at most H^2 max|f'| / 8 (the linear
        # interpolation error bound), i.e. H^2 |z| / (8 sd) in value units: 0.017 H at the
        # quartiles and 0.04 H at the 0.95 quantile for H = sd/5; the within-bin sampling
        # noise adds about 0.01 H. Tolerance 0.08 H.
        assert abs(binned_quantile(h, prob) - np.quantile(x, prob)) <= 0.08 * H

    def test_grouped_median_formula(self):
        h = check_histogram([0.0, 1.0, 2.0, 3.0], [1, 2, 1])
        # Reference: the grouped-data median L + (n/2 - F) / f * w (a handbook formula, e.g.
        # Kenney & Keeping 1962; recalled from memory):
        # L = 1, F = 1, f = 2, w = 1, n = 4 -> 1.5; q1 = 1 + (1 - 1)/2 = 1.0; q3 = 1 + (3 - 1)/2 = 2.0.
        assert [binned_quantile(h, p) for p in (0.25, 0.5, 0.75)] == [1.0, 1.5, 2.0]

    def test_quantile_in_an_open_bin(self):
        h = check_histogram([-np.inf, 0.0, 1.0, np.inf], [30, 10, 10])
        assert binned_quantile(h, 0.25) == Unavailable("the 0.25 quantile falls in an open-ended bin")
        # Reference: the grouped-data formula, 0 + (40 - 30) / 10 * 1 = 1.0 for p = 0.8.
        assert binned_quantile(h, 0.8) == 1.0


class TestNormalFit:
    CASES = {
        "normal-500-12-bins": lambda: np.histogram(np.random.default_rng(7).normal(3, 2, 500), bins=12),
        "normal-60-8-bins": lambda: np.histogram(np.random.default_rng(9).normal(3, 2, 60), bins=8),
        "gamma-2000-unequal": lambda: np.histogram(np.random.default_rng(10).gamma(3, size=2000), bins=[0, 0.5, 1, 2, 3, 4, 6, 9, 30]),
        "normal-open": lambda: np.histogram(np.random.default_rng(11).normal(-5, 0.1, 3000), bins=[-np.inf, -5.2, -5.1, -5.05, -5, -4.95, -4.9, -4.8, np.inf]),
    }

    @pytest.mark.parametrize("case", list(CASES))
    def test_against_nelder_mead(self, case):
        counts, edges = self.CASES[case]()
        h = check_histogram(edges, counts)
        fit = fit_normal(h)
        # Reference: the grouped log-likelihood written with scipy.stats.norm (grouped_nll),
        # maximised by scipy.optimize.minimize(method="Nelder-Mead") from a different start
        # (the median of the bin midpoints and half the finite range), then polished by a
        # second Nelder-Mead run from its own optimum.
        finite = edges[np.isfinite(edges)]
        start = [float(np.median(0.5 * (finite[:-1] + finite[1:]))), float(finite[-1] - finite[0]) / 2]
        opts = {"xatol": 1e-12, "fatol": 1e-13, "maxiter": 20_000, "maxfev": 40_000}
        ref = optimize.minimize(grouped_nll, start, args=(edges, counts), method="Nelder-Mead", options=opts)
        ref = optimize.minimize(grouped_nll, ref.x, args=(edges, counts), method="Nelder-Mead", options=opts)
        assert fit.converged
        assert_allclose([fit.mean, fit.sd], ref.x, rtol=1e-6, atol=1e-7 * ref.x[1])
        assert_allclose(fit.log_likelihood, -ref.fun, rtol=1e-12)
        # The fit is a maximum: no point of the reference's neighbourhood does better.
        assert -fit.log_likelihood <= ref.fun * (1 + 1e-13)

    @pytest.mark.parametrize("case", ["normal-500-12-bins", "normal-open"])
    def test_against_a_grid(self, case):
        counts, edges = self.CASES[case]()
        fit = fit_normal(check_histogram(edges, counts))
        # Reference: grouped_nll on a fine grid through the fit along each parameter
        # (201 points, spacing 1e-5 sd): at the maximum both partial derivatives vanish,
        # so each line's best point is the grid point nearest the fit.
        step = 1e-5 * fit.sd
        offsets = step * np.arange(-100, 101)
        along_mean = [grouped_nll((fit.mean + d, fit.sd), edges, counts) for d in offsets]
        along_sd = [grouped_nll((fit.mean, fit.sd + d), edges, counts) for d in offsets]
        assert abs(int(np.argmin(along_mean)) - 100) <= 1
        assert abs(int(np.argmin(along_sd)) - 100) <= 1

    @pytest.mark.parametrize("cut", [3.0, 2.0, 1.5])
    def test_open_bins_fit_stays_close(self, cut):
        x, h = open_histogram(cut)
        fit = profile_of_histogram(h).fit
        # Reference: numpy.mean and numpy.std(ddof=1) of the raw values; tolerance 3
        # standard errors of the raw estimates, sd/sqrt(n) and sd/sqrt(2n) (recalled from
        # memory: the normal-theory standard errors of the mean and the sd).
        assert abs(fit.mean - np.mean(x)) <= 3 * SIGMA / math.sqrt(N)
        assert abs(fit.sd - np.std(x, ddof=1)) <= 3 * SIGMA / math.sqrt(2 * N)


class TestOpenBins:
    def test_notice_and_extremes(self):
        _, h = open_histogram(2.0)
        p = profile_of_histogram(h)
        assert [n.code for n in p.notices] == ["open-bins-modelled"]
        held = int(h.counts[0] + h.counts[-1])
        assert p.notices[0].message.startswith(f"{held} values lie in open-ended bins")
        assert p.order.minimum is None and p.order.maximum is None
        # Reference: numpy.quantile of the raw values, within 0.08 H (see TestBinnedQuantiles).
        assert abs(p.order.median - np.quantile(_big(), 0.5)) <= 0.08 * H

    def test_binned_mean_stays_close(self):
        x, h = open_histogram(2.0)
        m = profile_of_histogram(h).moments
        # Reference: numpy.mean of the raw values; tolerance as TestBinnedMoments.test_mean
        # plus 3 standard errors for the imputation of the open bins (about 4.5% of values).
        assert abs(m.mean - np.mean(x)) <= 5 * H / math.sqrt(12 * N) + 3 * SIGMA / math.sqrt(N)

    @pytest.mark.parametrize("cut", [2.0, 1.5])
    def test_imputation_keeps_a_normal_shape(self, cut):
        x, h = open_histogram(cut)
        report = normality(profile_of_histogram(h))
        g2 = profile_of_histogram(h).moments.excess_kurtosis("G2")
        # Reference: scipy.stats.kurtosis(bias=False) of the raw values (0.0063) and
        # scipy.stats.kurtosistest (p = 0.56). Tolerance 4.5 se of G2, 4.5 sqrt(24/n) = 0.05
        # (recalled from memory: the normal-theory se of g2).
        # Our values: G2 = -0.178 (cut 2 sd, 9089 values in open bins) and -0.453 (cut 1.5 sd),
        # kurtosis test p = 4.4e-71 and 0.0.
        assert abs(g2 - stats.kurtosis(x, bias=False)) <= 4.5 * math.sqrt(24 / N)
        assert report.tests.kurtosis_test.reject is False


class TestChiSquare:
    def test_normal_sample_does_not_reject(self):
        _, h = big_histogram()
        report = normality(profile_of_histogram(h))
        t = report.tests.chi_square
        # Seeded result (np.random.default_rng(2024)): normal data, p = 0.69 (regression
        # value); any p >= 0.01 passes.
        assert t.applicable and t.p_value >= 0.01
        assert report.verdict.primary_test == "chi_square"
        assert report.verdict.normal is not False and report.verdict.label != "not_normal"
        assert any("rests on binned data" in r for r in report.verdict.reasons)

    @pytest.mark.parametrize("shape, n, seed", [(4.0, 5000, 5), (2.0, 1000, 6)])
    def test_gamma_sample_is_rejected(self, shape, n, seed):
        x = np.random.default_rng(seed).gamma(shape, size=n)
        counts, edges = np.histogram(x, bins=30)
        report = normality(profile_of_histogram(check_histogram(edges, counts)))
        # Reference: scipy.stats.normaltest of the raw values rejects far below 0.01.
        assert stats.normaltest(x).pvalue < 1e-10
        assert report.tests.chi_square.reject is True and report.tests.chi_square.p_value < 1e-6
        assert report.verdict.normal is False and report.verdict.label == "not_normal"

    @pytest.mark.parametrize("case", list(TestNormalFit.CASES))
    def test_statistic_against_scipy(self, case):
        counts, edges = TestNormalFit.CASES[case]()
        h = check_histogram(edges, counts)
        fit = fit_normal(h)
        # Reference: the expected counts of the fitted normal by scipy.stats.norm over the
        # bins extended to -+inf, pooled by Cochran's rule (pooled above), and
        # scipy.stats.chisquare(observed, expected, ddof=2) (two parameters fitted).
        e = edges.astype(float).copy()
        e[0], e[-1] = -np.inf, np.inf
        expected = h.n * np.diff(stats.norm.cdf(e, fit.mean, fit.sd))
        obs, exp = pooled(counts.astype(float), expected)
        ref = stats.chisquare(obs, exp, ddof=2)
        t = chi_square_test(h, fit, 0.05)
        assert t.applicable
        assert_allclose(t.statistic, ref.statistic, rtol=1e-9)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-8)

    @pytest.mark.parametrize(
        "edges, counts",
        [
            ([0, 1, 2, 3, 4, 5], [2, 3, 4, 2, 1]),
            ([0, 1, 2], [7, 8]),
            ([-np.inf, 0, 1, 2, np.inf], [1, 4, 4, 1]),
        ],
    )
    def test_too_few_classes(self, edges, counts):
        h = check_histogram(edges, counts)
        t = chi_square_test(h, fit_normal(h), 0.05)
        assert t.applicable is False and t.statistic is None and t.reject is None
        assert "classes remain; the test needs at least 4" in t.reason
        verdict = normality(profile_of_histogram(h)).verdict
        assert verdict.label == "insufficient_data" and verdict.normal is None


class TestPooling:
    @pytest.mark.parametrize("seed", range(6))
    def test_every_expected_count_reaches_five(self, seed):
        rng = np.random.default_rng(seed)
        k = int(rng.integers(3, 40))
        expected = rng.exponential(scale=rng.uniform(0.5, 8.0), size=k)
        observed = rng.poisson(expected).astype(float)
        if expected.sum() < MIN_EXPECTED:
            expected[0] += MIN_EXPECTED
        obs, exp = _merge_classes(observed, expected)
        # Cochran (1954): every pooled expected count is at least 5; pooling keeps totals.
        assert (exp >= MIN_EXPECTED).all()
        assert_allclose([obs.sum(), exp.sum()], [observed.sum(), expected.sum()], rtol=1e-12)
        # Reference: Cochran's rule written out (pooled above), the same classes.
        ref_obs, ref_exp = pooled(observed, expected)
        assert_allclose(exp, ref_exp, rtol=1e-12)
        assert_allclose(obs, ref_obs, rtol=1e-12)

    def test_big_histogram_pools_its_tails(self):
        _, h = big_histogram()
        fit = fit_normal(h)
        e = h.edges.copy()
        e[0], e[-1] = -np.inf, np.inf
        expected = h.n * np.diff(stats.norm.cdf(e, fit.mean, fit.sd))
        obs, exp = _merge_classes(h.counts, expected)
        assert (expected < MIN_EXPECTED).any()  # the outer bins need pooling
        assert (exp >= MIN_EXPECTED).all() and exp.size < h.counts.size


class TestInvalidHistogram:
    @pytest.mark.parametrize(
        "edges, counts, pointer, match",
        [
            ([0, 1, 1, 2], [1, 2, 3], "/histogram/edges/2", "increase strictly"),
            ([0, 2, 1, 3], [1, 2, 3], "/histogram/edges/2", "increase strictly"),
            ([0, 1, 2], [1, 2, 3], "/histogram/edges", "k\\+1 edges"),
            ([0, 1, 2, 3, 4], [1, 2, 3], "/histogram/edges", "k\\+1 edges"),
            ([0, 1, 2, 3], [1, -2, 3], "/histogram/counts/1", "non-negative whole"),
            ([0, 1, 2, 3], [1, 2.5, 3], "/histogram/counts/1", "non-negative whole"),
            ([0, np.inf, 2, 3], [1, 2, 3], "/histogram/edges", "only the first edge"),
            ([0, 1, -np.inf, 3], [1, 2, 3], "/histogram/edges", "only the first edge"),
            ([np.inf, 1, 2, 3], [1, 2, 3], "/histogram/edges", "only the first edge"),
            ([0, 1, 2, 3], [1, 0, 0], "/histogram/counts", "add up to 1"),
            ([0, 1, 2, 3], [0, 0, 0], "/histogram/counts", "add up to 0"),
            ([-np.inf, 0, np.inf], [3, 4], "/histogram/edges", "two open-ended bins"),
        ],
    )
    def test_refused_with_pointer(self, edges, counts, pointer, match):
        with pytest.raises(InvalidHistogram, match=match) as err:
            check_histogram(edges, counts)
        assert err.value.pointer == pointer
        assert err.value.code == "invalid-histogram"

    @pytest.mark.parametrize("edges, counts", [([0, 1, 2, 3], [0, 5, 0]), ([-np.inf, 0, 1, 2, np.inf], [0, 5, 0, 0])])
    def test_all_counts_in_one_bin(self, edges, counts):
        with pytest.raises(InvalidHistogram, match="all counts fall in one bin") as err:
            profile_of_histogram(check_histogram(edges, counts))
        assert err.value.pointer == "/histogram/counts"

    def test_message_shows_the_number_sent(self):
        with pytest.raises(InvalidHistogram) as err:
            check_histogram([0, 1, 2, 3], [1, -2, 3])
        assert "np.float64" not in err.value.message
