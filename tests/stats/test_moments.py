"""Tests for service.stats.moments: central moments, the skewness and kurtosis
conventions and their inverses, and the standard errors under normality."""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from service.stats.moments import (
    KURTOSIS_CONVENTIONS,
    SKEWNESS_CONVENTIONS,
    Moments,
    central_moments,
    g1_from_skewness,
    g2_from_kurtosis,
    kurtosis_from_g2,
    se_kurtosis,
    se_skewness,
    skewness_from_g1,
)

from . import samples
from .exact import exact_moments

SAMPLES = ["normal_n12", "normal_n50", "lognormal_n40", "uniform_n100", "t3_n200", "diabetes", "nile"]


class TestCentralMoments:
    @pytest.mark.parametrize("name", SAMPLES)
    def test_reference_values(self, name):
        x = samples.named(name)
        m = central_moments(x)
        # Reference: numpy.mean and scipy.stats.moment (central moment about the mean,
        # divisor n); g1 and g2 from scipy.stats.skew / kurtosis with bias=True.
        assert_allclose(m.mean, np.mean(x), rtol=1e-14)
        assert_allclose(m.m2, stats.moment(x, order=2), rtol=1e-12)
        assert_allclose(m.g1, stats.skew(x, bias=True), rtol=1e-10, atol=1e-14)
        assert_allclose(m.g2, stats.kurtosis(x, bias=True), rtol=1e-10)

    def test_exact_small_integers(self):
        # Reference: the definitions in exact rational arithmetic (fractions.Fraction).
        # By hand for x = 1, 2, 4, 8, 16: mean = 31/5; deviations -26/5, -21/5, -11/5,
        # 9/5, 49/5; m2 = (676 + 441 + 121 + 81 + 2401) / 125 = 744/25.
        x = np.array([1.0, 2.0, 4.0, 8.0, 16.0])
        exact = exact_moments(x)
        assert exact.mean == Fraction(31, 5)
        assert exact.m2 == Fraction(744, 25)
        m = central_moments(x)
        assert_allclose(m.mean, 31 / 5, rtol=1e-15)
        assert_allclose(m.m2, 744 / 25, rtol=1e-15)
        assert_allclose(m.g1, float(exact.g1()), rtol=1e-14)
        assert_allclose(m.g2, float(exact.g2()), rtol=1e-14)

    @pytest.mark.parametrize("power", [-140, -60, 60, 140])
    def test_scale_free_shape(self, power):
        # Reference: g1 and g2 are scale-free by definition; multiplying by a power of
        # ten (rounded to double) may change them only at the rounding level.
        x = samples.lognormal(40, 102)
        base = central_moments(x)
        scaled = central_moments(x * 10.0**power)
        assert_allclose(scaled.g1, base.g1, rtol=1e-13)
        assert_allclose(scaled.g2, base.g2, rtol=1e-13)
        assert_allclose(scaled.m2, base.m2 * 10.0 ** (2 * power), rtol=1e-13)

    def test_result_fields(self):
        x = samples.normal(30, 7)
        m = central_moments(x)
        assert isinstance(m, Moments)
        assert m.n == 30
        # Reference: numpy.var / numpy.std with ddof=1 (the n-1 divisor).
        assert_allclose(m.variance, np.var(x, ddof=1), rtol=1e-13)
        assert_allclose(m.sd, np.std(x, ddof=1), rtol=1e-13)
        with pytest.raises(AttributeError):
            m.n = 3  # frozen dataclass

    @pytest.mark.parametrize("n, has_g1, has_g2", [(2, False, False), (3, True, False), (4, True, True)])
    def test_too_few_observations(self, n, has_g1, has_g2):
        # Common practice: skewness needs n >= 3 and kurtosis n >= 4 (G1 divides by
        # n-2, G2 by (n-2)(n-3)).
        m = central_moments(np.arange(n, dtype=float) ** 2)
        assert (m.g1 is not None) == has_g1
        assert (m.g2 is not None) == has_g2
        assert (m.skewness("G1") is not None) == has_g1
        assert (m.excess_kurtosis("G2") is not None) == has_g2

    def test_missing_higher_moments(self):
        # A summary without skewness or kurtosis carries no shape.
        m = Moments(n=10, mean=0.0, m2=1.0)
        assert m.g1 is None and m.g2 is None
        assert m.skewness("G1") is None and m.excess_kurtosis("G2") is None


