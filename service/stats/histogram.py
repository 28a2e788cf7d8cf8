"""Histograms as input: binned moments, binned quantiles, the modal bin, and a normal
fitted by maximum likelihood to the grouped data (the chi-square test of that fit is in
``normality/binned_tests.py``).

Monitoring histograms often have open-ended outer bins (``-inf`` / ``+inf`` edges). The
normal is fitted to the grouped data by maximum likelihood, which handles open bins
without guessing; for the binned moments, the values of an open bin are placed at the
fitted normal's conditional mean within it (flagged, since this leans towards normal).

References
----------
.. [1] Sheppard, W. F. (1898). On the calculation of the most probable values of
       frequency-constants, for data arranged according to equidistant division of a
       scale. *Proc. London Math. Soc.* s1-29(1), 353-380. doi:10.1112/plms/s1-29.1.353
.. [2] Kendall, M. G. and Stuart, A. (1977). *The Advanced Theory of Statistics*, vol. 1,
       4th ed. Griffin. Sections 3.18-3.20 (Sheppard's corrections to m2 and m4).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize, special

from .errors import DataError
from .moments import MAX_N, Moments
from .results import Notice, Unavailable

_MAX_ITERATIONS = 200


class InvalidHistogram(DataError):
    code = "invalid-histogram"


@dataclass(frozen=True, eq=False)
class Histogram:
    """Bin edges (k+1, increasing; the first may be -inf and the last +inf) and counts (k)."""

    edges: np.ndarray
    counts: np.ndarray

    @property
    def n(self) -> int:
        return int(self.counts.sum())

    @property
    def widths(self) -> np.ndarray:
        return np.diff(self.edges)


@dataclass(frozen=True)
class NormalFit:
    mean: float
    sd: float
    log_likelihood: float
    iterations: int
    converged: bool


def check_histogram(edges, counts) -> Histogram:
    e = np.asarray(edges, dtype=np.float64)
    c = np.asarray(counts, dtype=np.float64)
    if e.ndim != 1 or c.ndim != 1 or e.size != c.size + 1:
        raise InvalidHistogram(
            f"a histogram needs k+1 edges for k counts; got {e.size} edges and {c.size} counts",
            pointer="/histogram/edges",
        )
    if c.size < 1:
        raise InvalidHistogram("a histogram needs at least one bin", pointer="/histogram/counts")
    if np.isnan(e).any() or np.isinf(e[1:-1]).any() or e[0] == math.inf or e[-1] == -math.inf:
        raise InvalidHistogram("only the first edge may be -inf and only the last +inf", pointer="/histogram/edges")
    if not (np.diff(e) > 0).all():
        i = int(np.argmax(~(np.diff(e) > 0))) + 1
        raise InvalidHistogram(f"edges must increase strictly; edge {i} does not", pointer=f"/histogram/edges/{i}")
    if not np.isfinite(c).all() or (c < 0).any() or (c != np.round(c)).any():
        i = int(np.argmax(~np.isfinite(c) | (c < 0) | (c != np.round(c))))
        raise InvalidHistogram(f"counts are non-negative whole numbers; count {i} is {float(c[i])!r}", pointer=f"/histogram/counts/{i}")
    if c.sum() > MAX_N:
        raise InvalidHistogram(f"the counts add up to {c.sum():.3g}, beyond {MAX_N:.0e}", pointer="/histogram/counts")
    if c.sum() < 2:
        raise InvalidHistogram(f"the counts add up to {int(c.sum())}; at least 2 values are needed", pointer="/histogram/counts")
    if np.isinf(e[0]) and c[0] > 0 and np.isinf(e[-1]) and c[-1] > 0 and c.size == 2:
        raise InvalidHistogram("two open-ended bins alone say nothing about spread", pointer="/histogram/edges")
    return Histogram(e, c)


def bin_probabilities(z_lo: np.ndarray, z_hi: np.ndarray) -> np.ndarray:
    """P(z_lo < Z <= z_hi), taken from whichever tail keeps precision."""
    upper = z_lo > 0
    p = np.where(upper, special.ndtr(-z_lo) - special.ndtr(-z_hi), special.ndtr(z_hi) - special.ndtr(z_lo))
    return np.maximum(p, 1e-300)


def fit_normal(h: Histogram) -> NormalFit:
    """Maximum likelihood normal for grouped data, the outer bins extended to +-inf.

    Maximises sum c_i log(Phi(b_i) - Phi(a_i)) over the mean and log sd with L-BFGS-B
    and the analytic gradient, from the midpoint moments, at most 200 iterations.
    """
    edges = h.edges.copy()
    edges[0], edges[-1] = -math.inf, math.inf
    mids, _ = _representatives(h, None)
    w = h.counts / h.n
    centre = float(np.dot(w, mids))
    spread = math.sqrt(max(float(np.dot(w, (mids - centre) ** 2)), 0.0))
    finite = h.edges[np.isfinite(h.edges)]
    if spread == 0.0:
        spread = float(np.min(np.diff(finite))) / 2.0 if finite.size > 1 else 1.0
    scaled = (edges - centre) / spread  # work on a unit scale

    def objective(theta):
        mu, log_s = theta
        s = math.exp(log_s)
        z = (scaled - mu) / s
        p = bin_probabilities(z[:-1], z[1:])
        pdf = np.where(np.isfinite(z), np.exp(-0.5 * np.where(np.isfinite(z), z, 0.0) ** 2) / math.sqrt(2 * math.pi), 0.0)
        zpdf = np.where(np.isfinite(z), np.where(np.isfinite(z), z, 0.0) * pdf, 0.0)
        f = -float(np.dot(h.counts, np.log(p)))
        d_mu = float(np.dot(h.counts, (pdf[1:] - pdf[:-1]) / (s * p)))
        d_log_s = float(np.dot(h.counts, (zpdf[1:] - zpdf[:-1]) / p))
        return f, np.array([d_mu, d_log_s])

    result = optimize.minimize(objective, np.array([0.0, 0.0]), jac=True, method="L-BFGS-B",
                               options={"maxiter": _MAX_ITERATIONS, "gtol": 1e-10, "ftol": 1e-15})
    mu, log_s = result.x
    return NormalFit(
        mean=centre + spread * float(mu),
        sd=spread * math.exp(float(log_s)),
        log_likelihood=-float(result.fun),
        iterations=int(result.nit),
        converged=bool(result.success),
    )


def _representatives(h: Histogram, fit: NormalFit | None) -> tuple[np.ndarray, list[int]]:
    """Midpoints of closed bins; open bins at the fitted normal's conditional mean there
    (at their finite edge when no fit is given yet). Returns the points and the indices
    of the open bins that hold counts."""
    e = h.edges
    mids = np.empty(h.counts.size)
    closed = np.isfinite(e[:-1]) & np.isfinite(e[1:])
    mids[closed] = 0.5 * (e[:-1][closed] + e[1:][closed])
    open_used = []
    if not closed[0]:
        b = e[1]
        if fit is None:
            mids[0] = b
        else:
            zb = (b - fit.mean) / fit.sd
            # E[X | X <= b] = mu - sigma phi(zb) / Phi(zb)
            mids[0] = fit.mean - fit.sd * math.exp(-0.5 * zb * zb - special.log_ndtr(zb)) / math.sqrt(2 * math.pi)
        if h.counts[0] > 0:
            open_used.append(0)
    if not closed[-1]:
        a = e[-2]
        if fit is None:
            mids[-1] = a
        else:
            za = (a - fit.mean) / fit.sd
            # E[X | X > a] = mu + sigma phi(za) / (1 - Phi(za))
            mids[-1] = fit.mean + fit.sd * math.exp(-0.5 * za * za - special.log_ndtr(-za)) / math.sqrt(2 * math.pi)
        if h.counts[-1] > 0:
            open_used.append(h.counts.size - 1)
    return mids, open_used


@dataclass(frozen=True)
class BinnedMoments:
    moments: Moments
    sheppard_applied: bool
    notices: tuple[Notice, ...]


def _truncated_moments(fit: NormalFit, lo: float, hi: float, centre: float) -> np.ndarray:
    """E[(X - centre)^k], k = 1..4, for X normal (fit) restricted to (lo, hi].

    Raw moments of the standard normal truncated to [a, b] by the recursion
    M_k = (k-1) M_(k-2) + (a^(k-1) phi(a) - b^(k-1) phi(b)) / Z, shifted and scaled.
    """
    a, b = (lo - fit.mean) / fit.sd, (hi - fit.mean) / fit.sd
    z = float(special.ndtr(b) - special.ndtr(a)) if a < 0 else float(special.ndtr(-a) - special.ndtr(-b))
    z = max(z, 1e-300)

    def edge(x: float, k: int) -> float:
        return 0.0 if math.isinf(x) else x ** (k - 1) * math.exp(-0.5 * x * x) / math.sqrt(2.0 * math.pi)

    m = [1.0, (edge(a, 1) - edge(b, 1)) / z]
    for k in range(2, 5):
        m.append((k - 1) * m[k - 2] + (edge(a, k) - edge(b, k)) / z)
    shift = (fit.mean - centre) / fit.sd
    out = np.empty(4)
    for k in range(1, 5):
        out[k - 1] = fit.sd**k * sum(math.comb(k, j) * m[j] * shift ** (k - j) for j in range(k + 1))
    return out


def binned_moments(h: Histogram, fit: NormalFit, sheppard: bool) -> BinnedMoments:
    """Moments of the binned data: closed bins from their midpoints, optionally with
    Sheppard's corrections ([1]; [2]: m2 - h^2/12 and m4 - h^2 m2 / 2 + 7 h^4 / 240, for
    equal widths, scaled by the closed bins' share); an open-ended bin contributes the
    fitted normal's own conditional moments within it, not a point."""
    points, open_used = _representatives(h, fit)
    n = h.n
    w = h.counts / n
    e = h.edges
    mean = float(np.dot(w, points))
    closed = np.ones(h.counts.size, dtype=bool)
    closed[open_used] = False
    d = points[closed] - mean
    wc = w[closed]
    m2, m3, m4 = float(np.dot(wc, d**2)), float(np.dot(wc, d**3)), float(np.dot(wc, d**4))
    for i in open_used:
        _, c2, c3, c4 = _truncated_moments(fit, e[i], e[i + 1], mean)
        m2, m3, m4 = m2 + w[i] * c2, m3 + w[i] * c3, m4 + w[i] * c4
    notices = []
    if open_used:
        held = int(sum(h.counts[i] for i in open_used))
        notices.append(Notice(
            "open-bins-modelled",
            f"{held} values lie in open-ended bins; their contribution to the moments is the fitted normal's tail "
            "within those bins, so the binned shape leans towards normal there",
        ))
    applied = False
    if sheppard:
        used = (h.counts > 0) & closed
        widths = h.widths[used]
        share = float(w[closed].sum())
        if widths.size and np.allclose(widths, widths[0], rtol=1e-9, atol=0):
            width = float(widths[0])
            m2_c = m2 - share * width * width / 12.0  # [2] 3.18, from the grouped m2
            if m2_c > 0:
                m4 = m4 - share * (width * width * m2 / 2.0 - 7.0 * width**4 / 240.0)  # [2] 3.18, grouped m2
                m2 = m2_c
                applied = True
            else:
                notices.append(Notice("sheppard-not-applied", "the bins are too wide for Sheppard's correction: it would make the variance negative"))
        else:
            notices.append(Notice("sheppard-not-applied", "Sheppard's correction needs bins of equal width; the bins holding counts differ"))
    if m2 <= 0:
        raise InvalidHistogram("all counts fall in one bin: the histogram has no spread to describe", pointer="/histogram/counts")
    g1 = m3 / m2**1.5 if n >= 3 else None
    g2 = m4 / (m2 * m2) - 3.0 if n >= 4 else None
    return BinnedMoments(Moments(n=n, mean=mean, m2=m2, g1=g1, g2=g2), applied, tuple(notices))


