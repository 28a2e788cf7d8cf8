"""POST /v1/modality: the response fields against references computed from the same
values (scipy, diptest), determinism (the same request, another seed, another order),
the four input forms (raw values, histogram, summary, shard partials), the options
(max_components, seed, alpha) and their 422s, the configured bounds on the fit
(iterations, time limit) and a sample of 10^6 values. Every 200 response is checked
against the generated OpenAPI document with undeclared fields forbidden."""

from __future__ import annotations

import math

import diptest
import numpy as np
import orjson
import pytest
from scipy import stats

from service import create_app

from ..stats import modality_samples as ms
from ..stats.partials_reference import partials_of
from .helpers import post_ok, post_refused

PATH = "/v1/modality"


def ok(client, conforms, body: dict, query: str = "") -> dict:
    return post_ok(client, conforms, PATH + query, body, "ModalityResponse")


def refused(client, conforms, body: dict) -> dict:
    return post_refused(client, conforms, PATH, body)


def values_body(x: np.ndarray, **options) -> dict:
    return {"values": [float(v) for v in x], **options}


def bimodal(n: int = 300, seed: int = 0) -> np.ndarray:
    return ms.clear("two", n, seed)


def bc_reference(x: np.ndarray) -> float:
    # Reference: Pfister et al. (2013), eq. 1, from scipy.stats.skew(bias=False) and
    # scipy.stats.kurtosis(bias=False).
    n = x.size
    g1, g2 = stats.skew(x, bias=False), stats.kurtosis(x, bias=False)
    return float((g1**2 + 1) / (g2 + 3 * (n - 1) ** 2 / ((n - 2) * (n - 3))))


def close(a, b, rel: float, path: str = "") -> None:
    """Every number in two documents equal within ``rel``; everything else identical."""
    if isinstance(a, dict):
        assert a.keys() == b.keys(), path
        for key in a:
            close(a[key], b[key], rel, f"{path}/{key}")
    elif isinstance(a, list):
        assert len(a) == len(b), path
        for i, (u, v) in enumerate(zip(a, b)):
            close(u, v, rel, f"{path}/{i}")
    elif isinstance(a, float) and not isinstance(a, bool):
        assert a == pytest.approx(b, rel=rel, abs=1e-300), path
    else:
        assert a == b, path


