"""The straightforward stack the performance targets are measured against.

What a careful engineer would write first with the reference libraries and no special
effort: Flask's own JSON, ``numpy.asarray``, the scipy.stats tests, statsmodels'
Lilliefors, scikit-learn's GaussianMixture for k = 1..4 with BIC (its defaults), the
diptest package, and Flask's ``jsonify``. It computes the same kinds of numbers as
shapegauge's endpoints, so the ratio is like for like. ``/floor`` parses the body with
orjson and sorts the values: the floor any implementation pays.

    gunicorn -c docker/gunicorn.conf.py "tests.benchmarks.straightforward:create_app()"
"""

from __future__ import annotations

import warnings

import diptest
import numpy as np
import orjson
from flask import Flask, jsonify, request
from scipy import stats
from sklearn.exceptions import ConvergenceWarning
from sklearn.mixture import GaussianMixture
from statsmodels.stats.diagnostic import lilliefors


def describe(x: np.ndarray) -> dict:
    q1, med, q3 = np.percentile(x, [25, 50, 75])
    kde = stats.gaussian_kde(x) if x.size <= 20_000 else stats.gaussian_kde(x[:: max(1, x.size // 20_000)])
    grid = np.linspace(x.min(), x.max(), 512)
    return {
        "mean": float(np.mean(x)), "median": float(med), "mode": float(grid[np.argmax(kde(grid))]),
        "sd": float(np.std(x, ddof=1)), "min": float(x.min()), "max": float(x.max()), "q1": float(q1), "q3": float(q3),
        "mad": float(stats.median_abs_deviation(x)),
        "skewness": float(stats.skew(x, bias=False)), "kurtosis": float(stats.kurtosis(x, bias=False)),
        "within": [float(np.mean(np.abs(x - x.mean()) <= k * x.std(ddof=1))) for k in (1, 2, 3)],
    }


def normality(x: np.ndarray) -> dict:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        out = {
            "shapiro": stats.shapiro(x).pvalue, "normaltest": stats.normaltest(x).pvalue,
            "skewtest": stats.skewtest(x).pvalue, "kurtosistest": stats.kurtosistest(x).pvalue,
            "jarque_bera": stats.jarque_bera(x).pvalue,
            "anderson": stats.anderson(x, method="interpolate").pvalue,
            "lilliefors": lilliefors(x)[1],
            "cramervonmises": stats.cramervonmises(x, "norm", args=(x.mean(), x.std(ddof=1))).pvalue,
        }
    return {k: float(v) for k, v in out.items()}


def modality(x: np.ndarray) -> dict:
    col = x.reshape(-1, 1)
    fits = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConvergenceWarning)
        for k in range(1, 5):
            g = GaussianMixture(k, random_state=0).fit(col)
            fits.append({"k": k, "bic": float(g.bic(col)), "means": g.means_.ravel().tolist()})
    dip, p = diptest.diptest(x)
    return {"candidates": fits, "selected_k": min(fits, key=lambda f: f["bic"])["k"], "dip": float(dip), "dip_p": float(p)}


def create_app() -> Flask:
    app = Flask(__name__)
    app.config["MAX_CONTENT_LENGTH"] = 256 * 1024 * 1024

    def values() -> np.ndarray:
        return np.asarray(request.get_json()["values"], dtype=float)

    @app.post("/v1/describe")
    def _describe():
        return jsonify(describe(values()))

    @app.post("/v1/normality")
    def _normality():
        return jsonify(normality(values()))

    @app.post("/v1/modality")
    def _modality():
        return jsonify(modality(values()))

    @app.post("/v1/diagnose")
    def _diagnose():
        x = values()
        return jsonify({"describe": describe(x), "normality": normality(x), "modality": modality(x)})

    @app.post("/floor")
    def _floor():
        x = np.sort(np.array(orjson.loads(request.get_data())["values"], dtype=np.float64))
        return jsonify({"n": int(x.size)})

    @app.get("/healthz")
    def _health():
        return jsonify({"status": "ok"})

    return app
