"""Tests for service.stats.diagnose: the overall verdict on seeded cases built for each
label, its flags and sentence, the parts equal to the separate analyses, and the
false-alarm rate of the verdict under normality (calibration)."""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from scipy import stats

from service.stats.describe import describe
from service.stats.diagnose import DiagnoseOptions, diagnose
from service.stats.forms import Sample
from service.stats.histogram import check_histogram
from service.stats.modality import modality
from service.stats.normality.battery import NormalityOptions, normality
from service.stats.profile import profile_of_histogram, profile_of_sample, profile_of_summary
from service.stats.results import Unavailable
from service.stats.summary import Summary
from service.stats.tails import tails

from . import samples

FLAGS = {"not_normal", "right_skewed", "left_skewed", "heavy_tails", "light_tails", "multimodal", "rounded",
         "small_sample", "mean_not_yet_normal"}


def rng(seed: int) -> np.random.Generator:
    return np.random.default_rng(seed)


def raw(x):
    return profile_of_sample(Sample.from_array(x))


# Seeded cases, one per label.
CASES = {
    "normal": lambda: samples.normal(500, 501, loc=10.0, scale=2.0),
    "skewed": lambda: rng(12).lognormal(0.0, 0.25, 200),
    "heavy_tailed": lambda: samples.student_t(300, 503, 3.0),
    "multimodal": lambda: np.concatenate([samples.normal(150, 504), samples.normal(150, 505, loc=5.0)]),
    "inconclusive": lambda: samples.normal(15, 506),
    "near_normal": lambda: samples.student_t(4000, 904, 10.0),
}


class TestLabels:
    def test_normal(self):
        x = CASES["normal"]()
        v = diagnose(raw(x)).verdict
        # Reference: scipy.stats.shapiro does not reject; n=500 is past the power table's
        # adequate n; |G1| < 0.5 and |G2| < 1 (scipy.stats.skew / kurtosis, bias=False).
        assert stats.shapiro(x).pvalue >= 0.05
        assert abs(stats.skew(x, bias=False)) < 0.5 and abs(stats.kurtosis(x, bias=False)) < 1
        assert (v.label, v.normal, v.flags) == ("normal", True, ())

    def test_skewed(self):
        x = CASES["skewed"]()
        v = diagnose(raw(x)).verdict
        # Reference: scipy.stats.shapiro rejects and G1 / 0.5 exceeds G2 / 1 (scipy.stats.skew
        # and kurtosis, bias=False; thresholds Bulmer 1979 and common practice).
        G1, G2 = stats.skew(x, bias=False), stats.kurtosis(x, bias=False)
        assert stats.shapiro(x).pvalue < 0.05 and G1 / 0.5 > abs(G2) / 1.0
        assert (v.label, v.normal) == ("skewed", False)
        assert "right_skewed" in v.flags and "not_normal" in v.flags

    def test_heavy_tailed(self):
        x = CASES["heavy_tailed"]()
        v = diagnose(raw(x)).verdict
        G1, G2 = stats.skew(x, bias=False), stats.kurtosis(x, bias=False)
        # Reference: scipy.stats.shapiro rejects; G2 / 1 exceeds |G1| / 0.5 (scipy, bias=False).
        assert stats.shapiro(x).pvalue < 0.05 and G2 > 2 * abs(G1)
        assert (v.label, v.normal) == ("heavy_tailed", False)
        assert {"not_normal", "heavy_tails"} <= set(v.flags)
        assert "light_tails" not in v.flags and "multimodal" not in v.flags
        # The skewness flag follows the sample's own G1 (a t(3) sample is rarely symmetric).
        assert ("right_skewed" in v.flags) is bool(G1 >= 0.5)

    def test_multimodal(self):
        v = diagnose(raw(CASES["multimodal"]())).verdict
        # Robertson & Fryer (1969): equal-variance normals 5 sd apart are bimodal (> 2 sd).
        assert v.label == "multimodal" and "multimodal" in v.flags
        assert "2 groups" in v.summary

    def test_inconclusive(self):
        x = CASES["inconclusive"]()
        v = diagnose(raw(x)).verdict
        # Reference: scipy.stats.shapiro does not reject at n=15, which is below the power
        # table's adequate n: no evidence against normality is not evidence for it.
        assert stats.shapiro(x).pvalue >= 0.05
        assert (v.label, v.normal) == ("inconclusive", None)
        assert "small_sample" in v.flags

    def test_near_normal(self):
        x = CASES["near_normal"]()
        v = diagnose(raw(x)).verdict
        # Reference: scipy.stats.shapiro rejects at n=4000, but |G1| < 0.5 and |G2| < 1
        # (t with 10 df: excess kurtosis 6/(10-4) = 1 in the population, recalled from memory).
        assert stats.shapiro(x).pvalue < 0.05
        assert abs(stats.skew(x, bias=False)) < 0.5 and abs(stats.kurtosis(x, bias=False)) < 1
        assert (v.label, v.normal, v.flags) == ("near_normal", False, ("not_normal",))

    def test_insufficient_data_from_a_small_summary(self):
        profile = profile_of_summary(Summary(n=4, mean=0.0, sd=1.0, skewness=0.3, kurtosis=0.1))
        v = diagnose(profile).verdict
        # D'Agostino's tests need n >= 8 (skewness) and n >= 5 (kurtosis): nothing applies at n=4.
        assert (v.label, v.normal) == ("insufficient_data", None)
        assert v.summary == "Too few values (n=4) to judge the shape."

    @pytest.mark.parametrize("x", [[1.0, 2.0], [1.0, 2.0, 4.0]])
    def test_insufficient_data_from_two_or_three_values(self, x):
        v = diagnose(raw(x)).verdict
        assert v.label in ("insufficient_data", "inconclusive") and v.normal is None

    def test_lognormal_is_skewed(self):
        x = rng(13).lognormal(0.0, 0.5, 200)
        v = diagnose(raw(x)).verdict
        assert v.label == "skewed"

    @pytest.mark.parametrize("name, x", [
        ("lognormal", lambda: rng(11).lognormal(0.0, 1.0, 200)),
        ("uniform", lambda: rng(901).uniform(size=500)),
    ])
    def test_unimodal_shapes_are_not_multimodal(self, name, x):
        d = diagnose(raw(x()))
        # Reference: both densities have one mode (textbook); the dip test (Hartigan &
        # Hartigan 1985) finds no evidence of more.
        assert d.modality.dip.reject is False
        assert d.verdict.label != "multimodal"


