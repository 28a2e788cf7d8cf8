"""Tests for service.stats.summary (a summary as input): the moment tests, the conventions
and the feasibility bounds, against scipy on the raw values the summary was made from."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize, stats

from service.stats.describe import describe
from service.stats.normality.battery import RAW_ONLY, normality
from service.stats.profile import profile_of_summary
from service.stats.results import Unavailable
from service.stats.summary import InfeasibleSummary, Summary, summary_moments

from . import samples

# Seeded samples and open data sets shipped by installed packages (samples.py names them).
NAMES = ["normal_n12", "normal_n50", "lognormal_n40", "uniform_n100", "t3_n200", "lognormal_n500", "diabetes", "nile"]
CONVENTIONS = [("G1", "G2", "sample"), ("g1", "g2", "sample"), ("b1", "b2", "sample"), ("G1", "G2", "population")]
MOMENT_TESTS = ["skewness_test", "kurtosis_test", "dagostino_pearson", "jarque_bera"]


def quiet(fn, *args, **kwargs):
    """Call a scipy reference that warns about small samples (kurtosistest below n=20)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        return fn(*args, **kwargs)


def skewness_in(x: np.ndarray, convention: str) -> float:
    # Reference: scipy.stats.skew(bias=False) is G1 and skew(bias=True) is g1; b1 is
    # m3 / s^3 with the n-1 sd (Joanes & Gill 1998), from scipy.stats.moment and numpy.std.
    if convention == "G1":
        return float(stats.skew(x, bias=False))
    if convention == "g1":
        return float(stats.skew(x, bias=True))
    return float(stats.moment(x, 3) / np.std(x, ddof=1) ** 3)


def kurtosis_in(x: np.ndarray, convention: str) -> float:
    # Reference: scipy.stats.kurtosis(bias=False) is G2 and kurtosis(bias=True) is g2
    # (both excess); b2 is m4 / s^4 - 3 with the n-1 sd (Joanes & Gill 1998).
    if convention == "G2":
        return float(stats.kurtosis(x, bias=False))
    if convention == "g2":
        return float(stats.kurtosis(x, bias=True))
    return float(stats.moment(x, 4) / np.std(x, ddof=1) ** 4 - 3.0)


def summary_of(x: np.ndarray, skew_c: str = "G1", kurt_c: str = "G2", sd_c: str = "sample", **extra) -> Summary:
    return Summary(
        n=int(x.size),
        mean=float(np.mean(x)),
        sd=float(np.std(x, ddof=1 if sd_c == "sample" else 0)),
        skewness=skewness_in(x, skew_c),
        kurtosis=kurtosis_in(x, kurt_c),
        skewness_convention=skew_c,
        kurtosis_convention=kurt_c,
        sd_convention=sd_c,
        **extra,
    )


def scipy_moment_tests(x: np.ndarray) -> dict:
    # Reference: scipy.stats.skewtest, kurtosistest, normaltest and jarque_bera on the raw values.
    return {
        "skewness_test": quiet(stats.skewtest, x),
        "kurtosis_test": quiet(stats.kurtosistest, x),
        "dagostino_pearson": quiet(stats.normaltest, x),
        "jarque_bera": stats.jarque_bera(x),
    }


