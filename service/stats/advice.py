"""Which analysis fits the data: the follow-up test for an intended goal, with reasons.

The rules come from the literature and each says so. They are advice, not a decision
procedure: choosing a test by a normality pre-test changes that test's error rates
(Rochon, Gondan & Kieser 2012), so the recommendation leans on defaults that are safe
whatever the pre-test says (Welch's t-test, Welch's ANOVA) and uses the shape only to
add or prefer alternatives.

References
----------
.. [1] Delacre, M., Lakens, D. and Leys, C. (2017). Why psychologists should by default
       use Welch's t-test instead of Student's t-test. *International Review of Social
       Psychology* 30(1), 92-101. doi:10.5334/irsp.82
.. [2] Cochran, W. G. (1977). *Sampling Techniques*, 3rd ed. Wiley, p. 42 (n > 25 G1^2).
.. [3] Fagerland, M. W. and Sandvik, L. (2009). The Wilcoxon-Mann-Whitney test under
       scrutiny. *Statistics in Medicine* 28(10), 1487-1497. doi:10.1002/sim.3561
.. [4] Welch, B. L. (1951). On the comparison of several mean values: an alternative
       approach. *Biometrika* 38(3/4), 330-336. doi:10.2307/2332579
.. [5] Brown, M. B. and Forsythe, A. B. (1974). The small sample behavior of some
       statistics which test the equality of several means. *Technometrics* 16(1),
       129-132. doi:10.1080/00401706.1974.10489158
.. [6] Rochon, J., Gondan, M. and Kieser, M. (2012). To test or not to test: preliminary
       assessment of normality when comparing two independent samples. *BMC Medical
       Research Methodology* 12, 81. doi:10.1186/1471-2288-12-81
.. [7] Bishara, A. J. and Hittner, J. B. (2012). Testing the significance of a
       correlation with nonnormal data. *Psychological Methods* 17(3), 399-417.
       doi:10.1037/a0028087
.. [8] Montgomery, D. C. (2019). *Introduction to Statistical Quality Control*, 8th ed.
       Wiley. Individuals charts and capability indices assume normality (sections 6.4, 8.2).
.. [9] Clements, J. A. (1989). Process capability calculations for non-normal
       distributions. *Quality Progress* 22(9), 95-100 (percentile capability).
.. [10] Lumley, T., Diehr, P., Emerson, S. and Chen, L. (2002). The importance of the
        normality assumption in large public health data sets. *Annual Review of Public
        Health* 23, 151-169. doi:10.1146/annurev.publhealth.23.100901.140546
"""

from __future__ import annotations

from dataclasses import dataclass

from .normality.battery import NormalityOptions, NormalityReport, normality
from .profile import Profile
from .quantiles import quantiles_sorted
from .results import Unavailable
from .transforms import transform_hint as fit_transform_hint

GOALS = ("one_sample_mean", "two_sample", "paired", "k_sample", "correlation", "regression_residuals",
         "control_chart", "capability")
SMALL_N = 30  # common practice: below this, rank tests gain most under skew
SPREAD_RATIO = 2.0  # common practice: largest/smallest sd above 2 counts as unequal spreads
ADVICE_NOTE = (
    "This is advice, not a decision: choosing a test by a normality pre-test changes that test's error rates "
    "(Rochon, Gondan & Kieser 2012). Decide the analysis from the design and from what the question is about, "
    "and use the shape to check that choice."
)


@dataclass(frozen=True)
class Choice:
    test: str
    why: str


@dataclass(frozen=True)
class SampleShape:
    n: int
    form: str
    G1: float | None
    G2: float | None
    normality: str
    normal: bool | None


@dataclass(frozen=True)
class Capability:
    cp: float | Unavailable
    cpk: float | Unavailable
    percentile_cp: float | Unavailable
    percentile_cpk: float | Unavailable
    method: str


@dataclass(frozen=True)
class Recommendation:
    goal: str
    recommended: Choice
    alternatives: tuple[Choice, ...]
    transform: dict | None
    cautions: tuple[str, ...]
    rules: tuple[str, ...]
    samples: tuple[SampleShape, ...]
    capability: Capability | Unavailable
    note: str


def _shape(profile: Profile, report: NormalityReport) -> SampleShape:
    m = profile.moments
    return SampleShape(profile.n, profile.form, m.skewness("G1"), m.excess_kurtosis("G2"), report.verdict.label,
                       report.verdict.normal)


def _skewed(s: SampleShape, threshold: float) -> bool:
    return s.G1 is not None and abs(s.G1) >= threshold


