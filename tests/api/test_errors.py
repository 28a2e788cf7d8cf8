"""Every error class answers with an RFC 9457 problem document, never a stack trace."""

from __future__ import annotations

import pytest
from flask import Blueprint

from service import create_app

from .helpers import PROBLEM


def assert_problem(r, status: int, code: str | None = None) -> dict:
    assert r.status_code == status, r.get_data(as_text=True)
    assert r.mimetype == PROBLEM
    doc = r.get_json()
    assert doc["status"] == status
    assert doc["title"] and doc["detail"]
    if code:
        assert doc["type"] == f"/problems/{code}"
    assert "Traceback" not in r.get_data(as_text=True)
    return doc


class TestMalformed:
    @pytest.mark.parametrize("body", [b"{", b"[1, 2", b"", b"   ", b"{'values': [1]}"])
    def test_malformed_json_is_400(self, client, body):
        assert_problem(client.post("/v1/describe", data=body, content_type="application/json"), 400, "malformed-body")


class TestRouting:
    def test_unknown_path_is_404(self, client):
        assert_problem(client.get("/v1/nope"), 404, "not-found")

    def test_wrong_method_is_405_with_allow(self, client):
        r = client.delete("/v1/describe")
        assert_problem(r, 405, "method-not-allowed")
        assert "POST" in r.headers["Allow"]

    def test_unsupported_media_type_is_415(self, client):
        r = client.post("/v1/describe", data="<values/>", content_type="application/xml")
        assert_problem(r, 415, "unsupported-media-type")

    def test_unacceptable_output_is_406(self, client):
        r = client.post("/v1/describe", json={"values": [1, 2, 3]}, headers={"Accept": "image/png"})
        assert_problem(r, 406, "not-acceptable")

    def test_problem_types_are_documented(self, client):
        doc = client.get("/problems/constant-data").get_json()
        assert doc["status"] == 422 and doc["title"] == "Constant data"


class TestLimits:
    def test_body_too_large_is_413(self):
        client = create_app({"TESTING": True, "MAX_BODY_BYTES": 1000}).test_client()
        assert_problem(client.post("/v1/describe", json={"values": list(range(500))}), 413, "too-large")

    @pytest.mark.parametrize("kind", ["json", "text"])
    def test_too_many_values_is_413(self, kind):
        client = create_app({"TESTING": True, "MAX_VALUES": 10}).test_client()
        if kind == "json":
            r = client.post("/v1/describe", json={"values": list(range(11))})
        else:
            r = client.post("/v1/describe", data="\n".join(map(str, range(11))), content_type="text/plain")
        assert_problem(r, 413, "too-large")


class TestUnanalysable:
    @pytest.mark.parametrize(
        "payload, code, pointer",
        [
            ({"values": [1, 2, "3"]}, "invalid-value", "/values/2"),
            ({"values": [1, True, 3]}, "invalid-value", "/values/1"),
            ({"values": [1, 2, [3, 4]]}, "not-one-dimensional", "/values/2"),
            ({"values": [[1, 2, 3]]}, "not-one-dimensional", "/values/0"),
            ({"values": [1, {"x": 1}]}, "invalid-value", "/values/1"),
            ({"values": [1, None, 3], "missing": "reject"}, "missing-values-rejected", "/values/1"),
            ({"values": "1,2,3"}, "invalid-request", "/values"),
            ({"valuez": [1, 2, 3]}, "invalid-request", "/valuez"),
            ({"values": [1, 2, 3], "alpha": 2}, None, None),
            ({}, "invalid-request", "/values"),
        ],
    )
    def test_bad_values_name_their_position(self, client, payload, code, pointer):
        r = client.post("/v1/normality", json=payload)
        doc = assert_problem(r, 422, code)
        if pointer:
            assert doc["errors"][0]["pointer"] == pointer

    def test_alpha_out_of_range_names_the_field(self, client):
        doc = assert_problem(client.post("/v1/normality", json={"values": [1, 2, 3], "alpha": 2}), 422, "invalid-request")
        assert doc["errors"][0]["pointer"] == "/alpha"

    def test_number_too_large_for_a_double(self, client):
        r = client.post("/v1/describe", data=b'{"values": [1, 2, 1e400]}', content_type="application/json")
        assert_problem(r, 422, "non-finite-value")

    @pytest.mark.parametrize("values", [[5.0] * 10, [1e7, 1e7 + 1e-9 * 0, 1e7], [1e7 + k * 1.9e-9 for k in range(5)]])
    def test_constant_data(self, client, values):
        assert_problem(client.post("/v1/describe", json={"values": values}), 422, "constant-data")

    @pytest.mark.parametrize("path, values", [("/v1/describe", [1.0]), ("/v1/normality", [1.0, 2.0]), ("/v1/describe", [None, None])])
    def test_too_few_values(self, client, path, values):
        assert_problem(client.post(path, json={"values": values}), 422, "too-few-values")

    @pytest.mark.parametrize(
        "body, code",
        [("1\n2\nabc", "invalid-value"), ("1\n2\n-inf", "non-finite-value"), ("a,b\n1,2\n3,4", "invalid-request"), ("1\n2\n1_000", "invalid-value")],
    )
    def test_bad_text(self, client, body, code):
        assert_problem(client.post("/v1/describe", data=body, content_type="text/csv"), 422, code)

    def test_get_without_values(self, client):
        assert_problem(client.get("/v1/describe"), 422, "invalid-request")


class TestInternalError:
    def test_unexpected_failure_is_a_bare_500(self):
        app = create_app({"TESTING": False})
        boom = Blueprint("boom", __name__)

        @boom.get("/boom")
        def explode():
            raise RuntimeError("secret internal detail")

        app.register_blueprint(boom)
        r = app.test_client().get("/boom")
        doc = assert_problem(r, 500, "internal-error")
        assert "secret" not in r.get_data(as_text=True)
        assert doc["title"] == "Internal error"
