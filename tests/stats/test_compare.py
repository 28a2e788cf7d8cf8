"""service.stats.compare: a sample against a reference sample.

The tests of equal distributions, location and spread against the scipy calls they name,
the change in skewness and kurtosis against Joanes & Gill's (1998) normal-theory
standard errors worked by hand, the population stability index against its formula on
reference deciles computed here with numpy, and the PSI noise level against a seeded
Monte Carlo of PSI between two samples of one distribution.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from service.stats.compare import compare
from service.stats.forms import Sample
from service.stats.profile import profile_of_sample

from .compare_reference import SCIPY_TWO_SAMPLE, quiet


def profile(x):
    return profile_of_sample(Sample.from_array(np.asarray(x, dtype=float)))


def compared(x, y, alpha: float = 0.05):
    return compare(profile(x), profile(y), alpha)


# Seeded pairs (sample, reference): sizes from 12 to 600, equal and unequal, several
# shapes, and rounded values with ties within and between the samples.
PAIRS = {
    "normal_equal_n": lambda: (np.random.default_rng(1).normal(0.0, 1.0, 150), np.random.default_rng(2).normal(0.0, 1.0, 150)),
    "normal_shift_unequal_n": lambda: (np.random.default_rng(3).normal(0.4, 1.0, 90), np.random.default_rng(4).normal(0.0, 1.0, 600)),
    "lognormal_vs_normal": lambda: (np.random.default_rng(5).lognormal(0.0, 0.5, 300), np.random.default_rng(6).normal(1.1, 0.6, 250)),
    "t3_vs_normal": lambda: (np.random.default_rng(7).standard_t(3.0, 60), np.random.default_rng(8).normal(0.0, 1.0, 80)),
    "uniform_small": lambda: (np.random.default_rng(9).uniform(0.0, 1.0, 12), np.random.default_rng(10).uniform(0.2, 1.3, 17)),
    "rounded_ties": lambda: (np.round(np.random.default_rng(11).normal(5.0, 1.0, 200), 0),
                             np.round(np.random.default_rng(12).normal(5.3, 1.0, 180), 0)),
}

REFERENCE = SCIPY_TWO_SAMPLE


class TestRawValueTests:
    @pytest.mark.parametrize("test", sorted(REFERENCE))
    @pytest.mark.parametrize("pair", sorted(PAIRS))
    def test_against_scipy(self, pair, test):
        x, y = PAIRS[pair]()
        got = getattr(compared(x, y).tests, test)
        # Reference: scipy.stats.ks_2samp, anderson_ksamp(variant="midrank"),
        # cramervonmises_2samp, ttest_ind(equal_var=False), levene(center="median")
        # (Brown & Forsythe 1974) on the same values.
        ref = REFERENCE[test](x, y)
        assert got.applicable is True
        assert_allclose(got.statistic, ref.statistic, rtol=1e-12, atol=1e-15)
        assert_allclose(got.p_value, ref.pvalue, rtol=1e-10, atol=1e-300)
        assert got.reject == (ref.pvalue < 0.05) or got.p_value_bound is not None

    @pytest.mark.parametrize("pair", sorted(PAIRS))
    def test_order_of_the_values_does_not_matter(self, pair):
        # The tests are functions of the two samples as sets (scipy sorts internally):
        # a seeded permutation gives the same statistics to the last bit.
        x, y = PAIRS[pair]()
        rng = np.random.default_rng(0)
        a, b = compared(x, y).tests, compared(rng.permutation(x), rng.permutation(y)).tests
        assert a == b

    def test_chi_square_not_applicable_to_raw_values(self):
        x, y = PAIRS["normal_equal_n"]()
        chi = compared(x, y).tests.chi_square
        assert chi.applicable is False and chi.statistic is None and chi.reason


class TestAndersonDarlingBound:
    # scipy.stats.anderson_ksamp (1.17) interpolates in Scholz & Stephens' table and
    # "floors / caps" the p-value at 0.001 / 0.25, warning which one it did (its
    # docstring); DESIGN.md: a bounded p-value is reported as a bound.
    def test_capped_is_a_lower_bound(self):
        x, y = PAIRS["normal_equal_n"]()
        ref = quiet(stats.anderson_ksamp, [x, y], variant="midrank")
        assert ref.pvalue == 0.25  # the reference caps here
        ad = compared(x, y).tests.anderson_darling
        assert ad.p_value == 0.25 and ad.p_value_bound == ">" and ad.reject is False

    def test_floored_is_an_upper_bound(self):
        x = np.random.default_rng(21).normal(0.5, 1.0, 400)
        y = np.random.default_rng(22).normal(0.0, 1.0, 400)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            ref = stats.anderson_ksamp([x, y], variant="midrank")
        assert ref.pvalue == 0.001 and any("floored" in str(w.message) for w in caught)
        ad = compared(x, y).tests.anderson_darling
        assert ad.p_value == 0.001 and ad.p_value_bound == "<"

    def test_floored_rejects_at_alpha_0_001(self):
        x = np.random.default_rng(21).normal(0.5, 1.0, 400)
        y = np.random.default_rng(22).normal(0.0, 1.0, 400)
        # Reference: scipy.stats.ks_2samp on the same values: p far below 0.001, so an
        # Anderson-Darling p-value "below 0.001" must reject at 0.001.
        assert stats.ks_2samp(x, y).pvalue < 1e-6
        c = compared(x, y, alpha=0.001)
        assert c.tests.anderson_darling.reject is True
        assert c.verdict.label == "shifted"


def se_g1(n: int) -> float:
    # Joanes & Gill (1998), The Statistician 47(1), 183-189: the variance of G1 under
    # normality is 6n(n-1) / ((n-2)(n+1)(n+3)).
    return math.sqrt(6.0 * n * (n - 1) / ((n - 2) * (n + 1) * (n + 3)))


def se_g2(n: int) -> float:
    # Joanes & Gill (1998): var(G2) = 24n(n-1)^2 / ((n-3)(n-2)(n+3)(n+5)) under normality.
    return math.sqrt(24.0 * n * (n - 1) ** 2 / ((n - 3) * (n - 2) * (n + 3) * (n + 5)))


class TestShapeChange:
    @pytest.mark.parametrize("pair", sorted(PAIRS))
    def test_skewness_change(self, pair):
        x, y = PAIRS[pair]()
        got = compared(x, y).skewness
        # Reference: scipy.stats.skew(bias=False) (G1) of each sample; the se of the
        # difference of two independent G1 is sqrt(se(n1)^2 + se(n2)^2) with Joanes &
        # Gill's se; p two-sided from scipy.stats.norm.sf.
        a, b = stats.skew(x, bias=False), stats.skew(y, bias=False)
        se = math.hypot(se_g1(x.size), se_g1(y.size))
        assert_allclose([got.sample, got.reference, got.difference], [a, b, a - b], rtol=1e-9, atol=1e-12)
        assert_allclose(got.se, se, rtol=1e-13)
        assert_allclose(got.z, (a - b) / se, rtol=1e-9, atol=1e-12)
        assert_allclose(got.p_value, 2 * stats.norm.sf(abs(a - b) / se), rtol=1e-9)

    @pytest.mark.parametrize("pair", sorted(PAIRS))
    def test_kurtosis_change(self, pair):
        x, y = PAIRS[pair]()
        got = compared(x, y).kurtosis
        # Reference: scipy.stats.kurtosis(bias=False) (G2, excess) and Joanes & Gill's se.
        a, b = stats.kurtosis(x, bias=False), stats.kurtosis(y, bias=False)
        se = math.hypot(se_g2(x.size), se_g2(y.size))
        assert_allclose([got.sample, got.reference, got.difference], [a, b, a - b], rtol=1e-9, atol=1e-12)
        assert_allclose(got.se, se, rtol=1e-13)
        assert_allclose(got.z, (a - b) / se, rtol=1e-9, atol=1e-12)
        assert_allclose(got.p_value, 2 * stats.norm.sf(abs(a - b) / se), rtol=1e-9)

    @pytest.mark.parametrize("fn, n, expected", [
        # Joanes & Gill (1998) formulas worked by hand: n = 10: 6*10*9 / (8*11*13) = 540/1144;
        # n = 4: 6*4*3 / (2*5*7) = 72/70; G2 at n = 10: 24*10*81 / (7*8*13*15) = 19440/10920.
        (se_g1, 10, math.sqrt(540 / 1144)),
        (se_g1, 4, math.sqrt(72 / 70)),
        (se_g2, 10, math.sqrt(19440 / 10920)),
    ])
    def test_reference_se_by_hand(self, fn, n, expected):
        assert_allclose(fn(n), expected, rtol=1e-15)

    def test_kurtosis_change_unavailable_below_four(self):
        # G2 needs n >= 4 (Joanes & Gill 1998: its (n-2)(n-3) denominator).
        got = compared([1.0, 2.0, 4.0], np.random.default_rng(3).normal(size=50)).kurtosis
        assert got.sample is None
        assert got.difference.reason and got.se.reason and got.p_value.reason


FLOOR = 1e-4  # compare.py: an empty bin's share is raised to 1e-4 in both samples (read from the code)


def psi_reference(x: np.ndarray, ref: np.ndarray) -> tuple[float, int]:
    """PSI = sum (p_a - p_r) ln(p_a / p_r) (Siddiqi 2006) on bins cut at the reference's
    deciles (numpy.quantile, its default linear rule = Hyndman & Fan 7; repeated cuts
    merged); a value equal to a cut goes to the bin above (numpy.histogram's
    half-open bins); shares below 1e-4 raised to 1e-4 (an empty bin would give log 0)."""
    cuts = np.unique(np.quantile(ref, np.arange(1, 10) / 10))
    a = np.bincount(np.searchsorted(cuts, x, side="right"), minlength=cuts.size + 1)
    r = np.bincount(np.searchsorted(cuts, ref, side="right"), minlength=cuts.size + 1)
    pa = np.maximum(a / a.sum(), FLOOR)
    pr = np.maximum(r / r.sum(), FLOOR)
    return float(np.sum((pa - pr) * np.log(pa / pr))), int(cuts.size + 1)


PSI_PAIRS = {
    **{name: PAIRS[name] for name in ("normal_equal_n", "normal_shift_unequal_n", "lognormal_vs_normal")},
    # Every sample value above the reference's median: five bins empty, floored.
    "empty_bins": lambda: (np.random.default_rng(31).uniform(2.0, 3.0, 100), np.random.default_rng(32).normal(0.0, 1.0, 100)),
    # An integer-valued reference: several deciles coincide, fewer than ten bins.
    "tied_reference": lambda: (np.random.default_rng(33).poisson(2.3, 300).astype(float),
                               np.random.default_rng(34).poisson(2.0, 400).astype(float)),
}


class TestPopulationStabilityIndex:
    @pytest.mark.parametrize("pair", sorted(PSI_PAIRS))
    def test_against_formula(self, pair):
        x, y = PSI_PAIRS[pair]()
        got = compared(x, y).stability
        psi, bins = psi_reference(x, y)
        assert_allclose(got.psi, psi, rtol=1e-12)
        assert got.bins == bins

    @pytest.mark.parametrize("pair", sorted(PSI_PAIRS))
    def test_band(self, pair):
        x, y = PSI_PAIRS[pair]()
        got = compared(x, y).stability
        # Siddiqi (2006), common practice in model monitoring: below 0.1 stable,
        # 0.1 to 0.25 some shift, 0.25 and above a major shift.
        psi, _ = psi_reference(x, y)
        assert got.band == ("stable" if psi < 0.1 else "moderate_shift" if psi < 0.25 else "major_shift")

    def test_cases_cover_the_bands_and_the_floor(self):
        # The cases above reach all three bands, and the empty-bin case has empty bins
        # (a check of the test data).
        bands = {compared(*PSI_PAIRS[p]()).stability.band for p in PSI_PAIRS}
        assert bands == {"stable", "moderate_shift", "major_shift"}
        x, y = PSI_PAIRS["empty_bins"]()
        cuts = np.quantile(y, np.arange(1, 10) / 10)
        assert (np.bincount(np.searchsorted(cuts, x, side="right"), minlength=10) == 0).sum() >= 5
        _, bins = psi_reference(*PSI_PAIRS["tied_reference"]())
        assert bins < 10

    def test_identical_samples(self):
        # PSI of a sample against itself is 0 (every term (p - p) ln 1).
        x = np.random.default_rng(35).normal(size=200)
        assert compared(x, x).stability.psi == 0.0


MC_DRAWS = 4000


class TestNoiseLevel:
    """noise_level claims to be the 95% point of PSI between two samples of one
    distribution of these sizes. Reference: a seeded Monte Carlo of that PSI
    (psi_reference above, normal samples; bins cut at the reference's own quantiles
    make PSI nearly free of the continuous distribution drawn from). Tolerance: 10%
    relative. The sampling error of
    the 95% point of 4000 draws is about 1.5% (binomial se of its rank,
    sqrt(0.05 * 0.95 / 4000) = 0.0034, divided by the chi-square(9) density there); the
    rest allows for the second-order chi-square approximation the noise level rests on."""

    @staticmethod
    def monte_carlo(n1: int, n2: int, seed: int) -> float:
        rng = np.random.default_rng(seed)
        draws = [psi_reference(rng.normal(size=n1), rng.normal(size=n2))[0] for _ in range(MC_DRAWS)]
        return float(np.quantile(draws, 0.95))

    @pytest.mark.parametrize("n1, n2, seed", [
        (400, 400, 41),
        (200, 1000, 42),
        (1000, 200, 43),
        pytest.param(50, 50, 44),
    ])
    def test_95_percent_point(self, n1, n2, seed):
        x = np.random.default_rng(seed + 100).normal(size=n1)
        y = np.random.default_rng(seed + 200).normal(size=n2)
        noise = compared(x, y).stability.noise_level
        assert_allclose(noise, self.monte_carlo(n1, n2, seed), rtol=0.10)


class TestEffects:
    @pytest.mark.parametrize("pair", sorted(PAIRS))
    def test_effect_sizes(self, pair):
        x, y = PAIRS[pair]()
        got = compared(x, y).effects
        # Reference: numpy; the shift in reference sd (Cohen's d with the reference's
        # sd, Glass's Delta) and the ratio of the sample sds (ddof=1).
        assert_allclose(got.mean_shift_in_sd, (x.mean() - y.mean()) / y.std(ddof=1), rtol=1e-10, atol=1e-14)
        assert_allclose(got.sd_ratio, x.std(ddof=1) / y.std(ddof=1), rtol=1e-12)

    @pytest.mark.parametrize("shift, ratio, material", [
        # Cohen (1988): d = 0.2 is a "small" effect, the threshold of materiality; sd
        # ratio outside 0.8-1.25 (common practice, symmetric on the log scale).
        (0.0, 1.0, False),
        (0.1, 1.0, False),
        (0.3, 1.0, True),
        (-0.3, 1.0, True),
        (0.0, 1.1, False),
        (0.0, 1.4, True),
        (0.0, 0.7, True),
    ])
    def test_material(self, shift, ratio, material):
        # Exact moments by construction: the reference is a standardised normal
        # sample and the sample is it shifted and scaled, so PSI stays small unless
        # the shift or the ratio is large.
        z = np.random.default_rng(51).normal(size=5000)
        y = (z - z.mean()) / z.std(ddof=1)
        x = shift + ratio * y
        got = compared(x, y).effects
        assert_allclose([got.mean_shift_in_sd, got.sd_ratio], [shift, ratio], atol=1e-12)
        assert got.material is material
        assert bool(got.reasons) is material
