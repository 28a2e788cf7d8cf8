"""One view of a sample, whatever form it came in.

Every analysis reads a ``Profile``: the moments (always), the order statistics the form
can give, and the raw sample or histogram when there is one. What a form cannot give
is ``None`` here and ``Unavailable`` in the results, with the reason.

| form | moments | order statistics | values |
| --- | --- | --- | --- |
| values | computed (two-pass) | all, from the one sort | yes |
| summary | as given, converted | those given | no |
| partials | merged exactly | min and max when every shard gives them | no |
| histogram | binned (midpoints; Sheppard optional) | interpolated within bins | no |
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .forms import Sample
from .histogram import Histogram, NormalFit, binned_moments, binned_quantile, fit_normal
from .moments import Moments, central_moments
from .partials import Partial, merge_partials, moments_of
from .quantiles import quantiles_sorted
from .results import Notice, Unavailable
from .summary import Summary, summary_moments

FORMS = ("values", "summary", "partials", "histogram")


@dataclass(frozen=True)
class OrderStats:
    """Order statistics a form can give; ``None`` where it cannot."""

    minimum: float | None = None
    q1: float | None = None
    median: float | None = None
    q3: float | None = None
    maximum: float | None = None


@dataclass(frozen=True, eq=False)
class Profile:
    form: str
    moments: Moments
    order: OrderStats
    sample: Sample | None = None
    histogram: Histogram | None = None
    fit: NormalFit | None = None
    sheppard_applied: bool = False
    notices: tuple[Notice, ...] = ()

    @property
    def n(self) -> int:
        return self.moments.n


def profile_of_sample(sample: Sample, quantile_definition: str = "hf7") -> Profile:
    s = sample.sorted
    q1, med, q3 = quantiles_sorted(s, (0.25, 0.5, 0.75), quantile_definition)
    order = OrderStats(float(s[0]), float(q1), float(med), float(q3), float(s[-1]))
    # Moments from the sorted copy: the same values in any order give the same bits.
    moments = central_moments(s)
    return Profile("values", moments, order, sample=sample, notices=sample_notices(sample, moments))


# Our simulation (tests/benchmarks/rounding_study.py): normal samples rounded to a step u
# are rejected by Shapiro-Wilk / Anderson-Darling at the 5% level about 5% of the time
# while u/sd * sqrt(n) stays below 1, and 8-13% of the time at 1.5-2.2; beyond about 3
# the rejection rate climbs towards 1 for the rounding alone.
ROUNDING_ALERT = 1.5


def sample_notices(sample: Sample, moments: Moments) -> tuple[Notice, ...]:
    """Warnings every analysis of raw values shares."""
    unit = sample.rounding_unit
    if unit is None or moments.m2 <= 0:
        return ()
    relative = unit / moments.sd
    if relative * np.sqrt(sample.n) < ROUNDING_ALERT:
        return ()
    return (
        Notice(
            "rounded-data",
            f"the values sit on a grid of step {unit:.6g} ({relative:.3g} sd; {sample.n_distinct} distinct values "
            f"among n={sample.n}): rounding this coarse, at this n, makes tests of a continuous distribution reject "
            "normal data far more often than alpha",
        ),
    )


def profile_of_summary(summary: Summary) -> Profile:
    order = OrderStats(summary.minimum, summary.q1, summary.median, summary.q3, summary.maximum)
    return Profile("summary", summary_moments(summary), order)


def profile_of_partials(parts: list[Partial]) -> Profile:
    merged = merge_partials(parts)
    moments = moments_of(merged)
    return Profile("partials", moments, OrderStats(minimum=merged.minimum, maximum=merged.maximum))


def _number(value: float | Unavailable) -> float | None:
    return None if isinstance(value, Unavailable) else value


def profile_of_histogram(h: Histogram, sheppard: bool = False) -> Profile:
    fit = fit_normal(h)
    binned = binned_moments(h, fit, sheppard)
    q1, med, q3 = (_number(binned_quantile(h, p)) for p in (0.25, 0.5, 0.75))
    return Profile(
        "histogram",
        binned.moments,
        OrderStats(q1=q1, median=med, q3=q3),
        histogram=h,
        fit=fit,
        sheppard_applied=binned.sheppard_applied,
        notices=binned.notices,
    )
