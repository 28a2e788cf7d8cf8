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
    return Profile("values", central_moments(sample.values), order, sample=sample, notices=sample_notices(sample))


def sample_notices(sample: Sample) -> tuple[Notice, ...]:
    """Warnings every analysis of raw values shares."""
    if sample.n_distinct < 0.5 * sample.n:
        return (
            Notice(
                "many-ties",
                f"only {sample.n_distinct} distinct values among n={sample.n}: the data look "
                "rounded or discrete, and tests made for continuous data may reject because "
                "of the rounding alone",
            ),
        )
    return ()


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
