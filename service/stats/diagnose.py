"""The one call an app makes: describe, normality and modality on one profile (one sort,
one set of moments, one mixture fit), with tails and a recommendation when asked, and
one overall verdict.

Overall labels, in order of precedence:

* ``insufficient_data``: too few values for the normality verdict to decide anything;
* ``multimodal``: the modality verdict finds two or more peaks (whatever the tests say,
  a mean and sd then describe a mixture of groups);
* ``skewed`` / ``heavy_tailed`` / ``light_tailed``: the primary normality test rejects and
  |G1| or |G2| reaches its threshold; when both do (skew brings kurtosis with it), the
  label is heavy_tailed only if G2 exceeds the kurtosis of a gamma shape with the same
  skewness (1.5 G1^2) by the kurtosis threshold, else skewed; both flags are set either way;
* ``non_normal``: the test rejects at a small n with small G1 and G2 (gaps, outliers);
* ``near_normal``: the test rejects, but in a large sample and by a departure below the
  thresholds (the normality verdict's ``minor_departure``);
* ``normal``: no rejection with enough data (``consistent_with_normal``);
* ``inconclusive``: no rejection, but too little power or a large unconfirmed magnitude.

``normal`` is the normality verdict's own answer (true, false or null), so the overall
label adds the kind of departure without changing the false-alarm rate.
"""

from __future__ import annotations

from dataclasses import dataclass

from .advice import Recommendation, recommend
from .describe import Description, DescribeOptions, describe
from .modality import ModalityOptions, ModalityReport, modality
from .normality.battery import NormalityOptions, NormalityReport, normality
from .profile import Profile
from .results import Unavailable
from .tails import TailsReport, tails

GAMMA_KURTOSIS = 1.5  # excess kurtosis / skewness^2 of every gamma distribution (6/k over (2/sqrt k)^2)
LABELS = ("insufficient_data", "multimodal", "skewed", "heavy_tailed", "light_tailed", "non_normal", "near_normal",
          "normal", "inconclusive")


@dataclass(frozen=True)
class OverallVerdict:
    label: str
    normal: bool | None
    flags: tuple[str, ...]
    summary: str


@dataclass(frozen=True)
class Diagnosis:
    verdict: OverallVerdict
    describe: Description
    normality: NormalityReport
    modality: ModalityReport
    tails: TailsReport | Unavailable
    recommend: Recommendation | Unavailable
    warnings: tuple


def _flags(profile: Profile, d: Description, n: NormalityReport, m: ModalityReport) -> list[str]:
    flags = []
    v = n.verdict
    G1, G2 = profile.moments.skewness("G1"), profile.moments.excess_kurtosis("G2")
    if v.normal is False:
        flags.append("not_normal")
    if G1 is not None and abs(G1) >= v.practical.skewness_threshold:
        flags.append("right_skewed" if G1 > 0 else "left_skewed")
    if G2 is not None and G2 >= v.practical.kurtosis_threshold:
        flags.append("heavy_tails")
    if G2 is not None and G2 <= -v.practical.kurtosis_threshold:
        flags.append("light_tails")
    if m.verdict.label in ("bimodal", "multimodal"):
        flags.append("multimodal")
    codes = {w.code for w in profile.notices} | {w.code for w in d.warnings}
    if "rounded-data" in codes:
        flags.append("rounded")
    if "small-sample" in codes or v.label in ("inconclusive", "insufficient_data") and profile.n < 70:
        flags.append("small_sample")
    if v.practical.mean_approximately_normal is False:
        flags.append("mean_not_yet_normal")
    return flags


