"""Seeded samples and open data sets shared by the statistics-layer tests.

Every random sample comes from ``np.random.default_rng(seed)`` with a fixed seed, so
each test sees the same numbers on every run. The data sets ship inside installed
packages (no network):

* ``diabetes``: scikit-learn's diabetes data, the target (a measure of disease
  progression one year after baseline), n=442 (``sklearn.datasets.load_diabetes``).
* ``iris_sepal_length``: Fisher's iris data, sepal length in cm, n=150, recorded to
  0.1 cm, so heavily tied (``sklearn.datasets.load_iris``).
* ``nile``: annual flow of the Nile at Aswan 1871-1970, n=100
  (``statsmodels.datasets.nile``).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np


def normal(n: int, seed: int, loc: float = 0.0, scale: float = 1.0) -> np.ndarray:
    return np.random.default_rng(seed).normal(loc, scale, size=n)


def lognormal(n: int, seed: int, sigma: float = 0.5) -> np.ndarray:
    return np.random.default_rng(seed).lognormal(0.0, sigma, size=n)


def uniform(n: int, seed: int) -> np.ndarray:
    return np.random.default_rng(seed).uniform(size=n)


def student_t(n: int, seed: int, df: float = 3.0) -> np.ndarray:
    return np.random.default_rng(seed).standard_t(df, size=n)


def gamma(n: int, seed: int, shape: float) -> np.ndarray:
    return np.random.default_rng(seed).gamma(shape, size=n)


@lru_cache(maxsize=None)
def _diabetes() -> np.ndarray:
    from sklearn.datasets import load_diabetes

    return np.asarray(load_diabetes().target, dtype=np.float64)


@lru_cache(maxsize=None)
def _iris_sepal_length() -> np.ndarray:
    from sklearn.datasets import load_iris

    return np.asarray(load_iris().data[:, 0], dtype=np.float64)


@lru_cache(maxsize=None)
def _nile() -> np.ndarray:
    from statsmodels.datasets import nile

    return np.asarray(nile.load_pandas().data["volume"], dtype=np.float64)


def diabetes() -> np.ndarray:
    return _diabetes().copy()


def iris_sepal_length() -> np.ndarray:
    return _iris_sepal_length().copy()


def nile() -> np.ndarray:
    return _nile().copy()


# Named samples for parametrised reference tests: several shapes and sizes, and the
# data sets above.
NAMED = {
    "normal_n12": lambda: normal(12, 105),
    "normal_n50": lambda: normal(50, 101, loc=10.0, scale=2.0),
    "lognormal_n40": lambda: lognormal(40, 102),
    "uniform_n100": lambda: uniform(100, 103),
    "t3_n200": lambda: student_t(200, 104),
    "lognormal_n500": lambda: lognormal(500, 106, sigma=1.0),
    "diabetes": diabetes,
    "iris_sepal_length": iris_sepal_length,
    "nile": nile,
}


def named(name: str) -> np.ndarray:
    return NAMED[name]()
