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

from .density import kde_mode, silverman_bandwidth
from .forms import Sample
from .moments import Moments, central_moments, se_kurtosis, se_skewness
from .pvalues import two_sided_normal
from .quantiles import DESCRIPTIONS, quantiles_sorted
from .results import Notice, Unavailable

# [2]: |skewness| < 0.5 is approximately symmetric.
DEFAULT_SKEWNESS_THRESHOLD = 0.5
# Common practice: |excess kurtosis| < 1 reads as mesokurtic (no published source
# settles this; the threshold is an option).
DEFAULT_KURTOSIS_THRESHOLD = 1.0
# 1 / Phi^{-1}(3/4): makes the MAD a consistent estimate of sigma for normal data [4].
MAD_NORMAL_FACTOR = 1.0 / special.ndtri(0.75)

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


@dataclass(frozen=True)
class OrderStats:
    """Order statistics a form can give; ``None`` where it cannot."""

    minimum: float | None = None
    q1: float | None = None
    median: float | None = None
    q3: float | None = None
    maximum: float | None = None


def order_stats(sample: Sample, definition: str) -> OrderStats:
    s = sample.sorted
    q1, med, q3 = quantiles_sorted(s, (0.25, 0.5, 0.75), definition)
    return OrderStats(float(s[0]), float(q1), float(med), float(q3), float(s[-1]))


def _or_unavailable(value: float | None, reason: str) -> float | Unavailable:
    return Unavailable(reason) if value is None else float(value)


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


def skewness_block(m: Moments, order: OrderStats, mode: float | None, options: DescribeOptions) -> Skewness:
    n = m.n
    sd = m.sd
    if m.g1 is None:
        why = "skewness needs n >= 3" if n < 3 else "the input carries no third moment"
        missing = Unavailable(why)
        G1 = g1 = b1 = se = z = p = label = missing
    else:
        G1 = m.skewness("G1")
        g1 = m.g1
        b1 = m.skewness("b1")
        se = se_skewness(n)
        z = G1 / se
        p = two_sided_normal(z)
        label = skewness_label(G1, options.skewness_threshold)
    med = order.median
    pearson_median = (
        Unavailable("needs the median") if med is None else 3.0 * (m.mean - med) / sd
    )
    pearson_mode = Unavailable("needs the mode, which needs raw values") if mode is None else (m.mean - mode) / sd
    if order.q1 is None or order.q3 is None or med is None:
        quartile = Unavailable("needs the quartiles and the median")
    elif order.q3 == order.q1:
        quartile = Unavailable("the interquartile range is zero")
    else:
        quartile = (order.q3 + order.q1 - 2.0 * med) / (order.q3 - order.q1)  # [3] Bowley
    return Skewness(G1, g1, b1, se, z, p, pearson_median, pearson_mode, quartile, label)


def kurtosis_block(m: Moments, options: DescribeOptions) -> Kurtosis:
    n = m.n
    if m.g2 is None:
        why = "kurtosis needs n >= 4" if n < 4 else "the input carries no fourth moment"
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
        p_value=two_sided_normal(z),
        label=kurtosis_label(G2, options.kurtosis_threshold),
    )


def within_sd_shares(sample: Sample | None, m: Moments) -> WithinSd:
    shares = []
    for k in (1, 2, 3):
        if sample is None:
            observed: float | Unavailable = Unavailable("needs raw values")
        else:
            s = sample.sorted
            lo = np.searchsorted(s, m.mean - k * m.sd, side="left")
            hi = np.searchsorted(s, m.mean + k * m.sd, side="right")
            observed = float(hi - lo) / sample.n
        shares.append(Share(observed=observed, normal=normal_share(k)))
    return WithinSd(*shares)


def sample_mode(sample: Sample, m: Moments, order: OrderStats) -> float:
    iqr = order.q3 - order.q1
    bandwidth = silverman_bandwidth(m.sd, iqr, sample.n)
    return kde_mode(sample.sorted, bandwidth)


def _methods(options: DescribeOptions) -> Methods:
    return Methods(
        quantiles=f"{options.quantile_definition}: {DESCRIPTIONS[options.quantile_definition]}",
        mode=MODE_METHOD,
        mad=(
            "mad is the median absolute deviation from the median, unscaled; mad_normal is "
            "1.4826 * mad, consistent for the standard deviation of normal data (Rousseeuw & Croux 1993)"
        ),
        standard_errors=(
            "se of G1 and G2 are their exact standard deviations for normal samples "
            "(Joanes & Gill 1998); they do not hold for non-normal data"
        ),
        labels=(
            f"skewness label from |G1| >= {options.skewness_threshold} (Bulmer 1979), kurtosis "
            f"label from |G2| >= {options.kurtosis_threshold} (common practice); labels describe "
            "magnitude, the z and p_value beside them the evidence"
        ),
    )


def describe_sample(sample: Sample, options: DescribeOptions = DescribeOptions(), moments: Moments | None = None) -> Description:
    """Describe raw values: every field available."""
    m = central_moments(sample.values) if moments is None else moments
    order = order_stats(sample, options.quantile_definition)
    mode = sample_mode(sample, m, order)
    abs_dev = np.abs(sample.values - order.median)
    mad = float(np.median(abs_dev))
    spread = Spread(
        sd=m.sd,
        variance=m.variance,
        min=order.minimum,
        max=order.maximum,
        q1=order.q1,
        q3=order.q3,
        iqr=order.q3 - order.q1,
        mad=mad,
        mad_normal=mad * MAD_NORMAL_FACTOR,
    )
    return Description(
        location=Location(mean=m.mean, median=order.median, mode=mode),
        spread=spread,
        skewness=skewness_block(m, order, mode, options),
        kurtosis=kurtosis_block(m, options),
        within_sd=within_sd_shares(sample, m),
        methods=_methods(options),
        warnings=sample_notices(sample),
    )


def sample_notices(sample: Sample) -> tuple[Notice, ...]:
    """Warnings every analysis of raw values shares."""
    notices = []
    if sample.n_distinct < 0.5 * sample.n:
        notices.append(
            Notice(
                "many-ties",
                f"only {sample.n_distinct} distinct values among n={sample.n}: the data look "
                "rounded or discrete, and tests made for continuous data may reject because "
                "of the rounding alone",
            )
        )
    return tuple(notices)