def _label(profile: Profile, n: NormalityReport, m: ModalityReport) -> str:
    v = n.verdict
    if v.label == "insufficient_data":
        return "insufficient_data"
    if m.verdict.label in ("bimodal", "multimodal"):
        return "multimodal"
    if v.label == "consistent_with_normal":
        return "normal"
    if v.label == "inconclusive":
        return "inconclusive"
    if v.label == "minor_departure":
        return "near_normal"
    G1, G2 = profile.moments.skewness("G1"), profile.moments.excess_kurtosis("G2")
    p = v.practical
    skewed = G1 is not None and abs(G1) >= p.skewness_threshold
    tailed = G2 is not None and abs(G2) >= p.kurtosis_threshold
    if not (skewed or tailed):
        return "non_normal"
    if skewed and tailed and G2 > 0:
        # Both magnitudes are large. Skew alone brings kurtosis with it (Pearson: G2 >=
        # G1^2 - 2; a gamma distribution has G2 = 1.5 G1^2), while a few extreme values in
        # heavy tails inflate the sample skewness. The tails are the story only when the
        # kurtosis exceeds what a gamma shape with this skewness has, by the threshold.
        skewed = G2 <= GAMMA_KURTOSIS * G1 * G1 + p.kurtosis_threshold
    if skewed:
        return "skewed"
    return "heavy_tailed" if G2 > 0 else "light_tailed"


def _sentence(label: str, profile: Profile, n: NormalityReport, m: ModalityReport) -> str:
    G1, G2 = profile.moments.skewness("G1"), profile.moments.excess_kurtosis("G2")
    size = f"n={profile.n}"
    if label == "insufficient_data":
        return f"Too few values ({size}) to judge the shape."
    if label == "multimodal":
        return f"The values form {m.verdict.n_modes} groups ({size}); a single mean and sd would hide them."
    if label == "skewed":
        return (f"The data are {'right' if G1 > 0 else 'left'}-skewed (skewness {G1:.2f}, {size}); methods that "
                "assume normality may mislead.")
    if label == "heavy_tailed":
        return (f"The data have heavier tails than a normal distribution (excess kurtosis {G2:.2f}, {size}); expect "
                "more extreme values than normal limits predict.")
    if label == "light_tailed":
        return f"The data have lighter tails than a normal distribution (excess kurtosis {G2:.2f}, {size})."
    if label == "non_normal":
        return f"The data depart from normality in a way skewness and kurtosis do not show ({size}); look at a plot."
    if label == "near_normal":
        return f"The data are not exactly normal, but the departure is small ({size}); normal-theory methods should be fine."
    if label == "normal":
        return f"The data are consistent with a normal distribution ({size})."
    return (f"No evidence against normality, but {size} is too little (or the shape too uncertain) to call the "
            "data normal.")


@dataclass(frozen=True)
class DiagnoseOptions:
    describe: DescribeOptions = DescribeOptions()
    normality: NormalityOptions = NormalityOptions()
    modality: ModalityOptions = ModalityOptions()
    tails: dict | None = None  # keyword arguments of tails(), when asked
    goal: str | None = None
    lower_limit: float | None = None
    upper_limit: float | None = None
    offer_transform: bool = False  # with a goal: fit and offer a transformation when the data are skewed


def diagnose(profile: Profile, options: DiagnoseOptions = DiagnoseOptions(),
             others: list[Profile] | None = None) -> Diagnosis:
    d = describe(profile, options.describe)
    n = normality(profile, options.normality)
    m = modality(profile, options.modality)
    mixture = m.mixture.components if not isinstance(m.mixture, Unavailable) else None
    t: TailsReport | Unavailable = (
        tails(profile, mixture=mixture, quantile_definition=options.describe.quantile_definition, **options.tails)
        if options.tails else Unavailable("ask with above, below, between, lower_limit, upper_limit or quantiles")
    )
    r: Recommendation | Unavailable = (
        recommend(options.goal, [profile] + list(others or []), options.normality, None, options.lower_limit,
                  options.upper_limit, reports=[n] + [normality(o, options.normality) for o in others or []],
                  offer_transform=options.offer_transform)
        if options.goal else Unavailable("ask with goal")
    )
    label = _label(profile, n, m)
    verdict = OverallVerdict(label, n.verdict.normal, tuple(_flags(profile, d, n, m)), _sentence(label, profile, n, m))
    seen, warnings = set(), []
    for w in d.warnings + n.warnings + m.warnings + (() if isinstance(t, Unavailable) else t.warnings):
        if (w.code, w.message) not in seen:
            seen.add((w.code, w.message))
            warnings.append(w)
    return Diagnosis(verdict, d, n, m, t, r, tuple(warnings))
