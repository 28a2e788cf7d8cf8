"""POST /v1/diagnose through the HTTP layer: its describe, normality, modality, tails and
recommend blocks equal the separate endpoints' answers on the same input; the overall
verdict on seeded cases; flags and summary; every form; determinism. Every 200
response is checked against the generated OpenAPI document."""

from __future__ import annotations

import re

import numpy as np
import pytest
from scipy import stats

from service import create_app

from ..stats import samples
from .helpers import example, post_ok, values

ENVELOPE = ("service", "input", "warnings", "caution")
RESPONSE = {"/v1/describe": "DescribeResponse", "/v1/normality": "NormalityResponse", "/v1/modality": "ModalityResponse",
            "/v1/tails": "TailsResponse", "/v1/recommend": "RecommendResponse", "/v1/diagnose": "DiagnoseResponse"}
FLAGS = {"not_normal", "right_skewed", "left_skewed", "heavy_tails", "light_tails", "multimodal", "rounded",
         "small_sample", "mean_not_yet_normal"}
SAMPLE_KEYS = ("values", "summary", "conventions", "sd_convention", "partials", "histogram", "sheppard")


def ok(client, conforms, path: str, body: dict) -> dict:
    return post_ok(client, conforms, path, body, RESPONSE[path])


def body_of(doc: dict) -> dict:
    return {k: v for k, v in doc.items() if k not in ENVELOPE}


TAILS = {"above": [12.0, 15.0], "below": [9.0], "between": [[10.0, 14.0]], "lower_limit": 8.0, "upper_limit": 17.0,
         "quantiles": [0.05, 0.5, 0.95]}
INPUTS = {
    "values": lambda: {**example("diagnose.json"), "tails": TAILS},
    "rounded_lognormal": lambda: {"values": np.round(np.random.default_rng(3).lognormal(2.4, 0.3, 300), 1).tolist(), "tails": TAILS},
    "histogram": lambda: {**example("histogram.json"), "tails": TAILS},
    "summary": lambda: {**example("summary.json"), "tails": TAILS},
    "partials": lambda: {**example("partials.json"), "tails": TAILS},
}


class TestSameNumbersAsTheSeparateEndpoints:
    @pytest.mark.parametrize("name", sorted(INPUTS))
    @pytest.mark.parametrize("part, path", [("describe", "/v1/describe"), ("normality", "/v1/normality"),
                                            ("modality", "/v1/modality"), ("tails", "/v1/tails")])
    def test_block_equals_the_endpoint(self, client, conforms, name, part, path):
        body = INPUTS[name]()
        sample = {k: body[k] for k in SAMPLE_KEYS if k in body}
        diagnosed = ok(client, conforms, "/v1/diagnose", body)
        separate = ok(client, conforms, path, {**sample, **(body["tails"] if part == "tails" else {})})
        assert diagnosed[part] == body_of(separate)
        assert diagnosed["input"] == separate["input"]
        # Warnings are gathered once, at the top.
        assert {w["code"] for w in separate["warnings"]} <= {w["code"] for w in diagnosed["warnings"]}

    @pytest.mark.parametrize("options, parts", [
        ({"quantile_definition": "hf6"}, ["describe", "tails"]),
        ({"alpha": 0.01}, ["normality", "modality", "tails"]),
        ({"seed": 7, "max_components": 2}, ["modality", "tails"]),
        ({"skewness_threshold": 0.3, "kurtosis_threshold": 0.5}, ["describe", "normality"]),
    ])
    def test_options_reach_each_block(self, client, conforms, options, parts):
        x = np.random.default_rng(3).lognormal(0.0, 0.5, 101).tolist()
        diagnosed = ok(client, conforms, "/v1/diagnose", {"values": x, **options, "tails": {"quantiles": [0.1, 0.5]}})
        for part in parts:
            extra = {"quantiles": [0.1, 0.5]} if part == "tails" else {}
            separate = ok(client, conforms, f"/v1/{part}", {"values": x, **options, **extra})
            assert diagnosed[part] == body_of(separate), part

    def test_recommend_block_equals_the_endpoint(self, client, conforms):
        x = np.random.default_rng(6).lognormal(2.0, 0.3, 200)
        diagnosed = ok(client, conforms, "/v1/diagnose", {**values(x), "goal": "capability", "tails": {"lower_limit": 3.0, "upper_limit": 15.0}})
        separate = ok(client, conforms, "/v1/recommend", {"goal": "capability", "samples": [values(x)], "lower_limit": 3.0, "upper_limit": 15.0})
        assert diagnosed["recommend"] == body_of(separate)
        # Montgomery (2019) 8.2: Cp = (USL - LSL) / 6 sd with numpy std(ddof=1).
        assert diagnosed["recommend"]["capability"]["cp"] == pytest.approx(12.0 / (6 * x.std(ddof=1)), rel=1e-12)

    def test_tails_and_recommend_unavailable_unless_asked(self, client, conforms):
        doc = ok(client, conforms, "/v1/diagnose", example("demo.json"))
        assert doc["tails"]["available"] is False and doc["tails"]["reason"]
        assert doc["recommend"]["available"] is False and doc["recommend"]["reason"]


