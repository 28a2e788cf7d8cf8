"""Moment partials from shards, merged exactly into one set of moments.

A caller's batch engine reduces each shard to ``{n, mean, m2, m3, m4}`` where ``mk`` is the
sum of ``(x - mean)**k`` over the shard (its own mean), optionally with ``min`` and ``max``.
Partials merge pairwise by the update formulas of Chan, Golub & LeVeque and Pébay, which
are exact in exact arithmetic. To make the result independent of the order the shards
arrive in (to the last bit, not only to rounding), the shards are put in a canonical
order first, then merged as a balanced tree, which also keeps rounding error growing
with log(k) rather than k.

References
----------
.. [1] Chan, T. F., Golub, G. H. and LeVeque, R. J. (1979). Updating formulae and a
       pairwise algorithm for computing sample variances. Stanford CS report STAN-CS-79-773.
.. [2] Pébay, P. (2008). Formulas for robust, one-pass parallel computation of
       covariances and arbitrary-order statistical moments. Sandia report SAND2008-6212.
       doi:10.2172/1028931 (eq. 3.1 for arbitrary order; the cases p = 2, 3, 4 below).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import DataError
from .moments import Moments

# Relative slack for the feasibility checks: partials computed in floating point may
# miss an exact bound by rounding (common practice: a few hundred ulps).
_SLACK = 1e-9


class InfeasiblePartial(DataError):
    code = "infeasible-partial"


@dataclass(frozen=True)
class Partial:
    """One shard: size, mean and central power sums ``m_k = sum((x - mean)**k)``."""

    n: int
    mean: float
    m2: float
    m3: float
    m4: float
    minimum: float | None = None
    maximum: float | None = None


def check_partial(p: Partial, index: int) -> None:
    """Refuse a shard that no set of real numbers can have, naming why."""
    where = f"/partials/{index}"
    if p.n < 1:
        raise InfeasiblePartial(f"shard {index} has n={p.n}; a shard holds at least one value", pointer=f"{where}/n")
    if p.m2 < 0 or p.m4 < 0:
        raise InfeasiblePartial(f"shard {index}: m2 and m4 are sums of even powers and cannot be negative", pointer=where)
    if p.n == 1 and (p.m2, p.m3, p.m4) != (0.0, 0.0, 0.0):
        raise InfeasiblePartial(f"shard {index} has one value, so m2, m3 and m4 must be 0", pointer=where)
    if p.m2 == 0 and (p.m3 != 0 or p.m4 != 0):
        raise InfeasiblePartial(f"shard {index}: m2 = 0 means all values are equal, so m3 and m4 must be 0", pointer=where)
    if p.m2 > 0:
        # Moment-ratio inequality for any distribution, here the shard's own values:
        # (m4/n)/(m2/n)^2 >= 1 + (m3/n)^2/(m2/n)^3  (Pearson 1916).
        b2 = p.m4 * p.n / (p.m2 * p.m2)
        b1 = p.m3 * p.m3 * p.n / p.m2**3
        if b2 < (1.0 + b1) * (1.0 - _SLACK):
            raise InfeasiblePartial(
                f"shard {index}: m4 is too small for its m2 and m3 (kurtosis {b2:.6g} < 1 + skewness^2 = {1 + b1:.6g}); "
                "check that mk are sums of (x - shard mean)^k",
                pointer=where,
            )
    if p.minimum is not None and p.maximum is not None and p.minimum > p.maximum:
        raise InfeasiblePartial(f"shard {index}: min > max", pointer=where)
    if p.minimum is not None and p.mean < p.minimum - _SLACK * abs(p.minimum):
        raise InfeasiblePartial(f"shard {index}: mean below min", pointer=where)
    if p.maximum is not None and p.mean > p.maximum + _SLACK * abs(p.maximum):
        raise InfeasiblePartial(f"shard {index}: mean above max", pointer=where)


def merge_pair(a: Partial, b: Partial) -> Partial:
    """Combine two shards ([2], eq. 3.1 with p = 2, 3, 4; [1] for p = 2)."""
    n = a.n + b.n
    delta = b.mean - a.mean
    na, nb = float(a.n), float(b.n)
    mean = a.mean + delta * nb / n
    m2 = a.m2 + b.m2 + delta * delta * na * nb / n
    m3 = (
        a.m3 + b.m3
        + delta**3 * na * nb * (na - nb) / (n * n)
        + 3.0 * delta * (na * b.m2 - nb * a.m2) / n
    )
    m4 = (
        a.m4 + b.m4
        + delta**4 * na * nb * (na * na - na * nb + nb * nb) / n**3
        + 6.0 * delta * delta * (na * na * b.m2 + nb * nb * a.m2) / (n * n)
        + 4.0 * delta * (na * b.m3 - nb * a.m3) / n
    )
    lo = None if a.minimum is None or b.minimum is None else min(a.minimum, b.minimum)
    hi = None if a.maximum is None or b.maximum is None else max(a.maximum, b.maximum)
    return Partial(n, mean, m2, m3, m4, lo, hi)


def _tree(parts: list[Partial]) -> Partial:
    if len(parts) == 1:
        return parts[0]
    middle = len(parts) // 2
    return merge_pair(_tree(parts[:middle]), _tree(parts[middle:]))


def merge_partials(parts: list[Partial]) -> Partial:
    """Merge any number of shards; the result does not depend on their order."""
    if not parts:
        raise DataError("partials is empty: send at least one shard")
    for i, p in enumerate(parts):
        check_partial(p, i)
    canonical = sorted(parts, key=lambda p: (p.mean, p.n, p.m2, p.m3, p.m4,
                                             -math.inf if p.minimum is None else p.minimum,
                                             -math.inf if p.maximum is None else p.maximum))
    return _tree(canonical)


def moments_of(p: Partial) -> Moments:
    """The merged shards as ``Moments`` (central moments divided by n, shape standardised)."""
    n = p.n
    m2 = p.m2 / n
    if m2 <= 0:
        return Moments(n=n, mean=p.mean, m2=0.0)
    g1 = (p.m3 / n) / m2**1.5 if n >= 3 else None
    g2 = (p.m4 / n) / (m2 * m2) - 3.0 if n >= 4 else None
    return Moments(n=n, mean=p.mean, m2=m2, g1=g1, g2=g2)
