"""Summary statistics as input, checked for feasibility and converted to ``Moments``.

A summary gives n, mean and sd, and optionally skewness, excess kurtosis, median,
quartiles, min and max, each in a stated convention. Before anything is computed, the
summary must be one that some sample of that size could have:

* every sample has kurtosis b2 = g2 + 3 >= g1^2 + 1 (Pearson's inequality, which holds
  for every distribution, a sample's own included) [1];
* a sample of n values has |g1| <= (n - 2) / sqrt(n - 1) and
  g2 + 3 <= (n^2 - 3n + 3) / (n - 1), both reached by n - 1 equal values and one other
  [2] (bounds recalled from memory; our tests check that the extreme sample attains them);
* min <= q1 <= median <= q3 <= max and min <= mean <= max, the variance is at most
  (max - mean)(mean - min) [3], and the median lies within one (population) sd of the
  mean [4].

References
----------
.. [1] Pearson, K. (1916). Mathematical contributions to the theory of evolution XIX.
       *Phil. Trans. R. Soc. A* 216, 429-457. doi:10.1098/rsta.1916.0009
.. [2] Dalén, J. (1987). Algebraic bounds on standardized sample moments. *Statistics &
       Probability Letters* 5(5), 329-331. doi:10.1016/0167-7152(87)90097-8
.. [4] Mallows, C. (1991). Another comment on O'Cinneide. *The American Statistician*
       45(3), 257. doi:10.1080/00031305.1991.10475815 (|mean - median| <= sd; recalled
       from memory)
.. [3] Bhatia, R. and Davis, C. (2000). A better bound on the variance. *The American
       Mathematical Monthly* 107(4), 353-357. doi:10.2307/2589180
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import DataError
from .moments import FEASIBILITY_SLACK as _SLACK
from .moments import MAX_N, Moments, g1_from_skewness, g2_from_kurtosis


class InfeasibleSummary(DataError):
    code = "infeasible-summary"


@dataclass(frozen=True)
class Summary:
    n: int
    mean: float
    sd: float
    skewness: float | None = None
    kurtosis: float | None = None
    median: float | None = None
    q1: float | None = None
    q3: float | None = None
    minimum: float | None = None
    maximum: float | None = None
    skewness_convention: str = "G1"
    kurtosis_convention: str = "G2"
    sd_convention: str = "sample"


def _fail(message: str, field: str) -> InfeasibleSummary:
    return InfeasibleSummary(message, pointer=f"/summary/{field}")


def summary_moments(s: Summary) -> Moments:
    """Check ``s`` and express it as ``Moments`` (the shape as g1 and g2)."""
    n = s.n
    if n < 2:
        raise _fail(f"n={n}: a summary needs at least 2 values", "n")
    if n > MAX_N:
        raise _fail(f"n={n} is beyond {MAX_N:.0e}: the tests' small-sample corrections lose all precision there", "n")
    if not s.sd > 0:
        raise _fail(f"sd={s.sd!r}: a summary of varying data has sd > 0 (constant data have no shape)", "sd")
    m2 = s.sd * s.sd * ((n - 1) / n if s.sd_convention == "sample" else 1.0)
    g1 = g2 = None
    if s.skewness is not None:
        if n < 3:
            raise _fail("skewness is undefined for n < 3", "skewness")
        g1 = g1_from_skewness(s.skewness, n, s.skewness_convention)
        limit = (n - 2) / math.sqrt(n - 1)
        if abs(g1) > limit * (1 + _SLACK):
            raise _fail(
                f"no sample of n={n} has this skewness: |g1|={abs(g1):.6g} exceeds (n-2)/sqrt(n-1)={limit:.6g} (Dalen 1987)",
                "skewness",
            )
    if s.kurtosis is not None:
        if n < 4:
            raise _fail("kurtosis is undefined for n < 4", "kurtosis")
        g2 = g2_from_kurtosis(s.kurtosis, n, s.kurtosis_convention)
        upper = (n * n - 3 * n + 3) / (n - 1)
        if g2 + 3 > upper * (1 + _SLACK):
            raise _fail(
                f"no sample of n={n} has this kurtosis: g2+3={g2 + 3:.6g} exceeds (n^2-3n+3)/(n-1)={upper:.6g} (Dalen 1987)",
                "kurtosis",
            )
        floor = 1.0 + (g1 * g1 if g1 is not None else 0.0)
        if g2 + 3 < floor * (1 - _SLACK):
            what = f"1 + g1^2 = {floor:.6g}" if g1 is not None else "1"
            raise _fail(
                f"no distribution has this pair: kurtosis g2+3={g2 + 3:.6g} is below {what} (Pearson's inequality)",
                "kurtosis",
            )
    order = [("min", s.minimum), ("q1", s.q1), ("median", s.median), ("q3", s.q3), ("max", s.maximum)]
    given = [(name, v) for name, v in order if v is not None]
    for (a, va), (b, vb) in zip(given, given[1:]):
        if va > vb:
            raise _fail(f"{a}={va!r} is above {b}={vb!r}: quantiles must be ordered", b)
    if s.minimum is not None and s.mean < s.minimum:
        raise _fail(f"mean={s.mean!r} is below min={s.minimum!r}", "mean")
    if s.maximum is not None and s.mean > s.maximum:
        raise _fail(f"mean={s.mean!r} is above max={s.maximum!r}", "mean")
    if s.median is not None and abs(s.mean - s.median) > math.sqrt(m2) * (1 + _SLACK):
        # For every distribution |mean - median| <= sd (the population sd) [4].
        raise _fail(
            f"median={s.median!r} is {abs(s.mean - s.median):.6g} from the mean, more than the sd "
            f"{math.sqrt(m2):.6g} (population convention) that any sample allows",
            "median",
        )
    if s.minimum is not None and s.maximum is not None:
        # Bhatia & Davis (2000): population variance <= (max - mean)(mean - min) [3].
        bound = (s.maximum - s.mean) * (s.mean - s.minimum)
        if m2 > bound * (1 + _SLACK) + 1e-300:
            raise _fail(
                f"sd={s.sd!r} is too large for values between min={s.minimum!r} and max={s.maximum!r} "
                f"around mean={s.mean!r} (Bhatia-Davis bound on the variance: {bound:.6g})",
                "sd",
            )
    return Moments(n=n, mean=s.mean, m2=m2, g1=g1, g2=g2)