class TestSkewnessConventions:
    @pytest.mark.parametrize("name", SAMPLES)
    def test_reference_values(self, name):
        x = samples.named(name)
        m = central_moments(x)
        # Reference: scipy.stats.skew with bias=True (g1) and bias=False (G1).
        assert_allclose(m.skewness("g1"), stats.skew(x, bias=True), rtol=1e-10, atol=1e-14)
        assert_allclose(m.skewness("G1"), stats.skew(x, bias=False), rtol=1e-10, atol=1e-14)
        # Reference: b1 = m3 / s^3 from its definition, Fraction moments + mpmath (50 digits).
        assert_allclose(m.skewness("b1"), exact_moments(x).b1(), rtol=1e-10, atol=1e-14)

    @pytest.mark.parametrize("convention", SKEWNESS_CONVENTIONS)
    @pytest.mark.parametrize("n", [3, 4, 10, 101])
    def test_inverse(self, convention, n):
        g1 = 0.8125
        value = skewness_from_g1(g1, n, convention)
        assert_allclose(g1_from_skewness(value, n, convention), g1, rtol=1e-14)

    @pytest.mark.parametrize("n", [3, 5, 20, 1000])
    def test_ordering(self, n):
        # Joanes & Gill (1998), section 2: for positive skewness b1 <= g1 <= G1, and
        # the three agree as n grows.
        g1 = 1.0
        assert skewness_from_g1(g1, n, "b1") < g1 < skewness_from_g1(g1, n, "G1")

    def test_unknown_convention(self):
        with pytest.raises(ValueError, match="unknown skewness convention"):
            skewness_from_g1(0.1, 10, "gamma1")
        with pytest.raises(ValueError, match="unknown skewness convention"):
            g1_from_skewness(0.1, 10, "gamma1")


class TestKurtosisConventions:
    @pytest.mark.parametrize("name", SAMPLES)
    def test_reference_values(self, name):
        x = samples.named(name)
        m = central_moments(x)
        # Reference: scipy.stats.kurtosis (fisher=True: excess) with bias=True (g2)
        # and bias=False (G2).
        assert_allclose(m.excess_kurtosis("g2"), stats.kurtosis(x, fisher=True, bias=True), rtol=1e-10)
        assert_allclose(m.excess_kurtosis("G2"), stats.kurtosis(x, fisher=True, bias=False), rtol=1e-10)
        # Reference: b2 = m4 / s^4 - 3 from its definition, exact rational arithmetic.
        assert_allclose(m.excess_kurtosis("b2"), exact_moments(x).b2(), rtol=1e-10)

    def test_excess_not_pearson(self):
        # Reference: scipy.stats.kurtosis(fisher=False) is Pearson's kurtosis (normal = 3);
        # ours is always excess (normal = 0), i.e. three less.
        x = samples.normal(200, 3)
        g2 = central_moments(x).excess_kurtosis("g2")
        assert_allclose(g2, stats.kurtosis(x, fisher=False, bias=True) - 3.0, rtol=1e-12)

    @pytest.mark.parametrize("convention", KURTOSIS_CONVENTIONS)
    @pytest.mark.parametrize("n", [4, 5, 10, 101])
    def test_inverse(self, convention, n):
        g2 = -0.6875
        value = kurtosis_from_g2(g2, n, convention)
        assert_allclose(g2_from_kurtosis(value, n, convention), g2, rtol=1e-13)

    @pytest.mark.parametrize("n", [4, 5, 30])
    def test_normal_reference_point(self, n):
        # Joanes & Gill (1998), eq. for G2: G2 = 0 exactly when g2 = -6/(n+1), the
        # expectation of g2 under normality.
        assert_allclose(kurtosis_from_g2(-6.0 / (n + 1), n, "G2"), 0.0, atol=1e-14)

    def test_unknown_convention(self):
        with pytest.raises(ValueError, match="unknown kurtosis convention"):
            kurtosis_from_g2(0.1, 10, "beta2")
        with pytest.raises(ValueError, match="unknown kurtosis convention"):
            g2_from_kurtosis(0.1, 10, "beta2")


def _var_g1_normal(n: int) -> Fraction:
    # Joanes & Gill (1998), section 3 (after Fisher 1930): under normality
    # var(g1) = 6(n-2) / ((n+1)(n+3)).
    return Fraction(6 * (n - 2), (n + 1) * (n + 3))


