"""One verdict from many tests, honest about sample size.

* One primary test per sample-size range decides; the others are reported as support.
  Rejecting when any one of nine tests rejects would raise the false-alarm rate far
  above alpha.
* Small samples: the tests have little power, so a test that does not reject gives
  ``normal: null`` ("inconclusive"), not ``true``, below ``adequate_n``.
* Large samples: every test rejects departures too small to matter, so the verdict also
  weighs the size of the departure (G1 and G2 against stated thresholds) and says
  ``minor_departure`` when the test rejects but the shape is close to normal. "Large"
  is from the n at which the primary test detects the reference alternative (skewness
  1) 99% of the time; below it a rejection is never called minor.

Default primary tests:

* 3 <= n <= 5000: Shapiro-Wilk, the most powerful of the common omnibus tests across
  alternatives in simulation comparisons ([1], [2]), with Royston's p-value fitted up
  to n = 5000 ([3]).
* n > 5000: Anderson-Darling, whose p-value formula holds for large n ([4]) and which,
  as an EDF test, reacts to every kind of departure.

References
----------
.. [1] Razali, N. M. and Wah, Y. B. (2011). Power comparisons of Shapiro-Wilk,
       Kolmogorov-Smirnov, Lilliefors and Anderson-Darling tests. *Journal of Statistical
       Modeling and Analytics* 2(1), 21-33.
.. [2] Yap, B. W. and Sim, C. H. (2011). Comparisons of various types of normality tests.
       *Journal of Statistical Computation and Simulation* 81(12), 2141-2155.
       doi:10.1080/00949655.2010.520163
.. [3] Royston, P. (1995). Remark AS R94. *Applied Statistics* 44(4), 547-551.
.. [4] D'Agostino, R. B. and Stephens, M. A. (1986). *Goodness-of-Fit Techniques*.
       Marcel Dekker, section 4.8.
.. [5] Cochran, W. G. (1977). *Sampling Techniques*, 3rd ed. Wiley, p. 42: the mean of a
       sample from a skewed population is close enough to normal when n > 25 G1^2.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..results import Unavailable
from .power import HIGH_POWER, has_table, power_against_skewness_one
from .power import adequate_n as tabulated_n
from .result import TestResult

LABELS = ("insufficient_data", "inconclusive", "consistent_with_normal", "minor_departure", "not_normal")


@dataclass(frozen=True)
class Practical:
    """How large the departure is, beside whether a test detects it."""

    skewness: float | Unavailable
    excess_kurtosis: float | Unavailable
    skewness_threshold: float
    kurtosis_threshold: float
    exceeds_thresholds: bool | None
    mean_min_n: float | Unavailable
    mean_approximately_normal: bool | None


@dataclass(frozen=True)
class Support:
    rejecting: tuple[str, ...]
    not_rejecting: tuple[str, ...]
    undecided: tuple[str, ...]
    not_applicable: tuple[str, ...]


@dataclass(frozen=True)
class Verdict:
    normal: bool | None
    label: str
    primary_test: str | None
    alpha: float
    reasons: tuple[str, ...]
    practical: Practical
    supporting: Support
    power: float | Unavailable


def default_primary(n: int, tests: dict[str, TestResult], form: str = "values") -> str:
    """Shapiro-Wilk up to n=5000 and Anderson-Darling above for raw values; the
    chi-square test for a histogram; the omnibus moment test (or the one moment test
    the input allows) for summaries and partials."""
    if form == "values":
        return "shapiro_wilk" if n <= 5000 else "anderson_darling"
    if form == "histogram":
        return "chi_square"
    for name in ("dagostino_pearson", "skewness_test", "kurtosis_test"):
        if tests[name].applicable:
            return name
    return "dagostino_pearson"


def practical_size(n: int, G1: float | None, G2: float | None, skew_t: float, kurt_t: float) -> Practical:
    exceeds = None
    if G1 is not None and G2 is not None:
        exceeds = abs(G1) >= skew_t or abs(G2) >= kurt_t
    if G1 is None:
        mean_min_n: float | Unavailable = Unavailable("needs the skewness")
        mean_ok = None
    else:
        mean_min_n = 25.0 * G1 * G1  # [5]
        # With fewer than 20 values G1 itself is too uncertain to apply the rule.
        mean_ok = n > mean_min_n if n >= 20 else None
    return Practical(
        skewness=Unavailable("needs n >= 3 and a third moment") if G1 is None else G1,
        excess_kurtosis=Unavailable("needs n >= 4 and a fourth moment") if G2 is None else G2,
        skewness_threshold=skew_t,
        kurtosis_threshold=kurt_t,
        exceeds_thresholds=exceeds,
        mean_min_n=mean_min_n,
        mean_approximately_normal=mean_ok,
    )


def _fmt_p(result: TestResult) -> str:
    bound = result.p_value_bound or "="
    return f"p {bound} {result.p_value:.3g}"


def _support(tests: dict[str, TestResult], primary: str) -> Support:
    groups: dict[str, list[str]] = {"rejecting": [], "not_rejecting": [], "undecided": [], "not_applicable": []}
    for name, result in tests.items():
        if name == primary:
            continue
        if not result.applicable:
            groups["not_applicable"].append(name)
        elif result.reject is None:
            groups["undecided"].append(name)
        elif result.reject:
            groups["rejecting"].append(name)
        else:
            groups["not_rejecting"].append(name)
    return Support(**{k: tuple(v) for k, v in groups.items()})


def decide_normality(
    tests: dict[str, TestResult],
    n: int,
    G1: float | None,
    G2: float | None,
    *,
    alpha: float,
    skewness_threshold: float,
    kurtosis_threshold: float,
    form: str = "values",
    primary_test: str | None = None,
    adequate_n: int | None = None,
    basis: str | None = None,
    rounded: bool = False,
) -> Verdict:
    """Draw the verdict from ``tests`` (name -> result) for a sample of size ``n``."""
    primary = primary_test or default_primary(n, tests, form)
    result = tests[primary]
    practical = practical_size(n, G1, G2, skewness_threshold, kurtosis_threshold)
    support = _support(tests, primary)
    power = power_against_skewness_one(primary, n, alpha)
    if adequate_n is None:
        adequate_n = tabulated_n(primary, alpha)
    # Without a power figure no n is "large": a rejection is then never called minor.
    large_n = tabulated_n(primary, alpha, HIGH_POWER)
    reasons: list[str] = []
    if basis:
        reasons.append(basis)
    decided = len(support.rejecting) + len(support.not_rejecting)
    support_line = (
        f"{len(support.rejecting)} of {decided} other tests that apply also reject at alpha={alpha:g}; "
        "they support, the primary test decides (rejecting when any test rejects would inflate false alarms)"
        if decided else "no other test applies at this n"
    )
    if result.applicable and result.reason:
        reasons.append(f"note on {primary}: {result.reason}")

    if not result.applicable:
        reasons.append(f"the primary test, {primary}, does not apply: {result.reason}")
        return Verdict(None, "insufficient_data", primary, alpha, tuple(reasons), practical, support, power)

    if result.reject is None:
        reasons.append(
            f"{primary} gives only a bound ({_fmt_p(result)}), which cannot decide at alpha={alpha:g}"
        )
        reasons.append(support_line)
        return Verdict(None, "inconclusive", primary, alpha, tuple(reasons), practical, support, power)

    if result.reject:
        reasons.append(f"{primary} rejects normality ({_fmt_p(result)} < alpha={alpha:g})")
        if practical.exceeds_thresholds is False and large_n is not None and n >= large_n:
            reasons.append(
                f"but the departure is small: |G1|={abs(G1):.3g} < {skewness_threshold:g} and "
                f"|G2|={abs(G2):.3g} < {kurtosis_threshold:g}; with n={n} the test detects "
                "departures too small to matter for most normal-theory methods"
            )
            label = "minor_departure"
        else:
            if practical.exceeds_thresholds:
                reasons.append(
                    f"and the departure is large enough to matter: G1={G1:.3g}, G2={G2:.3g} "
                    f"(thresholds {skewness_threshold:g} and {kurtosis_threshold:g})"
                )
            elif practical.exceeds_thresholds is False:
                below = f"below {large_n}" if large_n is not None else "with no power figure to call it large"
                reasons.append(
                    f"G1={G1:.3g} and G2={G2:.3g} are below the thresholds, but with n={n} ({below}) "
                    "a rejection signals a departure the moments do not show (two groups, a gap, outliers), "
                    "not a trivial one"
                )
            label = "not_normal"
        if rounded:
            reasons.append(
                "the data are rounded (see warnings): with many values on few points a test of a continuous "
                "distribution can reject the rounding itself"
            )
        reasons.append(support_line)
        return Verdict(False, label, primary, alpha, tuple(reasons), practical, support, power)

    reasons.append(f"{primary} does not reject normality ({_fmt_p(result)} >= alpha={alpha:g})")
    reasons.append(support_line)
    if adequate_n is None:
        reasons.append(
            f"there is no power figure for {primary} at alpha={alpha:g}, so a non-rejection cannot be read as "
            "normality (pass adequate_n to say from which n it may)"
            if not has_table(primary, alpha)
            else f"{primary} does not reach 80% power against a skewness of 1 at any tabulated n, so its "
            "non-rejection cannot be read as normality (pass adequate_n to override)"
        )
        return Verdict(None, "inconclusive", primary, alpha, tuple(reasons), practical, support, power)
    small = n < adequate_n
    if small:
        if isinstance(power, float):
            power_text = f"it detects a skewness of 1 only about {power:.0%} of the time at this n"
        else:
            power_text = "it has little power at this n"
        reasons.append(
            f"n={n} is small (below {adequate_n}): {power_text}; no evidence against normality "
            "is not evidence for it"
        )
    if practical.exceeds_thresholds:
        reasons.append(
            f"the sample's shape departs by a practically relevant amount (G1={G1:.3g}, G2={G2:.3g}; thresholds "
            f"{skewness_threshold:g} and {kurtosis_threshold:g}) that the test did not confirm"
        )
    if small or practical.exceeds_thresholds:
        return Verdict(None, "inconclusive", primary, alpha, tuple(reasons), practical, support, power)
    return Verdict(True, "consistent_with_normal", primary, alpha, tuple(reasons), practical, support, power)
