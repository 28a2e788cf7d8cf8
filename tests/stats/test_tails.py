"""Tests for service.stats.tails: normal-model, empirical and mixture tail probabilities,
parts per million out of limits, distribution-free bounds and Cornish-Fisher quantiles,
each against a reference library, a handbook table or the published formula."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import special, stats
from statsmodels.stats.proportion import proportion_confint

from service.stats.forms import Sample
from service.stats.histogram import check_histogram
from service.stats.mixture import Component
from service.stats.partials import Partial
from service.stats.profile import profile_of_histogram, profile_of_partials, profile_of_sample, profile_of_summary
from service.stats.results import Unavailable
from service.stats.summary import Summary
from service.stats.tails import Empirical, cornish_fisher_z, tails, wilson

from . import samples

MEAN, SD = 50.0, 10.0  # a normal model given as a summary, so that x = MEAN + z * SD exactly


def model(mean: float = MEAN, sd: float = SD, n: int = 1000, skewness=None, kurtosis=None):
    return profile_of_summary(Summary(n=n, mean=mean, sd=sd, skewness=skewness, kurtosis=kurtosis))


def raw(x):
    return profile_of_sample(Sample.from_array(x))


def codes(report) -> list[str]:
    return [w.code for w in report.warnings]


# The example histogram of service/api/examples/histogram.json (open outer bins), n=58.
EDGES = [-math.inf, 9, 10, 11, 12, 13, 14, 16, math.inf]
COUNTS = [0, 8, 14, 7, 11, 5, 9, 4]

# Two components for the mixture model (weight, mean, sd).
MIXTURE = (Component(0.3, 0.0, 1.0), Component(0.7, 4.0, 2.0))


def mixture_sf(x: float) -> float:
    # Reference: the components' own scipy.stats.norm survival functions, weighted.
    return sum(c.weight * stats.norm.sf(x, c.mean, c.sd) for c in MIXTURE)


def mixture_cdf(x: float) -> float:
    # Reference: the components' own scipy.stats.norm distribution functions, weighted.
    return sum(c.weight * stats.norm.cdf(x, c.mean, c.sd) for c in MIXTURE)


class TestNormalTable:
    # Standard normal table, upper tail Q(z) = 1 - Phi(z), 4 decimals (recalled from memory).
    TABLE = [(1.0, 0.1587), (1.645, 0.0500), (1.96, 0.0250), (2.0, 0.0228), (2.576, 0.0050), (3.0, 0.0013)]

    @pytest.mark.parametrize("z, upper", TABLE)
    def test_above_against_the_table(self, z, upper):
        point = tails(model(), above=[MEAN + z * SD]).above[0]
        assert point.z == pytest.approx(z, abs=1e-12)
        assert point.normal.probability == pytest.approx(upper, abs=5e-5)

    @pytest.mark.parametrize("z, upper", TABLE)
    def test_below_against_the_table(self, z, upper):
        # By symmetry Phi(-z) = Q(z), the same table.
        point = tails(model(), below=[MEAN - z * SD]).below[0]
        assert point.normal.probability == pytest.approx(upper, abs=5e-5)

    @pytest.mark.parametrize("z", [-8.0, -3.0, -1.0, 0.0, 0.5, 1.0, 2.5, 6.0, 9.0])
    def test_above_and_below_against_scipy(self, z):
        report = tails(model(), above=[MEAN + z * SD], below=[MEAN + z * SD])
        # Reference: scipy.stats.norm.sf and norm.cdf, with their logs (logsf, logcdf).
        assert_allclose(report.above[0].normal.probability, stats.norm.sf(z), rtol=1e-12)
        assert_allclose(report.above[0].normal.log_probability, stats.norm.logsf(z), rtol=1e-12)
        assert_allclose(report.below[0].normal.probability, stats.norm.cdf(z), rtol=1e-12)
        assert_allclose(report.below[0].normal.log_probability, stats.norm.logcdf(z), rtol=1e-12)

    # The 68-95-99.7 rule: shares within 1, 2, 3 sd, 4 decimals (recalled from memory).
    @pytest.mark.parametrize("k, share", [(1, 0.6827), (2, 0.9545), (3, 0.9973)])
    def test_within_k_sd(self, k, share):
        b = tails(model(), intervals=[(MEAN - k * SD, MEAN + k * SD)]).between[0]
        assert b.z == pytest.approx((-k, k), abs=1e-12)
        assert b.normal.probability == pytest.approx(share, abs=5e-5)
        # Reference: scipy.stats.norm.cdf(k) - norm.cdf(-k).
        assert_allclose(b.normal.probability, stats.norm.cdf(k) - stats.norm.cdf(-k), rtol=1e-12)
        assert_allclose(b.normal.log_probability, math.log(stats.norm.cdf(k) - stats.norm.cdf(-k)), rtol=1e-12)

    @pytest.mark.parametrize("a, b", [(-2.0, -1.0), (0.5, 1.5), (4.0, 6.0), (-7.0, 7.0)])
    def test_between_against_scipy(self, a, b):
        got = tails(model(), intervals=[(MEAN + a * SD, MEAN + b * SD)]).between[0]
        # Reference: scipy.stats.norm.sf(a) - norm.sf(b), which keeps precision in the upper tail.
        assert_allclose(got.normal.probability, stats.norm.sf(a) - stats.norm.sf(b), rtol=1e-10)


class TestExtremeTails:
    @pytest.mark.parametrize("z", [10.0, 38.0, 40.0, 100.0])
    def test_log_probability_where_the_probability_underflows(self, z):
        report = tails(model(), above=[MEAN + z * SD], below=[MEAN - z * SD])
        for point in (report.above[0], report.below[0]):
            # Reference: scipy.stats.norm.sf (0.0 in double precision beyond z of about 38)
            # and norm.logsf, which stays finite.
            assert point.normal.probability == pytest.approx(stats.norm.sf(z), rel=1e-12, abs=0.0)
            assert math.isfinite(point.normal.log_probability)
            assert_allclose(point.normal.log_probability, stats.norm.logsf(z), rtol=1e-12)

    def test_z40_probability_is_zero_but_its_log_is_not(self):
        point = tails(model(), above=[MEAN + 40 * SD]).above[0]
        # Reference: scipy.stats.norm.sf(40) underflows to 0; norm.logsf(40) is about -804.6.
        assert stats.norm.sf(40) == 0.0 and point.normal.probability == 0.0
        assert_allclose(point.normal.log_probability, stats.norm.logsf(40.0), rtol=1e-12)

    def test_between_far_in_the_tail_keeps_a_finite_log(self):
        b = tails(model(), intervals=[(MEAN + 38 * SD, MEAN + 40 * SD)]).between[0]
        # Reference: log(sf(a) - sf(b)) = logsf(a) + log1p(-exp(logsf(b) - logsf(a))), from
        # scipy.stats.norm.logsf; DESIGN.md: log-probabilities where the probability underflows.
        la, lb = stats.norm.logsf(38.0), stats.norm.logsf(40.0)
        assert_allclose(b.normal.log_probability, la + math.log1p(-math.exp(lb - la)), rtol=1e-10)


class TestEmpirical:
    # Rounded to 0.5 so that some asked points coincide with values (ties at x).
    X = np.round(samples.normal(120, 301, loc=10.0, scale=2.0) * 2) / 2

    @pytest.mark.parametrize("x", [6.0, 9.5, 10.0, 12.5, 14.0, 30.0])
    def test_shares_against_a_direct_count(self, x):
        report = tails(raw(self.X), above=[x], below=[x])
        n = self.X.size
        # Reference: direct counts with numpy, strictly beyond x on each side.
        above, below = int(np.sum(self.X > x)), int(np.sum(self.X < x))
        assert report.above[0].empirical.count == above
        assert report.above[0].empirical.probability == pytest.approx(above / n, rel=1e-15)
        assert report.below[0].empirical.count == below
        assert report.below[0].empirical.probability == pytest.approx(below / n, rel=1e-15)

    @pytest.mark.parametrize("a, b", [(8.0, 12.0), (9.5, 10.0), (-5.0, 50.0), (20.0, 21.0)])
    def test_between_counts_the_half_open_interval(self, a, b):
        got = tails(raw(self.X), intervals=[(a, b)]).between[0].empirical
        # Reference: direct count of a < x <= b with numpy.
        assert got.count == int(np.sum((self.X > a) & (self.X <= b)))

    @pytest.mark.parametrize("x", [6.0, 10.0, 12.5, 30.0])
    def test_wilson_interval_against_statsmodels(self, x):
        got = tails(raw(self.X), above=[x]).above[0].empirical
        # Reference: statsmodels.stats.proportion.proportion_confint(method="wilson").
        lo, hi = proportion_confint(int(got.count), self.X.size, alpha=0.05, method="wilson")
        assert_allclose([got.interval.lower, got.interval.upper], [lo, hi], rtol=1e-12, atol=1e-15)
        assert got.interval.level == 0.95

    def test_z_uses_the_sample_sd(self):
        point = tails(raw(self.X), above=[13.0]).above[0]
        # Reference: numpy mean and std(ddof=1).
        assert_allclose(point.z, (13.0 - self.X.mean()) / self.X.std(ddof=1), rtol=1e-13)
        # Reference: scipy.stats.norm.sf with the sample mean and sd.
        assert_allclose(point.normal.probability, stats.norm.sf(13.0, self.X.mean(), self.X.std(ddof=1)), rtol=1e-12)


class TestWilson:
    @pytest.mark.parametrize("count, n", [(0, 10), (1, 10), (5, 10), (10, 10), (3, 58), (0, 1000), (999, 1000), (17.5, 40)])
    def test_against_statsmodels(self, count, n):
        got = wilson(count, n)
        # Reference: statsmodels.stats.proportion.proportion_confint(count, n, alpha=0.05,
        # method="wilson") (Wilson 1927); a fractional count as a histogram implies one.
        lo, hi = proportion_confint(count, n, alpha=0.05, method="wilson")
        assert_allclose([got.lower, got.upper], [lo, hi], rtol=1e-12, atol=1e-15)


class TestBounds:
    @pytest.mark.parametrize("z", [1.5, 2.0, 3.0, 6.0])
    def test_upper_side_formulas(self, z):
        b = tails(model(), above=[MEAN + z * SD]).above[0].bounds
        # Chebyshev's inequality P(|X - mean| >= k sd) <= 1/k^2 and Cantelli's one-sided
        # P(X - mean >= k sd) <= 1/(1 + k^2) (Cantelli 1928), with k = z.
        assert_allclose(b.chebyshev, 1 / z**2, rtol=1e-12)
        assert_allclose(b.cantelli, 1 / (1 + z**2), rtol=1e-12)
        # Both bound the normal tail (reference: scipy.stats.norm.sf): a bound below it is wrong.
        assert b.cantelli >= stats.norm.sf(z) and b.chebyshev >= 2 * stats.norm.sf(z)

    @pytest.mark.parametrize("z", [-1.5, -2.0, -4.0])
    def test_lower_side_formulas(self, z):
        b = tails(model(), below=[MEAN + z * SD]).below[0].bounds
        # Cantelli's inequality for the lower tail, k = -z (Cantelli 1928).
        assert_allclose(b.chebyshev, 1 / z**2, rtol=1e-12)
        assert_allclose(b.cantelli, 1 / (1 + z**2), rtol=1e-12)

    @pytest.mark.parametrize("z", [-1.0, -0.5, 0.0, 0.5, 1.0])
    def test_chebyshev_says_nothing_within_one_sd(self, z):
        b = tails(model(), above=[MEAN + z * SD]).above[0].bounds
        # Chebyshev's bound 1/k^2 is at least 1 for |k| <= 1 (formula): no information.
        assert isinstance(b.chebyshev, Unavailable)

    @pytest.mark.parametrize("z", [-2.0, -0.5, 0.0])
    def test_cantelli_needs_x_beyond_the_mean(self, z):
        b = tails(model(), above=[MEAN + z * SD]).above[0].bounds
        # Cantelli's bound holds for k > 0 only (Cantelli 1928).
        assert isinstance(b.cantelli, Unavailable)

    def test_chebyshev_is_not_offered_on_the_wrong_side(self):
        b = tails(model(), above=[MEAN - 2 * SD]).above[0].bounds
        # Chebyshev's inequality: P(X > mean - k sd) >= 1 - 1/k^2 = 0.75 for k = 2, so no
        # upper bound below 0.75 exists for this question, and the service offers none.
        assert isinstance(b.chebyshev, Unavailable)


class TestPartsPerMillion:
    X = samples.normal(400, 302, loc=100.0, scale=5.0)

    @pytest.mark.parametrize("lower, upper", [(85.0, 115.0), (90.0, 108.0), (None, 110.0), (92.0, None)])
    def test_normal_model_against_scipy(self, lower, upper):
        lim = tails(raw(self.X), lower_limit=lower, upper_limit=upper).limits
        mean, sd = self.X.mean(), self.X.std(ddof=1)
        # Reference: scipy.stats.norm.cdf below the lower limit and norm.sf above the upper,
        # with the sample mean and sd, times 1e6.
        below = stats.norm.cdf(lower, mean, sd) * 1e6 if lower is not None else None
        above = stats.norm.sf(upper, mean, sd) * 1e6 if upper is not None else None
        if below is None:
            assert isinstance(lim.normal.ppm_below, Unavailable)
        else:
            assert_allclose(lim.normal.ppm_below, below, rtol=1e-10)
        if above is None:
            assert isinstance(lim.normal.ppm_above, Unavailable)
        else:
            assert_allclose(lim.normal.ppm_above, above, rtol=1e-10)
        assert_allclose(lim.normal.ppm, (below or 0.0) + (above or 0.0), rtol=1e-10)

    @pytest.mark.parametrize("lower, upper", [(92.0, 107.0), (95.0, 105.0), (None, 104.0)])
    def test_empirical_against_a_direct_count(self, lower, upper):
        lim = tails(raw(self.X), lower_limit=lower, upper_limit=upper).limits
        n = self.X.size
        # Reference: direct count of values outside the limits, per million.
        below = np.sum(self.X < lower) / n * 1e6 if lower is not None else 0.0
        above = np.sum(self.X > upper) / n * 1e6
        assert_allclose(lim.empirical.ppm, below + above, rtol=1e-12)
        assert_allclose(lim.empirical.ppm_above, above, rtol=1e-12)

    def test_no_limits(self):
        # DESIGN.md (Inputs): never silently absent.
        assert isinstance(tails(raw(self.X), above=[101.0]).limits, Unavailable)


class TestMixtureProbabilities:
    @pytest.mark.parametrize("x", [-3.0, 0.0, 2.0, 5.0, 12.0])
    def test_above_and_below(self, x):
        report = tails(model(), above=[x], below=[x], mixture=MIXTURE)
        assert_allclose(report.above[0].mixture.probability, mixture_sf(x), rtol=1e-12)
        assert_allclose(report.below[0].mixture.probability, mixture_cdf(x), rtol=1e-12)

    def test_far_tail_log(self):
        point = tails(model(), above=[100.0], mixture=MIXTURE).above[0]
        # Reference: scipy.special.logsumexp over log w + scipy.stats.norm.logsf per component.
        ref = special.logsumexp([math.log(c.weight) + stats.norm.logsf(100.0, c.mean, c.sd) for c in MIXTURE])
        assert point.mixture.probability == 0.0
        assert_allclose(point.mixture.log_probability, ref, rtol=1e-12)

    def test_between_and_limits(self):
        report = tails(model(), intervals=[(1.0, 6.0)], lower_limit=-2.0, upper_limit=9.0, mixture=MIXTURE)
        assert_allclose(report.between[0].mixture.probability, mixture_cdf(6.0) - mixture_cdf(1.0), rtol=1e-12)
        assert_allclose(report.limits.mixture.ppm_below, mixture_cdf(-2.0) * 1e6, rtol=1e-12)
        assert_allclose(report.limits.mixture.ppm_above, mixture_sf(9.0) * 1e6, rtol=1e-12)

    @pytest.mark.parametrize("p", [0.001, 0.1, 0.5, 0.9, 0.999])
    def test_quantile_inverts_the_mixture_cdf(self, p):
        q = tails(model(), quantiles=[p], mixture=MIXTURE).quantiles[0].mixture
        assert mixture_cdf(q) == pytest.approx(p, abs=1e-10)

    def test_without_a_mixture(self):
        # DESIGN.md (Inputs): what cannot be computed is Unavailable, never invented.
        report = tails(model(), above=[1.0], quantiles=[0.5])
        assert isinstance(report.above[0].mixture, Unavailable)
        assert isinstance(report.quantiles[0].mixture, Unavailable)


class TestCornishFisher:
    @pytest.mark.parametrize("skew, kurt", [(0.0, 0.0), (0.447, 0.3), (0.5, 2.0), (-0.8, 1.5)])
    @pytest.mark.parametrize("p", [0.005, 0.1, 0.5, 0.9, 0.995])
    def test_formula_by_hand(self, skew, kurt, p):
        q = tails(model(skewness=skew, kurtosis=kurt), quantiles=[p]).quantiles[0]
        # Cornish & Fisher (1938), third-order expansion with z = scipy.stats.norm.ppf(p):
        # w = z + (z^2 - 1) S/6 + (z^3 - 3z) K/24 - (2 z^3 - 5 z) S^2/36 (form recalled from
        # memory; as in Abramowitz & Stegun 26.2.49), quantile = mean + sd * w.
        z = stats.norm.ppf(p)
        w = z + (z * z - 1) * skew / 6 + (z**3 - 3 * z) * kurt / 24 - (2 * z**3 - 5 * z) * skew**2 / 36
        assert_allclose(q.cornish_fisher, MEAN + SD * w, rtol=1e-12)
        # Reference: scipy.stats.norm.ppf for the normal-model quantile.
        assert_allclose(q.normal, MEAN + SD * z, rtol=1e-12)

    # Gamma(k): skewness 2/sqrt(k), excess kurtosis 6/k; chi-square(d): sqrt(8/d), 12/d
    # (textbook moments, recalled from memory; scipy.stats.<dist>.stats("mvsk") agrees).
    # Tolerance in sd units: CF's error shrinks like k^(-3/2); at p = 0.001-0.999 it is
    # 0.005 sd for Gamma(20) against 0.64 sd for the plain normal quantile.
    CASES = [("gamma20", stats.gamma(20.0), 0.01), ("gamma200", stats.gamma(200.0), 5e-4), ("chi2_100", stats.chi2(100), 0.003)]

    @pytest.mark.parametrize("name, dist, tol", CASES)
    @pytest.mark.parametrize("p", [0.001, 0.01, 0.05, 0.5, 0.95, 0.99, 0.999])
    def test_approaches_the_true_quantile(self, name, dist, tol, p):
        mean, var, skew, kurt = (float(v) for v in dist.stats("mvsk"))
        sd = math.sqrt(var)
        report = tails(model(mean, sd, 10**6, skew, kurt), quantiles=[p])
        # Reference: scipy.stats.gamma / chi2 .ppf.
        assert abs(report.quantiles[0].cornish_fisher - dist.ppf(p)) < tol * sd
        assert codes(report) == []

    @pytest.mark.parametrize("p", [0.001, 0.999])
    def test_better_than_the_normal_quantile(self, p):
        dist = stats.gamma(20.0)
        mean, var, skew, kurt = (float(v) for v in dist.stats("mvsk"))
        q = tails(model(mean, math.sqrt(var), 10**6, skew, kurt), quantiles=[p]).quantiles[0]
        # Reference: scipy.stats.gamma(20).ppf; the correction must gain a factor of 50 here.
        assert abs(q.cornish_fisher - dist.ppf(p)) * 50 < abs(q.normal - dist.ppf(p))

    def test_needs_skewness_and_kurtosis(self):
        # DESIGN.md (Inputs): a summary without skewness and kurtosis cannot give the expansion.
        q = tails(model(), quantiles=[0.9]).quantiles[0]
        assert isinstance(q.cornish_fisher, Unavailable)

    @pytest.mark.parametrize("z", [-3.0, 0.0, 1.5])
    def test_reduces_to_z_without_shape(self, z):
        # Formula: with S = K = 0 the expansion is z itself.
        assert cornish_fisher_z(np.array([z]), 0.0, 0.0)[0] == z


def cf_slope_min(skew: float, kurt: float, z: np.ndarray) -> float:
    """Smallest slope of the expansion over z, from its derivative by hand:
    1 + S z/3 + K (z^2 - 1)/8 - S^2 (6 z^2 - 5)/36."""
    return float(np.min(1 + skew * z / 3 + kurt * (z * z - 1) / 8 - skew**2 * (6 * z * z - 5) / 36))


class TestCornishFisherMonotone:
    # Pairs whose expansion is monotone on the whole line, or turns within |z| <= 4, so
    # that the verdict does not depend on the range checked (derivative by hand, above;
    # Maillard 2012 states the same domain, recalled from memory).
    @pytest.mark.parametrize("skew, kurt, monotone", [
        (0.0, 0.0, True), (0.5, 2.0, True), (0.0, 4.0, True), (-0.5, 2.0, True),
        (1.0, 0.0, False), (-1.0, 0.0, False), (0.0, -1.0, False), (0.914, 0.35, False),
    ])
    def test_warning(self, skew, kurt, monotone):
        whole_line = cf_slope_min(skew, kurt, np.linspace(-40, 40, 80001)) > 0
        within_4 = cf_slope_min(skew, kurt, np.linspace(-4, 4, 8001)) > 0
        assert whole_line == within_4 == monotone  # the case is as described
        report = tails(model(skewness=skew, kurtosis=kurt), quantiles=[0.01, 0.99])
        assert ("cornish-fisher-not-monotone" in codes(report)) is not monotone

    def test_crossing_quantiles_are_visible(self):
        report = tails(model(skewness=1.0, kurtosis=0.0), quantiles=[0.9999, 0.999999])
        # The derivative by hand is negative beyond z = 1 + sqrt(7.83) = 3.80: the higher p
        # gets the lower quantile, as the warning says.
        assert report.quantiles[1].cornish_fisher < report.quantiles[0].cornish_fisher
        assert "cornish-fisher-not-monotone" in codes(report)

    def test_warning_covers_the_quantiles_asked(self):
        report = tails(model(skewness=0.0, kurtosis=-0.2), quantiles=[1e-12, 1e-11])
        q = [point.cornish_fisher for point in report.quantiles]
        # Derivative by hand: 1 - 0.2 (z^2 - 1)/8 < 0 for |z| > 6.4; z = norm.ppf(1e-12) = -7.03.
        assert q[0] > q[1]  # the quantiles do cross
        assert "cornish-fisher-not-monotone" in codes(report)


class TestRequestOrder:
    def test_answers_follow_the_request(self):
        above, below, between, probs = [60.0, 40.0, 75.0, 50.0], [45.0, 70.0, 30.0], [(55.0, 65.0), (20.0, 45.0)], [0.9, 0.1, 0.5, 0.99]
        report = tails(model(), above=above, below=below, intervals=between, quantiles=probs)
        assert [p.x for p in report.above] == above
        assert [p.x for p in report.below] == below
        assert [b.interval for b in report.between] == between
        assert [q.p for q in report.quantiles] == probs
        # Reference: scipy.stats.norm.sf in the same order.
        assert_allclose([p.normal.probability for p in report.above], stats.norm.sf(above, MEAN, SD), rtol=1e-12)


class TestForms:
    # DESIGN.md (Inputs): a summary allows normal-model tails, Cornish-Fisher quantiles and
    # distribution-free bounds; the rest is Unavailable.
    def test_summary_gives_normal_model_and_bounds_only(self):
        report = tails(model(skewness=0.3, kurtosis=0.2), above=[60.0], below=[40.0], intervals=[(45.0, 55.0)],
                       lower_limit=30.0, upper_limit=70.0, quantiles=[0.5])
        assert isinstance(report.above[0].empirical, Unavailable)
        assert isinstance(report.below[0].empirical, Unavailable)
        assert isinstance(report.between[0].empirical, Unavailable)
        assert isinstance(report.limits.empirical, Unavailable)
        assert isinstance(report.quantiles[0].empirical, Unavailable)
        assert isinstance(report.above[0].bounds.cantelli, float)
        assert isinstance(report.quantiles[0].cornish_fisher, float)

    def test_partials_give_the_normal_model_and_cornish_fisher(self):
        x = samples.gamma(90, 303, 5.0)
        parts = [x[:40], x[40:]]
        # Shards as the caller's batch engine sends them: n, mean and central power sums.
        profile = profile_of_partials([Partial(p.size, p.mean(), *(float(np.sum((p - p.mean()) ** k)) for k in (2, 3, 4)))
                                       for p in parts])
        report = tails(profile, above=[8.0], quantiles=[0.9])
        # Reference: scipy.stats.norm.sf with the mean and sd of all the values (numpy std(ddof=1)).
        assert_allclose(report.above[0].normal.probability, stats.norm.sf(8.0, x.mean(), x.std(ddof=1)), rtol=1e-10)
        assert isinstance(report.above[0].empirical, Unavailable)
        # Reference: the formula by hand with scipy.stats.skew / kurtosis(bias=False) of all the values.
        S, K, z = stats.skew(x, bias=False), stats.kurtosis(x, bias=False), stats.norm.ppf(0.9)
        w = z + (z * z - 1) * S / 6 + (z**3 - 3 * z) * K / 24 - (2 * z**3 - 5 * z) * S**2 / 36
        assert_allclose(report.quantiles[0].cornish_fisher, x.mean() + x.std(ddof=1) * w, rtol=1e-10)

    @pytest.mark.parametrize("x, share_below", [(10.5, 15 / 58), (12.0, 29 / 58), (8.5, 0.0), (15.0, 49.5 / 58)])
    def test_histogram_binned_share(self, x, share_below):
        profile = profile_of_histogram(check_histogram(EDGES, COUNTS))
        report = tails(profile, above=[x], below=[x])
        # Grouped-data share, linear within the bin (by hand from the counts: e.g. at 10.5,
        # 8 values below 10 and half the 14 in [10, 11]).
        assert_allclose(report.below[0].empirical.probability, share_below, rtol=1e-12, atol=1e-15)
        assert_allclose(report.above[0].empirical.probability, 1 - share_below, rtol=1e-12)
        # Reference: statsmodels proportion_confint(method="wilson") on the implied count.
        lo, hi = proportion_confint((1 - share_below) * 58, 58, alpha=0.05, method="wilson")
        assert_allclose([report.above[0].empirical.interval.lower, report.above[0].empirical.interval.upper], [lo, hi], rtol=1e-12)

    def test_histogram_open_bin(self):
        profile = profile_of_histogram(check_histogram(EDGES, COUNTS))
        # 17 lies in the open bin [16, +inf) holding 4 values: no share can be read there.
        assert isinstance(tails(profile, above=[17.0]).above[0].empirical, Unavailable)

    def test_raw_values_give_everything(self):
        report = tails(raw(samples.normal(60, 304)), above=[1.0], quantiles=[0.25], mixture=MIXTURE)
        assert isinstance(report.above[0].empirical, Empirical)
        x = np.sort(samples.normal(60, 304))
        # Reference: numpy.quantile (linear, Hyndman & Fan 7, the default definition).
        assert_allclose(report.quantiles[0].empirical, np.quantile(x, 0.25), rtol=1e-13)