class TestMomentTestsFromSummary:
    """A summary gives the same moment-based tests as the raw values it summarises."""

    @pytest.mark.parametrize("skew_c, kurt_c, sd_c", CONVENTIONS)
    @pytest.mark.parametrize("name", NAMES)
    def test_reference_values(self, name, skew_c, kurt_c, sd_c):
        x = samples.named(name)
        report = normality(profile_of_summary(summary_of(x, skew_c, kurt_c, sd_c)))
        tests = report.tests.as_dict()
        for test, ref in scipy_moment_tests(x).items():
            assert tests[test].applicable, test
            assert_allclose(tests[test].statistic, ref.statistic, rtol=1e-9, err_msg=test)
            assert_allclose(tests[test].p_value, ref.pvalue, rtol=1e-9, err_msg=test)

    @pytest.mark.parametrize("name", ["normal_n50", "diabetes"])
    def test_raw_only_tests_say_why(self, name):
        tests = normality(profile_of_summary(summary_of(samples.named(name)))).tests.as_dict()
        for test in [*RAW_ONLY, "chi_square"]:
            assert tests[test].applicable is False, test
            assert tests[test].statistic is None and tests[test].p_value is None and tests[test].reject is None
        for test in RAW_ONLY:
            assert tests[test].reason == "needs raw values: a summary carries only moments"
        assert tests["chi_square"].reason == "needs a histogram, not summary"

    def test_skewness_alone_allows_the_skewness_test_only(self):
        x = samples.named("lognormal_n40")
        s = Summary(n=x.size, mean=float(x.mean()), sd=float(x.std(ddof=1)), skewness=float(stats.skew(x, bias=False)))
        report = normality(profile_of_summary(s))
        # Reference: scipy.stats.skewtest on the raw values.
        assert_allclose(report.tests.skewness_test.statistic, stats.skewtest(x).statistic, rtol=1e-9)
        assert report.tests.kurtosis_test.reason == "the input carries no kurtosis"
        assert report.tests.dagostino_pearson.reason == "needs both skewness and kurtosis"
        assert report.verdict.primary_test == "skewness_test"


class TestSummaryVerdict:
    @pytest.mark.parametrize("name", ["normal_n50", "lognormal_n500", "nile"])
    def test_primary_test_and_basis(self, name):
        verdict = normality(profile_of_summary(summary_of(samples.named(name)))).verdict
        assert verdict.primary_test == "dagostino_pearson"
        assert any("rests on the moments only" in reason for reason in verdict.reasons)
        assert set(verdict.supporting.not_applicable) == {*RAW_ONLY, "chi_square"}

    def test_skewed_summary_is_not_normal(self):
        verdict = normality(profile_of_summary(summary_of(samples.named("lognormal_n500")))).verdict
        # Reference: scipy.stats.normaltest on the raw values rejects far below 0.05.
        assert stats.normaltest(samples.named("lognormal_n500")).pvalue < 1e-10
        assert verdict.normal is False and verdict.label == "not_normal"


class TestConventionConversion:
    """describe converts the given convention to all three, for the given n."""

    @pytest.mark.parametrize("skew_c, kurt_c, sd_c", CONVENTIONS)
    @pytest.mark.parametrize("name", ["normal_n12", "lognormal_n40", "t3_n200", "diabetes"])
    def test_reference_values(self, name, skew_c, kurt_c, sd_c):
        x = samples.named(name)
        d = describe(profile_of_summary(summary_of(x, skew_c, kurt_c, sd_c)))
        # Reference: scipy.stats.skew / kurtosis / moment and numpy.std on the raw values
        # (skewness_in, kurtosis_in above).
        assert_allclose([d.skewness.G1, d.skewness.g1, d.skewness.b1],
                        [skewness_in(x, c) for c in ("G1", "g1", "b1")], rtol=1e-12)
        assert_allclose([d.kurtosis.G2, d.kurtosis.g2, d.kurtosis.b2],
                        [kurtosis_in(x, c) for c in ("G2", "g2", "b2")], rtol=1e-12)
        # Reference: numpy.std(ddof=1) and numpy.var(ddof=1), whatever sd_convention was sent.
        assert_allclose(d.spread.sd, np.std(x, ddof=1), rtol=1e-14)
        assert_allclose(d.spread.variance, np.var(x, ddof=1), rtol=1e-14)
        assert_allclose(d.location.mean, np.mean(x), rtol=1e-15)

    @pytest.mark.parametrize("name", ["normal_n50", "lognormal_n500"])
    def test_standard_errors(self, name):
        x = samples.named(name)
        n = x.size
        d = describe(profile_of_summary(summary_of(x)))
        # Reference: Joanes & Gill (1998), section 3: var(G1) = 6n(n-1)/((n-2)(n+1)(n+3)),
        # var(G2) = 4 var(G1) (n^2-1)/((n-3)(n+5)) under normality.
        se1 = math.sqrt(6.0 * n * (n - 1) / ((n - 2) * (n + 1) * (n + 3)))
        se2 = 2.0 * se1 * math.sqrt((n * n - 1.0) / ((n - 3) * (n + 5)))
        assert_allclose([d.skewness.se, d.kurtosis.se], [se1, se2], rtol=1e-14)
        assert_allclose(d.skewness.z, stats.skew(x, bias=False) / se1, rtol=1e-12)


