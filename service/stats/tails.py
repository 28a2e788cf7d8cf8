"""Tail probabilities, out-of-limit rates and quantiles under several models.

For each point asked about: the z-score; the normal model's probability through survival
functions (with its log, which stays finite where the probability underflows); the
empirical share with a Wilson score interval (raw values); the fitted mixture's
probability; and distribution-free bounds from the mean and sd alone (Chebyshev
two-sided, Cantelli one-sided). Quantiles: normal, Cornish-Fisher (skewness and
kurtosis corrected, with a warning outside the region where the expansion is
monotone) and empirical.

References
----------
.. [1] Wilson, E. B. (1927). Probable inference, the law of succession, and statistical
       inference. *JASA* 22(158), 209-212. doi:10.1080/01621459.1927.10502953
.. [2] Cornish, E. A. and Fisher, R. A. (1938). Moments and cumulants in the
       specification of distributions. *Revue de l'Institut International de
       Statistique* 5(4), 307-320. doi:10.2307/1400905
.. [3] Maillard, D. (2012). A user's guide to the Cornish Fisher expansion. SSRN 1997178
       (domain of validity; recalled from memory).
.. [4] Cantelli, F. P. (1928). Sui confini della probabilita. *Atti del Congresso
       Internazionale dei Matematici*, Bologna, 6, 47-59 (one-sided bound).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from .histogram import binned_cdf, binned_quantile
from .mixture import Component
from .profile import Profile
from .quantiles import quantiles_sorted
from .results import Notice, Unavailable

WILSON_Z = 1.959963984540054  # Phi^{-1}(0.975): 95% intervals


@dataclass(frozen=True)
class Probability:
    probability: float
    log_probability: float


@dataclass(frozen=True)
class Interval:
    lower: float
    upper: float
    level: float


@dataclass(frozen=True)
class Empirical:
    probability: float
    count: float
    interval: Interval | Unavailable
    method: str


@dataclass(frozen=True)
class Bounds:
    chebyshev: float | Unavailable
    cantelli: float | Unavailable


@dataclass(frozen=True)
class TailPoint:
    x: float
    z: float
    normal: Probability
    empirical: Empirical | Unavailable
    mixture: Probability | Unavailable
    bounds: Bounds


@dataclass(frozen=True)
class Between:
    interval: tuple[float, float]
    z: tuple[float, float]
    normal: Probability
    empirical: Empirical | Unavailable
    mixture: Probability | Unavailable


@dataclass(frozen=True)
class PartsPerMillion:
    ppm_below: float | Unavailable
    ppm_above: float | Unavailable
    ppm: float | Unavailable


@dataclass(frozen=True)
class Limits:
    lower: float | None
    upper: float | None
    normal: PartsPerMillion
    empirical: PartsPerMillion | Unavailable
    mixture: PartsPerMillion | Unavailable


@dataclass(frozen=True)
class QuantilePoint:
    p: float
    normal: float
    cornish_fisher: float | Unavailable
    empirical: float | Unavailable
    mixture: float | Unavailable


@dataclass(frozen=True)
class TailsReport:
    above: tuple[TailPoint, ...]
    below: tuple[TailPoint, ...]
    between: tuple[Between, ...]
    limits: Limits | Unavailable
    quantiles: tuple[QuantilePoint, ...]
    methods: dict
    warnings: tuple[Notice, ...]


def _log(p: float) -> float:
    return math.log(p) if p > 0 else -math.inf


def wilson(count: float, n: int, z: float = WILSON_Z) -> Interval:
    """Wilson score interval for a binomial proportion ([1])."""
    p = count / n
    denom = 1.0 + z * z / n
    centre = (p + z * z / (2 * n)) / denom
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / denom
    return Interval(max(0.0, centre - half), min(1.0, centre + half), 0.95)


def _normal_between(za: float, zb: float) -> Probability:
    """P(za < Z <= zb) and its log, from whichever tail keeps precision: the log as
    log P(tail beyond the near end) + log1p(-P(beyond far end) / P(beyond near end)), so
    it stays finite far out where the probability itself underflows."""
    if za > 0:
        near, far = float(special.log_ndtr(-za)), float(special.log_ndtr(-zb))
    elif zb < 0:
        near, far = float(special.log_ndtr(zb)), float(special.log_ndtr(za))
    else:
        p = float(special.ndtr(zb) - special.ndtr(za))
        return Probability(p, _log(p))
    log_p = near + math.log1p(-math.exp(far - near)) if far < near else -math.inf
    return Probability(math.exp(log_p), log_p)


def _normal_upper(z: float) -> Probability:
    return Probability(float(special.ndtr(-z)), float(special.log_ndtr(-z)))


def _normal_lower(z: float) -> Probability:
    return Probability(float(special.ndtr(z)), float(special.log_ndtr(z)))


def _mixture_tail(components: tuple[Component, ...], x: float, upper: bool) -> Probability:
    logs = []
    for c in components:
        z = (x - c.mean) / c.sd
        logs.append(math.log(c.weight) + float(special.log_ndtr(-z if upper else z)))
    log_p = float(special.logsumexp(logs))
    return Probability(math.exp(log_p), log_p)


def _empirical(profile: Profile, x: float, upper: bool) -> Empirical | Unavailable:
    n = profile.n
    if profile.sample is not None:
        s = profile.sample.sorted
        count = float(s.size - np.searchsorted(s, x, side="right")) if upper else float(np.searchsorted(s, x, side="left"))
        return Empirical(count / n, count, wilson(count, n), "share of values strictly beyond x, Wilson 95% interval")
    if profile.histogram is not None:
        cdf = binned_cdf(profile.histogram, x)
        if isinstance(cdf, Unavailable):
            return cdf
        share = 1.0 - cdf if upper else cdf
        return Empirical(share, share * n, wilson(share * n, n),
                         "binned share (linear within a bin), Wilson 95% interval on the implied count")
    return Unavailable(f"needs raw values or a histogram, not {profile.form}")


def _bounds(z: float, upper: bool) -> Bounds:
    """Bounds on the probability asked about, so only when x lies beyond the mean on the
    side asked about: Chebyshev's two-sided bound also bounds that one tail."""
    k = z if upper else -z
    if k <= 0:
        side = Unavailable("x is not beyond the mean on this side: no bound below 1")
        return Bounds(side, side)
    chebyshev: float | Unavailable = 1.0 / (k * k) if k > 1 else Unavailable("|z| <= 1: Chebyshev's bound is 1")
    return Bounds(chebyshev, 1.0 / (1.0 + k * k))


