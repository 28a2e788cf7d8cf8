"""POST /v1/tails through the HTTP layer: normal-model probabilities against the normal
table and scipy, log-probabilities where the probability underflows, empirical shares
with Wilson intervals, parts per million, mixture probabilities against the components
/v1/modality reports, Cornish-Fisher quantiles, and what each form cannot give. Every
200 response is checked against the generated OpenAPI document."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.proportion import proportion_confint

from ..stats import samples
from .helpers import PROBLEM, example, post_ok

UNAVAILABLE = {"available", "reason"}
MODEL = {"summary": {"n": 1000, "mean": 100.0, "sd": 15.0}}  # a normal model: x = 100 + 15 z


def ok(client, conforms, body: dict) -> dict:
    return post_ok(client, conforms, "/v1/tails", body, "TailsResponse")


def unavailable(node) -> bool:
    return isinstance(node, dict) and set(node) == UNAVAILABLE and node["available"] is False and node["reason"]


def codes(doc: dict) -> list[str]:
    return [w["code"] for w in doc["warnings"]]


class TestNormalModel:
    # Standard normal table, upper tail 1 - Phi(z), 4 decimals (recalled from memory).
    @pytest.mark.parametrize("z, upper", [(1.0, 0.1587), (1.645, 0.0500), (1.96, 0.0250), (2.0, 0.0228), (3.0, 0.0013)])
    def test_against_the_table(self, client, conforms, z, upper):
        doc = ok(client, conforms, {**MODEL, "above": [100 + 15 * z], "below": [100 - 15 * z]})
        assert doc["above"][0]["z"] == pytest.approx(z, abs=1e-12)
        assert doc["above"][0]["normal"]["probability"] == pytest.approx(upper, abs=5e-5)
        assert doc["below"][0]["normal"]["probability"] == pytest.approx(upper, abs=5e-5)

    @pytest.mark.parametrize("z", [-4.0, -1.0, 0.0, 0.7, 2.5, 7.0])
    def test_against_scipy(self, client, conforms, z):
        doc = ok(client, conforms, {**MODEL, "above": [100 + 15 * z], "below": [100 + 15 * z]})
        # Reference: scipy.stats.norm.sf / logsf and norm.cdf / logcdf.
        assert doc["above"][0]["normal"]["probability"] == pytest.approx(stats.norm.sf(z), rel=1e-12)
        assert doc["above"][0]["normal"]["log_probability"] == pytest.approx(stats.norm.logsf(z), rel=1e-12)
        assert doc["below"][0]["normal"]["probability"] == pytest.approx(stats.norm.cdf(z), rel=1e-12)
        assert doc["below"][0]["normal"]["log_probability"] == pytest.approx(stats.norm.logcdf(z), rel=1e-12)

    # The 68-95-99.7 rule, 4 decimals (recalled from memory).
    @pytest.mark.parametrize("k, share", [(1, 0.6827), (2, 0.9545), (3, 0.9973)])
    def test_within_k_sd(self, client, conforms, k, share):
        doc = ok(client, conforms, {**MODEL, "between": [[100 - 15 * k, 100 + 15 * k]]})
        got = doc["between"][0]
        assert got["interval"] == [100 - 15 * k, 100 + 15 * k]
        assert got["normal"]["probability"] == pytest.approx(share, abs=5e-5)
        # Reference: scipy.stats.norm.cdf(k) - norm.cdf(-k).
        assert got["normal"]["probability"] == pytest.approx(stats.norm.cdf(k) - stats.norm.cdf(-k), rel=1e-12)


class TestExtremeTails:
    X = samples.normal(300, 401, loc=10.0, scale=2.0)

    @pytest.mark.parametrize("z", [20.0, 40.0, 60.0])
    def test_log_probability_is_finite(self, client, conforms, z):
        mean, sd = self.X.mean(), self.X.std(ddof=1)
        doc = ok(client, conforms, {"values": self.X.tolist(), "above": [mean + z * sd], "below": [mean - z * sd]})
        for point in (doc["above"][0], doc["below"][0]):
            assert abs(abs(point["z"]) - z) < 1e-9
            # Reference: scipy.stats.norm.sf (0 beyond z of about 38) and norm.logsf (finite).
            assert point["normal"]["probability"] == pytest.approx(stats.norm.sf(z), rel=1e-8, abs=0.0)
            assert point["normal"]["log_probability"] == pytest.approx(stats.norm.logsf(z), rel=1e-9)
        if z >= 40:
            assert doc["above"][0]["normal"]["probability"] == 0.0


class TestEmpirical:
    X = np.round(samples.normal(200, 402, loc=50.0, scale=5.0))

    @pytest.mark.parametrize("x", [40.0, 50.0, 57.0, 70.0])
    def test_counts_and_wilson(self, client, conforms, x):
        doc = ok(client, conforms, {"values": self.X.tolist(), "above": [x], "below": [x]})
        n = self.X.size
        for side, count in (("above", int(np.sum(self.X > x))), ("below", int(np.sum(self.X < x)))):
            emp = doc[side][0]["empirical"]
            # Reference: a direct count with numpy, strictly beyond x.
            assert emp["count"] == count
            assert emp["probability"] == pytest.approx(count / n, rel=1e-15)
            # Reference: statsmodels proportion_confint(method="wilson").
            lo, hi = proportion_confint(count, n, alpha=0.05, method="wilson")
            assert emp["interval"]["lower"] == pytest.approx(lo, rel=1e-12, abs=1e-15)
            assert emp["interval"]["upper"] == pytest.approx(hi, rel=1e-12)
            assert emp["interval"]["level"] == 0.95

    def test_between(self, client, conforms):
        doc = ok(client, conforms, {"values": self.X.tolist(), "between": [[45.0, 55.0]]})
        # Reference: a direct count of 45 < x <= 55.
        assert doc["between"][0]["empirical"]["count"] == int(np.sum((self.X > 45) & (self.X <= 55)))


class TestLimits:
    X = samples.normal(500, 403, loc=20.0, scale=1.0)

    def test_parts_per_million(self, client, conforms):
        doc = ok(client, conforms, {"values": self.X.tolist(), "lower_limit": 18.0, "upper_limit": 22.5})
        lim = doc["limits"]
        mean, sd, n = self.X.mean(), self.X.std(ddof=1), self.X.size
        assert (lim["lower"], lim["upper"]) == (18.0, 22.5)
        # Reference: scipy.stats.norm.cdf / sf at the limits, times 1e6.
        below, above = stats.norm.cdf(18.0, mean, sd) * 1e6, stats.norm.sf(22.5, mean, sd) * 1e6
        assert lim["normal"]["ppm_below"] == pytest.approx(below, rel=1e-10)
        assert lim["normal"]["ppm_above"] == pytest.approx(above, rel=1e-10)
        assert lim["normal"]["ppm"] == pytest.approx(below + above, rel=1e-10)
        # Reference: a direct count of values outside the limits, per million.
        assert lim["empirical"]["ppm"] == pytest.approx((np.sum(self.X < 18.0) + np.sum(self.X > 22.5)) / n * 1e6, rel=1e-12)

    def test_one_limit(self, client, conforms):
        doc = ok(client, conforms, {"values": self.X.tolist(), "upper_limit": 22.0})
        lim = doc["limits"]
        assert lim["lower"] is None and unavailable(lim["normal"]["ppm_below"])
        # Reference: scipy.stats.norm.sf(22, mean, sd) * 1e6.
        assert lim["normal"]["ppm"] == pytest.approx(stats.norm.sf(22.0, self.X.mean(), self.X.std(ddof=1)) * 1e6, rel=1e-10)

    def test_no_limits(self, client, conforms):
        # DESIGN.md (Inputs): never silently absent.
        assert unavailable(ok(client, conforms, {"values": self.X.tolist(), "above": [21.0]})["limits"])


class TestMixture:
    X = np.concatenate([samples.normal(150, 404), samples.normal(100, 405, loc=6.0, scale=1.5)])

    def components(self, client, conforms) -> list[dict]:
        r = client.post("/v1/modality", json={"values": self.X.tolist()})
        assert r.status_code == 200
        conforms(r.get_json(), "ModalityResponse")
        comps = r.get_json()["mixture"]["components"]
        assert len(comps) == 2
        return comps

    def test_probabilities_from_the_reported_components(self, client, conforms):
        comps = self.components(client, conforms)
        doc = ok(client, conforms, {"values": self.X.tolist(), "above": [3.0, 9.0], "below": [-1.0],
                                    "between": [[1.0, 5.0]], "upper_limit": 10.0})

        def sf(x):
            # Reference: the components' own scipy.stats.norm survival functions, weighted.
            return sum(c["weight"] * stats.norm.sf(x, c["mean"], c["sd"]) for c in comps)

        assert doc["above"][0]["mixture"]["probability"] == pytest.approx(sf(3.0), rel=1e-10)
        assert doc["above"][1]["mixture"]["probability"] == pytest.approx(sf(9.0), rel=1e-10)
        assert doc["below"][0]["mixture"]["probability"] == pytest.approx(1 - sf(-1.0), rel=1e-10)
        assert doc["between"][0]["mixture"]["probability"] == pytest.approx(sf(1.0) - sf(5.0), rel=1e-10)
        assert doc["limits"]["mixture"]["ppm_above"] == pytest.approx(sf(10.0) * 1e6, rel=1e-10)

    @pytest.mark.parametrize("p", [0.05, 0.5, 0.95])
    def test_quantiles(self, client, conforms, p):
        comps = self.components(client, conforms)
        q = ok(client, conforms, {"values": self.X.tolist(), "quantiles": [p]})["quantiles"][0]["mixture"]
        # Reference: the mixture cdf from scipy.stats.norm.cdf at the returned quantile.
        assert sum(c["weight"] * stats.norm.cdf(q, c["mean"], c["sd"]) for c in comps) == pytest.approx(p, abs=1e-9)


class TestCornishFisher:
    def test_gamma_quantiles(self, client, conforms):
        # Gamma(20): mean 20, sd sqrt(20), skewness 2/sqrt(20), excess kurtosis 0.3
        # (scipy.stats.gamma(20).stats("mvsk")).
        dist = stats.gamma(20.0)
        mean, var, skew, kurt = (float(v) for v in dist.stats("mvsk"))
        body = {"summary": {"n": 10**6, "mean": mean, "sd": math.sqrt(var), "skewness": skew, "kurtosis": kurt},
                "quantiles": [0.001, 0.05, 0.5, 0.95, 0.999]}
        doc = ok(client, conforms, body)
        assert codes(doc) == []
        for q in doc["quantiles"]:
            # Reference: scipy.stats.gamma(20).ppf; the expansion's error is below 0.01 sd here
            # (the plain normal quantile is off by 0.62 sd at p = 0.001).
            assert abs(q["cornish_fisher"] - dist.ppf(q["p"])) < 0.01 * math.sqrt(var)
            # Reference: scipy.stats.norm.ppf for the normal-model quantile.
            assert q["normal"] == pytest.approx(mean + math.sqrt(var) * stats.norm.ppf(q["p"]), rel=1e-12)

    def test_not_monotone_warning(self, client, conforms):
        # S = 1, K = 0: the expansion's slope (by hand: 1 + z/3 - (6 z^2 - 5)/36) turns
        # negative beyond z = 3.80 and below z = -1.80.
        body = {"summary": {"n": 500, "mean": 0.0, "sd": 1.0, "skewness": 1.0, "kurtosis": 0.0}, "quantiles": [0.9999, 0.999999]}
        doc = ok(client, conforms, body)
        assert "cornish-fisher-not-monotone" in codes(doc)
        assert doc["quantiles"][1]["cornish_fisher"] < doc["quantiles"][0]["cornish_fisher"]

    def test_needs_skewness_and_kurtosis(self, client, conforms):
        # DESIGN.md (Inputs): a summary without skewness and kurtosis cannot give the expansion.
        doc = ok(client, conforms, {**MODEL, "quantiles": [0.9]})
        assert unavailable(doc["quantiles"][0]["cornish_fisher"])


class TestRequestOrder:
    def test_lists_follow_the_request(self, client, conforms):
        above, below, between, probs = [130.0, 85.0, 115.0], [70.0, 120.0], [[110.0, 120.0], [60.0, 95.0]], [0.99, 0.01, 0.5]
        doc = ok(client, conforms, {**MODEL, "above": above, "below": below, "between": between, "quantiles": probs})
        assert [p["x"] for p in doc["above"]] == above
        assert [p["x"] for p in doc["below"]] == below
        assert [b["interval"] for b in doc["between"]] == between
        assert [q["p"] for q in doc["quantiles"]] == probs
        # Reference: scipy.stats.norm.sf in the request's order.
        assert [p["normal"]["probability"] for p in doc["above"]] == pytest.approx(list(stats.norm.sf(above, 100, 15)), rel=1e-12)


class TestForms:
    # DESIGN.md (Inputs): what a form cannot give is {"available": false, "reason": ...}.
    def test_summary(self, client, conforms):
        doc = ok(client, conforms, example("tails_summary.json"))
        assert doc["input"]["form"] == "summary"
        for point in doc["above"] + doc["below"] + doc["between"]:
            assert unavailable(point["empirical"]) and unavailable(point["mixture"])
        assert unavailable(doc["limits"]["empirical"]) and unavailable(doc["limits"]["mixture"])
        for q in doc["quantiles"]:
            assert unavailable(q["empirical"]) and unavailable(q["mixture"])
            assert isinstance(q["cornish_fisher"], float)
        summary = example("tails_summary.json")["summary"]
        # Reference: scipy.stats.norm.sf with the summary's mean and sd.
        assert doc["above"][0]["normal"]["probability"] == pytest.approx(stats.norm.sf(16.0, summary["mean"], summary["sd"]), rel=1e-12)

    def test_partials(self, client, conforms):
        doc = ok(client, conforms, {**example("partials.json"), "above": [16.0], "quantiles": [0.5]})
        assert doc["input"]["form"] == "partials"
        assert unavailable(doc["above"][0]["empirical"]) and unavailable(doc["above"][0]["mixture"])
        assert isinstance(doc["above"][0]["normal"]["probability"], float)
        assert unavailable(doc["quantiles"][0]["empirical"])

    def test_histogram(self, client, conforms):
        doc = ok(client, conforms, {**example("histogram.json"), "above": [10.5, 17.0], "quantiles": [0.5]})
        assert doc["input"]["form"] == "histogram"
        # Grouped-data share by hand from the counts [0, 8, 14, 7, 11, 5, 9, 4] on edges
        # (-inf, 9, 10, ..., 14, 16, +inf): above 10.5 are half of 14 plus 7+11+5+9+4 = 43 of 58.
        assert doc["above"][0]["empirical"]["probability"] == pytest.approx(43 / 58, rel=1e-12)
        assert isinstance(doc["above"][0]["mixture"]["probability"], float)
        # 17 lies in the open bin [16, +inf): no share can be read there.
        assert unavailable(doc["above"][1]["empirical"])
        # Grouped-data median by hand: 29 of 58 values are below 12, the upper edge of bin 4.
        assert doc["quantiles"][0]["empirical"] == pytest.approx(12.0, rel=1e-12)

    def test_values_example(self, client, conforms):
        body = example("tails.json")
        doc = ok(client, conforms, body)
        x = np.array([v for v in body["values"] if v is not None])
        assert doc["input"] == {"form": "values", "n": x.size, "missing": 2, "label": None, "shards": None, "bins": None}
        # Reference: numpy.quantile (linear, Hyndman & Fan 7) of the values.
        assert [q["empirical"] for q in doc["quantiles"]] == pytest.approx(list(np.quantile(x, body["quantiles"])), rel=1e-12)


class TestValidation:
    @pytest.mark.parametrize("extra", [
        {"quantiles": [0.0]}, {"quantiles": [1.0]}, {"between": [[3.0, 1.0]]},
        {"lower_limit": 5.0, "upper_limit": 5.0}, {"above": ["1"]},
    ])
    def test_422(self, client, conforms, extra):
        # DESIGN.md (Errors): valid JSON that cannot be analysed is a 422 problem document.
        r = client.post("/v1/tails", json={"values": [1.0, 2.0, 3.0, 5.0], **extra})
        assert r.status_code == 422 and r.mimetype == PROBLEM
        conforms(r.get_json(), "ProblemDocument")
