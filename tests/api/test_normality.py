"""POST/GET /v1/normality through the HTTP layer."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.stats

TEST_NAMES = [
    "shapiro_wilk", "shapiro_francia", "dagostino_pearson", "skewness_test", "kurtosis_test",
    "anderson_darling", "lilliefors", "cramer_von_mises", "jarque_bera", "chi_square",
]


class TestNormalityEndpoint:
    def test_demo_payload(self, client, demo_payload, conforms):
        r = client.post("/v1/normality", json=demo_payload)
        assert r.status_code == 200
        doc = r.get_json()
        conforms(doc, "NormalityResponse")
        assert list(doc["tests"]) == TEST_NAMES
        values = np.array([v for v in demo_payload["values"] if v is not None])
        # Reference: scipy.stats.shapiro on the same values.
        ref = scipy.stats.shapiro(values)
        assert doc["tests"]["shapiro_wilk"]["statistic"] == pytest.approx(ref.statistic, rel=1e-12)
        assert doc["tests"]["shapiro_wilk"]["p_value"] == pytest.approx(ref.pvalue, rel=1e-9)
        assert doc["verdict"]["primary_test"] == "shapiro_wilk"
        for result in doc["tests"].values():
            assert result["method"]["name"] and result["method"]["reference"]

    def test_normal_sample_of_adequate_size(self, client, conforms):
        values = np.random.default_rng(11).normal(50, 5, 400).round(3).tolist()
        doc = client.post("/v1/normality", json={"values": values}).get_json()
        conforms(doc, "NormalityResponse")
        assert doc["verdict"]["label"] == "consistent_with_normal"
        assert doc["verdict"]["normal"] is True

    def test_small_sample_is_never_plainly_normal(self, client):
        values = np.random.default_rng(12).normal(size=12).tolist()
        doc = client.post("/v1/normality", json={"values": values}).get_json()
        assert doc["verdict"]["normal"] is None
        assert doc["verdict"]["label"] == "inconclusive"
        assert any("no evidence against normality is not evidence for it" in r for r in doc["verdict"]["reasons"])

    def test_three_values_only_shapiro_wilk_applies(self, client, conforms):
        doc = client.post("/v1/normality", json={"values": [1.0, 2.0, 4.0]}).get_json()
        conforms(doc, "NormalityResponse")
        applicable = [name for name, t in doc["tests"].items() if t["applicable"]]
        assert applicable == ["shapiro_wilk"]
        assert all(t["reason"] for t in doc["tests"].values() if not t["applicable"])

    def test_alpha_and_primary_test_options(self, client, demo_payload):
        strict = client.post("/v1/normality", json={**demo_payload, "alpha": 0.001, "primary_test": "kurtosis_test"}).get_json()
        assert strict["verdict"]["alpha"] == 0.001
        assert strict["verdict"]["primary_test"] == "kurtosis_test"
        assert strict["tests"]["kurtosis_test"]["reject"] is False

    def test_default_alpha_from_configuration(self, demo_payload):
        from service import create_app

        client = create_app({"TESTING": True, "DEFAULT_ALPHA": 0.01}).test_client()
        assert client.post("/v1/normality", json=demo_payload).get_json()["verdict"]["alpha"] == 0.01

    def test_get_field(self, client):
        r = client.get("/v1/normality?values=1,2,3,4,5,6,7,8,9,40&field=verdict.label")
        assert r.status_code == 200
        assert r.get_data(as_text=True) == "not_normal"

    def test_rounded_data_are_flagged(self, client):
        values = np.random.default_rng(13).normal(10, 1, 500).round(0).tolist()
        doc = client.post("/v1/normality", json={"values": values}).get_json()
        assert [w["code"] for w in doc["warnings"]] == ["rounded-data"]
        assert any("rounded" in reason for reason in doc["verdict"]["reasons"]) or doc["verdict"]["normal"] is not False