def tail_point(profile: Profile, x: float, upper: bool, mixture: tuple[Component, ...] | None) -> TailPoint:
    m = profile.moments
    z = (x - m.mean) / m.sd
    return TailPoint(
        x=x,
        z=z,
        normal=_normal_upper(z) if upper else _normal_lower(z),
        empirical=_empirical(profile, x, upper),
        mixture=_mixture_tail(mixture, x, upper) if mixture else Unavailable("no mixture fit for this form"),
        bounds=_bounds(z, upper),
    )


def between(profile: Profile, a: float, b: float, mixture: tuple[Component, ...] | None) -> Between:
    m = profile.moments
    za, zb = (a - m.mean) / m.sd, (b - m.mean) / m.sd
    normal = _normal_between(za, zb)
    lo, hi = _empirical(profile, a, True), _empirical(profile, b, True)
    if isinstance(lo, Unavailable) or isinstance(hi, Unavailable):
        empirical: Empirical | Unavailable = lo if isinstance(lo, Unavailable) else hi
    else:
        count = lo.count - hi.count
        empirical = Empirical(count / profile.n, count, wilson(count, profile.n), "share of values in (a, b], Wilson 95% interval")
    if mixture:
        pm = _mixture_tail(mixture, a, True).probability - _mixture_tail(mixture, b, True).probability
        mix: Probability | Unavailable = Probability(max(pm, 0.0), _log(max(pm, 0.0)))
    else:
        mix = Unavailable("no mixture fit for this form")
    return Between((a, b), (za, zb), normal, empirical, mix)


def _ppm(below: float | None, above: float | None) -> PartsPerMillion:
    lo = below * 1e6 if below is not None else Unavailable("no lower limit")
    hi = above * 1e6 if above is not None else Unavailable("no upper limit")
    total = (below or 0.0) * 1e6 + (above or 0.0) * 1e6
    return PartsPerMillion(lo, hi, total)


def limits(profile: Profile, lower: float | None, upper: float | None, mixture: tuple[Component, ...] | None) -> Limits:
    m = profile.moments
    normal = _ppm(
        float(special.ndtr((lower - m.mean) / m.sd)) if lower is not None else None,
        float(special.ndtr(-(upper - m.mean) / m.sd)) if upper is not None else None,
    )
    emp_lo = _empirical(profile, lower, False) if lower is not None else None
    emp_hi = _empirical(profile, upper, True) if upper is not None else None
    if isinstance(emp_lo, Unavailable) or isinstance(emp_hi, Unavailable):
        empirical: PartsPerMillion | Unavailable = emp_lo if isinstance(emp_lo, Unavailable) else emp_hi
    else:
        empirical = _ppm(emp_lo.probability if emp_lo else None, emp_hi.probability if emp_hi else None)
    if mixture:
        mix: PartsPerMillion | Unavailable = _ppm(
            _mixture_tail(mixture, lower, False).probability if lower is not None else None,
            _mixture_tail(mixture, upper, True).probability if upper is not None else None,
        )
    else:
        mix = Unavailable("no mixture fit for this form")
    return Limits(lower, upper, normal, empirical, mix)