class TestValues:
    def test_bimodal_response(self, client, conforms):
        x = bimodal()
        doc = ok(client, conforms, values_body(x))
        assert doc["input"] == {"form": "values", "n": 300, "missing": 0, "label": None, "shards": None, "bins": None}
        mix = doc["mixture"]
        assert [c["k"] for c in mix["candidates"]] == [1, 2, 3, 4]
        assert mix["selected_k"] == 2 and mix["n_modes"] == 2 and len(mix["antimodes"]) == 1
        means = [c["mean"] for c in mix["components"]]
        assert means == sorted(means)
        selected = mix["candidates"][1]
        # Reference: scipy.stats.norm.logpdf summed over the values under the reported
        # components (raw values, no pooling: the same number), and Schwarz's BIC.
        comps = [ms.Comp(**c) for c in mix["components"]]
        assert selected["log_likelihood"] == pytest.approx(ms.log_likelihood(x, comps), rel=1e-10)
        assert selected["bic"] == pytest.approx(-2 * selected["log_likelihood"] + 5 * math.log(300), rel=1e-13)
        # Reference: the generating groups, N(0, 1) and N(6, 1), each 150 values.
        assert means == pytest.approx([0.0, 6.0], abs=0.25)
        # Reference: diptest.dipstat on the values; the p-value below the table.
        assert doc["dip"]["statistic"] == pytest.approx(diptest.dipstat(x), rel=1e-12)
        assert doc["dip"]["p_value"] == 1e-5 and doc["dip"]["p_value_bound"] == "<" and doc["dip"]["reject"] is True
        assert doc["bimodality_coefficient"]["value"] == pytest.approx(bc_reference(x), rel=1e-10)
        assert doc["bimodality_coefficient"]["threshold"] == pytest.approx(5 / 9, rel=1e-15)
        assert doc["bimodality_coefficient"]["exceeds"] is True
        assert doc["verdict"]["label"] == "bimodal" and doc["verdict"]["n_modes"] == 2
        two = mix["two_components"]
        a, b = mix["components"]
        # Reference: Ashman et al. (1994) and Zhang et al. (2003) (formulas recalled from
        # memory) on the reported components.
        assert two["ashman_d"] == pytest.approx(math.sqrt(2) * (b["mean"] - a["mean"]) / math.hypot(a["sd"], b["sd"]), rel=1e-12)
        assert two["separation"] == pytest.approx((b["mean"] - a["mean"]) / (2 * (a["sd"] + b["sd"])), rel=1e-12)

    @pytest.mark.parametrize("name, label", [("one", "unimodal"), ("two", "bimodal"), ("three", "multimodal")])
    def test_labels(self, client, conforms, name, label):
        doc = ok(client, conforms, values_body(ms.clear(name, 450, 3)))
        # Reference: the number of groups drawn, each more than 2 sd from the next
        # (Robertson & Fryer 1969, recalled from memory).
        assert doc["verdict"]["label"] == label

    def test_three_values(self, client, conforms):
        doc = ok(client, conforms, {"values": [1.0, 2.0, 4.0]})
        # Reference: the service's minimum sizes (dip n >= 4; verdict n >= 20).
        assert doc["dip"]["applicable"] is False and "n=3" in doc["dip"]["reason"]
        assert doc["verdict"]["label"] == "insufficient_data" and doc["verdict"]["n_modes"] is None
        assert [c["k"] for c in doc["mixture"]["candidates"]] == [1]

    def test_two_values_refused(self, client, conforms):
        refused(client, conforms, {"values": [1.0, 2.0]})

    def test_heavy_ties(self, client, conforms):
        x = np.round(ms.normal(400, 12, loc=20.0, scale=3.0))
        doc = ok(client, conforms, values_body(x))
        assert "ties-spread" in [w["code"] for w in doc["warnings"]]
        assert "spreading tied values" in doc["dip"]["reason"]

    def test_get_and_text_forms(self, client, conforms):
        x = bimodal(60, 5)
        text = ",".join(repr(float(v)) for v in x)
        posted = ok(client, conforms, values_body(x, seed=3))
        got = client.get(f"{PATH}?values={text}&seed=3")
        assert got.status_code == 200
        conforms(got.get_json(), "ModalityResponse")
        csv = client.post(f"{PATH}?seed=3", data="\n".join(text.split(",")), content_type="text/csv")
        assert csv.status_code == 200
        conforms(csv.get_json(), "ModalityResponse")
        assert got.get_json() == posted and csv.get_json() == posted


class TestDeterminism:
    def test_same_request_same_bytes(self, client, conforms):
        body = values_body(bimodal(), seed=17)
        first = client.post(PATH, json=body)
        second = client.post(PATH, json=body)
        assert first.status_code == 200
        conforms(first.get_json(), "ModalityResponse")
        assert first.get_data() == second.get_data()

    @pytest.mark.parametrize("name", ["two", "three"])
    @pytest.mark.parametrize("seed", [1, 12345, 2**32 - 1])
    def test_seed_changes_nothing_on_clear_cases(self, client, conforms, name, seed):
        x = ms.clear(name, 450, 2)
        base = ok(client, conforms, values_body(x))
        other = ok(client, conforms, values_body(x, seed=seed))
        # The seed only moves the k-means++ starts (no ties here): the selected model
        # converges to the same optimum, within the EM tolerance (1e-4 relative: the stopping rule is 1e-3 + 1e-8 n in log-likelihood).
        for key in ("dip", "bimodality_coefficient", "verdict", "input"):
            assert other[key] == base[key], key
        assert other["mixture"]["selected_k"] == base["mixture"]["selected_k"]
        for a, b in zip(other["mixture"]["components"], base["mixture"]["components"]):
            for key in ("weight", "mean", "sd"):
                assert a[key] == pytest.approx(b[key], abs=1e-3), key  # absolute: means can sit at 0
        for a, b in zip(other["mixture"]["modes"], base["mixture"]["modes"]):
            assert a["x"] == pytest.approx(b["x"], abs=1e-3)

    def test_input_order_does_not_matter(self, client, conforms):
        x = bimodal()
        shuffled = np.random.default_rng(99).permutation(x)
        a = ok(client, conforms, values_body(x))
        b = ok(client, conforms, values_body(shuffled))
        # Same numbers to 1e-12 relative (summation order moves the last digit only).
        close(a, b, 1e-12)

    def test_input_order_same_bytes(self, client):
        x = ms.mixture(300, 3, ms.TWO)
        shuffled = np.random.default_rng(99).permutation(x)
        assert client.post(PATH, json=values_body(x)).get_data() == client.post(PATH, json=values_body(shuffled)).get_data()


