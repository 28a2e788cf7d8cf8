"""Tests for the normality battery: each test against a reference library, minimum
sizes, bounds, accuracy flags and the calibration of Shapiro-Francia."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats
from statsmodels.stats._lilliefors import pval_lf
from statsmodels.stats.diagnostic import lilliefors as sm_lilliefors
from statsmodels.stats.diagnostic import normal_ad

from service.stats.forms import Sample
from service.stats.moments import central_moments
from service.stats.normality.battery import TEST_NAMES, run_tests
from service.stats.normality.edf_tests import Standardised, dallal_wilkinson_p, lilliefors
from service.stats.normality.regression_tests import blom_scores, shapiro_francia, shapiro_wilk
from service.stats.normality.result import TestResult, decide

from . import samples

# Seeded samples (normal, lognormal, uniform, t(3)) and open data sets; see samples.py.
NAMES = ["normal_n12", "normal_n50", "lognormal_n40", "uniform_n100", "t3_n200", "lognormal_n500", "diabetes", "nile"]


def battery(x, alpha: float = 0.05):
    return run_tests(Sample.from_array(x), alpha)


def quiet(fn, *args, **kwargs):
    """Call a scipy reference that warns about small or large samples."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        warnings.simplefilter("ignore", RuntimeWarning)
        return fn(*args, **kwargs)


_GENERATORS = {
    "normal": lambda n, seed: samples.normal(n, seed),
    "gamma8": lambda n, seed: samples.gamma(n, seed, 8.0),
    "t5": lambda n, seed: samples.student_t(n, seed, 5.0),
    "lognormal": lambda n, seed: samples.lognormal(n, seed, 0.25),
    "uniform": lambda n, seed: samples.uniform(n, seed),
}
# Seeded samples whose composite-case p-values lie in the range that decides (about
# 0.02 to 0.2), where Stephens' formulas are meant to be accurate.
MC_CASES = [
    ("normal", 20, 9103),
    ("normal", 50, 9202),
    ("normal", 100, 9300),
    ("gamma8", 60, 9400),
    ("t5", 80, 9500),
    ("lognormal", 40, 9601),
    ("uniform", 30, 9700),
]
MC_DRAWS = 20_000


def monte_carlo_check(statistic: str, name: str, n: int, seed: int, ours: TestResult) -> None:
    x = _GENERATORS[name](n, seed)
    # Reference: scipy.stats.goodness_of_fit(norm, statistic=...), the composite case
    # (mean and sd fitted to every draw) by parametric bootstrap, 20 000 seeded draws.
    # Tolerance: 4 binomial standard errors sqrt(p(1-p)/m), plus 1/m for the (b+1)/(m+1)
    # convention.
    ref = stats.goodness_of_fit(stats.norm, x, statistic=statistic, n_mc_samples=MC_DRAWS, rng=np.random.default_rng(seed))
    assert_allclose(ref.statistic, ours.statistic, rtol=1e-10)
    assert ref.pvalue <= 0.25  # the case is in the range it is meant to check
    tol = 4 * math.sqrt(ref.pvalue * (1 - ref.pvalue) / MC_DRAWS) + 1 / MC_DRAWS
    assert abs(ours.p_value - ref.pvalue) < tol


class TestShapiroWilk:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).shapiro_wilk
        # Reference: scipy.stats.shapiro (Royston's AS R94).
        ref = stats.shapiro(x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-12)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-10, atol=1e-300)
        assert t.reject == (ref.pvalue < 0.05)
        assert t.reason is None and t.p_value_bound is None

    def test_too_few_observations(self):
        t = battery([1.0, 2.0]).shapiro_wilk
        assert not t.applicable and t.statistic is None and t.p_value is None and t.reject is None
        assert "at least 3" in t.reason and "n=2" in t.reason
        assert battery([1.0, 2.0, 4.0]).shapiro_wilk.applicable

    def test_large_n_reason_without_subsampling(self):
        x = samples.normal(5001, 61)
        t = battery(x).shapiro_wilk
        # Reference: scipy.stats.shapiro on all 5001 values (it warns above 5000).
        ref = quiet(stats.shapiro, x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-12)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-10)
        assert t.reason is not None and "5000" in t.reason and "n=5001" in t.reason

    def test_no_reason_at_5000(self):
        assert shapiro_wilk(np.sort(samples.normal(5000, 62)), 0.05).reason is None


