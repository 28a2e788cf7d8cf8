"""Tests for service.stats.transforms: Box-Cox and Yeo-Johnson lambda and its
profile-likelihood interval against scipy, the suggested simple lambda, normality
before and after, and the back-transform note."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize, stats

from service.stats.forms import Sample
from service.stats.normality.battery import NormalityOptions
from service.stats.transforms import transform

from . import samples


def rng(seed: int) -> np.random.Generator:
    return np.random.default_rng(seed)


# Seeded samples: positive and skewed, counts, and some with zeros or negative values.
DATA = {
    "lognormal": lambda: rng(601).lognormal(1.0, 0.7, 150),
    "gamma3": lambda: samples.gamma(200, 602, 3.0),
    "exponential": lambda: rng(702).exponential(size=300),
    "poisson30": lambda: rng(703).poisson(30, 2000).astype(float),
    "poisson10": lambda: rng(703).poisson(10, 2000).astype(float),
    "normal": lambda: samples.normal(100, 705, loc=20.0, scale=2.0),
}
POSITIVE = ["lognormal", "gamma3", "exponential", "poisson30", "poisson10", "normal"]
ANY_SIGN = {
    "shifted_lognormal": lambda: rng(601).lognormal(1.0, 0.7, 150) - 3.0,
    "counts_with_zeros": lambda: rng(706).poisson(2, 120).astype(float),
    "normal_around_zero": lambda: samples.normal(100, 707),
    "left_skewed": lambda: -rng(708).gamma(2.0, size=200),
}


def run(x, confidence: float = 0.95):
    return transform(Sample.from_array(x), NormalityOptions(), confidence=confidence)


def profile_interval(llf, lam: float, confidence: float) -> tuple[float, float]:
    """Our own profile-likelihood interval: where llf falls chi2_1(confidence)/2 below its
    top (Box & Cox 1964, section 2), by Brent's root finder on each side."""
    cut = stats.chi2.ppf(confidence, 1) / 2
    top = llf(lam)

    def drop(t):
        return top - llf(t) - cut

    return optimize.brentq(drop, lam - 2.0, lam, xtol=1e-12), optimize.brentq(drop, lam, lam + 2.0, xtol=1e-12)


class TestBoxCox:
    @pytest.mark.parametrize("name", POSITIVE)
    def test_lambda_against_scipy(self, name):
        x = DATA[name]()
        fit = run(x).box_cox
        # Reference: scipy.stats.boxcox (maximum likelihood lambda).
        _, lam = stats.boxcox(x)
        assert fit.applicable and fit.reason is None
        assert fit.lambda_ == pytest.approx(lam, abs=1e-6)

    @pytest.mark.parametrize("name", POSITIVE)
    def test_interval_against_scipy(self, name):
        x = DATA[name]()
        fit = run(x).box_cox
        # Reference: scipy.stats.boxcox(x, alpha=0.05), the profile-likelihood interval.
        _, _, (lo, hi) = stats.boxcox(x, alpha=0.05)
        assert_allclose(fit.interval, (lo, hi), atol=1e-6)

    @pytest.mark.parametrize("confidence", [0.8, 0.9, 0.99])
    def test_other_levels(self, confidence):
        x = DATA["gamma3"]()
        fit = run(x, confidence).box_cox
        # Reference: scipy.stats.boxcox(x, alpha=1 - confidence).
        _, _, (lo, hi) = stats.boxcox(x, alpha=1 - confidence)
        assert_allclose(fit.interval, (lo, hi), atol=1e-6)

    @pytest.mark.parametrize("name", ["counts_with_zeros", "normal_around_zero", "left_skewed"])
    def test_not_applicable_without_positive_data(self, name):
        report = run(ANY_SIGN[name]())
        fit = report.box_cox
        # Box & Cox (1964): x^lambda and log x need x > 0.
        assert fit.applicable is False
        assert fit.lambda_ is None and fit.interval is None and fit.after is None and fit.suggested is None
        assert "strictly positive" in fit.reason
        assert report.yeo_johnson.applicable is True

    def test_lambda_at_the_search_bound_is_flagged(self):
        z = np.clip(rng(701).normal(size=300), -5, 5)
        x = (1 + 8 * 0.02 * z) ** (1 / 8)  # Box-Cox with lambda 8 makes these exactly normal
        fit = run(x).box_cox
        # Reference: scipy.stats.boxcox puts the MLE far beyond the service's range [-5, 5].
        assert stats.boxcox(x)[1] > 5
        assert fit.reason is not None and "search bound" in fit.reason