class TestForms:
    def test_histogram_gives_the_raw_label(self, client, conforms):
        x = bimodal(3000, 6)
        counts, edges = np.histogram(x, bins=40)
        width = float(edges[1] - edges[0])
        raw = ok(client, conforms, values_body(x))
        doc = ok(client, conforms, {"histogram": {"edges": edges.tolist(), "counts": counts.tolist()}})
        assert doc["input"]["form"] == "histogram" and doc["input"]["bins"] == 40
        assert "bins" in doc["mixture"]["fitted_on"]
        assert doc["verdict"]["label"] == raw["verdict"]["label"] == "bimodal"
        assert doc["mixture"]["selected_k"] == raw["mixture"]["selected_k"] == 2
        # Grouping moves a component mean by less than the bin width (common practice;
        # Sheppard's uniform-within-bin assumption), and an sd by less than h^2/(12 sd).
        for binned, fitted in zip(doc["mixture"]["components"], raw["mixture"]["components"]):
            assert binned["mean"] == pytest.approx(fitted["mean"], abs=width)
            assert binned["sd"] == pytest.approx(fitted["sd"], abs=width)
            assert binned["weight"] == pytest.approx(fitted["weight"], abs=0.02)
        assert doc["dip"]["applicable"] is False and doc["dip"]["reason"] == "needs raw values, not histogram"
        assert doc["bimodality_coefficient"]["exceeds"] is True

    @staticmethod
    def check_moments_only(doc: dict, form: str, x: np.ndarray) -> None:
        assert doc["mixture"] == {"available": False, "reason": f"a mixture needs raw values or a histogram, not {form}"}
        assert doc["dip"]["applicable"] is False and doc["dip"]["statistic"] is None
        assert doc["dip"]["reason"] == f"needs raw values, not {form}"
        assert doc["verdict"]["label"] == "insufficient_data" and doc["verdict"]["n_modes"] is None
        assert doc["bimodality_coefficient"]["value"] == pytest.approx(bc_reference(x), rel=1e-9)

    def test_summary(self, client, conforms):
        x = bimodal(500, 7)
        summary = {"n": 500, "mean": float(np.mean(x)), "sd": float(np.std(x, ddof=1)),
                   "skewness": float(stats.skew(x, bias=False)), "kurtosis": float(stats.kurtosis(x, bias=False))}
        doc = ok(client, conforms, {"summary": summary})
        self.check_moments_only(doc, "summary", x)

    def test_summary_without_shape(self, client, conforms):
        doc = ok(client, conforms, {"summary": {"n": 500, "mean": 1.0, "sd": 2.0}})
        assert doc["bimodality_coefficient"]["value"]["available"] is False
        assert doc["bimodality_coefficient"]["exceeds"] is None
        assert doc["verdict"]["label"] == "insufficient_data"

    def test_partials(self, client, conforms):
        x = bimodal(600, 8)
        parts = [partials_of(s) for s in np.array_split(x, 4)]
        doc = ok(client, conforms, {"partials": parts})
        assert doc["input"]["shards"] == 4
        self.check_moments_only(doc, "partials", x)