class TestQuantileSkewness:
    @pytest.mark.parametrize("name", ["lognormal_n40", "uniform_n100", "diabetes", "nile"])
    def test_pearson_and_bowley(self, name):
        x = samples.named(name)
        # numpy.quantile's default is Hyndman & Fan 7.
        q1, med, q3 = (float(v) for v in np.quantile(x, [0.25, 0.5, 0.75]))
        d = describe(profile_of_summary(summary_of(x, q1=q1, median=med, q3=q3)))
        # Reference: Kenney & Keeping (1962): Pearson's second (median) skewness
        # 3 (mean - median) / sd and Bowley's (q3 + q1 - 2 median) / (q3 - q1), with numpy.
        assert_allclose(d.skewness.pearson_median, 3.0 * (np.mean(x) - med) / np.std(x, ddof=1), rtol=1e-12)
        assert_allclose(d.skewness.quartile, (q3 + q1 - 2.0 * med) / (q3 - q1), rtol=1e-12)
        assert_allclose([d.location.median, d.spread.q1, d.spread.q3, d.spread.iqr], [med, q1, q3, q3 - q1], rtol=1e-15)

    def test_median_alone_gives_pearson_only(self):
        x = samples.named("nile")
        d = describe(profile_of_summary(summary_of(x, median=float(np.median(x)))))
        # Reference: Kenney & Keeping (1962), 3 (mean - median) / sd, with numpy.
        assert_allclose(d.skewness.pearson_median, 3.0 * (x.mean() - np.median(x)) / x.std(ddof=1), rtol=1e-12)
        assert d.skewness.quartile == Unavailable("needs the quartiles and the median")
        assert d.spread.iqr == Unavailable("needs both quartiles")

    def test_nothing_but_moments(self):
        d = describe(profile_of_summary(summary_of(samples.named("nile"))))
        assert d.skewness.pearson_median == Unavailable("needs the median: median was not given in the summary")
        assert d.skewness.pearson_mode == Unavailable("needs the mode: needs raw values or a histogram, not summary")
        assert d.spread.min == Unavailable("min was not given in the summary")
        assert d.spread.mad == Unavailable("needs raw values, not summary")
        assert d.within_sd.one.observed == Unavailable("needs raw values or a histogram, not summary")


def extreme_sample(n: int) -> np.ndarray:
    """n - 1 equal values and one other: the sample that attains Dalen's bounds."""
    return np.array([0.0] * (n - 1) + [1.0])


def g1_of(x: np.ndarray) -> float:
    d = x - x.mean()
    m2 = np.mean(d * d)
    return float(np.mean(d**3) / m2**1.5) if m2 > 0 else 0.0


def b2_of(x: np.ndarray) -> float:
    d = x - x.mean()
    m2 = np.mean(d * d)
    return float(np.mean(d**4) / m2**2) if m2 > 0 else 0.0