def _heavy(s: SampleShape, threshold: float) -> bool:
    return s.G2 is not None and s.G2 >= threshold


def _clt_short(s: SampleShape) -> bool:
    """Cochran's rule [2]: the mean is close to normal once n > 25 G1^2."""
    return s.G1 is not None and s.n <= 25.0 * s.G1 * s.G1


class _Builder:
    def __init__(self, goal: str):
        self.goal = goal
        self.recommended: Choice | None = None
        self.alternatives: list[Choice] = []
        self.cautions: list[str] = []
        self.rules: list[str] = []
        self.transform: dict | None = None

    def rule(self, name: str) -> None:
        self.rules.append(name)


def _g(value: float | None) -> str:
    return "n/a" if value is None else f"{value:.2g}"


def _one_location(b: _Builder, s: SampleShape, opts: NormalityOptions, what: str) -> None:
    """Shared by one-sample means and paired differences."""
    skewed, heavy = _skewed(s, opts.skewness_threshold), _heavy(s, opts.kurtosis_threshold)
    if (skewed or heavy) and _clt_short(s) and s.n < SMALL_N:
        b.rule("small_n_skewed_rank_test")
        b.recommended = Choice(
            "Wilcoxon signed-rank test" + (" on the differences" if what == "differences" else ""),
            f"n={s.n} is small and the {what} are {'skewed' if skewed else 'heavy-tailed'} "
            f"(G1={_g(s.G1)}, G2={_g(s.G2)}); the t-test's mean is not yet close to normal (Cochran's rule "
            f"needs n > {25 * s.G1 ** 2:.0f}). The signed-rank test is about the pseudo-median and assumes "
            "the distribution is symmetric; the sign test drops that assumption and tests the median",
        )
        b.alternatives += [Choice("sign test", "tests the median without assuming symmetry; less power"),
                           Choice("bootstrap confidence interval for the mean (BCa)", "keeps the mean as the target")]
    elif skewed and _clt_short(s):
        b.rule("cochran_rule_not_met")
        b.recommended = Choice(
            "bootstrap confidence interval for the mean (BCa), or a t-test on a transformed scale",
            f"the {what} are skewed (G1={_g(s.G1)}) and n={s.n} is below Cochran's rule n > 25 G1^2 = "
            f"{25 * s.G1 ** 2:.0f}, so the t interval's coverage is off on one side",
        )
        b.alternatives.append(Choice("one-sample t-test", "acceptable once n exceeds Cochran's rule"))
    else:
        b.rule("t_test_adequate")
        b.recommended = Choice(
            "one-sample t-test" if what == "values" else "paired t-test (a one-sample t-test on the differences)",
            "the mean's sampling distribution is close to normal here"
            + (f" (n={s.n} > 25 G1^2 = {25 * s.G1 ** 2:.0f}, Cochran's rule)" if s.G1 is not None and not _clt_short(s)
               else f" (|G1| = {abs(s.G1):.2g} is below the skewness threshold)" if s.G1 is not None else ""),
        )
        b.alternatives.append(Choice("Wilcoxon signed-rank test", "if the question is about a typical value rather than the mean"))


def _two_sample(b: _Builder, shapes, opts, profiles) -> None:
    small = min(s.n for s in shapes) < SMALL_N
    skewed = any(_skewed(s, opts.skewness_threshold) for s in shapes)
    heavy = any(_heavy(s, opts.kurtosis_threshold) for s in shapes)
    ratio = _spread_ratio(profiles)
    if (skewed or heavy) and small:
        b.rule("small_n_skewed_rank_test")
        b.recommended = Choice(
            "Wilcoxon-Mann-Whitney rank-sum test",
            f"a sample is {'skewed' if skewed else 'heavy-tailed'} and the smaller n is {min(s.n for s in shapes)}: "
            "a rank test keeps its level and gains power here. It compares the distributions (it tests "
            "P(X > Y) = 1/2), not medians; read it as a median comparison only if the shapes are the same "
            "(Fagerland & Sandvik 2009)",
        )
        b.alternatives += [Choice("Welch's t-test", "if the question is about means; its level holds approximately"),
                           Choice("Brunner-Munzel test", "a rank test that also allows unequal spreads")]
    else:
        b.rule("welch_by_default")
        b.recommended = Choice(
            "Welch's t-test",
            "Welch's t-test by default: it keeps its level when the spreads differ and loses almost nothing when "
            "they are equal (Delacre, Lakens & Leys 2017)",
        )
        b.alternatives += [Choice("Student's t-test", "only with good reason to assume equal spreads; it gains little"),
                           Choice("Wilcoxon-Mann-Whitney rank-sum test", "compares distributions (P(X > Y)), not means")]
    if ratio is not None and ratio > SPREAD_RATIO:
        b.rule("unequal_spreads")
        b.cautions.append(f"the spreads differ (largest/smallest sd = {ratio:.2g}): do not pool variances (Student's t)")