def _var_g2_normal(n: int) -> Fraction:
    # Joanes & Gill (1998), section 3 (after Fisher 1930): under normality
    # var(g2) = 24 n (n-2)(n-3) / ((n+1)^2 (n+3)(n+5)).
    return Fraction(24 * n * (n - 2) * (n - 3), (n + 1) ** 2 * (n + 3) * (n + 5))


class TestSeSkewness:
    @pytest.mark.parametrize("n", [3, 4, 8, 20, 100, 1000, 10**6])
    def test_reference_values(self, n):
        # Reference: Joanes & Gill (1998): G1 = g1 sqrt(n(n-1))/(n-2), so
        # var(G1) = n(n-1)/(n-2)^2 * var(g1), computed here in exact rationals.
        var_G1 = Fraction(n * (n - 1), (n - 2) ** 2) * _var_g1_normal(n)
        assert_allclose(se_skewness(n), math.sqrt(var_G1), rtol=1e-14)

    def test_recalled_n100(self):
        # Recalled from memory: the standard error of skewness often quoted for n=100
        # (statistics packages' output) is about 0.241.
        assert_allclose(se_skewness(100), 0.241, atol=5e-4)

    def test_large_n_limit(self):
        # Common practice: se of skewness ~ sqrt(6/n) for large n.
        assert_allclose(se_skewness(10**6), math.sqrt(6e-6), rtol=1e-5)

    def test_monte_carlo(self):
        # Reference: simulation, 20 000 seeded normal samples of n=20; G1 from
        # scipy.stats.skew(bias=False). The tolerance is 4 standard errors of a sample
        # sd, se(sd) = sd * sqrt((beta2 - 1) / (4 N)) by the delta method (common practice).
        n, reps = 20, 20_000
        x = np.random.default_rng(20240601).normal(size=(reps, n))
        G1 = stats.skew(x, axis=1, bias=False)
        sd = np.std(G1, ddof=1)
        beta2 = stats.kurtosis(G1, fisher=False)
        tol = 4.0 * math.sqrt((beta2 - 1.0) / (4.0 * reps))
        assert abs(sd / se_skewness(n) - 1.0) < tol
        assert tol < 0.03  # the check is a few percent wide, not vacuous

    @pytest.mark.parametrize("n", [0, 1, 2])
    def test_too_few_observations(self, n):
        # G1 is undefined for n < 3 (division by n-2); no silent zero either.
        with pytest.raises((ValueError, ZeroDivisionError)):
            se_skewness(n)


class TestSeKurtosis:
    @pytest.mark.parametrize("n", [4, 5, 8, 20, 100, 1000, 10**6])
    def test_reference_values(self, n):
        # Reference: Joanes & Gill (1998): G2 = (n-1)/((n-2)(n-3)) ((n+1) g2 + 6), so
        # var(G2) = ((n-1)(n+1)/((n-2)(n-3)))^2 * var(g2), exact rationals.
        factor = Fraction((n - 1) * (n + 1), (n - 2) * (n - 3))
        var_G2 = factor**2 * _var_g2_normal(n)
        assert_allclose(se_kurtosis(n), math.sqrt(var_G2), rtol=1e-14)

    def test_recalled_n100(self):
        # Recalled from memory: the standard error of kurtosis often quoted for n=100
        # (statistics packages' output) is about 0.478.
        assert_allclose(se_kurtosis(100), 0.478, atol=5e-4)

    def test_large_n_limit(self):
        # Common practice: se of kurtosis ~ sqrt(24/n) for large n.
        assert_allclose(se_kurtosis(10**6), math.sqrt(24e-6), rtol=1e-5)

    def test_monte_carlo(self):
        # Reference: simulation, 20 000 seeded normal samples of n=20; G2 from
        # scipy.stats.kurtosis(bias=False). Tolerance: 4 standard errors of a sample
        # sd (delta method, as for skewness; G2 is skewed, so beta2 is large here).
        n, reps = 20, 20_000
        x = np.random.default_rng(20240602).normal(size=(reps, n))
        G2 = stats.kurtosis(x, axis=1, bias=False)
        sd = np.std(G2, ddof=1)
        beta2 = stats.kurtosis(G2, fisher=False)
        tol = 4.0 * math.sqrt((beta2 - 1.0) / (4.0 * reps))
        assert abs(sd / se_kurtosis(n) - 1.0) < tol
        assert tol < 0.06

    @pytest.mark.parametrize("n", [2, 3])
    def test_too_few_observations(self, n):
        # G2 is undefined for n < 4 (division by (n-2)(n-3)).
        with pytest.raises((ValueError, ZeroDivisionError)):
            se_kurtosis(n)