def binned_quantile(h: Histogram, p: float) -> float | Unavailable:
    """Grouped-data quantile: linear interpolation of the cumulative counts within a bin."""
    target = p * h.n
    cum = np.concatenate([[0.0], np.cumsum(h.counts)])
    i = int(np.searchsorted(cum, target, side="left")) - 1
    i = min(max(i, 0), h.counts.size - 1)
    while h.counts[i] == 0 and i < h.counts.size - 1:
        i += 1
    a, b = h.edges[i], h.edges[i + 1]
    if not (math.isfinite(a) and math.isfinite(b)):
        return Unavailable(f"the {p:g} quantile falls in an open-ended bin")
    return float(a + (target - cum[i]) / h.counts[i] * (b - a))


def binned_cdf(h: Histogram, x: float) -> float | Unavailable:
    """Share of the counts at or below x, interpolating linearly within a bin."""
    e = h.edges
    if x <= e[0]:
        return 0.0
    if x >= e[-1]:
        return 1.0
    i = int(np.searchsorted(e, x, side="right")) - 1
    a, b = e[i], e[i + 1]
    below = float(h.counts[:i].sum())
    if h.counts[i] == 0:
        return below / h.n
    if not (math.isfinite(a) and math.isfinite(b)):
        return Unavailable(f"{x:.6g} falls in an open-ended bin")
    return (below + h.counts[i] * (x - a) / (b - a)) / h.n


