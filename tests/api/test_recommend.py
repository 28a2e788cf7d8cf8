"""POST /v1/recommend through the HTTP layer: each rule fires on a seeded case built for
it and is named in ``rules``; paired goals work on the differences; capability indices
against their formulas; the advice note on every goal; sample counts per goal. Every
200 response is checked against the generated OpenAPI document."""

from __future__ import annotations


import numpy as np
import pytest
from scipy import stats

from ..stats import samples
from .helpers import example, post_ok, post_refused, values

GOALS = ["one_sample_mean", "two_sample", "paired", "k_sample", "correlation", "regression_residuals",
         "control_chart", "capability"]
COUNT = {"one_sample_mean": 1, "two_sample": 2, "paired": 2, "k_sample": 3, "correlation": 2,
         "regression_residuals": 1, "control_chart": 1, "capability": 1}


def rng(seed: int) -> np.random.Generator:
    return np.random.default_rng(seed)


def shape(n: int, G1: float, G2: float, sd: float = 1.0) -> dict:
    return {"summary": {"n": n, "mean": 0.0, "sd": sd, "skewness": G1, "kurtosis": G2}}


def ok(client, conforms, goal: str, samples_: list[dict], **options) -> dict:
    return post_ok(client, conforms, "/v1/recommend", {"goal": goal, "samples": samples_, **options}, "RecommendResponse")


def refused(client, conforms, body: dict) -> dict:
    return post_refused(client, conforms, "/v1/recommend", body)


class TestTwoSample:
    def test_welch_by_default(self, client, conforms):
        body = example("recommend.json")
        doc = ok(client, conforms, body["goal"], body["samples"])
        # Delacre, Lakens & Leys (2017): Welch's t-test by default.
        assert doc["rules"][0] == "welch_by_default"
        assert doc["recommended"]["test"] == "Welch's t-test"
        assert doc["input"]["form"] == "samples"
        assert doc["input"]["n"] == sum(len(s["values"]) for s in body["samples"])

    def test_rank_test_for_small_skewed_samples(self, client, conforms):
        a, b = rng(851).lognormal(0.0, 1.0, 15), rng(852).lognormal(0.3, 1.0, 18)
        doc = ok(client, conforms, "two_sample", [values(a), values(b)])
        # Reference: scipy.stats.skew(bias=False) shows clear skew in one sample (G1 = 3.3; common
        # practice: |G1| >= 0.5 with n < 30), which is all the rule needs.
        assert max(stats.skew(a, bias=False), stats.skew(b, bias=False)) > 0.5
        assert doc["rules"][0] == "small_n_skewed_rank_test"
        assert doc["recommended"]["test"] == "Wilcoxon-Mann-Whitney rank-sum test"
        # Fagerland & Sandvik (2009): the rank-sum test compares distributions, not medians.
        assert "compares the distributions" in doc["recommended"]["why"] and "not medians" in doc["recommended"]["why"]

    def test_unequal_spreads(self, client, conforms):
        a, b = samples.normal(50, 853), samples.normal(60, 854, scale=3.0)
        doc = ok(client, conforms, "two_sample", [values(a), values(b)])
        # Reference: numpy std(ddof=1) ratio above 2 (common practice).
        ratio = b.std(ddof=1) / a.std(ddof=1)
        assert ratio > 2
        assert doc["rules"] == ["welch_by_default", "unequal_spreads"]
        assert any(f"{ratio:.2g}" in c and "do not pool" in c for c in doc["cautions"])


