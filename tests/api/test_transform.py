"""POST /v1/transform through the HTTP layer: lambda and its interval against scipy,
the suggested simple lambda, normality before and after, the back-transform note and
the 422 for input forms that carry no values. Every 200 response is checked against
the generated OpenAPI document."""

from __future__ import annotations


import numpy as np
import pytest
from scipy import optimize, stats
from .helpers import PROBLEM, example, post_ok


def ok(client, conforms, body: dict) -> dict:
    return post_ok(client, conforms, "/v1/transform", body, "TransformResponse")


LOGNORMAL = np.random.default_rng(601).lognormal(1.0, 0.7, 150)
COUNTS = np.random.default_rng(703).poisson(30, 2000).astype(float)
WITH_ZEROS = np.random.default_rng(706).poisson(2, 120).astype(float)


class TestLambda:
    @pytest.mark.parametrize("x", [LOGNORMAL, COUNTS], ids=["lognormal", "poisson30"])
    def test_box_cox_against_scipy(self, client, conforms, x):
        doc = ok(client, conforms, {"values": x.tolist()})
        bc = doc["box_cox"]
        # Reference: scipy.stats.boxcox(x, alpha=0.05): the MLE lambda and its interval.
        _, lam, (lo, hi) = stats.boxcox(x, alpha=0.05)
        assert bc["applicable"] is True and bc["reason"] is None
        assert bc["lambda"] == pytest.approx(lam, abs=1e-6)
        assert bc["interval"] == pytest.approx([lo, hi], abs=1e-6)
        assert bc["method"]["reference"].startswith("Box & Cox (1964)")

    @pytest.mark.parametrize("x", [LOGNORMAL, WITH_ZEROS, LOGNORMAL - 3.0], ids=["lognormal", "zeros", "negative"])
    def test_yeo_johnson_against_scipy(self, client, conforms, x):
        doc = ok(client, conforms, {"values": x.tolist(), "confidence": 0.9})
        yj = doc["yeo_johnson"]
        # Reference: scipy.stats.yeojohnson for lambda; the interval is our own profile
        # likelihood on scipy.stats.yeojohnson_llf with a chi-square(1) cut at 0.9.
        _, lam = stats.yeojohnson(x)
        cut = stats.chi2.ppf(0.9, 1) / 2
        top = stats.yeojohnson_llf(lam, x)

        def drop(t):
            return top - stats.yeojohnson_llf(t, x) - cut

        lo, hi = optimize.brentq(drop, lam - 2, lam, xtol=1e-12), optimize.brentq(drop, lam, lam + 2, xtol=1e-12)
        assert yj["lambda"] == pytest.approx(lam, abs=1e-6)
        assert yj["interval"] == pytest.approx([lo, hi], abs=1e-6)
        assert doc["confidence"] == 0.9


class TestSuggestion:
    def test_log_for_lognormal_data(self, client, conforms):
        doc = ok(client, conforms, {"values": LOGNORMAL.tolist()})
        # Common practice: the log for lognormal data, inside the interval (checked against scipy above).
        assert doc["box_cox"]["suggested"] == {"lambda": 0.0, "name": "log"}
        assert doc["box_cox"]["interval"][0] <= 0.0 <= doc["box_cox"]["interval"][1]

    def test_square_root_for_counts(self, client, conforms):
        doc = ok(client, conforms, {"values": COUNTS.tolist()})
        # Common practice: the square root stabilises the variance of Poisson counts.
        assert doc["box_cox"]["suggested"] == {"lambda": 0.5, "name": "square root"}

    def test_nothing_when_no_simple_lambda_is_inside(self, client, conforms):
        x = np.random.default_rng(703).poisson(10, 2000).astype(float)
        doc = ok(client, conforms, {"values": x.tolist()})
        # Reference: scipy.stats.boxcox(x, alpha=0.05)'s interval, about (0.53, 0.72), holds
        # none of -1, -0.5, 0, 0.5, 1, 2.
        _, _, (lo, hi) = stats.boxcox(x, alpha=0.05)
        assert not any(lo <= v <= hi for v in (-1.0, -0.5, 0.0, 0.5, 1.0, 2.0))
        assert doc["box_cox"]["suggested"] is None


class TestApplicability:
    def test_box_cox_needs_positive_values(self, client, conforms):
        # Box & Cox (1964): x^lambda and log x need x > 0; Yeo & Johnson (2000) handle any sign.
        doc = ok(client, conforms, {"values": WITH_ZEROS.tolist()})
        bc = doc["box_cox"]
        assert bc["applicable"] is False
        assert (bc["lambda"], bc["interval"], bc["suggested"], bc["after"]) == (None, None, None, None)
        assert "strictly positive" in bc["reason"]
        assert doc["yeo_johnson"]["applicable"] is True


class TestNormalityBeforeAndAfter:
    def test_against_scipy(self, client, conforms):
        doc = ok(client, conforms, {"values": LOGNORMAL.tolist()})
        # Reference: scipy.stats.shapiro and scipy.stats.skew(bias=False) on the values and
        # on scipy.stats.boxcox(x, lmbda=reported lambda).
        before, after = doc["before"], doc["box_cox"]["after"]
        assert before["primary_test"] == after["primary_test"] == "shapiro_wilk"
        assert before["p_value"] == pytest.approx(stats.shapiro(LOGNORMAL).pvalue, rel=1e-9)
        assert before["G1"] == pytest.approx(stats.skew(LOGNORMAL, bias=False), rel=1e-10)
        y = stats.boxcox(LOGNORMAL, lmbda=doc["box_cox"]["lambda"])
        assert after["p_value"] == pytest.approx(stats.shapiro(y).pvalue, rel=1e-9)
        assert after["G1"] == pytest.approx(stats.skew(y, bias=False), rel=1e-8, abs=1e-12)
        assert before["normal"] is False and after["p_value"] > 0.05

    def test_back_transform_note(self, client, conforms):
        doc = ok(client, conforms, {"values": LOGNORMAL.tolist()})
        # Common practice: back-transformed means estimate medians (the geometric mean for the log).
        assert "median" in doc["back_transform"] and "geometric mean" in doc["back_transform"]


class TestFormsWithoutValues:
    @pytest.mark.parametrize("name", ["summary.json", "partials.json", "histogram.json"])
    def test_422(self, client, conforms, name):
        # DESIGN.md (Errors): a transformation needs the values themselves; a 422 problem document.
        r = client.post("/v1/transform", json=example(name))
        assert r.status_code == 422 and r.mimetype == PROBLEM
        doc = r.get_json()
        conforms(doc, "ProblemDocument")
        assert "needs the raw values" in doc["detail"]
        assert doc["errors"][0]["detail"] == "send values"

    def test_text_body(self, client, conforms):
        r = client.post("/v1/transform", data="\n".join(map(repr, LOGNORMAL.tolist())), content_type="text/plain")
        assert r.status_code == 200
        doc = r.get_json()
        conforms(doc, "TransformResponse")
        # Reference: scipy.stats.boxcox on the same values.
        assert doc["box_cox"]["lambda"] == pytest.approx(stats.boxcox(LOGNORMAL)[1], abs=1e-6)