class TestFlags:
    @pytest.mark.parametrize("case", sorted(CASES))
    def test_flags_are_machine_readable(self, case):
        v = diagnose(raw(CASES[case]())).verdict
        assert set(v.flags) <= FLAGS
        assert all(re.fullmatch(r"[a-z_]+", f) for f in v.flags)
        assert len(set(v.flags)) == len(v.flags)

    @pytest.mark.parametrize("case", ["normal", "skewed", "heavy_tailed", "near_normal"])
    def test_flags_follow_the_shape(self, case):
        x = CASES[case]()
        v = diagnose(raw(x)).verdict
        G1, G2 = stats.skew(x, bias=False), stats.kurtosis(x, bias=False)
        # Reference: scipy.stats.skew / kurtosis (bias=False) against the default thresholds
        # 0.5 (Bulmer 1979) and 1 (common practice); scipy.stats.shapiro at alpha = 0.05.
        assert ("right_skewed" in v.flags) is bool(G1 >= 0.5)
        assert ("left_skewed" in v.flags) is bool(G1 <= -0.5)
        assert ("heavy_tails" in v.flags) is bool(G2 >= 1)
        assert ("light_tails" in v.flags) is bool(G2 <= -1)
        assert ("not_normal" in v.flags) is bool(stats.shapiro(x).pvalue < 0.05)

    def test_rounded(self):
        x = np.round(samples.normal(3000, 905), 1)
        v = diagnose(raw(x)).verdict
        assert "rounded" in v.flags


