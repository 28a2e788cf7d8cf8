"""POST/GET /v1/describe through the HTTP layer."""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest
import scipy.stats

JSON = "application/json"


def post_values(client, values, **options):
    return client.post("/v1/describe", json={"values": values, **options})


class TestDescribeJson:
    def test_demo_payload(self, client, demo_payload, conforms):
        r = client.post("/v1/describe", json=demo_payload)
        assert r.status_code == 200
        assert r.mimetype == JSON
        doc = r.get_json()
        conforms(doc, "DescribeResponse")
        values = np.array([v for v in demo_payload["values"] if v is not None])
        assert doc["input"] == {"form": "values", "n": values.size, "missing": 2, "label": None, "shards": None, "bins": None}
        # Reference: scipy.stats.skew / kurtosis with bias=False (the G1 / G2 conventions).
        assert doc["skewness"]["G1"] == pytest.approx(scipy.stats.skew(values, bias=False), rel=1e-12)
        assert doc["kurtosis"]["G2"] == pytest.approx(scipy.stats.kurtosis(values, bias=False), rel=1e-12)
        # Reference: numpy.median and numpy's default (linear) quantiles.
        assert doc["location"]["median"] == pytest.approx(np.median(values), rel=1e-15)
        assert doc["spread"]["q3"] == pytest.approx(np.quantile(values, 0.75), rel=1e-15)
        assert doc["service"]["name"] == "shapegauge"
        assert "statistician" in doc["caution"]

    def test_two_values_leave_shape_unavailable(self, client, conforms):
        r = post_values(client, [1.0, 2.0])
        assert r.status_code == 200
        doc = r.get_json()
        conforms(doc, "DescribeResponse")
        assert doc["skewness"]["G1"] == {"available": False, "reason": "skewness needs n >= 3"}
        assert doc["kurtosis"]["G2"]["available"] is False
        assert doc["location"]["mean"] == 1.5

    def test_options_change_labels_and_quantiles(self, client):
        values = [1, 2, 3, 4, 5, 6, 7, 8, 9, 30]
        default = post_values(client, values).get_json()
        relaxed = post_values(client, values, skewness_threshold=10.0, quantile_definition="hf6").get_json()
        assert default["skewness"]["label"] == "right_skewed"
        assert relaxed["skewness"]["label"] == "symmetric"
        # Reference: numpy.quantile(method="weibull") is Hyndman & Fan definition 6.
        assert relaxed["spread"]["q1"] == pytest.approx(np.quantile(values, 0.25, method="weibull"))

    def test_same_input_same_bytes(self, client, demo_payload):
        assert client.post("/v1/describe", json=demo_payload).data == client.post("/v1/describe", json=demo_payload).data


class TestDescribeText:
    @pytest.mark.parametrize(
        "body, mimetype, query, n, missing",
        [
            ("1.5\n2.5\n\n4\nNA\n#N/A\n7.25\n", "text/plain", "", 4, 3),
            ("1.5,2.5,,4,#DIV/0!,7.25", "text/csv", "", 4, 2),
            ("weight\n1.5\n2.5\n4\n7.25", "text/csv", "", 4, 0),
            ("1,5;2,5;4;7,25", "text/csv", "?decimal=,", 4, 0),
            ("a\tb\n9\t1.5\n9\t2.5\n9\t4\n9\t7.25", "text/plain", "?column=b", 4, 0),
        ],
    )
    def test_spreadsheet_bodies(self, client, body, mimetype, query, n, missing):
        r = client.post("/v1/describe" + query, data=body, content_type=mimetype)
        assert r.status_code == 200, r.get_json()
        doc = r.get_json()
        assert (doc["input"]["n"], doc["input"]["missing"]) == (n, missing)
        # Reference: the mean of 1.5, 2.5, 4, 7.25 by hand.
        assert doc["location"]["mean"] == pytest.approx(15.25 / 4)

    def test_header_names_the_sample(self, client):
        doc = client.post("/v1/describe", data="weight (kg)\n1\n2\n4", content_type="text/csv").get_json()
        assert doc["input"]["label"] == "weight (kg)"

    @pytest.mark.parametrize("body, column", [("a,b\n", "a"), ("a;b;c\n", "3")])
    def test_header_without_data_lines_is_too_few_values(self, client, body, column):
        # Once a 500 (found by fuzzing): a table header and nothing under it.
        r = client.post(f"/v1/describe?column={column}", data=body, content_type="text/csv")
        assert (r.status_code, r.mimetype) == (422, "application/problem+json")
        assert r.get_json()["type"] == "/problems/too-few-values"

    def test_options_in_query(self, client):
        r = client.post("/v1/describe?missing=reject", data="1\n2\n\n3", content_type="text/plain")
        assert r.status_code == 422
        assert r.get_json()["errors"][0]["line"] == 3


class TestSpreadsheetOutput:
    def test_csv_rows_parse_and_match_json(self, client, demo_payload):
        as_json = client.post("/v1/describe", json=demo_payload).get_json()
        r = client.post("/v1/describe", json=demo_payload, headers={"Accept": "text/csv"})
        assert r.mimetype == "text/csv"
        rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
        assert rows[0] == ["key", "value"]
        table = dict(rows[1:])
        assert float(table["skewness.G1"]) == as_json["skewness"]["G1"]
        assert table["skewness.label"] == as_json["skewness"]["label"]
        assert table["input.missing"] == "2"

    def test_format_query_gives_csv(self, client, demo_payload):
        r = client.post("/v1/describe?format=csv", json=demo_payload)
        assert r.mimetype == "text/csv"

    def test_get_field_for_a_cell_formula(self, client):
        values = "2.1,2.4,2.2,3.9,2.8,2.5,2.6,5.1"
        r = client.get(f"/v1/describe?values={values}&field=skewness.G1")
        assert r.status_code == 200 and r.mimetype == "text/plain"
        as_json = client.get(f"/v1/describe?values={values}").get_json()
        assert float(r.get_data(as_text=True)) == as_json["skewness"]["G1"]
        # Reference: scipy.stats.skew(bias=False).
        x = np.array([float(v) for v in values.split(",")])
        assert float(r.get_data(as_text=True)) == pytest.approx(scipy.stats.skew(x, bias=False), rel=1e-12)

    def test_unavailable_and_null_fields_give_an_empty_cell_with_the_reason(self, client):
        r = client.get("/v1/describe?values=1,2,3&field=kurtosis.G2")
        assert (r.status_code, r.get_data(as_text=True)) == (200, "")
        assert "kurtosis needs n >= 4" in r.headers["Shapegauge-Empty-Reason"]
        r = client.get("/v1/normality?values=1,2,3,4,5&field=verdict.normal")
        assert (r.status_code, r.get_data(as_text=True)) == (200, "")
        assert r.headers["Shapegauge-Empty-Reason"].startswith("null")

    @pytest.mark.parametrize("field, status", [("skewness", 422), ("skewness.nope", 422)])
    def test_bad_fields(self, client, field, status):
        r = client.get(f"/v1/describe?values=1,2,3&field={field}")
        assert r.status_code == status
        assert r.mimetype == "application/problem+json"
