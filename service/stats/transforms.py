"""Power transformations towards normality: Box-Cox (positive data) and Yeo-Johnson.

Lambda is the maximum-likelihood estimate; its confidence interval is the profile-
likelihood interval {lambda : 2 (l_max - l(lambda)) <= chi2_1(1 - alpha)}. A simple lambda
near the estimate (-1, -0.5, 0 = log, 0.5 = square root, 1 = none, 2 = square) is
suggested when it lies inside the interval, because results on a named scale are
easier to explain and back-transform. Normality and shape are reported before and
after.

References
----------
.. [1] Box, G. E. P. and Cox, D. R. (1964). An analysis of transformations. *JRSS B*
       26(2), 211-252. doi:10.1111/j.2517-6161.1964.tb00553.x
.. [2] Yeo, I.-K. and Johnson, R. A. (2000). A new family of power transformations to
       improve normality or symmetry. *Biometrika* 87(4), 954-959.
       doi:10.1093/biomet/87.4.954
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from .forms import Sample
from .normality.battery import NormalityOptions, NormalityReport, normality
from .profile import Profile, profile_of_sample
from .results import Method

BOX_COX = Method("Box-Cox power transformation, lambda by maximum likelihood, profile-likelihood interval",
                 "Box & Cox (1964), JRSS B 26(2):211-252")
YEO_JOHNSON = Method("Yeo-Johnson power transformation, lambda by maximum likelihood, profile-likelihood interval",
                     "Yeo & Johnson (2000), Biometrika 87(4):954-959")
SIMPLE = ((-1.0, "reciprocal"), (-0.5, "reciprocal square root"), (0.0, "log"), (0.5, "square root"),
          (1.0, "none (the data as they are)"), (2.0, "square"))
LAMBDA_RANGE = (-5.0, 5.0)
HINT_MIN_N = 20  # fewer values cannot tell whether a transformation helps
BACK_TRANSFORM = (
    "Results on the transformed scale do not carry back term by term: the back-transformed mean of "
    "transformed data estimates the median of the original scale (for the log, the geometric mean), not "
    "its mean; back-transform interval endpoints, not standard errors; and a difference of means becomes a "
    "ratio (log) or has no simple meaning (other lambdas)."
)


@dataclass(frozen=True)
class Shape:
    G1: float | None
    G2: float | None
    normality_label: str
    normal: bool | None
    primary_test: str | None
    p_value: float | None


@dataclass(frozen=True)
class TransformResult:
    applicable: bool
    reason: str | None
    lambda_: float | None
    interval: tuple[float, float] | None
    suggested: dict | None
    after: Shape | None
    method: Method


@dataclass(frozen=True)
class TransformReport:
    before: Shape
    box_cox: TransformResult
    yeo_johnson: TransformResult
    back_transform: str
    confidence: float
    warnings: tuple


def shape_of(profile: Profile, options: NormalityOptions, report: NormalityReport | None = None) -> Shape:
    """Shape and normality of a profile; ``report`` is its normality report when the
    caller already has one (with the same options)."""
    report = report if report is not None else normality(profile, options)
    v = report.verdict
    primary = getattr(report.tests, v.primary_test) if v.primary_test else None
    m = profile.moments
    return Shape(m.skewness("G1"), m.excess_kurtosis("G2"), v.label, v.normal, v.primary_test,
                 None if primary is None else primary.p_value)


def _profile_interval(llf, lam: float, confidence: float) -> tuple[float, float]:
    """Where the log-likelihood falls chi2_1(confidence)/2 below its maximum, by Brent's
    method on each side (bounded to LAMBDA_RANGE)."""
    drop = 0.5 * float(stats.chi2.ppf(confidence, 1))
    top = llf(lam)  # llf is memoised: the maximiser, the guards and brentq share evaluations

    def f(t):
        return top - llf(t) - drop

    lo, hi = LAMBDA_RANGE
    left = optimize.brentq(f, lo, lam, xtol=1e-10) if f(lo) > 0 else lo
    right = optimize.brentq(f, lam, hi, xtol=1e-10) if f(hi) > 0 else hi
    return float(left), float(right)


def _suggest(lam: float, interval: tuple[float, float]) -> dict | None:
    inside = [(abs(v - lam), v, name) for v, name in SIMPLE if interval[0] <= v <= interval[1]]
    if not inside:
        return None
    _, value, name = min(inside)
    return {"lambda": value, "name": name}


def fit_family(x: np.ndarray, kind: str, confidence: float, options: NormalityOptions) -> TransformResult:
    """One family (``box_cox`` or ``yeo_johnson``) fitted to the values ``x``."""
    method = BOX_COX if kind == "box_cox" else YEO_JOHNSON
    if kind == "box_cox" and x.min() <= 0:
        return TransformResult(False, "Box-Cox needs strictly positive data; Yeo-Johnson handles zero and negative values",
                               None, None, None, None, method)
    family = stats.boxcox_llf if kind == "box_cox" else stats.yeojohnson_llf

    seen: dict[float, float] = {}

    def llf(t: float) -> float:
        t = float(t)
        if t not in seen:
            with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
                value = float(family(t, x))
            seen[t] = value if np.isfinite(value) else -np.inf
        return seen[t]
    result = optimize.minimize_scalar(lambda t: -llf(t), bounds=LAMBDA_RANGE, method="bounded",
                                      options={"xatol": 1e-10, "maxiter": 500})
    lam = float(result.x)
    interval = _profile_interval(llf, lam, confidence)
    transformed = stats.boxcox(x, lmbda=lam) if kind == "box_cox" else stats.yeojohnson(x, lmbda=lam)
    reason = None
    if min(abs(lam - bound) for bound in LAMBDA_RANGE) < 1e-4:
        reason = f"lambda reached the search bound {lam:g}; no power transformation in [-5, 5] fits well"
    finite = np.isfinite(transformed)
    if not finite.all() or np.ptp(transformed) == 0:
        return TransformResult(True, "the transformed values overflow or collapse; lambda is too extreme to use",
                               lam, interval, _suggest(lam, interval), None, method)
    after = shape_of(profile_of_sample(Sample(transformed)), options)
    return TransformResult(True, reason, lam, interval, _suggest(lam, interval), after, method)


def transform(sample: Sample, options: NormalityOptions = NormalityOptions(), confidence: float = 0.95,
              profile: Profile | None = None) -> TransformReport:
    """Both families, with the shape before and after; ``profile`` is the sample's own
    profile when the caller has built it already."""
    x = np.asarray(sample.values, dtype=np.float64)
    profile = profile if profile is not None else profile_of_sample(sample)
    return TransformReport(
        before=shape_of(profile, options),
        box_cox=fit_family(x, "box_cox", confidence, options),
        yeo_johnson=fit_family(x, "yeo_johnson", confidence, options),
        back_transform=BACK_TRANSFORM,
        confidence=confidence,
        warnings=profile.notices,
    )


def transform_hint(profile: Profile, options: NormalityOptions, report: NormalityReport | None = None) -> dict | None:
    """The transformation a recommendation offers: Box-Cox (Yeo-Johnson for data not all
    positive) at 95%, only when it brings the primary test's p-value up. ``report`` is the
    profile's normality report when the caller has it."""
    if profile.sample is None or profile.n < HINT_MIN_N:
        return None
    x = np.asarray(profile.sample.values, dtype=np.float64)
    kind = "box_cox" if x.min() > 0 else "yeo_johnson"
    fit = fit_family(x, kind, 0.95, options)
    if fit.after is None or fit.lambda_ is None:
        return None
    before = shape_of(profile, options, report)
    if fit.after.p_value is None or before.p_value is None or fit.after.p_value <= before.p_value:
        return None
    return {"family": kind, "lambda": fit.lambda_, "interval": list(fit.interval), "suggested": fit.suggested,
            "after": fit.after}