class TestOneSampleMean:
    # Cochran (1977) p. 42: n > 25 G1^2 (= 56.25 for G1 = 1.5) for the t-test's mean.
    @pytest.mark.parametrize("n, rule, test", [
        (20, "small_n_skewed_rank_test", "Wilcoxon signed-rank test"),
        (40, "cochran_rule_not_met", "bootstrap confidence interval for the mean (BCa), or a t-test on a transformed scale"),
        (60, "t_test_adequate", "one-sample t-test"),
    ])
    def test_cochran_rule(self, client, conforms, n, rule, test):
        doc = ok(client, conforms, "one_sample_mean", [shape(n, 1.5, 3.0)])
        assert doc["rules"] == [rule]
        assert doc["recommended"]["test"] == test
        assert doc["samples"][0]["G1"] == pytest.approx(1.5, rel=1e-12)

    def test_three_values(self, client, conforms):
        doc = ok(client, conforms, "one_sample_mean", [values([1.0, 2.0, 10.0])])
        assert doc["rules"] == ["small_n_skewed_rank_test"]


class TestKSample:
    def test_welch_anova_and_unequal_spreads(self, client, conforms):
        groups = [samples.normal(40, 855), samples.normal(40, 856), samples.normal(40, 857, scale=4.0)]
        doc = ok(client, conforms, "k_sample", [values(g) for g in groups])
        # Welch (1951); common practice: a largest/smallest sd ratio above 2.
        assert doc["rules"] == ["welch_anova_by_default", "unequal_spreads"]
        assert doc["recommended"]["test"] == "Welch's ANOVA"
        assert any("F test is not safe" in c for c in doc["cautions"])
        assert len(doc["samples"]) == 3


class TestCorrelation:
    def test_spearman_for_skewed_inputs(self, client, conforms):
        a = rng(858).lognormal(0.0, 1.0, 40)
        doc = ok(client, conforms, "correlation", [values(a), values(samples.normal(40, 859))])
        # Bishara & Hittner (2012); reference: scipy.stats.skew(bias=False) of the first margin above 0.5.
        assert stats.skew(a, bias=False) > 0.5
        assert doc["rules"][0] == "spearman_for_skew_or_outliers"
        assert doc["recommended"]["test"] == "Spearman's rank correlation"

    def test_unequal_lengths(self, client, conforms):
        # DESIGN.md: correlation takes two raw samples of equal length.
        doc = refused(client, conforms, {"goal": "correlation", "samples": [values(samples.normal(40, 860)), values(samples.normal(30, 861))]})
        assert "same number of values" in doc["detail"]

    def test_summaries_refused(self, client, conforms):
        refused(client, conforms, {"goal": "correlation", "samples": [shape(40, 0.1, 0.1), shape(40, 0.1, 0.1)]})


class TestPaired:
    A = samples.normal(25, 862, loc=10.0)
    B = A - np.random.default_rng(863).exponential(1.0, 25)

    def test_works_on_the_differences(self, client, conforms):
        doc = ok(client, conforms, "paired", [values(self.A), values(self.B)])
        d = self.A - self.B
        # Reference: scipy.stats.skew / kurtosis(bias=False) of the differences A - B.
        assert doc["samples"][0]["n"] == 25 and len(doc["samples"]) == 1
        assert doc["samples"][0]["G1"] == pytest.approx(stats.skew(d, bias=False), rel=1e-9)
        assert doc["samples"][0]["G2"] == pytest.approx(stats.kurtosis(d, bias=False), rel=1e-9)
        assert doc["rules"][0] == "small_n_skewed_rank_test"
        assert doc["recommended"]["test"] == "Wilcoxon signed-rank test on the differences"

    def test_unequal_lengths(self, client, conforms):
        # DESIGN.md: paired values need equal lengths; a 422.
        doc = refused(client, conforms, {"goal": "paired", "samples": [values(self.A), values(self.B[:20])]})
        assert "got 25 and 20 values" in doc["detail"]

    def test_missing_values(self, client, conforms):
        b = self.B.tolist()
        b[3] = None
        refused(client, conforms, {"goal": "paired", "samples": [values(self.A), {"values": b}]})