CASES = {
    "normal": lambda: samples.normal(500, 501, loc=10.0, scale=2.0),
    "skewed": lambda: np.random.default_rng(12).lognormal(0.0, 0.25, 200),
    "heavy_tailed": lambda: samples.student_t(300, 503, 3.0),
    "multimodal": lambda: np.concatenate([samples.normal(150, 504), samples.normal(150, 505, loc=5.0)]),
    "inconclusive": lambda: samples.normal(15, 506),
}


class TestVerdict:
    @pytest.mark.parametrize("label", sorted(CASES))
    def test_label(self, client, conforms, label):
        x = CASES[label]()
        v = ok(client, conforms, "/v1/diagnose", values(x))["verdict"]
        assert v["label"] == label
        # Reference: scipy.stats.shapiro, the primary test for n <= 5000, at alpha 0.05;
        # normal is null below the adequate n (n=15) however the test comes out.
        p = stats.shapiro(x).pvalue
        expected = None if label == "inconclusive" else bool(p >= 0.05)
        assert v["normal"] is expected

    def test_heavy_tailed_flags(self, client, conforms):
        x = CASES["heavy_tailed"]()
        v = ok(client, conforms, "/v1/diagnose", values(x))["verdict"]
        # Reference: scipy.stats.kurtosis(bias=False) = 9.7 for this t(3) sample, threshold 1
        # (common practice); scipy.stats.skew(bias=False) decides the skewness flag (0.5, Bulmer 1979).
        assert {"not_normal", "heavy_tails"} <= set(v["flags"])
        assert ("right_skewed" in v["flags"]) is bool(stats.skew(x, bias=False) >= 0.5)
        assert "multimodal" not in v["flags"] and "light_tails" not in v["flags"]

    @pytest.mark.parametrize("label", sorted(CASES))
    def test_flags_and_one_sentence(self, client, conforms, label):
        v = ok(client, conforms, "/v1/diagnose", values(CASES[label]()))["verdict"]
        assert set(v["flags"]) <= FLAGS and all(re.fullmatch(r"[a-z_]+", f) for f in v["flags"])
        s = v["summary"]
        assert s.endswith(".") and not re.search(r"[.!?]\s", s[:-1])

    def test_insufficient_data_from_a_summary(self, client, conforms):
        doc = ok(client, conforms, "/v1/diagnose", {"summary": {"n": 4, "mean": 1.0, "sd": 0.5, "skewness": 0.2, "kurtosis": 0.0}})
        # D'Agostino's skewness test needs n >= 8 and the kurtosis test n >= 5: none applies at n=4.
        assert doc["verdict"]["label"] == "insufficient_data" and doc["verdict"]["normal"] is None

    def test_three_values(self, client, conforms):
        doc = ok(client, conforms, "/v1/diagnose", {"values": [1.0, 2.0, 4.0]})
        assert doc["verdict"]["normal"] is None

    def test_summary_without_shape(self, client, conforms):
        doc = ok(client, conforms, "/v1/diagnose", {"summary": {"n": 50, "mean": 0.0, "sd": 1.0}})
        assert doc["verdict"]["label"] in ("insufficient_data", "inconclusive")

    def test_two_values_are_refused(self, client, conforms):
        # DESIGN.md (Errors): too few values for anything is a 422.
        r = client.post("/v1/diagnose", json={"values": [1.0, 2.0]})
        assert r.status_code == 422
        conforms(r.get_json(), "ProblemDocument")


class TestForms:
    @pytest.mark.parametrize("name, form, primary", [
        ("histogram.json", "histogram", "chi_square"),
        ("summary.json", "summary", "dagostino_pearson"),
        ("partials.json", "partials", "dagostino_pearson"),
    ])
    def test_aggregated_forms(self, client, conforms, name, form, primary):
        doc = ok(client, conforms, "/v1/diagnose", example(name))
        assert doc["input"]["form"] == form
        assert doc["normality"]["verdict"]["primary_test"] == primary
        assert doc["verdict"]["normal"] is doc["normality"]["verdict"]["normal"]

    def test_summary_matches_its_raw_values(self, client, conforms):
        x = np.array([v for v in example("demo.json")["values"] if v is not None])
        body = {"summary": {"n": int(x.size), "mean": float(x.mean()), "sd": float(x.std(ddof=1)),
                            "skewness": float(stats.skew(x, bias=False)), "kurtosis": float(stats.kurtosis(x, bias=False))}}
        doc = ok(client, conforms, "/v1/diagnose", body)
        # Reference: scipy.stats.normaltest (D'Agostino-Pearson K^2) on the raw values.
        assert doc["normality"]["tests"]["dagostino_pearson"]["p_value"] == pytest.approx(stats.normaltest(x).pvalue, rel=1e-9)


class TestDeterminism:
    def test_byte_identical(self, client):
        # DESIGN.md (Errors and limits): the same input always gives the same output.
        body = {**example("diagnose.json"), "tails": TAILS}
        first = client.post("/v1/diagnose", json=body)
        second = client.post("/v1/diagnose", json=body)
        fresh = create_app({"TESTING": True}).test_client().post("/v1/diagnose", json=body)
        assert first.status_code == 200
        assert first.data == second.data == fresh.data
