"""Numerical accuracy on hard data: values sharing a large offset, built like the NIST
StRD univariate data sets, against exact or 50-digit references computed from the same
float64 inputs; and the refusal of constant and out-of-range data (``require_spread``).

Tolerances: mean to 1e-15 relative (it is one rounding from exact), sd, G1 and G2 to
1e-9 relative (about 1e-15 is achieved; 1e-9 leaves room for summation order while a
lost centring step misses by 1e-3 or worse, see ``test_naive_formula_fails``); test
statistics to 1e-6 relative.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from service.stats.describe import describe_sample
from service.stats.errors import ConstantData, DataError, OutOfRange, TooFewValues
from service.stats.forms import Sample, require_spread
from service.stats.moments import central_moments
from service.stats.normality import normality_of_sample
from service.stats.normality.battery import run_tests

from .exact import exact_moments


def nist_numacc(offset: float, n: int = 1001) -> np.ndarray:
    """NIST StRD NumAcc2/3/4 construction (recalled from memory): the first value is
    offset + 0.2, then offset + 0.1 and offset + 0.3 alternate, n = 1001. Certified mean
    offset + 0.2 and certified sd 0.1 (recalled from memory)."""
    tail = np.tile([0.1, 0.3], (n - 1) // 2)
    return np.concatenate([[offset + 0.2], offset + tail])


def offset_sample(
    offset: float, quantum: float, seed: int, n: int = 1001, spread: float = 0.1, shape: str = "gamma"
) -> tuple[np.ndarray, np.ndarray]:
    """offset + small values (sd ``spread``; skewed gamma or normal) that are multiples of
    ``quantum``, so that every value is exactly representable and ``x - offset``
    recovers the small values exactly."""
    rng = np.random.default_rng(seed)
    if shape == "gamma":
        small = rng.gamma(2.0, spread / math.sqrt(2.0), size=n)
    else:
        small = 1.0 + rng.normal(0.0, spread, size=n)
    small = np.round(small / quantum) * quantum
    x = offset + small
    assert np.array_equal(x - offset, small), "construction must be exact"
    return x, small


# (name, data): NIST-like data sets and skewed data at large offsets.
HARD = {
    # NIST StRD NumAcc1 (recalled from memory): 10000001, 10000003, 10000002.
    "numacc1": np.array([10000001.0, 10000003.0, 10000002.0]),
    "numacc2": nist_numacc(1.0),
    "numacc3": nist_numacc(1e6),
    "numacc4": nist_numacc(1e7),
    # 1e7 + multiples of 2^-20 (exactly representable; spacing(1e7) = 2^-29).
    "skewed_1e7": offset_sample(1e7, 2.0**-20, 11)[0],
    # 1e12 + multiples of 2^-12 (exactly representable; spacing(1e12) = 2^-13).
    "skewed_1e12": offset_sample(1e12, 2.0**-12, 12)[0],
    # 1e15 + integers 0..40 (spacing(1e15) = 1/8): a spread of 320 ulps.
    "integers_1e15": 1e15 + np.random.default_rng(13).poisson(6.0, size=501).astype(float),
}


class TestMomentAccuracy:
    @pytest.mark.parametrize("name", sorted(HARD))
    def test_mean_and_sd(self, name):
        x = HARD[name]
        m = central_moments(x)
        exact = exact_moments(x)
        # Reference: exact rational mean of the float64 inputs (fractions.Fraction);
        # sd from the exact variance, square root at 50 digits (mpmath).
        assert_allclose(m.mean, float(exact.mean), rtol=1e-15)
        assert_allclose(m.sd, exact.sd(), rtol=1e-9)

    @pytest.mark.parametrize("name", sorted(n for n in HARD if n != "numacc1"))
    def test_skewness_and_kurtosis(self, name):
        x = HARD[name]
        m = central_moments(x)
        exact = exact_moments(x)
        # Reference: G1 and G2 from the exact central moments of the float64 inputs
        # (Fraction), powers and roots at 50 digits (mpmath). The NumAcc sets are
        # symmetric in decimal, so the exact G1 of their float64 inputs is
        # rounding-sized (3e-18 to 3e-11): an absolute tolerance of 1e-14 applies there.
        assert_allclose(m.skewness("G1"), exact.G1(), rtol=1e-9, atol=1e-14)
        assert_allclose(m.excess_kurtosis("G2"), exact.G2(), rtol=1e-9)
        assert_allclose(m.skewness("b1"), exact.b1(), rtol=1e-9, atol=1e-14)
        assert_allclose(m.excess_kurtosis("b2"), exact.b2(), rtol=1e-9)

    def test_numacc1_certified(self):
        # NIST StRD NumAcc1 certified values (recalled from memory): mean 10000002, sd 1.
        m = central_moments(HARD["numacc1"])
        assert m.mean == 10000002.0
        assert_allclose(m.sd, 1.0, rtol=1e-15)
        # G1 of 1, 3, 2 about their mean is 0 exactly (a symmetric set).
        assert_allclose(m.skewness("G1"), 0.0, atol=1e-15)

    @pytest.mark.parametrize("name, offset", [("numacc2", 1.0), ("numacc3", 1e6), ("numacc4", 1e7)])
    def test_numacc_certified(self, name, offset):
        # NIST StRD certified values (recalled from memory): mean offset + 0.2, sd 0.1.
        # The inputs are those decimals rounded to float64, which moves the sd by up to
        # spacing(offset) / 0.1 relative (2e-8 at 1e7): hence rtol=1e-7 against the
        # decimal certificate, where the test against the float inputs uses 1e-9.
        m = central_moments(HARD[name])
        assert_allclose(m.mean, offset + 0.2, rtol=1e-15)
        assert_allclose(m.sd, 0.1, rtol=1e-7)
        # By hand from the decimal data: 1000 deviations of +-0.1 and one of 0 give
        # g2 = 1001 * 1000 * 1e-4 / (1000 * 1e-2)^2 - 3 = -1.999.
        assert_allclose(m.excess_kurtosis("g2"), -1.999, rtol=1e-7)

    def test_naive_formula_fails(self):
        # The data are hard: the one-pass textbook formula (sum x^2 - n mean^2)/(n-1)
        # loses every digit at 1e7 (a reason these tests can fail), while the exact
        # reference gives sd = 0.1 to 1e-7.
        x = HARD["numacc4"]
        n = x.size
        naive_var = (np.sum(x * x) - n * np.mean(x) ** 2) / (n - 1)
        exact_sd = exact_moments(x).sd()
        assert abs(math.sqrt(abs(naive_var)) - exact_sd) / exact_sd > 1e-3


def _reference_statistics(small: np.ndarray) -> dict[str, float]:
    """Reference statistics on the offset-free values (every statistic is location
    invariant, and x - offset is exact by construction)."""
    s = np.sort(small)
    n = s.size
    mean, sd = float(np.mean(s)), float(np.std(s, ddof=1))
    # Blom scores, Phi^{-1}((i - 3/8)/(n + 1/4)) (Blom 1958), via scipy.stats.norm.ppf.
    blom = stats.norm.ppf((np.arange(1, n + 1) - 0.375) / (n + 0.25))
    return {
        "shapiro_wilk": stats.shapiro(s).statistic,
        "shapiro_francia": np.corrcoef(s, blom)[0, 1] ** 2,
        "dagostino_pearson": stats.normaltest(s).statistic,
        "skewness_test": stats.skewtest(s).statistic,
        "kurtosis_test": stats.kurtosistest(s).statistic,
        "anderson_darling": stats.anderson(s, method="interpolate").statistic,
        "lilliefors": stats.kstest(s, "norm", args=(mean, sd)).statistic,
        "cramer_von_mises": stats.cramervonmises(s, "norm", args=(mean, sd)).statistic,
        "jarque_bera": stats.jarque_bera(s).statistic,
    }


def _offset_marks(offset: float, name: str):
    return []


_OFFSET_CASES = [
    pytest.param(offset, quantum, name, marks=_offset_marks(offset, name), id=f"{name}-{offset:g}")
    # quantum = 2 ulps of the offset: every value is exact, the spread is 0.1.
    for offset, quantum in [(1e7, 2.0**-28), (1e12, 2.0**-12), (1e13, 2.0**-9)]
    for name in (
        "shapiro_wilk",
        "shapiro_francia",
        "dagostino_pearson",
        "skewness_test",
        "kurtosis_test",
        "anderson_darling",
        "lilliefors",
        "cramer_von_mises",
        "jarque_bera",
    )
]


class TestStatisticAccuracy:
    @pytest.mark.parametrize("offset, quantum, name", _OFFSET_CASES)
    def test_offset_does_not_change_statistic(self, offset, quantum, name):
        x, small = offset_sample(offset, quantum, seed=21, spread=0.1, shape="normal")
        ours = getattr(run_tests(Sample(x), 0.05), name).statistic
        # Reference: scipy (shapiro, normaltest, skewtest, kurtosistest, anderson with
        # method='interpolate', kstest and cramervonmises with the sample's mean and
        # sd, jarque_bera) and the Blom-score correlation, on the exactly recovered
        # offset-free values. Tolerance 1e-6 relative: far more digits than any decision
        # needs, far fewer than a lost centring step costs.
        expected = _reference_statistics(small)[name]
        assert_allclose(ours, expected, rtol=1e-6)


class TestRequireSpread:
    @pytest.mark.parametrize(
        "values",
        [[3.0] * 5, [1e7] * 10, [0.0, -0.0, 0.0], [-2.5] * 1000],
        ids=["small", "offset", "signed_zeros", "n1000"],
    )
    def test_constant_data(self, values):
        with pytest.raises(ConstantData, match="constant"):
            require_spread(Sample.from_array(values))

    @pytest.mark.parametrize(
        "center, ulps",
        [(1e7, 1), (1e7, 10), (1.0, 64), (-3.0, 20), (1e12, 50)],
    )
    def test_rounding_spread_is_constant(self, center, ulps):
        # Values a few ulps apart: their spread is floating-point rounding. The
        # threshold is 64 ulps of the largest magnitude (forms.py; common practice).
        step = np.spacing(abs(center))
        values = center + step * np.arange(ulps + 1)
        assert values[-1] - values[0] == ulps * step
        with pytest.raises(ConstantData, match="rounding"):
            require_spread(Sample.from_array(values))

    def test_just_above_rounding_threshold(self):
        # 65 ulps around 1.0 is more than the 64-ulp threshold (forms.py): accepted.
        values = 1.0 + np.spacing(1.0) * np.arange(66)
        require_spread(Sample.from_array(values))

    @pytest.mark.parametrize(
        "values",
        [[0.0, 1.0], [1e7, 1e7 + 0.1], [0.0] * 99 + [1.0], [1e12, 1e12 + 0.25, 1e12]],
        ids=["unit", "offset_1e7", "one_differs", "offset_1e12"],
    )
    def test_two_point_data_accepted(self, values):
        require_spread(Sample.from_array(values))

    @pytest.mark.parametrize("n, minimum_n", [(0, 2), (1, 2), (2, 3)])
    def test_too_few_observations(self, n, minimum_n):
        with pytest.raises(TooFewValues, match=f"got n={n}"):
            require_spread(Sample.from_array(np.arange(n, dtype=float)), minimum_n=minimum_n)

    @pytest.mark.parametrize(
        "values",
        [
            [np.finfo(float).max, -np.finfo(float).max, 0.0],
            [1e151, 2e151, 5e151],
            [0.0, 1e-300, 2e-300],
        ],
        ids=["max_double", "beyond_1e150", "subnormal_spread"],
    )
    def test_out_of_range(self, values):
        # Magnitudes whose variance would overflow, and spreads whose variance would
        # underflow, are refused up front (forms.py: MAX_MAGNITUDE, MIN_SPREAD), never
        # called constant and never left to produce inf or NaN.
        with pytest.raises(OutOfRange):
            require_spread(Sample.from_array(values))

    @pytest.mark.parametrize("scale", [1e-148, 1e-80, 1e80, 1e148], ids=lambda s: f"{s:g}")
    def test_extreme_but_accepted_scales(self, scale):
        # Inside the accepted range every analysis runs, with finite results; the shape
        # does not depend on the scale (reference: the same data at scale 1).
        base = np.random.default_rng(31).gamma(3.0, size=40)
        sample = Sample.from_array(base * scale)
        require_spread(sample, minimum_n=3)
        d = describe_sample(sample)
        r = normality_of_sample(sample)
        ref = describe_sample(Sample.from_array(base))
        assert_allclose(d.skewness.G1, ref.skewness.G1, rtol=1e-12)
        assert_allclose(d.kurtosis.G2, ref.kurtosis.G2, rtol=1e-12)
        assert_allclose(d.spread.sd, ref.spread.sd * scale, rtol=1e-12)
        for name, t in r.tests.as_dict().items():
            if name == "chi_square":  # histograms only
                continue
            assert t.p_value is not None and 0.0 <= t.p_value <= 1.0, name
            assert math.isfinite(t.statistic), name

    def test_errors_are_data_errors(self):
        # The API maps every DataError to a 422: each refusal above is one.
        for cls in (ConstantData, TooFewValues, OutOfRange):
            assert issubclass(cls, DataError)
