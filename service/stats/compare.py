"""Drift: a sample against a reference sample.

Tests of equal distributions (two-sample Kolmogorov-Smirnov, Anderson-Darling k-sample,
Cramer-von Mises two-sample), of equal location (Welch's t) and of equal spread
(Brown-Forsythe: Levene's test about the median), the change in skewness and excess
kurtosis with standard errors, and the population stability index on bins cut at the
reference's deciles. Histograms on shared edges get the chi-square test of homogeneity
and the PSI; the raw-value tests are then ``applicable: false``.

The drift verdict: ``stable`` when the primary test of equal distributions (Anderson-
Darling, the most sensitive of the three to shape and tails) does not reject;
otherwise ``shifted`` when the location test rejects, ``rescaled`` when the spread test
rejects and the sd itself moved by more than 5%, and ``reshaped`` otherwise (only the
shape changed). ``material`` says whether the change is large enough to act on (mean
shift of at least 0.2 reference sd, Cohen's "small"; sd ratio outside 0.8-1.25; a
significant skewness or kurtosis change of at least the shape thresholds; PSI of at least
0.1 and above its noise level), so that a monitoring job at a large n need not alert on
trivial differences.

References
----------
.. [1] Scholz, F. W. and Stephens, M. A. (1987). K-sample Anderson-Darling tests. *JASA*
       82(399), 918-924. doi:10.1080/01621459.1987.10478517
.. [2] Anderson, T. W. (1962). On the distribution of the two-sample Cramer-von Mises
       criterion. *Annals of Mathematical Statistics* 33(3), 1148-1159.
.. [3] Welch, B. L. (1947). The generalization of "Student's" problem when several
       different population variances are involved. *Biometrika* 34(1/2), 28-35.
.. [4] Brown, M. B. and Forsythe, A. B. (1974). Robust tests for the equality of
       variances. *JASA* 69(346), 364-367. doi:10.1080/01621459.1974.10482955
.. [5] Siddiqi, N. (2006). *Credit Risk Scorecards*. Wiley (the population stability
       index and its 0.1 / 0.25 bands, common practice in model monitoring).
.. [6] Cohen, J. (1988). *Statistical Power Analysis for the Behavioral Sciences*, 2nd ed.
       Erlbaum (d = 0.2 as a "small" effect).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy import stats

from .moments import se_kurtosis, se_skewness
from .thresholds import DEFAULT_KURTOSIS_THRESHOLD, DEFAULT_SKEWNESS_THRESHOLD
from .normality.result import TestResult, not_applicable, outcome
from .profile import Profile
from .pvalues import two_sided_normal
from .quantiles import quantiles_sorted
from .results import Method, Notice, Unavailable

KS = Method("two-sample Kolmogorov-Smirnov (scipy.stats.ks_2samp, exact or asymptotic p-value)",
            "Kolmogorov (1933); Smirnov (1948)")
AD = Method("Anderson-Darling k-sample test, midrank variant (scipy.stats.anderson_ksamp); p-value interpolated "
            "in the published table, reported as a bound outside 0.001-0.25",
            "Scholz & Stephens (1987), JASA 82(399):918-924")
CVM = Method("two-sample Cramer-von Mises (scipy.stats.cramervonmises_2samp)",
             "Anderson (1962), Ann. Math. Stat. 33(3):1148-1159")
WELCH = Method("Welch's t-test of equal means (unequal variances)", "Welch (1947), Biometrika 34:28-35")
BROWN_FORSYTHE = Method("Brown-Forsythe test of equal spreads (Levene's test about the median)",
                        "Brown & Forsythe (1974), JASA 69(346):364-367")
CHI_HOMOGENEITY = Method("chi-square test of homogeneity of two histograms on the same edges "
                         "(scipy.stats.chi2_contingency, bins with no counts dropped)", "Pearson (1900)")

PSI_BANDS = (0.1, 0.25)  # [5], common practice: below 0.1 stable, 0.1-0.25 some shift, above 0.25 major
SHIFT_MATERIAL = 0.2  # [6]
RATIO_MATERIAL = (0.8, 1.25)  # common practice
SD_SAME = (0.95, 1.0 / 0.95)  # common practice: sds within 5% are the same spread for the label
_PSI_FLOOR = 1e-4  # share given to an empty bin so that log(0) never appears (common practice)


@dataclass(frozen=True)
class ShapeChange:
    sample: float | None
    reference: float | None
    difference: float | Unavailable
    se: float | Unavailable
    z: float | Unavailable
    p_value: float | Unavailable


@dataclass(frozen=True)
class Stability:
    psi: float | Unavailable
    band: str | Unavailable
    bins: int | Unavailable
    noise_level: float | Unavailable
    method: str


@dataclass(frozen=True)
class Effects:
    mean_shift_in_sd: float
    sd_ratio: float
    material: bool
    reasons: tuple[str, ...]


@dataclass(frozen=True)
class CompareTests:
    __test__ = False

    kolmogorov_smirnov: TestResult
    anderson_darling: TestResult
    cramer_von_mises: TestResult
    chi_square: TestResult
    location: TestResult
    scale: TestResult


@dataclass(frozen=True)
class Drift:
    label: str
    material: bool
    flags: tuple[str, ...]
    summary: str
    primary_test: str


@dataclass(frozen=True)
class Comparison:
    tests: CompareTests
    skewness: ShapeChange
    kurtosis: ShapeChange
    stability: Stability
    effects: Effects
    verdict: Drift
    warnings: tuple[Notice, ...]


def _shape_change(a: float | None, b: float | None, na: int, nb: int, se_fn) -> ShapeChange:
    if a is None or b is None:
        why = Unavailable("both samples need the moment (n >= 4 and raw values or a summary carrying it)")
        return ShapeChange(a, b, why, why, why, why)
    se = math.sqrt(se_fn(na) ** 2 + se_fn(nb) ** 2)  # independent samples, normal-theory se of each
    diff = a - b
    return ShapeChange(a, b, diff, se, diff / se, two_sided_normal(diff / se))


def _psi_values(x: np.ndarray, ref_sorted: np.ndarray) -> Stability:
    cuts = np.unique(quantiles_sorted(ref_sorted, np.arange(1, 10) / 10.0, "hf7"))
    if cuts.size == 0:
        none = Unavailable("the reference has a single value")
        return Stability(none, none, none, none, "population stability index on the reference's deciles")
    edges = np.concatenate([[-np.inf], cuts, [np.inf]])
    a = np.histogram(x, edges)[0]
    r = np.histogram(ref_sorted, edges)[0]
    return _psi_counts(a, r, "population stability index on bins cut at the reference's deciles")


def _psi_counts(a: np.ndarray, r: np.ndarray, method: str) -> Stability:
    psi = float(_psi(a, r))
    band = "stable" if psi < PSI_BANDS[0] else "moderate_shift" if psi < PSI_BANDS[1] else "major_shift"
    noise = psi_noise(a, r)
    return Stability(psi, band, int(a.size), noise, method + f"; bands {PSI_BANDS[0]} and {PSI_BANDS[1]} (common practice); "
                     "noise_level is the 95% point of PSI between two samples of one distribution of these sizes (seeded simulation)")


def _psi(a: np.ndarray, r: np.ndarray) -> np.ndarray:
    pa = np.maximum(a / a.sum(axis=-1, keepdims=True), _PSI_FLOOR)
    pr = np.maximum(r / r.sum(axis=-1, keepdims=True), _PSI_FLOOR)
    return np.sum((pa - pr) * np.log(pa / pr), axis=-1)


def psi_noise(a: np.ndarray, r: np.ndarray, draws: int = 2000) -> float:
    """The 95% point of PSI between two samples of these sizes drawn from one
    distribution (the pooled bin shares): the noise a PSI must clear before its band
    means anything. By seeded simulation, since at a few values per bin the chi-square
    approximation (PSI ~ (1/n1 + 1/n2) chi2(k-1)) is far too optimistic."""
    pooled = (a + r) / (a.sum() + r.sum())
    rng = np.random.default_rng(20261202)
    sa = rng.multinomial(int(a.sum()), pooled, size=draws)
    sr = rng.multinomial(int(r.sum()), pooled, size=draws)
    return float(np.quantile(_psi(sa, sr), 0.95))


def _ad(x: np.ndarray, y: np.ndarray, alpha: float) -> TestResult:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = stats.anderson_ksamp([x, y], variant="midrank")
    bound = None
    text = " ".join(str(w.message) for w in caught)
    if "floored" in text:  # scipy: the true p-value is below the table's 0.001
        bound = "<"
    elif "capped" in text:  # above the table's 0.25
        bound = ">"
    return outcome(AD, res.statistic, res.pvalue, alpha, bound=bound)


def _raw_tests(x: np.ndarray, y: np.ndarray, alpha: float) -> CompareTests:
    ks = stats.ks_2samp(x, y)
    cvm = stats.cramervonmises_2samp(x, y)
    welch = stats.ttest_ind(x, y, equal_var=False)
    bf = stats.levene(x, y, center="median")
    return CompareTests(
        kolmogorov_smirnov=outcome(KS, ks.statistic, ks.pvalue, alpha),
        anderson_darling=_ad(x, y, alpha),
        cramer_von_mises=outcome(CVM, cvm.statistic, cvm.pvalue, alpha),
        chi_square=not_applicable(CHI_HOMOGENEITY, "applies to two histograms; raw values use the EDF tests"),
        location=outcome(WELCH, welch.statistic, welch.pvalue, alpha),
        scale=outcome(BROWN_FORSYTHE, bf.statistic, bf.pvalue, alpha),
    )


def _histogram_tests(profile: Profile, reference: Profile, alpha: float) -> tuple[CompareTests, Stability]:
    a, r = profile.histogram.counts, reference.histogram.counts
    keep = (a + r) > 0
    table = np.vstack([a[keep], r[keep]])
    raw = "needs raw values of both samples"
    if table.shape[1] < 2:
        chi = not_applicable(CHI_HOMOGENEITY, "fewer than two bins hold counts")
    else:
        res = stats.chi2_contingency(table, correction=False)
        low = float((res.expected_freq < 5).mean())
        reason = (f"{low:.0%} of the expected counts are below 5: the chi-square approximation is rough"
                  if low > 0.2 else None)
        chi = outcome(CHI_HOMOGENEITY, res.statistic, res.pvalue, alpha, reason=reason)
    m1, m2 = profile.moments, reference.moments
    t = (m1.mean - m2.mean) / math.sqrt(m1.variance / m1.n + m2.variance / m2.n)
    df = (m1.variance / m1.n + m2.variance / m2.n) ** 2 / (
        (m1.variance / m1.n) ** 2 / (m1.n - 1) + (m2.variance / m2.n) ** 2 / (m2.n - 1))
    location = outcome(WELCH, t, float(2 * stats.t.sf(abs(t), df)), alpha,
                       reason="from binned means and variances: approximate")
    tests = CompareTests(
        kolmogorov_smirnov=not_applicable(KS, raw), anderson_darling=not_applicable(AD, raw),
        cramer_von_mises=not_applicable(CVM, raw), chi_square=chi, location=location,
        scale=not_applicable(BROWN_FORSYTHE, raw),
    )
    return tests, _psi_counts(a, r, "population stability index on the shared bins")


def _effects(profile: Profile, reference: Profile, stability: Stability, skew: ShapeChange, kurt: ShapeChange,
             alpha: float) -> Effects:
    m, r = profile.moments, reference.moments
    shift = (m.mean - r.mean) / r.sd
    ratio = m.sd / r.sd
    reasons = []
    for name, change, threshold in (("skewness", skew, DEFAULT_SKEWNESS_THRESHOLD), ("excess kurtosis", kurt, DEFAULT_KURTOSIS_THRESHOLD)):
        if isinstance(change.difference, float) and abs(change.difference) >= threshold and change.p_value < alpha:
            reasons.append(f"the {name} changed by {change.difference:+.2f} (material from {threshold:g}, the shape threshold)")
    if abs(shift) >= SHIFT_MATERIAL:
        reasons.append(f"the mean moved {shift:+.2f} reference sd (material from {SHIFT_MATERIAL}, Cohen's small effect)")
    if not RATIO_MATERIAL[0] < ratio < RATIO_MATERIAL[1]:
        reasons.append(f"the sd is {ratio:.2f} times the reference's (material outside {RATIO_MATERIAL[0]}-{RATIO_MATERIAL[1]})")
    if isinstance(stability.psi, float) and stability.psi >= max(PSI_BANDS[0], stability.noise_level):
        reasons.append(f"PSI {stability.psi:.3f} is in the {stability.band} band, above its noise level {stability.noise_level:.3f}")
    return Effects(shift, ratio, bool(reasons), tuple(reasons))


def _verdict(tests: CompareTests, effects: Effects, skew: ShapeChange, kurt: ShapeChange, alpha: float) -> Drift:
    primary = "anderson_darling" if tests.anderson_darling.applicable else "chi_square"
    result = getattr(tests, primary)
    flags = []
    if tests.location.reject:
        flags.append("location_shift")
    if tests.scale.reject:
        flags.append("scale_change")
    for name, change in (("skewness_change", skew), ("kurtosis_change", kurt)):
        if isinstance(change.p_value, float) and change.p_value < alpha:
            flags.append(name)
    if effects.material:
        flags.append("material")
    if not result.applicable or not result.reject:
        label = "stable"
        summary = ("No evidence that the sample's distribution differs from the reference's"
                   + (f" ({primary} p = {result.p_value:.3g})." if result.applicable else "."))
        if effects.material:
            summary += " The effect sizes are large, though: " + "; ".join(effects.reasons) + "."
    else:
        # The spread test compares mean absolute deviations about the median, which a
        # change of shape alone also moves: "rescaled" needs the sd itself to change.
        sd_changed = not SD_SAME[0] < effects.sd_ratio < SD_SAME[1]
        label = ("shifted" if tests.location.reject else "rescaled" if tests.scale.reject and sd_changed
                 else "reshaped")
        what = {"shifted": "its location moved", "rescaled": "its spread changed",
                "reshaped": "its shape changed while location and spread held"}[label]
        size = "; ".join(effects.reasons) if effects.material else "the change is small in size (not material)"
        summary = f"The distribution differs from the reference ({primary} p {result.p_value_bound or '='} {result.p_value:.3g}): {what}; {size}."
    return Drift(label, effects.material, tuple(flags), summary, primary)


def compare(profile: Profile, reference: Profile, alpha: float = 0.05) -> Comparison:
    notices = list(profile.notices) + [Notice(n.code, "reference: " + n.message) for n in reference.notices]
    if profile.sample is not None and reference.sample is not None:
        tests = _raw_tests(profile.sample.sorted, reference.sample.sorted, alpha)
        stability = _psi_values(profile.sample.sorted, reference.sample.sorted)
    else:
        tests, stability = _histogram_tests(profile, reference, alpha)
    m, r = profile.moments, reference.moments
    skew = _shape_change(m.skewness("G1"), r.skewness("G1"), m.n, r.n, se_skewness)
    kurt = _shape_change(m.excess_kurtosis("G2"), r.excess_kurtosis("G2"), m.n, r.n, se_kurtosis)
    effects = _effects(profile, reference, stability, skew, kurt, alpha)
    return Comparison(tests, skew, kurt, stability, effects, _verdict(tests, effects, skew, kurt, alpha), tuple(notices))
