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
from .moments import FEASIBILITY_SLACK as _SLACK
from .moments import MAX_N, Moments


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
    """Refuse a shard that no set of real numbers can have, naming why.

    The bounds are those a summary is held to (see ``summary.py``): Pearson's
    inequality, Dalén's limits on the shape of n values, and Bhatia and Davis's limit
    on the variance within [min, max]. Sums computed around a rounded mean miss the
    exact bounds by up to a few units of that rounding, relative to the shard's sd;
    the slack allows for it.
    """
    where = f"/partials/{index}"
    n = p.n
    if n < 1:
        raise InfeasiblePartial(f"shard {index} has n={n}; a shard holds at least one value", pointer=f"{where}/n")
    if n > MAX_N:
        raise InfeasiblePartial(f"shard {index} has n={n}, beyond {MAX_N:.0e}", pointer=f"{where}/n")
    if p.m2 < 0 or p.m4 < 0:
        raise InfeasiblePartial(f"shard {index}: m2 and m4 are sums of even powers and cannot be negative", pointer=where)
    if n == 1 and (p.m2, p.m3, p.m4) != (0.0, 0.0, 0.0):
        raise InfeasiblePartial(f"shard {index} has one value, so m2, m3 and m4 must be 0", pointer=where)
    if p.m2 == 0 and (p.m3 != 0 or p.m4 != 0):
        raise InfeasiblePartial(f"shard {index}: m2 = 0 means all values are equal, so m3 and m4 must be 0", pointer=where)
    if p.minimum is not None and p.maximum is not None and p.minimum > p.maximum:
        raise InfeasiblePartial(f"shard {index}: min > max", pointer=where)
    if n == 1 and ((p.minimum is not None and p.minimum != p.mean) or (p.maximum is not None and p.maximum != p.mean)):
        raise InfeasiblePartial(f"shard {index} has one value, so min and max equal its mean", pointer=where)
    sd = math.sqrt(p.m2 / n)
    slack = _SLACK + (8.0 * math.ulp(abs(p.mean)) / sd if sd > 0 else 0.0)
    if p.minimum is not None and p.mean < p.minimum - slack * max(sd, abs(p.minimum)):
        raise InfeasiblePartial(f"shard {index}: mean below min", pointer=where)
    if p.maximum is not None and p.mean > p.maximum + slack * max(sd, abs(p.maximum)):
        raise InfeasiblePartial(f"shard {index}: mean above max", pointer=where)
    if p.m2 == 0:
        return
    b2 = p.m4 * n / (p.m2 * p.m2)
    b1 = p.m3 * p.m3 * n / p.m2**3
    # Pearson (1916): b2 >= 1 + b1 for any distribution, the shard's own values included.
    if b2 < (1.0 + b1) * (1.0 - slack):
        raise InfeasiblePartial(
            f"shard {index}: m4 is too small for its m2 and m3 (kurtosis {b2:.6g} < 1 + skewness^2 = {1 + b1:.6g}); "
            "check that mk are sums of (x - shard mean)^k",
            pointer=where,
        )
    # Dalen (1987): n values have b1 <= (n-2)^2/(n-1) and b2 <= (n^2 - 3n + 3)/(n - 1).
    if n >= 2 and (b1 > (n - 2) ** 2 / (n - 1) * (1.0 + slack) + slack or b2 > (n * n - 3 * n + 3) / (n - 1) * (1.0 + slack)):
        raise InfeasiblePartial(
            f"shard {index}: no {n} values have this shape (skewness^2 {b1:.6g}, kurtosis {b2:.6g}; Dalen 1987)",
            pointer=where,
        )
    if p.minimum is not None and p.maximum is not None:
        # Bhatia & Davis (2000): variance <= (max - mean)(mean - min).
        bound = (p.maximum - p.mean) * (p.mean - p.minimum)
        if p.m2 / n > bound * (1.0 + slack) + slack * sd * sd:
            raise InfeasiblePartial(
                f"shard {index}: m2 is too large for values between min and max (Bhatia-Davis bound {bound:.6g} on m2/n)",
                pointer=where,
            )


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
    # Merge around an anchor (the median shard mean): the shifted means are small and
    # exact differences, so no intermediate mean is rounded at the offset's magnitude.
    anchor = canonical[len(canonical) // 2].mean
    shifted = [Partial(p.n, p.mean - anchor, p.m2, p.m3, p.m4) for p in canonical]
    merged = _tree(shifted)
    lo = None if any(p.minimum is None for p in parts) else min(p.minimum for p in parts)
    hi = None if any(p.maximum is None for p in parts) else max(p.maximum for p in parts)
    return Partial(merged.n, merged.mean + anchor, merged.m2, merged.m3, merged.m4, lo, hi)


def moments_of(p: Partial) -> Moments:
    """The merged shards as ``Moments`` (central moments divided by n, shape standardised)."""
    n = p.n
    m2 = p.m2 / n
    if m2 <= 0:
        return Moments(n=n, mean=p.mean, m2=0.0)
    g1 = (p.m3 / n) / m2**1.5 if n >= 3 else None
    g2 = (p.m4 / n) / (m2 * m2) - 3.0 if n >= 4 else None
    return Moments(n=n, mean=p.mean, m2=m2, g1=g1, g2=g2)