def binned_share(h: Histogram, lo: float, hi: float) -> float | Unavailable:
    """Share of the counts in [lo, hi] by :func:`binned_cdf`."""
    upper, lower = binned_cdf(h, hi), binned_cdf(h, lo)
    for end in (upper, lower):
        if isinstance(end, Unavailable):
            return end
    return upper - lower


def extreme_bin(h: Histogram, lowest: bool) -> str:
    """The first (or last) bin holding counts, written as an interval."""
    held = np.flatnonzero(h.counts > 0)
    i = int(held[0] if lowest else held[-1])
    return f"[{h.edges[i]:g}, {h.edges[i + 1]:g}]"


def binned_mode(h: Histogram) -> float | Unavailable:
    """Midpoint of the highest-density closed bin, refined by a parabola through its own
    and its neighbours' densities (count / width) and kept inside the bin."""
    closed = np.isfinite(h.edges[:-1]) & np.isfinite(h.edges[1:])
    if not closed.any():
        return Unavailable("no closed bin")
    density = np.where(closed, h.counts / np.where(closed, h.widths, 1.0), -1.0)
    i = int(np.argmax(density))
    mids = 0.5 * (h.edges[:-1] + h.edges[1:])
    if 0 < i < h.counts.size - 1 and closed[i - 1] and closed[i + 1]:
        x = mids[i - 1 : i + 2]
        y = density[i - 1 : i + 2]
        coef = np.polyfit(x, y, 2)
        if coef[0] < 0:
            vertex = -coef[1] / (2.0 * coef[0])
            return float(min(max(vertex, h.edges[i]), h.edges[i + 1]))
    return float(mids[i])