class TestShapiroFrancia:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).shapiro_francia
        s = np.sort(x)
        n = s.size
        # Reference: Shapiro & Francia (1972): W' is the squared Pearson correlation of
        # the ordered sample with approximate expected normal order statistics; Blom
        # (1958) scores Phi^{-1}((i - 3/8)/(n + 1/4)) via scipy.stats.norm.ppf, and the
        # correlation via numpy.corrcoef.
        m = stats.norm.ppf((np.arange(1, n + 1) - 0.375) / (n + 0.25))
        assert_allclose(t.statistic, np.corrcoef(s, m)[0, 1] ** 2, rtol=1e-12)

    @pytest.mark.parametrize("name", ["normal_n12", "normal_n50", "lognormal_n40", "nile"])
    def test_p_value_transformation(self, name):
        x = np.sort(samples.named(name))
        t = shapiro_francia(x, 0.05)
        # Royston (1993), constants recalled from memory: with u = ln n and v = ln u,
        # ln(1 - W') is approximately normal with mean -1.2725 + 1.0521 (v - u) and sd
        # 1.0308 - 0.26758 (v + 2/u); p = upper normal tail (scipy.stats.norm.sf).
        u = math.log(x.size)
        v = math.log(u)
        z = (math.log(1 - t.statistic) - (-1.2725 + 1.0521 * (v - u))) / (1.0308 - 0.26758 * (v + 2 / u))
        assert_allclose(t.p_value, stats.norm.sf(z), rtol=1e-12)

    def test_blom_scores(self):
        # Reference: scipy.stats.norm.ppf at Blom's plotting positions (Blom 1958).
        n = 17
        assert_allclose(blom_scores(n), stats.norm.ppf((np.arange(1, n + 1) - 3 / 8) / (n + 1 / 4)), rtol=1e-13, atol=1e-15)

    @pytest.mark.parametrize("n, seed", [(50, 71), (100, 72), (200, 73), (1000, 74)])
    def test_close_to_shapiro_wilk(self, n, seed):
        # Common practice (Royston 1993): W' approximates W closely for n >= 50;
        # reference W from scipy.stats.shapiro. Loose tolerance 0.01.
        x = np.sort(samples.normal(n, seed))
        assert abs(shapiro_francia(x, 0.05).statistic - stats.shapiro(x).statistic) < 0.01

    def test_calibration(self):
        # Under normality the p-values are uniform: 2000 seeded normal samples of n=50.
        # The KS test against U(0, 1) (scipy.stats.kstest) must not reject at 0.001; the
        # rejection rate at 0.05 must be within 3 binomial standard errors of 0.05.
        rng = np.random.default_rng(20240603)
        reps = 2000
        p = np.array([shapiro_francia(np.sort(rng.normal(size=50)), 0.05).p_value for _ in range(reps)])
        assert stats.kstest(p, "uniform").pvalue > 0.001
        se = math.sqrt(0.05 * 0.95 / reps)
        assert abs(np.mean(p < 0.05) - 0.05) < 3 * se

    def test_power_against_lognormal(self):
        # The calibration test above cannot tell a useless test from a good one: on
        # lognormal samples of n=50 (skewness about 1.75) W' rejects most of the time.
        rng = np.random.default_rng(20240604)
        p = np.array([shapiro_francia(np.sort(rng.lognormal(0.0, 0.5, 50)), 0.05).p_value for _ in range(200)])
        assert np.mean(p < 0.05) > 0.8

    def test_too_few_observations(self):
        t = battery([1.0, 2.0, 4.0, 8.0]).shapiro_francia
        assert not t.applicable and "at least 5" in t.reason and "n=4" in t.reason
        assert battery([1.0, 2.0, 4.0, 8.0, 16.0]).shapiro_francia.applicable

    def test_large_n_reason(self):
        t = shapiro_francia(np.sort(samples.normal(5001, 63)), 0.05)
        assert t.applicable and "5000" in t.reason


class TestDagostinoPearson:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).dagostino_pearson
        # Reference: scipy.stats.normaltest (D'Agostino & Pearson K^2).
        ref = quiet(stats.normaltest, x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-10)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-9, atol=1e-300)

    def test_too_few_observations(self):
        # D'Agostino (1970): the skewness transformation needs n >= 8 (scipy.stats.skewtest
        # refuses below 8 too).
        x = samples.normal(7, 81)
        t = battery(x).dagostino_pearson
        assert not t.applicable and "at least 8" in t.reason and "n=7" in t.reason
        assert math.isnan(quiet(stats.skewtest, x).statistic)  # scipy 1.17: NaN below 8
        t8 = battery(samples.normal(8, 82)).dagostino_pearson
        assert t8.applicable and "20" in t8.reason  # the kurtosis part is rough below 20

    def test_no_reason_from_20(self):
        assert battery(samples.normal(20, 83)).dagostino_pearson.reason is None


