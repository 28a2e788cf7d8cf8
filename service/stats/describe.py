"""Location, spread and shape of a sample, each number under its conventional name.

Labels come from magnitudes against stated thresholds (the defaults below, each with
its source); the z statistics and p-values beside them say whether the sample gives
evidence of any departure at all. Standard errors hold under normality only.

References
----------
.. [1] Joanes, D. N. and Gill, C. A. (1998). Comparing measures of sample skewness and
       kurtosis. *JRSS D* 47(1), 183-189. doi:10.1111/1467-9884.00122
.. [2] Bulmer, M. G. (1979). *Principles of Statistics*. Dover. Skewness below 1/2 in
       absolute value is "approximately symmetric" (threshold recalled from memory).
.. [3] Kenney, J. F. and Keeping, E. S. (1962). *Mathematics of Statistics*, Part 1,
       3rd ed. Van Nostrand. Pearson's and Bowley's (quartile) skewness measures.
.. [4] Rousseeuw, P. J. and Croux, C. (1993). Alternatives to the median absolute
       deviation. *JASA* 88(424), 1273-1283. doi:10.1080/01621459.1993.10476408
       (the 1.4826 consistency factor of the MAD).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from .density import kde_mode_and_peaks, silverman_bandwidth
from .thresholds import DEFAULT_KURTOSIS_THRESHOLD, DEFAULT_SKEWNESS_THRESHOLD
from .forms import Sample
from .histogram import binned_mode, binned_share, extreme_bin
from .moments import Moments, se_kurtosis, se_skewness
from .profile import Profile, profile_of_sample
from .pvalues import two_sided_normal
from .quantiles import DESCRIPTIONS
from .results import Notice, Unavailable

# 1 / Phi^{-1}(3/4): makes the MAD a consistent estimate of sigma for normal data [4].
MAD_NORMAL_FACTOR = 1.0 / special.ndtri(0.75)

# Below these n the plain z = G/se is far from normal (G2's distribution is very skewed
# in small samples): common practice, and the reason the normality tests transform it.
Z_MIN_N = {"skewness": 8, "kurtosis": 20}
MODE_MIN_N = 5  # a density peak of fewer values says nothing
SMALL_N = 20

MODE_METHOD = (
    "highest peak of a Gaussian kernel density estimate with Silverman's rule-of-thumb "
    "bandwidth (Silverman 1986, eq. 3.31), computed by linear binning and FFT on a grid "
    "no coarser than a quarter bandwidth (per cluster of the data) and refined by a "
    "parabola through the peak"
)


@dataclass(frozen=True)
class DescribeOptions:
    quantile_definition: str = "hf7"
    skewness_threshold: float = DEFAULT_SKEWNESS_THRESHOLD
    kurtosis_threshold: float = DEFAULT_KURTOSIS_THRESHOLD


@dataclass(frozen=True)
class Location:
    mean: float
    median: float | Unavailable
    mode: float | Unavailable


@dataclass(frozen=True)
class Spread:
    sd: float
    variance: float
    min: float | Unavailable
    max: float | Unavailable
    q1: float | Unavailable
    q3: float | Unavailable
    iqr: float | Unavailable
    mad: float | Unavailable
    mad_normal: float | Unavailable


@dataclass(frozen=True)
class Skewness:
    G1: float | Unavailable
    g1: float | Unavailable
    b1: float | Unavailable
    se: float | Unavailable
    z: float | Unavailable
    p_value: float | Unavailable
    pearson_median: float | Unavailable
    pearson_mode: float | Unavailable
    quartile: float | Unavailable
    label: str | Unavailable


@dataclass(frozen=True)
class Kurtosis:
    G2: float | Unavailable
    g2: float | Unavailable
    b2: float | Unavailable
    se: float | Unavailable
    z: float | Unavailable
    p_value: float | Unavailable
    label: str | Unavailable


@dataclass(frozen=True)
class Share:
    observed: float | Unavailable
    normal: float


@dataclass(frozen=True)
class WithinSd:
    one: Share
    two: Share
    three: Share


@dataclass(frozen=True)
class Methods:
    moments: str
    quantiles: str
    mode: str
    mad: str
    standard_errors: str
    labels: str


@dataclass(frozen=True)
class Description:
    location: Location
    spread: Spread
    skewness: Skewness
    kurtosis: Kurtosis
    within_sd: WithinSd
    methods: Methods
    warnings: tuple[Notice, ...]


def skewness_label(g: float, threshold: float) -> str:
    if g >= threshold:
        return "right_skewed"
    if g <= -threshold:
        return "left_skewed"
    return "symmetric"


def kurtosis_label(g: float, threshold: float) -> str:
    if g >= threshold:
        return "leptokurtic"
    if g <= -threshold:
        return "platykurtic"
    return "mesokurtic"


def normal_share(k: float) -> float:
    """P(|Z| <= k) for a standard normal Z: erf(k / sqrt 2)."""
    return float(special.erf(k / math.sqrt(2.0)))


def _order(profile: Profile, name: str) -> float | Unavailable:
    """One order statistic, or why this form cannot give it."""
    value = getattr(profile.order, name)
    if value is not None:
        return float(value)
    label = {"minimum": "min", "maximum": "max", "median": "median", "q1": "q1", "q3": "q3"}[name]
    if profile.form == "summary":
        return Unavailable(f"{label} was not given in the summary")
    if profile.form == "partials":
        if name in ("minimum", "maximum"):
            return Unavailable(f"{label} was not given by every shard")
        return Unavailable("shard partials carry no quantiles")
    if profile.form == "histogram":
        if name in ("minimum", "maximum"):
            return Unavailable(f"binned data: the {'smallest' if name == 'minimum' else 'largest'} value lies in {extreme_bin(profile.histogram, name == 'minimum')}")
        return Unavailable(f"binned data: the {label} falls in an open-ended bin")
    return Unavailable(f"{label} is not available for {profile.form}")


def skewness_block(profile: Profile, mode: float | Unavailable, options: DescribeOptions) -> Skewness:
    m = profile.moments
    n = m.n
    sd = m.sd
    if m.g1 is None:
        why = "skewness needs n >= 3" if n < 3 else "the input carries no skewness"
        missing = Unavailable(why)
        G1 = g1 = b1 = se = z = p = label = missing
    else:
        G1 = m.skewness("G1")
        g1 = m.g1
        b1 = m.skewness("b1")
        se = se_skewness(n)
        z = G1 / se
        p = two_sided_normal(z) if n >= Z_MIN_N["skewness"] else Unavailable(
            f"the normal approximation of z is poor below n={Z_MIN_N['skewness']}; see skewness_test in /v1/normality")
        label = skewness_label(G1, options.skewness_threshold)
    med, q1, q3 = _order(profile, "median"), _order(profile, "q1"), _order(profile, "q3")
    if isinstance(med, Unavailable):
        pearson_median: float | Unavailable = Unavailable(f"needs the median: {med.reason}")
    else:
        pearson_median = 3.0 * (m.mean - med) / sd  # [3]
    if isinstance(mode, Unavailable):
        pearson_mode: float | Unavailable = Unavailable(f"needs the mode: {mode.reason}")
    else:
        pearson_mode = (m.mean - mode) / sd  # [3]
    if any(isinstance(v, Unavailable) for v in (q1, med, q3)):
        quartile: float | Unavailable = Unavailable("needs the quartiles and the median")
    elif q3 == q1:
        quartile = Unavailable("the interquartile range is zero")
    else:
        quartile = (q3 + q1 - 2.0 * med) / (q3 - q1)  # [3] Bowley
    return Skewness(G1, g1, b1, se, z, p, pearson_median, pearson_mode, quartile, label)


def kurtosis_block(m: Moments, options: DescribeOptions) -> Kurtosis:
    n = m.n
    if m.g2 is None:
        why = "kurtosis needs n >= 4" if n < 4 else "the input carries no kurtosis"
        missing = Unavailable(why)
        return Kurtosis(missing, missing, missing, missing, missing, missing, missing)
    G2 = m.excess_kurtosis("G2")
    se = se_kurtosis(n)
    z = G2 / se
    return Kurtosis(
        G2=G2,
        g2=m.g2,
        b2=m.excess_kurtosis("b2"),
        se=se,
        z=z,
        p_value=two_sided_normal(z) if n >= Z_MIN_N["kurtosis"] else Unavailable(
            f"the normal approximation of z is poor below n={Z_MIN_N['kurtosis']}; see kurtosis_test in /v1/normality"),
        label=kurtosis_label(G2, options.kurtosis_threshold),
    )


def within_sd_shares(profile: Profile) -> WithinSd:
    m = profile.moments
    shares = []
    for k in (1, 2, 3):
        lo, hi = m.mean - k * m.sd, m.mean + k * m.sd
        if profile.sample is not None:
            s = profile.sample.sorted
            inside = np.searchsorted(s, hi, side="right") - np.searchsorted(s, lo, side="left")
            observed: float | Unavailable = float(inside) / profile.sample.n
        elif profile.histogram is not None:
            observed = binned_share(profile.histogram, lo, hi)
        else:
            observed = Unavailable(f"needs raw values or a histogram, not {profile.form}")
        shares.append(Share(observed=observed, normal=normal_share(k)))
    return WithinSd(*shares)


def _mode_and_peaks(profile: Profile) -> tuple[float | Unavailable, int]:
    """The mode (highest KDE peak) and the number of clear KDE peaks, from one density
    evaluation where the two bandwidths agree. On rounded data the peak count uses a
    bandwidth of at least the rounding step, so the grid of values is not read as peaks
    (a coarse screen with a prominence of 10%; /v1/modality does the real work)."""
    if profile.n < MODE_MIN_N:
        return Unavailable(f"a density peak of n={profile.n} values says nothing; needs n >= {MODE_MIN_N}"), 1
    if profile.sample is not None:
        m, order = profile.moments, profile.order
        bandwidth = silverman_bandwidth(m.sd, order.q3 - order.q1, profile.n)
        unit = profile.sample.rounding_unit
        return kde_mode_and_peaks(profile.sample.sorted, bandwidth, max(bandwidth, unit or 0.0), 0.1)
    if profile.histogram is not None:
        return binned_mode(profile.histogram), 1
    return Unavailable(f"needs raw values or a histogram, not {profile.form}"), 1


def _kth_of_two(a: np.ndarray, b: np.ndarray, k: int) -> float:
    """The k-th smallest (0-based) of the union of two ascending arrays, by binary search
    on how many come from ``a`` (O(log n))."""
    lo, hi = max(0, k + 1 - b.size), min(k + 1, a.size)
    while lo < hi:
        i = (lo + hi) // 2  # take i from a, k + 1 - i from b
        j = k + 1 - i
        if j > 0 and i < a.size and b[j - 1] > a[i]:
            lo = i + 1
        else:
            hi = i
    i, j = lo, k + 1 - lo
    return float(max(a[i - 1] if i > 0 else -np.inf, b[j - 1] if j > 0 else -np.inf))


def median_absolute_deviation(sorted_values: np.ndarray, median: float) -> float:
    """median(|x - median|) from the sorted sample: the deviations below the median,
    read backwards, and those above it are two ascending runs, so their median is a
    k-th element of two sorted arrays; no second sort or partition of n values."""
    split = int(np.searchsorted(sorted_values, median, side="left"))
    below = median - sorted_values[:split][::-1]
    above = sorted_values[split:] - median
    n = sorted_values.size
    if n % 2:
        return _kth_of_two(below, above, n // 2)
    return 0.5 * (_kth_of_two(below, above, n // 2 - 1) + _kth_of_two(below, above, n // 2))


def _spread_from_values(profile: Profile) -> tuple[float | Unavailable, float | Unavailable]:
    if profile.sample is None:
        why = Unavailable(f"needs raw values, not {profile.form}")
        return why, why
    mad = median_absolute_deviation(profile.sample.sorted, profile.order.median)
    return mad, mad * MAD_NORMAL_FACTOR


def _methods(profile: Profile, options: DescribeOptions) -> Methods:
    form = profile.form
    if form == "values":
        quantiles = f"{options.quantile_definition}: {DESCRIPTIONS[options.quantile_definition]}"
        mode = MODE_METHOD
    elif form == "histogram":
        quantiles = "grouped-data quantiles: linear interpolation of the cumulative counts within a bin"
        mode = BINNED_MODE_METHOD
    else:
        quantiles = "as given" if form == "summary" else "none: shard partials carry no quantiles"
        mode = f"not available from {form}"
    return Methods(
        moments=MOMENT_METHODS[form](profile),
        quantiles=quantiles,
        mode=mode,
        mad=(
            "mad is the median absolute deviation from the median, unscaled; mad_normal is "
            "1.4826 * mad, consistent for the standard deviation of normal data (Rousseeuw & Croux 1993)"
        ),
        standard_errors=(
            "se of G1 and G2 are their exact standard deviations for normal samples "
            "(Joanes & Gill 1998); they do not hold for non-normal data. z = G/se with a normal p-value is a "
            "quick screen, given from n=8 (skewness) and n=20 (kurtosis); the skewness and kurtosis tests of "
            "/v1/normality transform the statistics (D'Agostino 1970; Anscombe & Glynn 1983) and are the ones "
            "to use as tests"
        ),
        labels=(
            f"skewness label from |G1| >= {options.skewness_threshold} (Bulmer 1979), kurtosis "
            f"label from |G2| >= {options.kurtosis_threshold} (common practice); labels describe "
            "magnitude, the z and p_value beside them the evidence"
        ),
    )


MOMENT_METHODS = {
    "values": lambda p: "corrected two-pass central moments of the raw values (Chan, Golub & LeVeque 1983)",
    "summary": lambda p: "as given in the summary, converted to every convention for the given n (Joanes & Gill 1998)",
    "partials": lambda p: "shard partials merged exactly by the pairwise update formulas (Chan, Golub & LeVeque 1979; Pebay 2008)",
    "histogram": lambda p: (
        "binned moments from bin midpoints (values in open-ended bins at the fitted normal's conditional mean); "
        + ("Sheppard's corrections applied" if p.sheppard_applied else "no Sheppard's correction")
    ),
}
BINNED_MODE_METHOD = (
    "midpoint of the highest-density bin (count / width), refined by a parabola through its own and its "
    "neighbours' densities and kept inside the bin"
)


def describe(profile: Profile, options: DescribeOptions = DescribeOptions()) -> Description:
    """Describe a sample in any form; what the form cannot give is ``Unavailable``."""
    m = profile.moments
    mode, peaks = _mode_and_peaks(profile)
    mad, mad_normal = _spread_from_values(profile)
    lo, hi = _order(profile, "minimum"), _order(profile, "maximum")
    q1, q3, med = _order(profile, "q1"), _order(profile, "q3"), _order(profile, "median")
    iqr = q3 - q1 if not isinstance(q1, Unavailable) and not isinstance(q3, Unavailable) else Unavailable("needs both quartiles")
    spread = Spread(sd=m.sd, variance=m.variance, min=lo, max=hi, q1=q1, q3=q3, iqr=iqr, mad=mad, mad_normal=mad_normal)
    return Description(
        location=Location(mean=m.mean, median=med, mode=mode),
        spread=spread,
        skewness=skewness_block(profile, mode, options),
        kurtosis=kurtosis_block(m, options),
        within_sd=within_sd_shares(profile),
        methods=_methods(profile, options),
        warnings=profile.notices + describe_notices(profile, peaks),
    )


def describe_notices(profile: Profile, peaks: int = 1) -> tuple[Notice, ...]:
    notices = []
    if profile.n < SMALL_N:
        notices.append(Notice(
            "small-sample",
            f"n={profile.n}: skewness and kurtosis from so few values are very uncertain (se of G1 "
            f"{se_skewness(profile.n):.2f}" + (f", of G2 {se_kurtosis(profile.n):.2f}" if profile.n >= 4 else "")
            + "); read the labels as descriptions of these values, not of the population"
            if profile.n >= 3 else f"n={profile.n}: too few values for any shape statistic",
        ))
    if peaks > 1:
        notices.append(Notice(
            "several-peaks",
            f"the kernel density has {peaks} clear peaks: the mode is the highest, and the mean, sd and "
            "shape statistics summarise a mixture of groups; see /v1/modality",
        ))
    return tuple(notices)


def describe_sample(sample: Sample, options: DescribeOptions = DescribeOptions()) -> Description:
    """Describe raw values: every field available."""
    return describe(profile_of_sample(sample, options.quantile_definition), options)