def _spread_ratio(profiles) -> float | None:
    sds = [p.moments.sd for p in profiles]
    return max(sds) / min(sds) if min(sds) > 0 else None


def _k_sample(b: _Builder, shapes, opts, profiles) -> None:
    small = min(s.n for s in shapes) < SMALL_N
    skewed = any(_skewed(s, opts.skewness_threshold) or _heavy(s, opts.kurtosis_threshold) for s in shapes)
    ratio = _spread_ratio(profiles)
    if skewed and small:
        b.rule("small_n_skewed_rank_test")
        b.recommended = Choice("Kruskal-Wallis test", "some groups are skewed or heavy-tailed and small: the rank test keeps "
                               "its level; it compares distributions, not means or medians")
        b.alternatives.append(Choice("Welch's ANOVA", "if the question is about means"))
    else:
        b.rule("welch_anova_by_default")
        b.recommended = Choice("Welch's ANOVA", "it does not assume equal spreads and keeps its level when they differ (Welch 1951)")
        b.alternatives += [Choice("Brown-Forsythe ANOVA", "another test of means robust to unequal spreads (Brown & Forsythe 1974)"),
                           Choice("one-way ANOVA (F test)", "only when the spreads are similar"),
                           Choice("Kruskal-Wallis test", "compares distributions; for ordinal data or strong skew")]
    if ratio is not None and ratio > SPREAD_RATIO:
        b.rule("unequal_spreads")
        b.cautions.append(f"the spreads differ (largest/smallest sd = {ratio:.2g}): the classic F test is not safe here")


def _correlation(b: _Builder, shapes, opts) -> None:
    odd = any(_skewed(s, opts.skewness_threshold) or _heavy(s, opts.kurtosis_threshold) for s in shapes)
    if odd:
        b.rule("spearman_for_skew_or_outliers")
        b.recommended = Choice("Spearman's rank correlation",
                               "a variable is skewed or heavy-tailed: Pearson's r and its test are sensitive to this "
                               "and to outliers; Spearman's rho measures monotone association (Bishara & Hittner 2012)")
        b.alternatives.append(Choice("Pearson's r with a bootstrap interval", "if the linear association itself is the target"))
    else:
        b.rule("pearson_with_spearman_beside")
        b.recommended = Choice("Pearson's r, with Spearman's rho beside it",
                               "the margins look close to normal; report Spearman's rho as a check of robustness")
        b.alternatives.append(Choice("Kendall's tau", "for small samples or many ties"))
    b.cautions.append("normal margins do not make the pair bivariate normal; look at a scatter plot")


def _regression(b: _Builder, s: SampleShape, opts) -> None:
    heavy = _heavy(s, opts.kurtosis_threshold)
    b.rule("residuals_matter_little_for_coefficients")
    if heavy or _skewed(s, opts.skewness_threshold):
        b.recommended = Choice(
            "keep least squares for the coefficients, with heteroscedasticity-robust (HC3) standard errors or a bootstrap",
            "with non-normal residuals, coefficient tests stay close to valid in moderate n (Lumley et al. 2002); "
            "prediction intervals do not",
        )
        b.alternatives += [Choice("robust regression (M-estimation)", "if outliers drive the heavy tails"),
                           Choice("a transformed response", "if the residual skew comes from a skewed response")]
        b.cautions.append("prediction intervals from normal theory will be wrong in the tails")
    else:
        b.recommended = Choice("ordinary least squares with the usual inference",
                               "the residuals are close to normal; normality matters most for prediction intervals")


def _control_chart(b: _Builder, s: SampleShape, opts) -> None:
    b.rule("individuals_chart_assumes_normality")
    if s.normal is False and (_skewed(s, opts.skewness_threshold) or _heavy(s, opts.kurtosis_threshold)):
        b.recommended = Choice(
            "individuals chart on a transformed scale, or with limits at the 0.135% and 99.865% percentiles",
            "the individuals (I-MR) chart's 3-sigma limits assume normality (Montgomery 2019, 6.4); with this shape "
            "its false-alarm rate on one side is far from 0.27%",
        )
        b.alternatives.append(Choice("an X-bar chart of subgroup means", "subgroup means are closer to normal"))
    else:
        b.recommended = Choice("individuals and moving-range (I-MR) chart", "the data are close enough to normal for 3-sigma limits")