class TestSkewnessTest:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).skewness_test
        # Reference: scipy.stats.skewtest (D'Agostino 1970).
        ref = stats.skewtest(x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-10)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-9, atol=1e-300)

    def test_too_few_observations(self):
        t = battery(samples.normal(7, 84)).skewness_test
        assert not t.applicable and "at least 8" in t.reason
        assert battery(samples.normal(8, 84)).skewness_test.applicable


class TestKurtosisTest:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).kurtosis_test
        # Reference: scipy.stats.kurtosistest (Anscombe & Glynn 1983).
        ref = quiet(stats.kurtosistest, x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-10)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-9, atol=1e-300)

    @pytest.mark.parametrize("n", [5, 8, 19])
    def test_small_n_reason(self, n):
        x = samples.normal(n, 85)
        t = battery(x).kurtosis_test
        assert t.applicable and "20" in t.reason
        # Reference: scipy.stats.kurtosistest.
        ref = quiet(stats.kurtosistest, x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-10)

    def test_too_few_observations(self):
        # Anscombe & Glynn (1983): n >= 5 (scipy.stats.kurtosistest refuses below 5 too).
        x = samples.normal(4, 86)
        t = battery(x).kurtosis_test
        assert not t.applicable and "at least 5" in t.reason and "n=4" in t.reason
        assert math.isnan(quiet(stats.kurtosistest, x).statistic)  # scipy 1.17: NaN below 5

    @pytest.mark.parametrize("name", ["kurtosis_test", "dagostino_pearson", "jarque_bera"])
    def test_too_few_observations_reason_n3(self, name):
        t = getattr(battery([1.0, 2.0, 4.0]), name)
        assert not t.applicable
        assert "at least" in t.reason and "n=3" in t.reason


class TestJarqueBera:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).jarque_bera
        # Reference: scipy.stats.jarque_bera.
        ref = stats.jarque_bera(x)
        assert_allclose(t.statistic, ref.statistic, rtol=1e-10)
        assert_allclose(t.p_value, ref.pvalue, rtol=1e-9, atol=1e-300)

    @pytest.mark.parametrize("n, alpha, claimed", [(10, 0.05, 0.009), (20, 0.05, 0.026), (100, 0.01, 0.018)])
    def test_size_claims(self, n, alpha, claimed):
        # moment_tests.py (and the README) quote their own simulation of the rejection
        # rate under normality (regression values, 20 000 samples each). Reference: a
        # fresh seeded simulation with scipy.stats.jarque_bera; tolerance 4 standard
        # errors of the difference of two binomial proportions.
        reps = 20_000
        x = np.random.default_rng(20240606 + n).normal(size=(reps, n))
        rate = np.mean(stats.jarque_bera(x, axis=1).pvalue < alpha)
        se = math.sqrt(2 * claimed * (1 - claimed) / reps)
        assert abs(rate - claimed) < 4 * se
        assert abs(rate - alpha) > 4 * se  # the size really is off at this n

    def test_small_n_reason(self):
        # Common practice (and the design): the chi-square approximation is poor below
        # about n = 1000, so the result says so.
        assert "1000" in battery(samples.normal(200, 87)).jarque_bera.reason
        assert battery(samples.normal(1000, 87)).jarque_bera.reason is None

    def test_too_few_observations(self):
        t = battery([1.0, 2.0, 4.0]).jarque_bera
        assert not t.applicable
        assert battery([1.0, 2.0, 4.0, 8.0]).jarque_bera.applicable


