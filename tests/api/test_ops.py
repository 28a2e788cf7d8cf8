"""Operations around every request: request ids, API keys, CORS, metrics, readiness and
the offline docs page."""

from __future__ import annotations

import re

import pytest

from service import create_app

VALUES = {"values": [1.2, 3.4, 2.2, 5.1, 4.4, 2.9, 3.3]}


class TestRequestId:
    def test_generated_and_echoed(self, client):
        r = client.post("/v1/describe", json=VALUES)
        assert re.fullmatch(r"[0-9a-f]{32}", r.headers["X-Request-ID"])

    def test_accepted_when_sane(self, client):
        r = client.post("/v1/describe", json=VALUES, headers={"X-Request-ID": "job-42.run_7"})
        assert r.headers["X-Request-ID"] == "job-42.run_7"

    def test_replaced_when_not(self, client):
        r = client.post("/v1/describe", json=VALUES, headers={"X-Request-ID": "bad id <script>"})
        assert r.headers["X-Request-ID"] != "bad id <script>"

    def test_in_problem_documents(self, client):
        r = client.post("/v1/describe", json={"values": [1, "x"]}, headers={"X-Request-ID": "trace-1"})
        assert r.get_json()["request_id"] == "trace-1"

    def test_sample_size_header_for_the_access_log(self, client):
        assert client.post("/v1/describe", json=VALUES).headers["Shapegauge-N"] == "7"


class TestApiKeys:
    @pytest.fixture
    def keyed(self, tmp_path):
        keys = tmp_path / "keys"
        keys.write_text("# one key per line\nfile-key-2\n")
        return create_app({"TESTING": True, "API_KEYS": "key-one, key-two", "API_KEYS_FILE": str(keys)}).test_client()

    @pytest.mark.parametrize("headers", [{"Authorization": "Bearer key-one"}, {"X-API-Key": "key-two"},
                                         {"Authorization": "bearer file-key-2"}])
    def test_valid_keys(self, keyed, headers):
        assert keyed.post("/v1/describe", json=VALUES, headers=headers).status_code == 200

    @pytest.mark.parametrize("headers", [{}, {"Authorization": "Bearer nope"}, {"X-API-Key": "key-one "[:-1] + "x"},
                                         {"Authorization": "Basic a2V5LW9uZQ=="}])
    def test_missing_or_wrong_keys(self, keyed, headers):
        r = keyed.post("/v1/describe", json=VALUES, headers=headers)
        assert r.status_code == 401 and r.mimetype == "application/problem+json"
        assert r.headers["WWW-Authenticate"].startswith("Bearer")
        # The answer is the same whatever was wrong: it does not say which part failed.
        assert r.get_json()["detail"] == keyed.post("/v1/describe", json=VALUES).get_json()["detail"]

    @pytest.mark.parametrize("path", ["/healthz", "/readyz", "/metrics", "/openapi.json", "/docs"])
    def test_operations_stay_open(self, keyed, path):
        assert keyed.get(path).status_code == 200

    def test_no_keys_configured_means_open(self, client):
        assert client.post("/v1/describe", json=VALUES).status_code == 200


class TestCors:
    def test_off_by_default(self, client):
        r = client.post("/v1/describe", json=VALUES, headers={"Origin": "https://app.example"})
        assert "Access-Control-Allow-Origin" not in r.headers

    def test_listed_origin(self):
        client = create_app({"TESTING": True, "CORS_ORIGINS": "https://app.example"}).test_client()
        r = client.post("/v1/describe", json=VALUES, headers={"Origin": "https://app.example"})
        assert r.headers["Access-Control-Allow-Origin"] == "https://app.example"
        assert "Access-Control-Allow-Origin" not in client.post(
            "/v1/describe", json=VALUES, headers={"Origin": "https://other.example"}).headers
        pre = client.options("/v1/describe", headers={"Origin": "https://app.example", "Access-Control-Request-Method": "POST"})
        assert pre.status_code == 204 and "POST" in pre.headers["Access-Control-Allow-Methods"]


class TestHealthAndMetrics:
    def test_ready(self, client):
        doc = client.get("/readyz").get_json()
        assert doc["status"] == "ready"

    def test_metrics_text_format(self, client):
        client.post("/v1/describe", json=VALUES)
        r = client.get("/metrics")
        assert r.status_code == 200 and r.headers["Content-Type"].startswith("text/plain")
        text = r.get_data(as_text=True)
        assert re.search(r'shapegauge_requests_total\{endpoint="/v1/describe",method="POST",status="200"\} \d', text)
        assert "shapegauge_request_seconds_bucket" in text and "shapegauge_sample_size_bucket" in text
        assert "shapegauge_in_flight_requests" in text


class TestDocsPage:
    def test_page_uses_only_local_assets(self, client):
        page = client.get("/docs").get_data(as_text=True)
        assert "/openapi.json" in page
        assert "http://" not in page and "https://" not in page
        for asset in re.findall(r'(?:href|src)="(/docs/assets/[^"]+)"', page):
            r = client.get(asset)
            assert r.status_code == 200 and len(r.data) > 10_000

    def test_unknown_asset_is_404(self, client):
        assert client.get("/docs/assets/../../etc/passwd").status_code == 404