def _capability(profile: Profile, lower: float | None, upper: float | None) -> Capability | Unavailable:
    if lower is None and upper is None:
        return Unavailable("needs lower_limit and/or upper_limit")
    m = profile.moments
    cp = (upper - lower) / (6 * m.sd) if lower is not None and upper is not None else Unavailable("needs both limits")
    sides = []
    if upper is not None:
        sides.append((upper - m.mean) / (3 * m.sd))
    if lower is not None:
        sides.append((m.mean - lower) / (3 * m.sd))
    cpk = min(sides)
    if profile.sample is None:
        pcp = pcpk = Unavailable("the percentile method needs raw values")
    else:
        q_lo, med, q_hi = quantiles_sorted(profile.sample.sorted, (0.00135, 0.5, 0.99865), "hf7")
        if q_hi == q_lo:
            pcp = pcpk = Unavailable("the 0.135% and 99.865% percentiles coincide")
        else:
            pcp = (upper - lower) / (q_hi - q_lo) if lower is not None and upper is not None else Unavailable("needs both limits")
            ps = []
            if upper is not None and q_hi > med:
                ps.append((upper - med) / (q_hi - med))
            if lower is not None and med > q_lo:
                ps.append((med - lower) / (med - q_lo))
            pcpk = min(ps) if ps else Unavailable("percentiles on one side equal the median")
    return Capability(cp, cpk, pcp, pcpk,
                      "Cp = (USL - LSL) / 6 sd and Cpk = min(USL - mean, mean - LSL) / 3 sd assume normality; the "
                      "percentile indices replace 6 sd by the 99.865% - 0.135% range and the mean by the median "
                      "(Clements 1989); percentiles that far out need thousands of values to be stable")


def _capability_advice(b: _Builder, s: SampleShape, opts) -> None:
    b.rule("capability_assumes_normality")
    if s.normal is False:
        b.recommended = Choice("percentile-based capability indices (Clements), or Cp/Cpk on a transformed scale",
                               "Cp and Cpk translate into a defect rate only for normal data; this sample is not normal")
        b.alternatives.append(Choice("Cp and Cpk", "reported beside, but their implied ppm will be wrong"))
    else:
        b.recommended = Choice("Cp and Cpk", "the normal model behind the indices fits well enough")
    b.cautions.append("capability indices need a stable process first: check a control chart")


def recommend(goal: str, profiles: list[Profile], options: NormalityOptions = NormalityOptions(),
              transform_hint: dict | None = None, lower_limit: float | None = None,
              upper_limit: float | None = None, reports: list[NormalityReport] | None = None,
              offer_transform: bool = False) -> Recommendation:
    """``reports`` are the profiles' normality reports (same options) when the caller has
    them. A skewed sample gets ``transform_hint`` when given; with ``offer_transform`` the
    hint is fitted to the first sample here, only then (it is the costly part), and
    offered when it helps."""
    reports = reports if reports is not None else [normality(p, options) for p in profiles]
    shapes = [_shape(p, r) for p, r in zip(profiles, reports)]
    b = _Builder(goal)
    first = shapes[0]
    if goal == "one_sample_mean":
        _one_location(b, first, options, "values")
    elif goal == "paired":
        _one_location(b, first, options, "differences")
    elif goal == "two_sample":
        _two_sample(b, shapes, options, profiles)
    elif goal == "k_sample":
        _k_sample(b, shapes, options, profiles)
    elif goal == "correlation":
        _correlation(b, shapes, options)
    elif goal == "regression_residuals":
        _regression(b, first, options)
    elif goal == "control_chart":
        _control_chart(b, first, options)
    elif goal == "capability":
        _capability_advice(b, first, options)
    else:  # pragma: no cover - the API validates the goal
        raise ValueError(f"unknown goal {goal!r}")
    if any(s.normality in ("inconclusive", "insufficient_data") for s in shapes):
        b.cautions.append("a sample is too small for the normality tests to say much: the advice rests on the shape estimates")
    if (transform_hint or offer_transform) and any(_skewed(s, options.skewness_threshold) for s in shapes):
        b.transform = transform_hint or fit_transform_hint(profiles[0], options, reports[0])
        if b.transform:
            b.rule("transform_helps")
    capability = _capability(profiles[0], lower_limit, upper_limit) if goal == "capability" else Unavailable(
        "only for goal capability")
    return Recommendation(goal, b.recommended, tuple(b.alternatives), b.transform, tuple(b.cautions), tuple(b.rules),
                          tuple(shapes), capability, ADVICE_NOTE)