class TestOneSampleGoals:
    def test_regression_residuals(self, client, conforms):
        doc = ok(client, conforms, "regression_residuals", [values(samples.student_t(200, 864))])
        # Lumley et al. (2002): coefficients survive non-normal residuals; HC3 standard errors.
        assert doc["rules"][0] == "residuals_matter_little_for_coefficients"
        assert "HC3" in doc["recommended"]["test"]

    def test_control_chart_with_non_normal_data(self, client, conforms):
        x = rng(865).lognormal(0.0, 0.7, 150)
        doc = ok(client, conforms, "control_chart", [values(x)])
        # Montgomery (2019) 6.4; reference: scipy.stats.shapiro rejects these data.
        assert stats.shapiro(x).pvalue < 0.05
        assert doc["rules"][0] == "individuals_chart_assumes_normality"
        assert "transformed scale" in doc["recommended"]["test"]
        # A transformation helps here: the Box-Cox lambda is scipy.stats.boxcox's.
        assert "transform_helps" in doc["rules"]
        assert doc["transform"]["family"] == "box_cox"
        assert doc["transform"]["lambda"] == pytest.approx(stats.boxcox(x)[1], abs=1e-6)


class TestCapability:
    X = samples.normal(300, 866, loc=10.0, scale=1.0)

    def test_indices_against_their_formulas(self, client, conforms):
        doc = ok(client, conforms, "capability", [values(self.X)], lower_limit=6.5, upper_limit=13.0)
        c = doc["capability"]
        mean, sd = self.X.mean(), self.X.std(ddof=1)
        # Montgomery (2019) 8.2: Cp = (USL - LSL)/6 sd, Cpk = min(USL - mean, mean - LSL)/3 sd.
        assert c["cp"] == pytest.approx((13.0 - 6.5) / (6 * sd), rel=1e-12)
        assert c["cpk"] == pytest.approx(min(13.0 - mean, mean - 6.5) / (3 * sd), rel=1e-12)
        # Clements (1989), percentiles by numpy.quantile (linear, the default).
        lo, med, hi = np.quantile(self.X, [0.00135, 0.5, 0.99865])
        assert c["percentile_cp"] == pytest.approx((13.0 - 6.5) / (hi - lo), rel=1e-12)
        assert c["percentile_cpk"] == pytest.approx(min((13.0 - med) / (hi - med), (med - 6.5) / (med - lo)), rel=1e-12)
        assert doc["rules"][0] == "capability_assumes_normality"

    def test_without_limits(self, client, conforms):
        c = ok(client, conforms, "capability", [values(self.X)])["capability"]
        assert c["available"] is False and "limit" in c["reason"]


class TestAdviceNote:
    @pytest.mark.parametrize("goal", GOALS)
    def test_every_response_says_it_is_advice(self, client, conforms, goal):
        group = [values(samples.normal(30, 870 + i)) for i in range(COUNT[goal])]
        doc = ok(client, conforms, goal, group, lower_limit=-3.0, upper_limit=3.0)
        # Rochon, Gondan & Kieser (2012): a normality pre-test should not mechanically choose the test.
        assert "advice, not a decision" in doc["note"]
        assert "pre-test" in doc["note"] and "Rochon" in doc["note"]
        assert doc["goal"] == goal and doc["rules"]


class TestSampleCounts:
    @pytest.mark.parametrize("goal, k", [
        ("one_sample_mean", 2), ("two_sample", 1), ("two_sample", 3), ("paired", 1), ("paired", 3),
        ("k_sample", 1), ("correlation", 3), ("regression_residuals", 2), ("control_chart", 2), ("capability", 2),
    ])
    def test_wrong_count_is_422(self, client, conforms, goal, k):
        # DESIGN.md (Endpoints): one sample for one-sample goals, two for two_sample, paired
        # and correlation, two or more for k_sample.
        group = [values(samples.normal(30, 880 + i)) for i in range(k)]
        doc = refused(client, conforms, {"goal": goal, "samples": group})
        assert doc["errors"][0]["pointer"] == "/samples"
        assert f"got {k}" in doc["errors"][0]["detail"]

    def test_unknown_goal(self, client, conforms):
        refused(client, conforms, {"goal": "anova", "samples": [values(samples.normal(30, 890))]})