class TestSummarySentence:
    @pytest.mark.parametrize("case", sorted(CASES))
    def test_one_sentence(self, case):
        x = CASES[case]()
        s = diagnose(raw(x)).verdict.summary
        assert s.endswith(".") and s[0].isupper()
        # One sentence: no sentence break inside (decimals such as 0.91 are not breaks).
        assert not re.search(r"[.!?]\s", s[:-1])
        assert f"n={x.size}" in s

    def test_numbers_in_the_sentence(self):
        x = CASES["heavy_tailed"]()
        s = diagnose(raw(x)).verdict.summary
        # Reference: scipy.stats.kurtosis(bias=False), to 2 decimals as printed.
        assert f"excess kurtosis {stats.kurtosis(x, bias=False):.2f}" in s


class TestComposition:
    QUESTIONS = {"above": (12.0,), "below": (7.0,), "intervals": ((8.0, 11.0),), "lower_limit": 5.0,
                 "upper_limit": 15.0, "quantiles": (0.05, 0.5)}

    def test_parts_equal_the_separate_analyses(self):
        profile = raw(CASES["normal"]())
        d = diagnose(profile, DiagnoseOptions(tails=self.QUESTIONS, goal="capability", lower_limit=5.0, upper_limit=15.0))
        assert d.describe == describe(profile)
        assert d.normality == normality(profile)
        assert d.modality == modality(profile)
        mixture = d.modality.mixture.components
        assert d.tails == tails(profile, mixture=mixture, **self.QUESTIONS)
        assert d.verdict.normal is d.normality.verdict.normal

    def test_tails_and_recommend_only_when_asked(self):
        d = diagnose(raw(CASES["normal"]()))
        assert isinstance(d.tails, Unavailable) and isinstance(d.recommend, Unavailable)

    def test_histogram_input(self):
        edges = [-math.inf, 9, 10, 11, 12, 13, 14, 16, math.inf]
        d = diagnose(profile_of_histogram(check_histogram(edges, [0, 8, 14, 7, 11, 5, 9, 4])))
        assert d.normality.verdict.primary_test == "chi_square"
        # Regression value (our own output on the example histogram, G1 = 0.65 binned).
        assert (d.verdict.label, d.verdict.normal) == ("skewed", False)

    def test_deterministic(self):
        profile = raw(CASES["multimodal"]())
        assert diagnose(profile) == diagnose(profile)


def false_alarms(n: int, reps: int, seed: int) -> tuple[float, float]:
    """Share of normal samples whose verdict says not normal, and share where any of the
    nine tests on raw values rejects (the naive rule)."""
    g = np.random.default_rng(seed)
    verdict = naive = 0
    for _ in range(reps):
        report = normality(raw(g.normal(size=n)), NormalityOptions(alpha=0.05))
        verdict += report.verdict.normal is False
        naive += any(t.reject for name, t in report.tests.as_dict().items() if name != "chi_square")
    return verdict / reps, naive / reps


class TestCalibration:
    REPS = 2000
    ALPHA = 0.05
    # Binomial standard error of a rejection rate at alpha over REPS samples: sqrt(a(1-a)/m)
    # = 0.0049; the tolerance is 3 of them (0.0146).
    TOL = 3 * math.sqrt(ALPHA * (1 - ALPHA) / REPS)

    @pytest.mark.parametrize("n, seed", [(20, 20240620), (200, 20240700)])
    def test_false_alarm_rate_is_alpha(self, n, seed):
        verdict, naive = false_alarms(n, self.REPS, seed)
        # Reference: under normality a level-alpha primary test rejects with probability alpha.
        assert abs(verdict - self.ALPHA) < self.TOL
        # Reference: the naive "any of nine tests rejects" rule is well above alpha (the
        # tests are correlated but not identical); it must exceed alpha by 5 standard errors.
        assert naive > self.ALPHA + 5 * self.TOL / 3
        assert naive > verdict

    @pytest.mark.parametrize("seed", range(20240801, 20240811))
    def test_diagnose_uses_the_same_verdict(self, seed):
        profile = raw(samples.normal(40, seed))
        assert diagnose(profile).verdict.normal is normality(profile).verdict.normal