class TestAndersonDarling:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).anderson_darling
        # Reference: scipy.stats.anderson(method='interpolate') for A^2 (mean and ddof=1
        # sd estimated), statsmodels.stats.diagnostic.normal_ad for the p-value of the
        # same statistic by Stephens' formulas (D'Agostino & Stephens 1986, Table 4.9).
        assert_allclose(t.statistic, stats.anderson(x, method="interpolate").statistic, rtol=1e-10)
        a_star = t.statistic * (1 + 0.75 / x.size + 2.25 / x.size**2)
        if a_star <= 10:
            assert t.p_value_bound is None
            assert_allclose(t.p_value, normal_ad(x)[1], rtol=1e-10, atol=1e-300)

    def test_bound_beyond_formula_edge(self):
        # lognormal (sigma=1), n=500: A* is far beyond 10, where the formula was not fitted.
        x = samples.lognormal(500, 106, sigma=1.0)
        t = battery(x).anderson_darling
        assert t.statistic > 10
        assert t.p_value_bound == "<" and t.reject is True
        # Reference: statsmodels normal_ad returns 0 there; the bound is tiny but positive.
        assert normal_ad(x)[1] == 0.0
        assert 0.0 < t.p_value < 1e-20

    @pytest.mark.parametrize("name, n, seed", MC_CASES)
    def test_monte_carlo_p_value(self, name, n, seed):
        monte_carlo_check("ad", name, n, seed, battery(_GENERATORS[name](n, seed)).anderson_darling)

    def test_monte_carlo_p_value_upper_range(self):
        x = samples.normal(300, 1300)
        t = battery(x).anderson_darling
        # Reference: scipy.stats.goodness_of_fit(norm, statistic='ad'), 20 000 draws.
        m = 20_000
        ref = stats.goodness_of_fit(stats.norm, x, statistic="ad", n_mc_samples=m, rng=np.random.default_rng(0))
        assert ref.pvalue > 0.5
        # Stephens' formulas are fitted for the range that decides; above p = 0.5 they
        # run a few hundredths low (measured here: 0.555 against 0.585 +- 0.0035), which
        # changes no decision at alpha <= 0.1. The tolerance states that limit.
        assert t.p_value < ref.pvalue
        assert abs(t.p_value - ref.pvalue) < 0.05

    def test_too_few_observations(self):
        t = battery(samples.normal(7, 96)).anderson_darling
        assert not t.applicable and "at least 8" in t.reason
        assert battery(samples.normal(8, 96)).anderson_darling.applicable


class TestLilliefors:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).lilliefors
        mean, sd = np.mean(x), np.std(x, ddof=1)
        # Reference: scipy.stats.kstest against N(mean, sd) with the sample's mean and
        # ddof=1 sd for D; statsmodels lilliefors(pvalmethod='approx') for D and, where
        # the Dallal-Wilkinson approximation applies (p <= 0.1), the p-value.
        assert_allclose(t.statistic, stats.kstest(x, "norm", args=(mean, sd)).statistic, rtol=1e-12)
        d_sm, p_sm = sm_lilliefors(x, dist="norm", pvalmethod="approx")
        assert_allclose(t.statistic, d_sm, rtol=1e-12)
        # Reference: statsmodels.stats._lilliefors.pval_lf, the Dallal-Wilkinson formula.
        assert_allclose(dallal_wilkinson_p(t.statistic, x.size), pval_lf(t.statistic, x.size), rtol=1e-12)
        if pval_lf(t.statistic, x.size) <= 0.1:
            assert t.p_value_bound is None
            assert_allclose(t.p_value, p_sm, rtol=1e-10, atol=1e-300)
        else:
            # Dallal & Wilkinson (1986): the formula holds for p <= 0.10 only; above
            # that the result is the bound "> 0.1" (README, The normality tests).
            assert t.p_value_bound == ">" and t.p_value == 0.1

    @pytest.mark.parametrize("seed", [101, 102, 103])
    def test_bound_above_0_1(self, seed):
        x = samples.normal(60, seed)
        t = battery(x).lilliefors
        # Reference: statsmodels lilliefors(pvalmethod='table') gives p > 0.1 for these
        # normal samples, so the bound "> 0.1" is honest.
        p_table = sm_lilliefors(x, dist="norm", pvalmethod="table")[1]
        assert p_table > 0.1
        # Dallal & Wilkinson (1986): valid for p <= 0.10, so the result is "> 0.1".
        assert t.p_value_bound == ">" and t.p_value == 0.1
        assert t.reject is False  # a bound above 0.1 decides at alpha = 0.05
        assert battery(x, alpha=0.2).lilliefors.reject is None  # but not at alpha = 0.2

    def test_large_n_rescaling(self):
        # Dallal & Wilkinson (1986): above n = 100, D is rescaled by (n/100)^0.49 and
        # n set to 100. Reference: statsmodels pval_lf.
        assert_allclose(dallal_wilkinson_p(0.05, 1000), pval_lf(0.05, 1000), rtol=1e-12)
        assert_allclose(dallal_wilkinson_p(0.05, 1000), dallal_wilkinson_p(0.05 * 10**0.49, 100), rtol=1e-12)

    def test_too_few_observations(self):
        x = np.sort(samples.normal(4, 104))
        t = lilliefors(Standardised(x, central_moments(x)), 0.05)
        assert not t.applicable and "at least 5" in t.reason
        assert battery(samples.normal(5, 104)).lilliefors.applicable


