"""Univariate Gaussian mixtures by EM, k = 1..K, selected by BIC.

Data are standardised before fitting (the fit is then scale-free and the variance
floor means the same thing for every sample). Each k gets several deterministic
starts: one from quantiles and the rest k-means++-style, seeded from the request's
seed. Every fit has a variance floor, an iteration cap and a tolerance; a start whose
components collapse is dropped, and k = 1 (which has a closed form) is always there to
fall back on.

Large samples are fitted on a weighted compression: the standardised values are pooled
into cells of width ``grid_step``, each cell keeping its count and the exact first and
second moments of its values, so the M-step is exact and pooling costs only the
responsibilities held constant within a cell. Histograms enter the same way, bins as
weighted midpoints with the uniform-within-bin spread ``width^2 / 12`` (Sheppard).

When a larger k ends below a smaller one (EM stuck at a poorer optimum), it is restarted
from the smaller fit with its widest component split, so the candidates stay nested.

BIC = -2 log L + (3k - 1) log n. Selection walks up from k = 1: a larger k replaces the
one selected so far only when its BIC is lower by more than 2 (differences below 2 are
"not worth more than a bare mention", Kass & Raftery 1995), so near-ties go to the
simpler model.

References
----------
.. [1] Dempster, A. P., Laird, N. M. and Rubin, D. B. (1977). Maximum likelihood from
       incomplete data via the EM algorithm. *JRSS B* 39(1), 1-38.
.. [2] McLachlan, G. J. and Peel, D. (2000). *Finite Mixture Models*. Wiley. Ch. 2-3.
.. [3] Schwarz, G. (1978). Estimating the dimension of a model. *Annals of Statistics*
       6(2), 461-464. doi:10.1214/aos/1176344136
.. [4] Kass, R. E. and Raftery, A. E. (1995). Bayes factors. *JASA* 90(430), 773-795.
       doi:10.1080/01621459.1995.10476572
.. [7] Varadhan, R. and Roland, C. (2008). Simple and globally convergent methods for
       accelerating the convergence of any EM algorithm. *Scandinavian Journal of
       Statistics* 35(2), 335-353. doi:10.1111/j.1467-9469.2007.00585.x
.. [6] Biernacki, C., Celeux, G. and Govaert, G. (2003). Choosing starting values for
       the EM algorithm for getting the highest likelihood in multivariate Gaussian
       mixture models. *Computational Statistics & Data Analysis* 41(3-4), 561-575.
       doi:10.1016/S0167-9473(02)00163-9
.. [5] Arthur, D. and Vassilvitskii, S. (2007). k-means++: the advantages of careful
       seeding. *Proc. 18th ACM-SIAM SODA*, 1027-1035.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, replace

import numpy as np

LOG_SQRT_2PI = 0.5 * math.log(2.0 * math.pi)
BIC_TIE_BAND = 2.0  # [4]: differences below 2 are not worth more than a bare mention
VARIANCE_FLOOR = 1e-4  # in standardised units: an sd of 1% of the sample's sd
MIN_WEIGHT = 1e-3  # a component with less weight than this has collapsed


@dataclass(frozen=True)
class MixtureOptions:
    max_components: int = 4
    starts: int = 4
    max_iterations: int = 100
    short_iterations: int = 8
    tolerance: float = 1e-3  # stop when an iteration gains less than this in log-likelihood
    tolerance_per_value: float = 1e-8  # ... plus this much per value (1e-2 at n = 10^6)
    seed: int = 0
    compress_above: int = 500
    grid_step: float = 0.05  # standardised units: cells of a twentieth of an sd
    time_limit: float = 10.0  # seconds for the whole fit; a safety net, flagged when hit


@dataclass(frozen=True)
class Component:
    weight: float
    mean: float
    sd: float


@dataclass(frozen=True)
class Candidate:
    k: int
    log_likelihood: float
    bic: float
    converged: bool
    iterations: int


@dataclass(frozen=True)
class MixtureFit:
    components: tuple[Component, ...]  # sorted by mean, original scale
    candidates: tuple[Candidate, ...]
    selected_k: int
    compressed: bool
    points: int  # weighted points the EM ran on
    timed_out: bool
    fits: dict  # k -> components of the best fit with k components (sorted by mean)


@dataclass(frozen=True, eq=False)
class Weighted:
    """Standardised points with weights and, per point, the exact sums of the offsets
    ``s1 = sum(x - y)`` and squared offsets ``s2 = sum((x - y)^2)`` of the values it
    stands for (zero for raw values; ``w h^2 / 12`` in s2 for a histogram bin of width
    h, the uniform-within-bin assumption of Sheppard's correction)."""

    y: np.ndarray
    w: np.ndarray
    s1: np.ndarray
    s2: np.ndarray
    n: float
    centre: float
    scale: float
    compressed: bool


def weighted_from_sorted(sorted_values: np.ndarray, centre: float, scale: float, options: MixtureOptions) -> Weighted:
    """Standardise; above ``compress_above`` values, pool them into cells of width
    ``grid_step`` keeping each cell's exact first and second moments (one pass)."""
    y = (sorted_values - centre) / scale
    n = y.size
    if n <= options.compress_above:
        zeros = np.zeros(n)
        return Weighted(y, np.ones(n), zeros, zeros, float(n), centre, scale, False)
    step = options.grid_step
    index = np.rint(y / step)
    u = y - index * step  # each value's offset from its cell's point
    # Sorted input: cells are runs of equal index; sums over runs by reduceat.
    starts = np.flatnonzero(np.concatenate([[True], index[1:] != index[:-1]]))
    points = index[starts] * step
    weights = np.diff(np.append(starts, n)).astype(np.float64)
    s1 = np.add.reduceat(u, starts)
    s2 = np.add.reduceat(u * u, starts)
    return Weighted(points, weights, s1, s2, float(n), centre, scale, True)


def weighted_from_bins(edges: np.ndarray, counts: np.ndarray, centre: float, scale: float) -> Weighted:
    """Bins as weighted midpoints with the uniform-within-bin spread w h^2 / 12; open
    outer bins sit at their finite edge with no spread."""
    e = edges.copy()
    widths = np.diff(e)
    mids = 0.5 * (e[:-1] + e[1:])
    if not math.isfinite(e[0]):
        mids[0], widths[0] = e[1], 0.0
    if not math.isfinite(e[-1]):
        mids[-1], widths[-1] = e[-2], 0.0
    keep = counts > 0
    w = counts[keep].astype(np.float64)
    h = widths[keep] / scale
    return Weighted((mids[keep] - centre) / scale, w, np.zeros(w.size), w * h * h / 12.0,
                    float(counts.sum()), centre, scale, True)


def _step(data: Weighted, moments: np.ndarray, weights, means, variances, used):
    """One EM step for F fits at once ([1]; [2], ch. 2).

    Returns the log-likelihood (at the points) of the parameters given, the updated
    parameters, and which fits collapsed. The M-step needs, per component, sums over the
    points of r times w, w y, w y^2, s1, s1 y and s2 (``moments``, P x 6): one matrix
    product gives all of them, and the exact cell moments s1 and s2 make the variance
    update exact for pooled points.
    """
    y = data.y
    lw = np.where(used, np.log(np.where(used, weights, 1.0)), -np.inf)
    lp = y[None, :, None] - means[:, None, :]
    lp *= lp
    lp *= (-0.5 / variances)[:, None, :]
    lp += (lw - 0.5 * np.log(variances))[:, None, :]
    top = lp.max(axis=2, keepdims=True)
    lp -= top
    np.exp(lp, out=lp)
    norm = lp.sum(axis=2, keepdims=True)
    ll = (top[..., 0] + np.log(norm[..., 0])) @ data.w - data.w.sum() * LOG_SQRT_2PI
    lp /= norm  # responsibilities
    a = np.matmul(lp.transpose(0, 2, 1), moments)  # (F, K, 6)
    mass = a[..., 0]
    share = mass / data.w.sum()
    bad = ((share < MIN_WEIGHT) & used).any(axis=1)
    safe = np.where(mass > 0, mass, 1.0)
    mu = (a[..., 1] + a[..., 3]) / safe
    # sum of (x - mu)^2 = w (y - mu)^2 + 2 (y - mu) s1 + s2, expanded in the sums above
    second = a[..., 2] - 2 * mu * a[..., 1] + mu * mu * mass + 2 * (a[..., 4] - mu * a[..., 3]) + a[..., 5]
    var = np.maximum(second / safe, VARIANCE_FLOOR)
    return ll, np.where(used, share, 0.0), np.where(used, mu, 0.0), np.where(used, var, 1.0), bad


def _moments(data: Weighted) -> np.ndarray:
    y, w, s1, s2 = data.y, data.w, data.s1, data.s2
    return np.stack([w, w * y, w * y * y, s1, s1 * y, s2], axis=1)


def _project(weights, means, variances, used):
    """Bring extrapolated parameters back into the parameter space."""
    weights = np.where(used, np.maximum(weights, MIN_WEIGHT), 0.0)
    weights /= weights.sum(axis=1, keepdims=True)
    return weights, np.where(used, means, 0.0), np.where(used, np.maximum(variances, VARIANCE_FLOOR), 1.0)


def _em_batch(data: Weighted, weights: np.ndarray, means: np.ndarray, variances: np.ndarray,
              options: MixtureOptions, deadline: float, accelerate: bool = True):
    """EM for F fits at once, each with up to K components, accelerated by SQUAREM.

    ``weights``, ``means``, ``variances`` are (F, K); a fit with fewer components has
    weight 0 in the unused columns. Responsibilities are taken at each point; the M-step
    uses the exact moments of the values a point stands for (``s1``, ``s2``). With
    ``accelerate`` each cycle takes two EM steps, extrapolates along them (the S3 scheme
    of Varadhan & Roland 2008, step length at least 1) and takes one EM step from there,
    falling back to the plain second step when the extrapolation lost likelihood; EM's
    slow crawl on flat likelihoods shortens several-fold. Fits that have converged (or
    collapsed) leave the batch. Iterations count EM steps, capped by ``max_iterations``.
    Returns per-fit log-likelihood at the points, parameters, converged flags, iteration
    counts and a collapsed mask.
    """
    moments = _moments(data)
    tol = options.tolerance + options.tolerance_per_value * data.w.sum()
    fits = weights.shape[0]
    weights, means, variances = weights.copy(), means.copy(), variances.copy()
    used = weights > 0
    log_lik = np.full(fits, -np.inf)
    iterations = np.zeros(fits, dtype=np.int64)
    converged = np.zeros(fits, dtype=bool)
    collapsed = np.zeros(fits, dtype=bool)
    live = np.arange(fits)
    steps = 0
    previous = np.full(fits, -np.inf)
    while steps < options.max_iterations and live.size:
        u = used[live]
        t0 = (weights[live], means[live], variances[live])
        ll0, *t1, bad = _step(data, moments, *t0, u)
        steps += 1
        log_lik[live] = ll0
        iterations[live] = steps
        done = ll0 - previous[live] <= tol
        collapsed[live[bad]] = True
        converged[live[done & ~bad]] = True
        previous[live] = ll0
        keep = ~done & ~bad
        if time.monotonic() > deadline:
            keep[:] = False
        if not accelerate or steps + 2 > options.max_iterations:
            weights[live[keep]], means[live[keep]], variances[live[keep]] = (p[keep] for p in t1)
            live = live[keep]
            continue
        live, u = live[keep], u[keep]
        if not live.size:
            break
        t0 = tuple(p[keep] for p in t0)
        t1 = tuple(p[keep] for p in t1)
        ll1, *t2, bad2 = _step(data, moments, *t1, u)
        steps += 1
        r = [b - a for a, b in zip(t0, t1)]
        v = [c - 2 * b + a for a, b, c in zip(t0, t1, t2)]
        rn = np.sqrt(sum((x * x).sum(axis=1) for x in r))
        vn = np.sqrt(sum((x * x).sum(axis=1) for x in v))
        alpha = np.minimum(-rn / np.where(vn > 0, vn, np.inf), -1.0)[:, None]
        tp = _project(*[a - 2 * alpha * ri + alpha * alpha * vi for a, ri, vi in zip(t0, r, v)], u)
        llp, *t3, bad3 = _step(data, moments, *tp, u)
        steps += 1
        # Keep the extrapolated path only where it did not lose likelihood against the
        # plain second step's starting point (EM never does).
        good = (llp >= ll1) & ~bad3
        for dest, new, plain in zip((weights, means, variances), t3, t2):
            dest[live] = np.where(good[:, None], new, plain)
        previous[live] = np.maximum(ll1, np.where(good, llp, -np.inf))
        iterations[live] = steps
    return log_lik, weights, means, variances, converged, iterations, collapsed


def exact_log_likelihood(data: Weighted, weights, means, variances) -> float:
    """Log-likelihood of the values the points stand for, for one fit.

    Uncompressed: the plain sum of log densities. Pooled: log f expanded to second order
    about each point, sum log f(x) = w log f(y) + g s1 + g' s2 / 2 with g = (log f)' and
    g' = (log f)'' = f''/f - (f'/f)^2 at y, using the exact sums s1 and s2 (error of
    third order in the cell width).
    """
    y = data.y
    d = y[:, None] - means[None, :]
    dens = weights[None, :] * np.exp(-0.5 * d * d / variances[None, :]) / np.sqrt(variances)[None, :]
    f = np.maximum(dens.sum(axis=1), np.finfo(float).tiny)
    f1 = (dens * (-d / variances[None, :])).sum(axis=1)
    f2 = (dens * (d * d / variances[None, :] ** 2 - 1.0 / variances[None, :])).sum(axis=1)
    slope = f1 / f
    curvature = f2 / f - slope * slope
    log_f = np.log(f) - LOG_SQRT_2PI
    return float(np.dot(data.w, log_f) + np.dot(slope, data.s1) + 0.5 * np.dot(curvature, data.s2))


def _from_centres(data: Weighted, centres: np.ndarray):
    """Weights and variances of the points nearest each centre (one k-means assignment
    step), so a start's components are as narrow as the groups they start on."""
    y, w = data.y, data.w
    nearest = np.argmin(np.abs(y[:, None] - centres[None, :]), axis=1)
    k = centres.size
    mass = np.bincount(nearest, weights=w, minlength=k)
    total = w.sum()
    spread = np.bincount(nearest, weights=w * (y - centres[nearest]) ** 2 + data.s2, minlength=k)
    variances = np.where(mass > 0, spread / np.where(mass > 0, mass, 1.0), 1.0)
    weights = np.maximum(mass / total, 1.0 / (10.0 * k))
    return weights / weights.sum(), centres, np.maximum(variances, VARIANCE_FLOOR)


def _starts(data: Weighted, k: int, options: MixtureOptions):
    """Deterministic starts: quantiles of the weighted points, then k-means++ seeds ([5]),
    each with the weights and variances of the points nearest its centres."""
    y, w = data.y, data.w
    cum = np.cumsum(w) / w.sum()
    probs = (np.arange(k) + 0.5) / k
    means = y[np.minimum(np.searchsorted(cum, probs), y.size - 1)].astype(float)
    if np.unique(means).size == k:
        yield _from_centres(data, means)
    rng = np.random.default_rng([options.seed, k])
    for _ in range(options.starts - 1):
        centres = [y[rng.choice(y.size, p=w / w.sum())]]
        for _ in range(k - 1):
            d2 = np.min((y[:, None] - np.array(centres)[None, :]) ** 2, axis=1) * w
            if d2.sum() <= 0:
                break
            centres.append(y[rng.choice(y.size, p=d2 / d2.sum())])
        if len(centres) < k:
            continue
        yield _from_centres(data, np.sort(np.array(centres, dtype=float)))


def fit_mixtures(data: Weighted, options: MixtureOptions = MixtureOptions()) -> MixtureFit:
    """Fit k = 1..max_components from every start in one batch and select by BIC."""
    n = data.n
    K = options.max_components
    ks, rows = [], []
    for k in range(1, K + 1):
        for start in ([_one_component(data)] if k == 1 else _starts(data, k, options)):
            w0, m0, v0 = (np.zeros(K), np.zeros(K), np.ones(K))
            w0[:k], m0[:k], v0[:k] = start
            ks.append(k)
            rows.append((w0, m0, v0))
    weights, means, variances = (np.array([r[j] for r in rows]) for j in range(3))
    deadline = time.monotonic() + options.time_limit
    ks = np.array(ks)
    # Short runs from every start, then only the best start of each k runs on
    # (the "short EM" strategy of Biernacki, Celeux & Govaert 2003).
    short = replace(options, max_iterations=options.short_iterations)
    log_lik, weights, means, variances, converged, iterations, collapsed = _em_batch(
        data, weights, means, variances, short, deadline, accelerate=False)
    best = [int(rows_k[np.argmax(log_lik[rows_k])]) for k in range(1, K + 1)
            if (rows_k := np.flatnonzero((ks == k) & ~collapsed)).size]
    ks = ks[best]
    rest = replace(options, max_iterations=max(1, options.max_iterations - options.short_iterations))
    log_lik, weights, means, variances, converged, more, collapsed = _em_batch(
        data, weights[best], means[best], variances[best], rest, deadline)
    iterations = iterations[best] + more
    _nest(data, ks, log_lik, weights, means, variances, converged, iterations, options, deadline)
    timed_out = time.monotonic() > deadline
    log_scale = math.log(data.scale)
    candidates: list[Candidate] = []
    fits: dict[int, tuple[Component, ...]] = {}
    for f, k in enumerate(ks):
        k = int(k)
        w, mu, var = weights[f, :k], means[f, :k], variances[f, :k]
        ll = exact_log_likelihood(data, w, mu, var) - n * log_scale
        candidates.append(Candidate(k, ll, -2.0 * ll + (3 * k - 1) * math.log(n), bool(converged[f]), int(iterations[f])))
        order = np.argsort(mu, kind="stable")
        fits[k] = tuple(
            Component(float(w[j]), float(data.centre + data.scale * mu[j]), float(data.scale * math.sqrt(var[j])))
            for j in order
        )
    selected = candidates[0]
    for cand in candidates[1:]:
        if cand.bic < selected.bic - BIC_TIE_BAND:
            selected = cand
    return MixtureFit(fits[selected.k], tuple(candidates), selected.k, data.compressed, int(data.y.size), timed_out, fits)


def _nest(data: Weighted, ks, log_lik, weights, means, variances, converged, iterations, options, deadline) -> None:
    """Make the candidates nested: a fit with k components contains every fit with k - 1
    (one component of weight zero), so its maximum likelihood is at least as high. When
    EM from the k-starts ended lower, restart it from the (k-1)-fit with its widest
    component split in two (means +- sd/2, variances 3/4, weights halved) and keep the
    better of the two. Rows are updated in place."""
    row = {int(k): i for i, k in enumerate(ks)}
    for k in sorted(row)[1:]:
        i, j = row[k], row.get(k - 1)
        if j is None or log_lik[i] >= log_lik[j]:
            continue
        w, mu, var = weights[j, : k - 1], means[j, : k - 1], variances[j, : k - 1]
        wide = int(np.argmax(var))
        sd = math.sqrt(var[wide])
        w0, m0, v0 = np.zeros(weights.shape[1]), np.zeros(weights.shape[1]), np.ones(weights.shape[1])
        w0[:k] = np.concatenate([np.delete(w, wide), [w[wide] / 2, w[wide] / 2]])
        m0[:k] = np.concatenate([np.delete(mu, wide), [mu[wide] - sd / 2, mu[wide] + sd / 2]])
        v0[:k] = np.concatenate([np.delete(var, wide), [0.75 * var[wide]] * 2])
        ll, w1, m1, v1, conv, its, dead = _em_batch(data, w0[None], m0[None], v0[None], options, deadline)
        if not dead[0] and ll[0] > log_lik[i]:
            log_lik[i], weights[i], means[i], variances[i] = ll[0], w1[0], m1[0], v1[0]
            # The reported iterations are those of the path that produced the fit.
            converged[i], iterations[i] = conv[0], its[0]


def _one_component(data: Weighted):
    total = data.w.sum()
    mean = float((np.dot(data.w, data.y) + data.s1.sum()) / total)
    dev = data.y - mean
    var = float((np.dot(data.w, dev * dev) + 2.0 * np.dot(dev, data.s1) + data.s2.sum()) / total)
    return np.ones(1), np.array([mean]), np.array([max(var, VARIANCE_FLOOR)])
