"""Tests for normality/verdict.py (one verdict from the battery, honest about n) and
normality/power.py (the power table behind "inconclusive")."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats
from statsmodels.stats.diagnostic import normal_ad

from service.stats.forms import Sample
from service.stats.normality import NormalityOptions, normality_of_sample
from service.stats.normality.battery import TEST_NAMES
from service.stats.normality.power import (
    ADEQUATE_POWER,
    N_GRID,
    POWER,
    adequate_n,
    power_against_skewness_one,
)
from service.stats.normality.result import Method, TestResult, not_applicable, outcome
from service.stats.normality.verdict import LABELS, Verdict, decide_normality, default_primary
from service.stats.results import Unavailable

from . import samples

_METHOD = Method("synthetic", "constructed in the test")


def passing(p: float = 0.5, alpha: float = 0.05) -> TestResult:
    return outcome(_METHOD, 1.0, p, alpha)


def battery_of(alpha: float = 0.05, **results: TestResult) -> dict[str, TestResult]:
    """Every test not rejecting (p = 0.5) unless overridden."""
    tests = {name: passing(0.5, alpha) for name in TEST_NAMES}
    tests.update(results)
    return tests


def decide(tests, n, G1=0.1, G2=0.1, **kw) -> Verdict:
    kw.setdefault("alpha", 0.05)
    kw.setdefault("skewness_threshold", 0.5)
    kw.setdefault("kurtosis_threshold", 1.0)
    return decide_normality(tests, n, G1, G2, **kw)


def verdict_of(x, **options) -> Verdict:
    return normality_of_sample(Sample.from_array(x), NormalityOptions(**options)).verdict


class TestDecideNormality:
    def test_insufficient_data(self):
        tests = battery_of(shapiro_wilk=not_applicable(_METHOD, "requires at least 3 observations; only n=2 were given"))
        v = decide(tests, 2, None, None)
        assert v.label == "insufficient_data" and v.normal is None
        assert v.primary_test == "shapiro_wilk"
        assert any("does not apply" in r and "n=2" in r for r in v.reasons)

    def test_insufficient_data_from_sample(self):
        # Anderson-Darling needs n >= 8; asked to decide with n = 5 it cannot.
        v = verdict_of(samples.normal(5, 1), primary_test="anderson_darling")
        assert v.label == "insufficient_data" and v.normal is None and v.primary_test == "anderson_darling"

    def test_inconclusive_small_n(self):
        x = samples.normal(20, 2)
        # Reference: scipy.stats.shapiro does not reject this sample at 0.05.
        assert stats.shapiro(x).pvalue > 0.05
        v = verdict_of(x)
        assert v.label == "inconclusive" and v.normal is None
        # Regression value (our own power table, tests/benchmarks/power_table.py):
        # Shapiro-Wilk detects gamma(4) data at n = 20 with power 0.289 at alpha 0.05.
        assert v.power == 0.289
        assert any("n=20 is small" in r and "29%" in r for r in v.reasons)

    def test_consistent_with_normal(self):
        x = samples.normal(200, 3)
        assert stats.shapiro(x).pvalue > 0.05  # reference: scipy.stats.shapiro
        v = verdict_of(x)
        assert v.label == "consistent_with_normal" and v.normal is True
        assert v.primary_test == "shapiro_wilk"

    @pytest.mark.parametrize("x", [samples.lognormal(100, 4), samples.uniform(300, 5)], ids=["lognormal", "uniform"])
    def test_not_normal(self, x):
        # Reference: scipy.stats.shapiro rejects; the shape is far from normal
        # (lognormal: G1 > 0.5; uniform: G2 about -1.2).
        assert stats.shapiro(x).pvalue < 0.05
        v = verdict_of(x)
        assert v.label == "not_normal" and v.normal is False
        assert v.practical.exceeds_thresholds is True
        assert any("large enough to matter" in r for r in v.reasons)

    def test_minor_departure(self):
        # gamma(shape=100), n = 20 000: skewness 2/sqrt(100) = 0.2, excess kurtosis
        # 6/100 = 0.06 (handbook moments of the gamma distribution, scipy.stats.gamma.stats).
        assert_allclose(stats.gamma(100.0).stats(moments="sk"), (0.2, 0.06), rtol=1e-12)
        x = samples.gamma(20_000, 20, 100.0)
        v = verdict_of(x)
        assert v.primary_test == "anderson_darling"  # n > 5000
        # Reference: statsmodels normal_ad rejects decisively.
        assert normal_ad(x)[1] < 1e-6
        assert v.label == "minor_departure" and v.normal is False
        assert v.practical.exceeds_thresholds is False
        assert any("departure is small" in r for r in v.reasons)

    def test_small_sample_rejection_is_not_minor(self):
        rng = np.random.default_rng(29)
        x = np.concatenate([rng.normal(-1.5, 1.0, 20), rng.normal(1.5, 1.0, 20)])
        assert stats.shapiro(x).pvalue < 0.05  # reference: scipy.stats.shapiro rejects
        v = verdict_of(x)
        assert v.normal is False
        assert v.label == "not_normal"

    def test_rejection_with_large_kurtosis_is_not_minor(self):
        tests = battery_of(shapiro_wilk=outcome(_METHOD, 0.9, 0.001, 0.05))
        v = decide(tests, 1000, G1=0.2, G2=1.5)
        assert v.label == "not_normal"
        v = decide(tests, 1000, G1=0.2, G2=0.5)
        assert v.label == "minor_departure"

    @pytest.mark.parametrize("n, label", [(149, "not_normal"), (150, "minor_departure")])
    def test_minor_only_from_high_power_n(self, n, label):
        # Regression values from our power table (service/stats/normality/power.py):
        # Shapiro-Wilk at 5% first reaches 99% power against a skewness of 1 at n=150.
        tests = battery_of(shapiro_wilk=outcome(_METHOD, 0.9, 0.001, 0.05))
        assert decide(tests, n, G1=0.2, G2=0.5).label == label

    @pytest.mark.parametrize("n, primary", [(3, "shapiro_wilk"), (5000, "shapiro_wilk"), (5001, "anderson_darling"), (10**6, "anderson_darling")])
    def test_primary_test_by_n(self, n, primary):
        # Royston (1995): the Shapiro-Wilk p-value is fitted up to n = 5000; above, the
        # Anderson-Darling test decides (verdict.py's documented default).
        assert decide(battery_of(), n).primary_test == primary
        assert default_primary(n, battery_of()) == primary

    def test_primary_switch_on_sample(self):
        v = verdict_of(samples.normal(5001, 6))
        assert v.primary_test == "anderson_darling"
        assert "shapiro_wilk" in (v.supporting.not_rejecting + v.supporting.rejecting)

    def test_default_primary_without_raw_values(self):
        # A summary carries only the moment tests: K^2 decides.
        moment_only = {k: passing() for k in ("dagostino_pearson", "skewness_test", "kurtosis_test", "jarque_bera")}
        assert default_primary(50, moment_only, form="summary") == "dagostino_pearson"

    @pytest.mark.parametrize("primary", ["lilliefors", "dagostino_pearson", "shapiro_francia"])
    def test_primary_test_override(self, primary):
        v = verdict_of(samples.normal(200, 3), primary_test=primary)
        assert v.primary_test == primary
        groups = v.supporting
        assert primary not in groups.rejecting + groups.not_rejecting + groups.undecided + groups.not_applicable

    def test_bound_cannot_decide(self):
        # Lilliefors above p = 0.1 gives only "> 0.1", which cannot decide at alpha 0.2.
        x = samples.normal(200, 3)
        report = normality_of_sample(Sample.from_array(x), NormalityOptions(alpha=0.2, primary_test="lilliefors"))
        assert report.tests.lilliefors.p_value_bound == ">"
        v = report.verdict
        assert v.label == "inconclusive" and v.normal is None
        assert any("only a bound" in r for r in v.reasons)

    def test_bound_that_decides(self):
        tests = battery_of(anderson_darling=outcome(_METHOD, 60.0, 1e-24, 0.05, bound="<"))
        v = decide(tests, 20_000, G1=2.0, G2=6.0)
        assert v.label == "not_normal" and v.primary_test == "anderson_darling"
        tests = battery_of(alpha=1e-30, anderson_darling=outcome(_METHOD, 60.0, 1e-24, 1e-30, bound="<"))
        v = decide(tests, 20_000, G1=2.0, G2=6.0, alpha=1e-30)
        assert v.label == "inconclusive"

    def test_support_lists(self):
        x = samples.normal(7, 8)  # n = 7: several tests do not apply
        report = normality_of_sample(Sample.from_array(x), NormalityOptions(alpha=0.2))
        v, tests = report.verdict, report.tests.as_dict()
        s = v.supporting
        groups = [s.rejecting, s.not_rejecting, s.undecided, s.not_applicable]
        flat = [name for g in groups for name in g]
        assert sorted(flat) == sorted(set(TEST_NAMES) - {v.primary_test})  # a partition
        assert len(flat) == len(set(flat))
        for name in s.not_applicable:
            assert not tests[name].applicable
        for name in s.undecided:
            assert tests[name].applicable and tests[name].reject is None
        for name in s.rejecting:
            assert tests[name].reject is True
        for name in s.not_rejecting:
            assert tests[name].reject is False
        assert {"skewness_test", "dagostino_pearson", "anderson_darling", "cramer_von_mises"} <= set(s.not_applicable)

    def test_alpha_selects_power_row(self):
        # Regression values from the power table: Shapiro-Wilk reaches 0.8 power at
        # n = 70 for alpha 0.05 and at n = 100 for alpha 0.01.
        assert decide(battery_of(), 80).label == "consistent_with_normal"
        assert decide(battery_of(alpha=0.01), 80, alpha=0.01).label == "inconclusive"
        assert decide(battery_of(alpha=0.01), 100, alpha=0.01).label == "consistent_with_normal"

    def test_adequate_n_option(self):
        assert decide(battery_of(), 20, adequate_n=20).label == "consistent_with_normal"
        assert decide(battery_of(), 20, adequate_n=21).label == "inconclusive"

    def test_large_magnitudes_block_a_plain_normal(self):
        # A non-rejection with |G2| above its threshold is not "consistent_with_normal",
        # whatever n: the departure is practically relevant and merely unconfirmed.
        v = decide(battery_of(), 500, G1=0.2, G2=2.1)
        assert v.label == "inconclusive" and v.normal is None
        assert any("practically relevant" in r for r in v.reasons)

    def test_no_power_figure_claims_nothing(self):
        # Outside the tabulated alphas (0.001-0.2) there is no power figure: a
        # non-rejection stays inconclusive unless adequate_n is given.
        tests = battery_of(alpha=1e-6)
        v = decide(tests, 5000, alpha=1e-6)
        assert v.label == "inconclusive" and isinstance(v.power, Unavailable)
        assert any("no power figure" in r for r in v.reasons)
        assert decide(tests, 5000, alpha=1e-6, adequate_n=100).label == "consistent_with_normal"

    def test_weak_primary_needs_larger_n(self):
        # Regression value from the power table: the kurtosis test reaches 80% power
        # against gamma(4) only at n = 500 (5% level), so at n = 400 it cannot confirm.
        tests = battery_of()
        assert decide(tests, 400, primary_test="kurtosis_test").label == "inconclusive"
        assert decide(tests, 500, primary_test="kurtosis_test").label == "consistent_with_normal"

    def test_practical(self):
        # Cochran (1977), p. 42: the mean is close enough to normal when n > 25 G1^2.
        v = decide(battery_of(), 30, G1=1.2, G2=0.3)
        assert_allclose(v.practical.mean_min_n, 25 * 1.2**2, rtol=1e-15)
        assert v.practical.mean_approximately_normal is False  # 30 < 36
        assert decide(battery_of(), 40, G1=1.2, G2=0.3).practical.mean_approximately_normal is True
        p = decide(battery_of(), 3, None, None).practical
        assert isinstance(p.skewness, Unavailable) and p.exceeds_thresholds is None

    def test_basis_comes_first(self):
        v = decide(battery_of(), 100, basis="from summary statistics")
        assert v.reasons[0] == "from summary statistics"

    def test_result_fields(self):
        v = verdict_of(samples.normal(50, 10))
        assert isinstance(v, Verdict)
        assert v.label in LABELS and v.alpha == 0.05
        assert v.power == power_against_skewness_one(v.primary_test, 50, 0.05)
        assert all(isinstance(r, str) and r for r in v.reasons)


class TestPowerAgainstSkewnessOne:
    @pytest.mark.parametrize("test", sorted(POWER))
    @pytest.mark.parametrize("alpha", [0.01, 0.05, 0.1])
    def test_grid_points(self, test, alpha):
        # At the grid points the table itself (regression values, our own simulation).
        for n, value in zip(N_GRID, POWER[test][alpha]):
            assert power_against_skewness_one(test, n, alpha) == value

    def test_interpolation_in_log_n(self):
        # By hand: n = 12 lies between 10 (0.14) and 15 (0.209) for Shapiro-Wilk at 5%;
        # t = ln(12/10) / ln(15/10) = 0.44966, power = 0.14 + t * 0.069 = 0.17103 -> 0.171.
        assert power_against_skewness_one("shapiro_wilk", 12, 0.05) == 0.171
        # Geometric midpoint of 100 and 150 (log scale): halfway between 0.954 and 0.997.
        n = 122  # sqrt(100 * 150) = 122.47
        t = math.log(n / 100) / math.log(1.5)
        assert_allclose(power_against_skewness_one("shapiro_wilk", n, 0.05), round(0.954 + t * 0.043, 3), atol=1e-12)

    def test_out_of_table(self):
        assert isinstance(power_against_skewness_one("shapiro_wilk", 7, 0.05), Unavailable)
        assert power_against_skewness_one("shapiro_wilk", 10_000, 0.05) == POWER["shapiro_wilk"][0.05][-1]
        assert isinstance(power_against_skewness_one("shapiro_wilk", 50, 0.0005), Unavailable)
        assert isinstance(power_against_skewness_one("shapiro_wilk", 50, 0.3), Unavailable)
        # Between tabulated levels the power is interpolated in log alpha.
        lo, hi = POWER["shapiro_wilk"][0.01][7], POWER["shapiro_wilk"][0.025][7]  # n = 50
        t = math.log(0.02 / 0.01) / math.log(0.025 / 0.01)
        assert_allclose(power_against_skewness_one("shapiro_wilk", 50, 0.02), round(lo + t * (hi - lo), 3), atol=1e-12)

    def test_table_shape(self):
        # Common practice: power grows with n and with alpha; the table's Monte Carlo
        # error (4000 replications, se <= 0.008) allows dips of at most 2 se.
        for test, by_alpha in POWER.items():
            assert sorted(by_alpha) == [0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.2]
            for alpha, row in by_alpha.items():
                assert len(row) == len(N_GRID)
                assert all(b - a >= -0.016 for a, b in zip(row, row[1:])), (test, alpha)
                assert all(0.0 <= v <= 1.0 for v in row)
            for n_index in range(len(N_GRID)):
                column = [by_alpha[a][n_index] for a in sorted(by_alpha)]
                assert all(b - a >= -0.016 for a, b in zip(column, column[1:])), (test, n_index)

    def test_reference_alternative(self):
        # Reference: scipy.stats.gamma(4).stats: skewness 2/sqrt(4) = 1, excess
        # kurtosis 6/4 = 1.5, as power.py says.
        assert_allclose(stats.gamma(4.0).stats(moments="sk"), (1.0, 1.5), rtol=1e-12)

    @pytest.mark.parametrize(
        "test, n",
        [("shapiro_wilk", 50), ("anderson_darling", 80), ("dagostino_pearson", 100), ("shapiro_wilk", 20)],
    )
    def test_monte_carlo_cells(self, test, n):
        # Reference: a fresh simulation with the reference libraries (scipy.stats.shapiro,
        # statsmodels normal_ad, scipy.stats.normaltest) on 2000 seeded gamma(4)
        # samples. Tolerance: 4 standard errors of the difference of two binomial
        # proportions (table: 4000 replications; here: 2000).
        reps = 2000
        x = np.random.default_rng(20240605 + n).gamma(4.0, size=(reps, n))
        if test == "shapiro_wilk":
            p = np.array([stats.shapiro(row).pvalue for row in x])
        elif test == "anderson_darling":
            p = normal_ad(x, axis=1)[1]
        else:
            p = stats.normaltest(x, axis=1).pvalue
        power = np.mean(p < 0.05)
        table = power_against_skewness_one(test, n, 0.05)
        se = math.sqrt(table * (1 - table) * (1 / 4000 + 1 / reps))
        assert abs(power - table) < 4 * se


class TestAdequateN:
    @pytest.mark.parametrize("test", sorted(POWER))
    @pytest.mark.parametrize("alpha", [0.01, 0.05, 0.1])
    def test_reference_values(self, test, alpha):
        # Definition (power.py): the smallest tabulated n with power >= 0.80 (common
        # practice: 80% power), found here by a direct scan of the table.
        assert ADEQUATE_POWER == 0.80
        expected = next((n for n, p in zip(N_GRID, POWER[test][alpha]) if p >= 0.80), None)
        assert adequate_n(test, alpha) == expected

    def test_known_rows(self):
        # Regression values from the table: Shapiro-Wilk 70 at 5%, 100 at 1%;
        # Anderson-Darling 80 at 5%; K^2 100 at 5%.
        assert adequate_n("shapiro_wilk", 0.05) == 70
        assert adequate_n("shapiro_wilk", 0.01) == 100
        assert adequate_n("anderson_darling", 0.05) == 80
        assert adequate_n("dagostino_pearson", 0.05) == 100

    def test_no_row(self):
        assert adequate_n("shapiro_wilk", 0.5) is None  # alpha outside the table
        assert adequate_n("no_such_test", 0.05) is None