class TestSampleBounds:
    """The bounds summary.py enforces are the ones samples of size n attain."""

    @pytest.mark.parametrize("n", [3, 4, 5, 10, 57, 1000])
    def test_extreme_sample_attains_skewness_bound(self, n):
        # Reference: scipy.stats.skew(bias=True) on n-1 zeros and a one; bound (n-2)/sqrt(n-1)
        # (Dalen 1987).
        assert_allclose(stats.skew(extreme_sample(n), bias=True), (n - 2) / math.sqrt(n - 1), rtol=1e-12)

    @pytest.mark.parametrize("n", [4, 5, 10, 57, 1000])
    def test_extreme_sample_attains_kurtosis_bound(self, n):
        # Reference: scipy.stats.kurtosis(fisher=False, bias=True) on n-1 zeros and a one;
        # bound (n^2-3n+3)/(n-1) (Dalen 1987).
        assert_allclose(stats.kurtosis(extreme_sample(n), fisher=False, bias=True), (n * n - 3 * n + 3) / (n - 1), rtol=1e-12)

    @pytest.mark.parametrize("n", [4, 6])
    def test_no_sample_exceeds_the_bounds(self, n):
        # A numerical search over samples of size n (Nelder-Mead from seeded starts) finds
        # the maxima of g1 and b2 at the bounds and never above them (Dalen 1987).
        best_g1 = best_b2 = 0.0
        for seed in (1, 2):
            start = np.random.default_rng(seed).normal(size=n)
            opts = {"xatol": 1e-10, "fatol": 1e-14, "maxiter": 8000, "maxfev": 8000}
            best_g1 = max(best_g1, -optimize.minimize(lambda x: -g1_of(x), start, method="Nelder-Mead", options=opts).fun)
            best_b2 = max(best_b2, -optimize.minimize(lambda x: -b2_of(x), start, method="Nelder-Mead", options=opts).fun)
        g1_bound, b2_bound = (n - 2) / math.sqrt(n - 1), (n * n - 3 * n + 3) / (n - 1)
        assert g1_bound * (1 - 1e-6) <= best_g1 <= g1_bound * (1 + 1e-12)
        assert b2_bound * (1 - 1e-6) <= best_b2 <= b2_bound * (1 + 1e-12)

    @pytest.mark.parametrize("n", [4, 5, 10, 57, 1000])
    def test_extreme_sample_is_accepted(self, n):
        # The extreme sample sits on all three bounds at once (its b2 equals 1 + g1^2 too,
        # Pearson 1916), so only the rounding slack lets it through: it must.
        x = extreme_sample(n)
        m = summary_moments(summary_of(x))
        # Reference: scipy.stats.skew / kurtosis (bias=True) on the raw values.
        assert_allclose([m.g1, m.g2], [stats.skew(x, bias=True), stats.kurtosis(x, bias=True)], rtol=1e-9)

    @pytest.mark.parametrize("n", [3, 10, 1000])
    def test_skewness_just_above_the_bound_is_refused(self, n):
        x = extreme_sample(n)
        s = Summary(n=n, mean=float(x.mean()), sd=float(x.std(ddof=1)), skewness=float(stats.skew(x, bias=False)) * (1 + 1e-6))
        with pytest.raises(InfeasibleSummary, match="exceeds") as err:
            summary_moments(s)
        assert err.value.pointer == "/summary/skewness"

    @pytest.mark.parametrize("n", [4, 10, 1000])
    def test_kurtosis_just_above_the_bound_is_refused(self, n):
        x = extreme_sample(n)
        # b2 raised by 1e-6 relative above Dalen's bound, given as g2 (no skewness given).
        g2 = (n * n - 3 * n + 3) / (n - 1) * (1 + 1e-6) - 3.0
        s = Summary(n=n, mean=float(x.mean()), sd=float(x.std(ddof=1)), kurtosis=g2, kurtosis_convention="g2")
        with pytest.raises(InfeasibleSummary, match="exceeds") as err:
            summary_moments(s)
        assert err.value.pointer == "/summary/kurtosis"


