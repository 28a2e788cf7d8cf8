"""Seeded samples and reference computations shared by the modality tests.

Every random sample comes from ``np.random.default_rng(seed)`` with a fixed seed. The
reference computations here use only numpy, scipy and scikit-learn (nothing from
``service``), so the tests can set them against the service's numbers:

* ``log_likelihood``: the log-likelihood of raw values under a normal mixture, summed
  from ``scipy.stats.norm.logpdf`` with ``scipy.special.logsumexp`` (no underflow);
* ``grid_extrema``: modes and antimodes of a normal mixture density by brute force on
  a dense grid of its log-density (``scipy.stats.norm.logpdf``), refined to the grid
  step;
* ``sklearn_fit``: ``sklearn.mixture.GaussianMixture`` with several seeded starts, a
  small tolerance, many iterations and a tiny ``reg_covar``.

The open data set (no network): Fisher's iris data shipped with scikit-learn
(``sklearn.datasets.load_iris``); the petal length is clearly bimodal because the 50
setosa flowers have petals of 1.0-1.9 cm and the 100 versicolor and virginica flowers
petals of 3.0-6.9 cm, with no flower in between (Fisher 1936; the gap is checked from
the species labels in ``iris_petal_length_groups``).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy import special, stats

from .samples import gamma, lognormal, normal, uniform  # noqa: F401 (normal: used as ms.normal)


@dataclass(frozen=True)
class Comp:
    """A normal component, independent of the service's own ``Component``."""

    weight: float
    mean: float
    sd: float


# ----------------------------------------------------------------------- samples


def mixture(n: int, seed: int, comps: tuple[Comp, ...]) -> np.ndarray:
    """n values from the mixture, with the counts per component fixed (weights * n,
    the last one taking the remainder), drawn in component order and then shuffled."""
    rng = np.random.default_rng(seed)
    counts = [int(round(c.weight * n)) for c in comps[:-1]]
    counts.append(n - sum(counts))
    x = np.concatenate([rng.normal(c.mean, c.sd, size=m) for c, m in zip(comps, counts)])
    return rng.permutation(x)


ONE = (Comp(1.0, 0.0, 1.0),)
TWO = (Comp(0.5, 0.0, 1.0), Comp(0.5, 6.0, 1.0))  # 6 sd apart
THREE = (Comp(1 / 3, 0.0, 1.0), Comp(1 / 3, 7.0, 1.0), Comp(1 / 3, 14.0, 1.0))  # 7 sd apart
UNEVEN = (Comp(0.4, 0.0, 1.0), Comp(0.6, 4.0, 1.5))  # unequal weights and sds, 3.1 pooled sd apart
# Three tight groups, each 6 sd from its neighbour, but with one gap 13 times the other.
FAR_AND_NEAR = (Comp(1 / 3, 0.0, 1.0), Comp(1 / 3, 80.0, 1.0), Comp(1 / 3, 86.0, 1.0))

CLEAR = {"one": ONE, "two": TWO, "three": THREE}


def clear(name: str, n: int, seed: int) -> np.ndarray:
    return mixture(n, seed, CLEAR[name])


SKEWED = {
    "lognormal_0.5": lambda n, seed: lognormal(n, seed, 0.5),
    "lognormal_1": lambda n, seed: lognormal(n, seed, 1.0),
    "gamma_2": lambda n, seed: gamma(n, seed, 2.0),
    "gamma_8": lambda n, seed: gamma(n, seed, 8.0),
    "uniform": uniform,
}


@lru_cache(maxsize=None)
def _iris():
    from sklearn.datasets import load_iris

    data = load_iris()
    return np.asarray(data.data[:, 2], dtype=np.float64), np.asarray(data.target)


def iris_petal_length() -> np.ndarray:
    return _iris()[0].copy()


def iris_petal_length_groups() -> tuple[np.ndarray, np.ndarray]:
    """Petal lengths of the setosa flowers and of the other two species."""
    x, target = _iris()
    return x[target == 0].copy(), x[target != 0].copy()


# ------------------------------------------------------------------- references


def log_likelihood(x: np.ndarray, comps) -> float:
    """sum_i log sum_j w_j phi((x_i - mu_j) / sd_j) / sd_j, from scipy.stats.norm.logpdf."""
    x = np.asarray(x, dtype=np.float64)
    terms = np.stack([np.log(c.weight) + stats.norm.logpdf(x, c.mean, c.sd) for c in comps])
    return float(special.logsumexp(terms, axis=0).sum())


def grid_extrema(comps, points: int = 400_001):
    """Local maxima and minima of the mixture density by brute force: the log-density
    (scipy.stats.norm.logpdf, logsumexp) on a uniform grid from 3 sds below the lowest
    mean to 3 sds above the highest; an interior grid point higher (lower) than both
    neighbours is a mode (antimode), then refined by a second grid of the same size
    over the two neighbouring cells. Returns ``(modes, antimodes, tol)``: arrays of
    positions and their accuracy, two fine steps plus 1e-7 sd (near a maximum the
    density is flat to rounding within about sqrt(eps) = 1.5e-8 sd, common numerics)."""
    lo = min(c.mean - 3 * c.sd for c in comps)
    hi = max(c.mean + 3 * c.sd for c in comps)

    def logf(x):
        return special.logsumexp(np.stack([np.log(c.weight) + stats.norm.logpdf(x, c.mean, c.sd) for c in comps]), axis=0)

    x = np.linspace(lo, hi, points)
    f = logf(x)
    inner = slice(1, -1)
    peaks = np.flatnonzero((f[inner] > f[:-2]) & (f[inner] >= f[2:])) + 1
    troughs = np.flatnonzero((f[inner] < f[:-2]) & (f[inner] <= f[2:])) + 1
    step = x[1] - x[0]

    def refine(i, sign):
        fine = np.linspace(x[i - 1], x[i + 1], 20_001)
        return fine[np.argmax(sign * logf(fine))]

    modes = np.array([refine(i, 1.0) for i in peaks])
    antimodes = np.array([refine(i, -1.0) for i in troughs])
    return modes, antimodes, 2 * (2 * step / 20_000) + 1e-7 * max(c.sd for c in comps)


def mixture_density(x, comps) -> np.ndarray:
    """The density itself, from scipy.stats.norm.pdf."""
    return sum(c.weight * stats.norm.pdf(x, c.mean, c.sd) for c in comps)


def sklearn_fit(x: np.ndarray, k: int, n_init: int = 3, tol: float = 1e-6, max_iter: int = 500, seed: int = 0, **init):
    """sklearn.mixture.GaussianMixture on the raw values; ConvergenceWarning filtered
    (an overfitted k converges slowly; the fit is still the reference optimum found)."""
    from sklearn.exceptions import ConvergenceWarning
    from sklearn.mixture import GaussianMixture

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConvergenceWarning)
        gm = GaussianMixture(k, n_init=n_init, tol=tol, max_iter=max_iter, reg_covar=1e-12, random_state=seed, **init)
        gm.fit(np.asarray(x, dtype=np.float64)[:, None])
    return gm


def sklearn_components(gm) -> tuple[Comp, ...]:
    order = np.argsort(gm.means_[:, 0])
    return tuple(Comp(float(gm.weights_[j]), float(gm.means_[j, 0]), float(np.sqrt(gm.covariances_[j, 0, 0]))) for j in order)


def sklearn_log_likelihood(gm, x: np.ndarray) -> float:
    """GaussianMixture.score is the mean log-likelihood per value."""
    return float(gm.score(np.asarray(x, dtype=np.float64)[:, None]) * x.size)
