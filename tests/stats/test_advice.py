"""Tests for service.stats.advice: each rule fires on a case built for it and is named
in ``rules``; capability indices against their formulas; the advice note."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from service.stats.advice import ADVICE_NOTE, GOALS, recommend
from service.stats.forms import Sample
from service.stats.profile import profile_of_sample, profile_of_summary
from service.stats.results import Unavailable
from service.stats.summary import Summary

from . import samples


def rng(seed: int) -> np.random.Generator:
    return np.random.default_rng(seed)


def raw(x):
    return profile_of_sample(Sample.from_array(x))


def shape(n: int, G1: float, G2: float, sd: float = 1.0, mean: float = 0.0):
    """A summary with the shape set exactly (G1, G2 conventions)."""
    return profile_of_summary(Summary(n=n, mean=mean, sd=sd, skewness=G1, kurtosis=G2))


NEAR_NORMAL = dict(G1=0.1, G2=0.1)


class TestOneSampleMean:
    # Cochran (1977), Sampling Techniques, p. 42: the mean is close enough to normal once
    # n > 25 G1^2. With G1 = 1.5 the boundary is 56.25. Below n = 30 (common practice) a
    # clearly skewed sample gets the rank test.
    @pytest.mark.parametrize("n, rule", [
        (20, "small_n_skewed_rank_test"),
        (29, "small_n_skewed_rank_test"),
        (30, "cochran_rule_not_met"),
        (56, "cochran_rule_not_met"),
        (57, "t_test_adequate"),
        (200, "t_test_adequate"),
    ])
    def test_cochran_rule(self, n, rule):
        r = recommend("one_sample_mean", [shape(n, 1.5, 3.0)])
        assert r.rules == (rule,)
        assert {"small_n_skewed_rank_test": "Wilcoxon signed-rank test",
                "cochran_rule_not_met": "bootstrap confidence interval for the mean (BCa), or a t-test on a transformed scale",
                "t_test_adequate": "one-sample t-test"}[rule] == r.recommended.test
        if rule != "small_n_skewed_rank_test":
            assert "25 G1^2 = 56" in r.recommended.why

    def test_symmetric_small_sample_keeps_the_t_test(self):
        # Cochran's rule: with G1 = 0.1, 25 G1^2 = 0.25 < n for every n.
        r = recommend("one_sample_mean", [shape(12, **NEAR_NORMAL)])
        assert r.rules == ("t_test_adequate",)

    def test_reason_states_cochran_truthfully(self):
        r = recommend("one_sample_mean", [shape(5, 0.49, 0.0)])
        # Cochran (1977) p. 42: 25 G1^2 = 25 * 0.49^2 = 6.0025 > 5, so the rule is not met.
        assert r.rules == ("t_test_adequate",)
        assert "n=5 > 25 G1^2" not in r.recommended.why

    def test_skewed_raw_values(self):
        x = rng(801).lognormal(0.0, 1.0, 20)
        r = recommend("one_sample_mean", [raw(x)])
        # Reference: scipy.stats.skew(bias=False) puts this sample in the rule's range.
        G1 = stats.skew(x, bias=False)
        assert abs(G1) >= 0.5 and x.size <= 25 * G1**2
        assert r.rules == ("small_n_skewed_rank_test",)
        assert_allclose(r.samples[0].G1, G1, rtol=1e-12)

    def test_three_values(self):
        r = recommend("one_sample_mean", [raw([1.0, 2.0, 10.0])])
        # Reference: scipy.stats.skew(bias=False) = 1.69 for these values: clearly skewed, n < 30.
        assert r.rules == ("small_n_skewed_rank_test",)

    def test_summary_without_kurtosis(self):
        r = recommend("one_sample_mean", [profile_of_summary(Summary(n=20, mean=0.0, sd=1.0, skewness=1.5))])
        assert r.rules == ("small_n_skewed_rank_test",)


class TestTwoSample:
    def test_welch_by_default(self):
        r = recommend("two_sample", [shape(40, **NEAR_NORMAL), shape(45, **NEAR_NORMAL)])
        # Delacre, Lakens & Leys (2017): Welch's t-test by default.
        assert r.rules == ("welch_by_default",)
        assert r.recommended.test == "Welch's t-test"
        assert "Student's t-test" in [a.test for a in r.alternatives]

    def test_welch_for_normal_raw_samples(self):
        r = recommend("two_sample", [raw(samples.normal(50, 802)), raw(samples.normal(60, 803, loc=0.5))])
        assert r.rules == ("welch_by_default",)

    @pytest.mark.parametrize("n1, n2", [(15, 18), (10, 29)])
    def test_rank_test_for_clear_skew_in_small_samples(self, n1, n2):
        r = recommend("two_sample", [shape(n1, 2.0, 5.0), shape(n2, 1.5, 3.0)])
        # Fagerland & Sandvik (2009): the rank-sum test compares distributions, not medians.
        assert r.rules == ("small_n_skewed_rank_test",)
        assert r.recommended.test == "Wilcoxon-Mann-Whitney rank-sum test"
        assert "compares the distributions" in r.recommended.why and "not medians" in r.recommended.why

    def test_large_skewed_samples_keep_welch(self):
        r = recommend("two_sample", [shape(30, 2.0, 5.0), shape(40, 1.5, 3.0)])
        assert r.rules == ("welch_by_default",)

    # Common practice: a largest/smallest sd ratio above 2 counts as unequal spreads.
    @pytest.mark.parametrize("sd2, unequal", [(1.5, False), (2.0, False), (2.01, True), (4.0, True)])
    def test_unequal_spreads(self, sd2, unequal):
        r = recommend("two_sample", [shape(40, **NEAR_NORMAL), shape(40, sd=sd2, **NEAR_NORMAL)])
        assert ("unequal_spreads" in r.rules) is unequal
        assert any("do not pool variances" in c for c in r.cautions) is unequal


class TestKSample:
    def test_welch_anova_and_unequal_spreads(self):
        r = recommend("k_sample", [shape(40, **NEAR_NORMAL), shape(40, **NEAR_NORMAL), shape(40, sd=3.0, **NEAR_NORMAL)])
        # Welch (1951): Welch's ANOVA does not assume equal spreads.
        assert r.rules == ("welch_anova_by_default", "unequal_spreads")
        assert r.recommended.test == "Welch's ANOVA"
        assert any("classic F test is not safe" in c and "3" in c for c in r.cautions)
        assert {"Brown-Forsythe ANOVA", "Kruskal-Wallis test"} <= {a.test for a in r.alternatives}

    def test_equal_spreads_no_caution(self):
        r = recommend("k_sample", [shape(40, **NEAR_NORMAL) for _ in range(4)])
        assert r.rules == ("welch_anova_by_default",)
        assert not any("F test" in c for c in r.cautions)

    def test_kruskal_wallis_for_small_skewed_groups(self):
        r = recommend("k_sample", [shape(15, 2.0, 5.0), shape(15, **NEAR_NORMAL), shape(15, **NEAR_NORMAL)])
        assert r.rules == ("small_n_skewed_rank_test",)
        assert r.recommended.test == "Kruskal-Wallis test"


class TestCorrelation:
    def test_spearman_for_a_skewed_margin(self):
        r = recommend("correlation", [raw(rng(804).lognormal(0.0, 1.0, 40)), raw(samples.normal(40, 805))])
        # Bishara & Hittner (2012): Spearman's rho for non-normal margins.
        assert r.rules == ("spearman_for_skew_or_outliers",)
        assert r.recommended.test == "Spearman's rank correlation"

    def test_pearson_for_near_normal_margins(self):
        r = recommend("correlation", [raw(samples.normal(40, 806)), raw(samples.normal(40, 807))])
        assert r.rules == ("pearson_with_spearman_beside",)
        assert any("scatter plot" in c for c in r.cautions)


class TestPaired:
    def test_works_on_the_profile_it_is_given(self):
        # The API passes the differences; here a skewed set of differences, n = 25.
        r = recommend("paired", [shape(25, 1.6, 3.0)])
        assert r.rules == ("small_n_skewed_rank_test",)
        assert r.recommended.test == "Wilcoxon signed-rank test on the differences"

    def test_symmetric_differences(self):
        r = recommend("paired", [shape(25, **NEAR_NORMAL)])
        assert r.rules == ("t_test_adequate",)
        assert r.recommended.test.startswith("paired t-test")


class TestRegressionResiduals:
    def test_heavy_tailed_residuals(self):
        x = samples.student_t(200, 808)
        r = recommend("regression_residuals", [raw(x)])
        # Reference: scipy.stats.kurtosis(bias=False) well above the threshold 1 (common practice).
        assert stats.kurtosis(x, bias=False) > 1
        assert r.rules == ("residuals_matter_little_for_coefficients",)
        assert "HC3" in r.recommended.test
        assert any("prediction intervals" in c for c in r.cautions)

    def test_normal_residuals(self):
        r = recommend("regression_residuals", [raw(samples.normal(200, 809))])
        assert r.rules == ("residuals_matter_little_for_coefficients",)
        assert r.recommended.test == "ordinary least squares with the usual inference"


class TestControlChart:
    def test_non_normal_data(self):
        x = rng(810).lognormal(0.0, 0.7, 150)
        r = recommend("control_chart", [raw(x)])
        # Reference: scipy.stats.shapiro rejects; Montgomery (2019) 6.4: I-MR limits assume normality.
        assert stats.shapiro(x).pvalue < 0.05
        assert r.rules == ("individuals_chart_assumes_normality",)
        assert "0.135%" in r.recommended.test and "99.865%" in r.recommended.test
        assert r.samples[0].normal is False

    def test_normal_data(self):
        r = recommend("control_chart", [raw(samples.normal(150, 811))])
        assert r.rules == ("individuals_chart_assumes_normality",)
        assert r.recommended.test == "individuals and moving-range (I-MR) chart"


class TestCapability:
    X = samples.normal(200, 812, loc=10.0, scale=1.0)

    def test_indices_against_their_formulas(self):
        x = self.X
        c = recommend("capability", [raw(x)], lower_limit=6.0, upper_limit=13.0).capability
        mean, sd = x.mean(), x.std(ddof=1)
        # Montgomery (2019) 8.2: Cp = (USL - LSL) / 6 sd, Cpk = min(USL - mean, mean - LSL) / 3 sd.
        assert_allclose(c.cp, (13.0 - 6.0) / (6 * sd), rtol=1e-12)
        assert_allclose(c.cpk, min(13.0 - mean, mean - 6.0) / (3 * sd), rtol=1e-12)
        # Clements (1989): the percentile indices with numpy.quantile (linear, the default).
        lo, med, hi = np.quantile(x, [0.00135, 0.5, 0.99865])
        assert_allclose(c.percentile_cp, (13.0 - 6.0) / (hi - lo), rtol=1e-12)
        assert_allclose(c.percentile_cpk, min((13.0 - med) / (hi - med), (med - 6.0) / (med - lo)), rtol=1e-12)

    def test_one_limit(self):
        x = self.X
        c = recommend("capability", [raw(x)], upper_limit=13.0).capability
        assert isinstance(c.cp, Unavailable) and isinstance(c.percentile_cp, Unavailable)
        # Montgomery (2019) 8.2: the one-sided index (USL - mean) / 3 sd; Clements (1989).
        assert_allclose(c.cpk, (13.0 - x.mean()) / (3 * x.std(ddof=1)), rtol=1e-12)
        _, med, hi = np.quantile(x, [0.00135, 0.5, 0.99865])
        assert_allclose(c.percentile_cpk, (13.0 - med) / (hi - med), rtol=1e-12)

    def test_summary_has_no_percentiles(self):
        c = recommend("capability", [shape(200, **NEAR_NORMAL, mean=10.0)], lower_limit=7.0, upper_limit=13.0).capability
        # Formula as above with mean 10, sd 1.
        assert_allclose(c.cp, 1.0, rtol=1e-12)
        assert_allclose(c.cpk, 1.0, rtol=1e-12)
        assert isinstance(c.percentile_cp, Unavailable) and isinstance(c.percentile_cpk, Unavailable)

    def test_without_limits(self):
        # DESIGN.md (Inputs): what cannot be computed is Unavailable, with the reason.
        r = recommend("capability", [raw(self.X)])
        assert isinstance(r.capability, Unavailable)

    def test_other_goals_have_no_capability(self):
        assert isinstance(recommend("control_chart", [raw(self.X)], lower_limit=6.0, upper_limit=13.0).capability, Unavailable)

    def test_advice_follows_normality(self):
        normal = recommend("capability", [raw(self.X)], lower_limit=6.0, upper_limit=13.0)
        skewed = recommend("capability", [raw(rng(813).lognormal(0.0, 0.5, 200))], upper_limit=5.0)
        assert normal.rules == skewed.rules == ("capability_assumes_normality",)
        assert normal.recommended.test == "Cp and Cpk"
        assert skewed.recommended.test.startswith("percentile-based capability indices")


class TestTransformHint:
    # DESIGN.md (/v1/recommend): "a transform if one helps"; offered for skewed data only
    # (|G1| >= 0.5, Bulmer 1979).
    HINT = {"family": "box_cox", "lambda": 0.0}

    def test_offered_for_skewed_data(self):
        r = recommend("one_sample_mean", [shape(100, 1.5, 3.0)], transform_hint=self.HINT)
        assert r.transform == self.HINT and r.rules[-1] == "transform_helps"

    def test_not_offered_for_symmetric_data(self):
        r = recommend("one_sample_mean", [shape(100, **NEAR_NORMAL)], transform_hint=self.HINT)
        assert r.transform is None and "transform_helps" not in r.rules


def one_case(goal: str):
    profiles = {"two_sample": 2, "k_sample": 3, "correlation": 2}.get(goal, 1)
    return [raw(samples.normal(40, 820 + i)) for i in range(profiles)]


class TestAdviceNote:
    @pytest.mark.parametrize("goal", GOALS)
    def test_every_goal_says_it_is_advice(self, goal):
        r = recommend(goal, one_case(goal), lower_limit=-3.0, upper_limit=3.0)
        # Rochon, Gondan & Kieser (2012): a normality pre-test should not choose the test.
        assert r.note == ADVICE_NOTE
        assert "advice, not a decision" in r.note and "pre-test" in r.note
        assert r.goal == goal and r.rules and r.recommended.test and r.recommended.why