class TestYeoJohnson:
    @pytest.mark.parametrize("name", [*POSITIVE, *ANY_SIGN])
    def test_lambda_against_scipy(self, name):
        x = (DATA | ANY_SIGN)[name]()
        fit = run(x).yeo_johnson
        # Reference: scipy.stats.yeojohnson (maximum likelihood lambda).
        _, lam = stats.yeojohnson(x)
        assert fit.applicable and fit.reason is None
        assert fit.lambda_ == pytest.approx(lam, abs=1e-6)

    @pytest.mark.parametrize("confidence", [0.9, 0.95, 0.99])
    @pytest.mark.parametrize("name", ["lognormal", "shifted_lognormal", "counts_with_zeros", "left_skewed"])
    def test_interval_against_our_profile_likelihood(self, name, confidence):
        x = (DATA | ANY_SIGN)[name]()
        fit = run(x, confidence).yeo_johnson
        # Reference: our own profile-likelihood interval on scipy.stats.yeojohnson_llf with a
        # chi-square(1) cut (scipy.stats.chi2.ppf), around scipy.stats.yeojohnson's lambda.
        _, lam = stats.yeojohnson(x)
        lo, hi = profile_interval(lambda t: stats.yeojohnson_llf(t, x), lam, confidence)
        assert_allclose(fit.interval, (lo, hi), atol=1e-6)
        assert fit.interval[0] < fit.lambda_ < fit.interval[1]


class TestSuggestion:
    @pytest.mark.parametrize("name, family, value, label", [
        ("lognormal", "box_cox", 0.0, "log"),
        ("poisson30", "box_cox", 0.5, "square root"),
        ("poisson30", "yeo_johnson", 0.5, "square root"),
        ("normal", "yeo_johnson", 1.0, "none (the data as they are)"),
    ])
    def test_simple_lambda_inside_the_interval(self, name, family, value, label):
        x = DATA[name]()
        fit = getattr(run(x), family)
        # Common practice (Box & Cox 1964, section 3): log for lognormal data, square root for
        # Poisson counts (variance-stabilising); the named lambda must lie in the interval,
        # itself checked against scipy above, and be the nearest such one.
        assert fit.suggested == {"lambda": value, "name": label}
        assert fit.interval[0] <= value <= fit.interval[1]
        simple = [-1.0, -0.5, 0.0, 0.5, 1.0, 2.0]
        inside = [v for v in simple if fit.interval[0] <= v <= fit.interval[1]]
        assert min(inside, key=lambda v: abs(v - fit.lambda_)) == value

    @pytest.mark.parametrize("name", ["poisson10", "exponential"])
    def test_none_when_no_simple_lambda_is_inside(self, name):
        x = DATA[name]()
        fit = run(x).box_cox
        # Reference: scipy.stats.boxcox(x, alpha=0.05)'s interval excludes every simple lambda
        # (Poisson(10), n=2000: about (0.53, 0.72); exponential: about (0.10, 0.28)).
        _, _, (lo, hi) = stats.boxcox(x, alpha=0.05)
        assert not any(lo <= v <= hi for v in (-1.0, -0.5, 0.0, 0.5, 1.0, 2.0))
        assert fit.suggested is None


class TestNormalityBeforeAndAfter:
    @pytest.mark.parametrize("name", ["lognormal", "gamma3", "exponential"])
    def test_shapes_against_scipy(self, name):
        x = DATA[name]()
        report = run(x)
        # Reference: scipy.stats.shapiro (the primary test for n <= 5000) and
        # scipy.stats.skew / kurtosis(bias=False), before and after scipy.stats.boxcox with
        # the reported lambda.
        assert report.before.primary_test == "shapiro_wilk"
        assert_allclose(report.before.p_value, stats.shapiro(x).pvalue, rtol=1e-9)
        assert_allclose(report.before.G1, stats.skew(x, bias=False), rtol=1e-10)
        y = stats.boxcox(x, lmbda=report.box_cox.lambda_)
        after = report.box_cox.after
        assert_allclose(after.p_value, stats.shapiro(y).pvalue, rtol=1e-9)
        assert_allclose(after.G1, stats.skew(y, bias=False), rtol=1e-8, atol=1e-12)
        assert_allclose(after.G2, stats.kurtosis(y, bias=False), rtol=1e-8, atol=1e-12)
        yj = stats.yeojohnson(x, lmbda=report.yeo_johnson.lambda_)
        assert_allclose(report.yeo_johnson.after.p_value, stats.shapiro(yj).pvalue, rtol=1e-9)

    def test_lognormal_becomes_normal_on_the_log_scale(self):
        x = DATA["lognormal"]()
        report = run(x)
        # Reference: scipy.stats.shapiro rejects on the raw scale and not after Box-Cox.
        assert stats.shapiro(x).pvalue < 0.05
        assert report.before.normal is False
        assert report.box_cox.after.p_value > 0.05 and report.box_cox.after.p_value > report.before.p_value


class TestBackTransform:
    def test_note(self):
        report = run(DATA["lognormal"]())
        # Common practice: the back-transformed mean of log data is the geometric mean, an
        # estimate of the median; interval endpoints transform back, standard errors do not.
        note = report.back_transform
        assert "median" in note and "geometric mean" in note and "interval endpoints" in note
        assert report.confidence == 0.95