class TestOptions:
    @pytest.mark.parametrize("value", [0, 7, -1, "two", 2.5])
    def test_max_components_out_of_range(self, client, conforms, value):
        doc = refused(client, conforms, values_body(bimodal(), max_components=value))
        assert [e["pointer"] for e in doc["errors"]] == ["/max_components"]

    @pytest.mark.parametrize("value", [1, 2, 3, 6])
    def test_max_components(self, client, conforms, value):
        doc = ok(client, conforms, values_body(ms.clear("three", 300, 1), max_components=value))
        assert [c["k"] for c in doc["mixture"]["candidates"]] == list(range(1, value + 1))
        assert doc["mixture"]["selected_k"] == min(value, 3)

    def test_at_most_n_over_10(self, client, conforms):
        doc = ok(client, conforms, values_body(bimodal(25, 9), max_components=6))
        # Reference: the schema's documented cap (n/10 components, common practice).
        assert [c["k"] for c in doc["mixture"]["candidates"]] == [1, 2]

    @pytest.mark.parametrize("value", [-1, 2**32, 0.5])
    def test_seed_out_of_range(self, client, conforms, value):
        doc = refused(client, conforms, values_body(bimodal(), seed=value))
        assert [e["pointer"] for e in doc["errors"]] == ["/seed"]

    @pytest.mark.parametrize("value", [0, 5e-7, 0.6, "x"])
    def test_alpha_out_of_range(self, client, conforms, value):
        doc = refused(client, conforms, values_body(bimodal(), alpha=value))
        assert [e["pointer"] for e in doc["errors"]] == ["/alpha"]

    @pytest.mark.parametrize("alpha, reject", [(0.05, True), (0.01, False), (1e-6, False), (0.5, True)])
    def test_alpha_decides_the_dip(self, client, conforms, alpha, reject):
        x = ms.mixture(50, 3, (ms.Comp(0.5, 0.0, 1.0), ms.Comp(0.5, 3.0, 1.0)))
        doc = ok(client, conforms, values_body(x, alpha=alpha))
        # Reference: diptest.diptest's interpolated p-value (0.018) against alpha.
        p = diptest.diptest(np.sort(x))[1]
        assert doc["dip"]["p_value"] == pytest.approx(p, rel=1e-12)
        assert doc["dip"]["reject"] is reject


class TestBoundedWork:
    def test_a_million_values(self, client, conforms):
        x = ms.mixture(1_000_000, 11, (ms.Comp(0.5, 0.0, 1.0), ms.Comp(0.5, 5.0, 1.0)))
        body = orjson.dumps({"values": x}, option=orjson.OPT_SERIALIZE_NUMPY)
        r = client.post(PATH, data=body, content_type="application/json")
        assert r.status_code == 200
        doc = r.get_json()
        conforms(doc, "ModalityResponse")
        assert doc["input"]["n"] == 1_000_000
        assert "pooled" in doc["mixture"]["fitted_on"]
        assert doc["verdict"]["label"] == "bimodal"
        assert "fit-time-limit" not in [w["code"] for w in doc["warnings"]]
        for c in doc["mixture"]["candidates"]:
            assert isinstance(c["converged"], bool)
            assert 1 <= c["iterations"] <= 300  # Reference: FIT_MAX_ITERATIONS, the documented default
        # Reference: the dip table stops at n = 72 000 (diptest.consts); the reason says so.
        assert "72 000" in doc["dip"]["reason"]

    def test_iteration_limit_from_configuration(self, conforms):
        client = create_app({"TESTING": True, "FIT_MAX_ITERATIONS": 20}).test_client()
        doc = ok(client, conforms, values_body(ms.normal(400, 13)))
        # Reference: service/config.py: FIT_MAX_ITERATIONS, "EM iterations per mixture fit".
        assert max(c["iterations"] for c in doc["mixture"]["candidates"]) <= 20

    def test_iteration_limit_stops_the_fit(self, conforms):
        client = create_app({"TESTING": True, "FIT_MAX_ITERATIONS": 20}).test_client()
        doc = ok(client, conforms, values_body(ms.normal(400, 13)))
        # Slow fits (overfitted k on one normal group) stop unconverged at the cap.
        assert any(c["converged"] is False for c in doc["mixture"]["candidates"])

    def test_time_limit_flagged(self, conforms):
        client = create_app({"TESTING": True, "FIT_TIME_LIMIT": 0.0}).test_client()
        doc = ok(client, conforms, values_body(bimodal()))
        assert "fit-time-limit" in [w["code"] for w in doc["warnings"]]
        assert all(c["converged"] is False for c in doc["mixture"]["candidates"][1:])