def cornish_fisher_z(z: np.ndarray, skew: float, kurt: float) -> np.ndarray:
    """Cornish-Fisher quantile of a standardised variable ([2]; the usual
    third-order form): z + (z^2-1)S/6 + (z^3-3z)K/24 - (2z^3-5z)S^2/36."""
    return z + (z * z - 1) * skew / 6 + (z**3 - 3 * z) * kurt / 24 - (2 * z**3 - 5 * z) * skew * skew / 36


def cornish_fisher_monotone(skew: float, kurt: float, reach: float = 6.0) -> bool:
    """Is the expansion increasing in z? Checked numerically on z in [-reach, reach] (the
    domain of validity of [3], evaluated rather than quoted)."""
    z = np.linspace(-reach, reach, 4001)
    return bool(np.all(np.diff(cornish_fisher_z(z, skew, kurt)) > 0))


def _mixture_quantile(components: tuple[Component, ...], p: float) -> float:
    from scipy import optimize

    lo = min(c.mean - 40 * c.sd for c in components)
    hi = max(c.mean + 40 * c.sd for c in components)

    def f(x):
        return sum(c.weight * special.ndtr((x - c.mean) / c.sd) for c in components) - p

    return float(optimize.brentq(f, lo, hi, xtol=1e-12 * max(1.0, abs(hi)), maxiter=200))


def quantile_points(profile: Profile, probs, mixture: tuple[Component, ...] | None, definition: str) -> tuple[tuple[QuantilePoint, ...], list[Notice]]:
    m = profile.moments
    skew, kurt = m.skewness("G1"), m.excess_kurtosis("G2")
    notices = []
    cf_ok = skew is not None and kurt is not None
    reach = max([6.0] + [abs(float(special.ndtri(p))) for p in probs])
    if cf_ok and not cornish_fisher_monotone(skew, kurt, reach):
        notices.append(Notice(
            "cornish-fisher-not-monotone",
            f"with skewness {skew:.3g} and excess kurtosis {kurt:.3g} the Cornish-Fisher expansion is not monotone: "
            "its quantiles can cross; use the empirical or mixture quantiles",
        ))
    out = []
    for p in probs:
        z = float(special.ndtri(p))
        cf: float | Unavailable = (
            m.mean + m.sd * float(cornish_fisher_z(np.array([z]), skew, kurt)[0]) if cf_ok
            else Unavailable("needs skewness and kurtosis")
        )
        if profile.sample is not None:
            emp: float | Unavailable = float(quantiles_sorted(profile.sample.sorted, [p], definition)[0])
        elif profile.histogram is not None:
            emp = binned_quantile(profile.histogram, p)
        else:
            emp = Unavailable(f"needs raw values or a histogram, not {profile.form}")
        mix: float | Unavailable = _mixture_quantile(mixture, p) if mixture else Unavailable("no mixture fit for this form")
        out.append(QuantilePoint(p, m.mean + m.sd * z, cf, emp, mix))
    return tuple(out), notices


METHODS = {
    "z": "(x - mean) / sd with the sample sd (n - 1)",
    "normal": "normal model with the sample mean and sd; survival functions, and their logs, so far tails do not underflow",
    "empirical": "raw values: the share beyond x with a Wilson score 95% interval (Wilson 1927); histograms: the binned share",
    "mixture": "the Gaussian mixture selected by BIC in /v1/modality",
    "bounds": "distribution-free, from the mean and sd only: Chebyshev P(|X - mean| >= k sd) <= 1/k^2, Cantelli "
              "P(X - mean >= k sd) <= 1/(1 + k^2); they treat the estimates as exact",
    "cornish_fisher": "third-order Cornish-Fisher expansion with G1 and G2 (Cornish & Fisher 1938)",
    "ppm": "parts per million outside the limits",
}


def tails(
    profile: Profile,
    *,
    above=(),
    below=(),
    intervals=(),
    lower_limit: float | None = None,
    upper_limit: float | None = None,
    quantiles=(),
    mixture: tuple[Component, ...] | None = None,
    quantile_definition: str = "hf7",
) -> TailsReport:
    qs, notices = quantile_points(profile, quantiles, mixture, quantile_definition)
    has_limits = lower_limit is not None or upper_limit is not None
    return TailsReport(
        above=tuple(tail_point(profile, x, True, mixture) for x in above),
        below=tuple(tail_point(profile, x, False, mixture) for x in below),
        between=tuple(between(profile, a, b, mixture) for a, b in intervals),
        limits=limits(profile, lower_limit, upper_limit, mixture) if has_limits else Unavailable("no limits were given"),
        quantiles=qs,
        methods=METHODS,
        warnings=profile.notices + tuple(notices),
    )