class TestCramerVonMises:
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name):
        x = samples.named(name)
        t = battery(x).cramer_von_mises
        mean, sd = np.mean(x), np.std(x, ddof=1)
        # Reference: scipy.stats.cramervonmises against N(mean, sd), sample mean and
        # ddof=1 sd.
        assert_allclose(t.statistic, stats.cramervonmises(x, "norm", args=(mean, sd)).statistic, rtol=1e-10)

    @pytest.mark.parametrize("name, n, seed", MC_CASES)
    def test_monte_carlo_p_value(self, name, n, seed):
        monte_carlo_check("cvm", name, n, seed, battery(_GENERATORS[name](n, seed)).cramer_von_mises)

    def test_bound_beyond_formula_edge(self):
        x = samples.lognormal(500, 106, sigma=1.0)
        t = battery(x).cramer_von_mises
        assert t.statistic * (1 + 0.5 / x.size) > 1.0
        assert t.p_value_bound == "<" and t.reject is True and 0.0 < t.p_value < 1e-6

    def test_too_few_observations(self):
        t = battery(samples.normal(7, 116)).cramer_von_mises
        assert not t.applicable and "at least 8" in t.reason


class TestBattery:
    @pytest.mark.parametrize("name", NAMES)
    def test_result_fields(self, name):
        tests = battery(samples.named(name)).as_dict()
        assert tuple(tests) == TEST_NAMES
        # The chi-square test is for histograms: on raw values it is present but does not apply.
        assert not tests.pop("chi_square").applicable
        for test_name, t in tests.items():
            assert isinstance(t, TestResult)
            assert t.method.name and t.method.reference, test_name
            assert t.applicable
            assert 0.0 <= t.p_value <= 1.0, test_name
            assert math.isfinite(t.statistic), test_name
            assert t.p_value_bound in (None, "<", ">")
            if t.p_value_bound is None:
                assert t.reject == (t.p_value < 0.05), test_name

    @pytest.mark.parametrize(
        "n, applicable",
        [
            (3, {"shapiro_wilk"}),
            (4, {"shapiro_wilk", "jarque_bera"}),
            (5, {"shapiro_wilk", "shapiro_francia", "kurtosis_test", "lilliefors", "jarque_bera"}),
            (8, set(TEST_NAMES) - {"chi_square"}),
        ],
    )
    def test_minimum_sizes(self, n, applicable):
        # Minimum sizes: Shapiro-Wilk n >= 3 (Royston 1995), Shapiro-Francia n >= 5
        # (Royston 1993), kurtosis test n >= 5 (Anscombe & Glynn 1983), skewness test
        # and K^2 n >= 8 (D'Agostino 1970), Lilliefors n >= 5 (Dallal & Wilkinson 1986),
        # AD and CvM n >= 8 (Stephens' modifications; recalled from memory), JB n >= 4
        # (common practice: g2 needs n >= 4).
        tests = battery(samples.normal(n, 120 + n)).as_dict()
        assert {k for k, t in tests.items() if t.applicable} == applicable
        for k, t in tests.items():
            if not t.applicable:
                assert t.reason and t.statistic is None and t.p_value is None and t.reject is None, k

    @pytest.mark.parametrize("n", [3, 8, 30, 300])
    def test_p_values_in_unit_interval_extreme_data(self, n):
        # Data with one far outlier and near-ties push every approximation to its edge.
        x = np.concatenate([np.zeros(n - 1) + np.arange(n - 1) * 1e-9, [1e6]])
        for k, t in battery(x).as_dict().items():
            if t.applicable:
                assert 0.0 <= t.p_value <= 1.0, k


class TestDecide:
    @pytest.mark.parametrize(
        "p, bound, alpha, expected",
        [
            (0.04, None, 0.05, True),
            (0.05, None, 0.05, False),
            (0.1, ">", 0.05, False),
            (0.1, ">", 0.1, False),
            (0.1, ">", 0.2, None),
            (1e-24, "<", 0.05, True),
            (1e-24, "<", 1e-30, None),
        ],
    )
    def test_reference_values(self, p, bound, alpha, expected):
        # A bound decides only on the right side of alpha (common practice: p < alpha
        # rejects; a bound "> b" accepts when b >= alpha, "< b" rejects when b <= alpha).
        assert decide(p, bound, alpha) is expected