class TestPearsonBound:
    @pytest.mark.parametrize("n, k", [(10, 3), (30, 15), (7, 1)])
    def test_two_point_sample_is_accepted(self, n, k):
        # A two-point sample has b2 = 1 + g1^2 exactly (Pearson 1916: equality only for
        # two-point distributions).
        x = np.array([0.0] * k + [1.0] * (n - k))
        assert_allclose(stats.kurtosis(x, fisher=False, bias=True), 1 + stats.skew(x, bias=True) ** 2, rtol=1e-12)
        m = summary_moments(summary_of(x))
        assert_allclose(m.g2 + 3, 1 + m.g1**2, rtol=1e-9)

    @pytest.mark.parametrize("n, k", [(10, 3), (30, 15)])
    def test_kurtosis_below_the_bound_is_refused(self, n, k):
        x = np.array([0.0] * k + [1.0] * (n - k))
        g1 = float(stats.skew(x, bias=True))
        s = Summary(n=n, mean=float(x.mean()), sd=float(x.std(ddof=1)), skewness=g1, kurtosis=(1 + g1 * g1) * (1 - 1e-6) - 3,
                    skewness_convention="g1", kurtosis_convention="g2")
        with pytest.raises(InfeasibleSummary, match="Pearson") as err:
            summary_moments(s)
        assert err.value.pointer == "/summary/kurtosis"

    def test_kurtosis_without_skewness_below_one(self):
        # Pearson (1916) with g1 unknown: b2 = g2 + 3 >= 1.
        with pytest.raises(InfeasibleSummary, match="below 1") as err:
            summary_moments(Summary(n=20, mean=0.0, sd=1.0, kurtosis=-2.0 - 1e-6, kurtosis_convention="g2"))
        assert err.value.pointer == "/summary/kurtosis"


class TestInfeasibleSummary:
    @pytest.mark.parametrize(
        "fields, pointer",
        [
            ({"n": 1}, "/summary/n"),
            ({"sd": 0.0}, "/summary/sd"),
            ({"sd": -1.0}, "/summary/sd"),
            ({"n": 2, "skewness": 0.0}, "/summary/skewness"),
            ({"n": 3, "kurtosis": 0.0}, "/summary/kurtosis"),
            ({"q1": 1.0, "median": 0.5}, "/summary/median"),
            ({"median": 0.5, "q3": 0.2}, "/summary/q3"),
            ({"minimum": -1.0, "q1": -2.0}, "/summary/q1"),
            ({"minimum": 0.5}, "/summary/mean"),
            ({"maximum": -0.5}, "/summary/mean"),
            ({"minimum": -1.0, "maximum": 1.0, "sd": 1.2}, "/summary/sd"),
        ],
    )
    def test_refused_with_pointer(self, fields, pointer):
        s = Summary(**{"n": 10, "mean": 0.0, "sd": 1.0, **fields})
        with pytest.raises(InfeasibleSummary) as err:
            summary_moments(s)
        assert err.value.pointer == pointer
        assert err.value.code == "infeasible-summary"

    @pytest.mark.parametrize("sd_convention, sd", [("sample", 1.0), ("population", 1.0)])
    def test_bhatia_davis_bound_is_attained(self, sd_convention, sd):
        # Bhatia & Davis (2000): the population variance is at most (max - mean)(mean - min),
        # with equality for values at min and max only. Half at -1 and half at +1 (n=10):
        # population sd 1, sample sd sqrt(10/9).
        x = np.array([-1.0] * 5 + [1.0] * 5)
        sd = float(np.std(x, ddof=1 if sd_convention == "sample" else 0))
        m = summary_moments(Summary(n=10, mean=0.0, sd=sd, minimum=-1.0, maximum=1.0, sd_convention=sd_convention))
        # Reference: numpy.var(ddof=0) of the same values.
        assert_allclose(m.m2, np.var(x), rtol=1e-12)
        with pytest.raises(InfeasibleSummary, match="Bhatia-Davis"):
            summary_moments(Summary(n=10, mean=0.0, sd=sd * (1 + 1e-6), minimum=-1.0, maximum=1.0, sd_convention=sd_convention))

    def test_median_too_far_from_the_mean_is_refused(self):
        # For any sample, |mean - median| = |E(X - median)| <= E|X - median| <= E|X - mean|
        # <= population sd (the median minimises E|X - c|; then Jensen), so |Pearson's median
        # skewness| <= 3 (Hotelling & Solomons 1932; Mallows 1991, Am. Stat. 45(3):257 --
        # citations recalled from memory, the chain of inequalities is the proof).
        # Our value: accepted, pearson_median = -15 for mean 0, sd 1, median 5.
        with pytest.raises(InfeasibleSummary) as err:
            summary_moments(Summary(n=10, mean=0.0, sd=1.0, median=5.0))
        assert err.value.pointer == "/summary/median"
