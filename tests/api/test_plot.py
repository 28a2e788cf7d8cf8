"""POST /v1/plot (and GET): an SVG picture of a sample (DESIGN.md, the /v1/plot row).

The SVG parses as XML (xml.etree.ElementTree); it carries a title and a description
for screen readers (SVG 1.1 section 5.4 <title> and <desc>; WAI-ARIA role="img" with
aria-labelledby); axis labels and panel titles are text; kind = histogram | qq | both;
the same input gives the same bytes; a histogram input allows kind=histogram only; the
histogram panel has the Freedman-Diaconis bin count of numpy.histogram_bin_edges(x,
"fd"); and 200 000 values still give a small picture (the Q-Q plot thins to at most 2000
points).

How the SVG is read: matplotlib's SVG backend (svg.fonttype "none") writes each text as
a <text> element; every bar of the histogram is a <path> filled with the bar colour
(#c9d6e8, service/api/plots.py) and every Q-Q point a <use> of one marker inside the
data line's group. The legend repeats one of each; it is left out.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np
import pytest

SVG = "{http://www.w3.org/2000/svg}"
BAR_FILL = "fill: #c9d6e8"  # the bars' colour in service/api/plots.py
HEADINGS = {"histogram": "Histogram with fitted densities", "qq": "Normal Q-Q plot", "both": "Histogram and normal Q-Q plot"}
PANEL_TITLES = {"histogram": ["Histogram with fitted densities"], "qq": ["Normal Q-Q plot"],
                "both": ["Histogram with fitted densities", "Normal Q-Q plot"]}
AXIS_LABELS = {"histogram": ["value", "density"], "qq": ["standard normal quantile", "sample quantile"],
               "both": ["value", "density", "standard normal quantile", "sample quantile"]}


def picture(client, body: dict | None = None, query: str = ""):
    r = client.post("/v1/plot" + query, json=body) if body is not None else client.get("/v1/plot" + query)
    assert r.status_code == 200, r.get_data(as_text=True)
    assert r.mimetype == "image/svg+xml"
    return r


def parse(r) -> ET.Element:
    return ET.fromstring(r.data)


def texts(root: ET.Element) -> list[str]:
    return ["".join(t.itertext()) for t in root.iter(f"{SVG}text")]


def legend_ids(root: ET.Element) -> set[int]:
    return {id(e) for g in root.iter(f"{SVG}g") if (g.get("id") or "").startswith("legend") for e in g.iter()}


def bar_count(root: ET.Element) -> int:
    inside_legend = legend_ids(root)
    return sum(1 for p in root.iter(f"{SVG}path") if BAR_FILL in (p.get("style") or "") and id(p) not in inside_legend)


def qq_points(root: ET.Element) -> int:
    """The <use> elements of the data line: the line2d group with the most markers."""
    inside_legend = legend_ids(root)
    counts = [sum(1 for u in g.iter(f"{SVG}use")) for g in root.iter(f"{SVG}g")
              if (g.get("id") or "").startswith("line2d") and id(g) not in inside_legend]
    return max(counts)


def values(x) -> dict:
    return {"values": np.asarray(x, dtype=float).tolist()}


X = np.random.default_rng(7).lognormal(1.0, 0.4, 300)
HIST = {"histogram": {"edges": ["-inf", 9, 10, 11, 12, 13, 14, 16, "+inf"], "counts": [0, 8, 14, 7, 11, 5, 9, 4]}}


class TestAccessibleSvg:
    @pytest.mark.parametrize("kind", ["histogram", "qq", "both"])
    def test_title_and_description(self, client, kind):
        root = parse(picture(client, {**values(X), "kind": kind}))
        # SVG 1.1 section 5.4 and WAI-ARIA 1.2 (role img, aria-labelledby): the first
        # children are <title> and <desc>, and the root names them.
        title, desc = list(root)[:2]
        assert title.tag == f"{SVG}title" and desc.tag == f"{SVG}desc"
        assert root.get("role") == "img"
        assert root.get("aria-labelledby").split() == [title.get("id"), desc.get("id")]
        assert title.text == HEADINGS[kind]
        assert str(X.size) in desc.text and len(desc.text) > 60

    @pytest.mark.parametrize("kind", ["histogram", "qq", "both"])
    def test_text_stays_text(self, client, kind):
        words = texts(parse(picture(client, {**values(X), "kind": kind})))
        for expected in PANEL_TITLES[kind] + AXIS_LABELS[kind]:
            assert expected in words, (expected, words)

    def test_given_title_escaped(self, client):
        title = 'Kiln "A" & <B>'
        root = parse(picture(client, {**values(X), "kind": "qq", "title": title}))
        # XML 1.0 section 2.4: & and < escaped in character data; parsing gives them back.
        assert list(root)[0].text == title

    def test_label_from_a_csv_header(self, client):
        body = "thickness_mm\n" + "\n".join(f"{v:.4f}" for v in X[:60])
        r = client.post("/v1/plot?kind=both", data=body, content_type="text/csv")
        assert r.status_code == 200 and r.mimetype == "image/svg+xml"
        words = texts(parse(r))
        # The header names the values: the histogram's x axis and the Q-Q plot's y axis.
        assert words.count("thickness_mm") == 2 and "value" not in words and "sample quantile" not in words

    def test_description_gives_the_fitted_normal(self, client):
        desc = list(parse(picture(client, {**values(X), "kind": "histogram"})))[1].text
        # Reference: numpy mean and sd (ddof=1), in the description to 4 significant digits.
        assert f"mean {X.mean():.4g}, sd {X.std(ddof=1):.4g}" in desc


class TestKinds:
    @pytest.mark.parametrize("kind, panels", [("histogram", 1), ("qq", 1), ("both", 2)])
    def test_panels(self, client, kind, panels):
        root = parse(picture(client, {**values(X), "kind": kind}))
        axes = [g for g in root.iter(f"{SVG}g") if (g.get("id") or "").startswith("axes_")]
        assert len(axes) == panels
        assert (bar_count(root) > 0) == (kind != "qq")

    def test_default_is_both(self, client):
        assert list(parse(picture(client, values(X))))[0].text == HEADINGS["both"]

    def test_get_with_values(self, client):
        root = parse(picture(client, None, query="?values=1,2,3,5,8,13,21,34&kind=qq"))
        assert qq_points(root) == 8

    def test_unknown_kind(self, client, conforms):
        r = client.post("/v1/plot", json={**values(X), "kind": "pie"})
        assert r.status_code == 422 and r.mimetype == "application/problem+json"
        conforms(r.get_json(), "ProblemDocument")
        assert r.get_json()["errors"][0]["pointer"] == "/kind"


class TestHistogramInput:
    def test_kind_histogram_allowed(self, client):
        root = parse(picture(client, {**HIST, "kind": "histogram"}))
        # One bar per bin of the request (8 bins, the first empty: a zero-height bar).
        assert bar_count(root) == len(HIST["histogram"]["counts"])
        assert "58 values" in list(root)[1].text  # the counts sum to 58

    @pytest.mark.parametrize("kind", ["qq", "both"])
    def test_qq_refused(self, client, conforms, kind):
        r = client.post("/v1/plot", json={**HIST, "kind": kind})
        assert r.status_code == 422 and r.mimetype == "application/problem+json"
        doc = r.get_json()
        conforms(doc, "ProblemDocument")
        assert doc["errors"][0]["pointer"] == "/kind" and "raw values" in doc["detail"]


class TestBins:
    @pytest.mark.parametrize("name, x", [
        ("lognormal_300", X),
        ("normal_1000", np.random.default_rng(8).normal(50.0, 5.0, 1000)),
        ("uniform_40", np.random.default_rng(9).uniform(0.0, 1.0, 40)),
        ("bimodal_500", np.concatenate([np.random.default_rng(10).normal(0, 1, 250), np.random.default_rng(11).normal(5, 1, 250)])),
    ])
    def test_freedman_diaconis(self, client, name, x):
        # Reference: numpy.histogram_bin_edges(x, "fd") (Freedman & Diaconis 1981: width
        # 2 IQR n^(-1/3)); these samples need between 3 and 200 bins.
        expected = np.histogram_bin_edges(x, "fd").size - 1
        assert 3 <= expected <= 200
        assert bar_count(parse(picture(client, {**values(x), "kind": "histogram"}))) == expected

    def test_at_most_200_bins(self, client):
        # A heavy-tailed sample whose IQR is tiny against its range: FD would ask for
        # thousands of bins (numpy.histogram_bin_edges); the picture keeps to 200, the
        # limit its description states.
        x = np.random.default_rng(12).standard_cauchy(2000)
        assert np.histogram_bin_edges(x, "fd").size - 1 > 1000
        root = parse(picture(client, {**values(x), "kind": "histogram"}))
        assert 5 <= bar_count(root) <= 200
        assert "at most 200 bins" in list(root)[1].text


class TestDeterminism:
    @pytest.mark.parametrize("body", [{**values(X), "kind": "both"}, {**HIST, "kind": "histogram"}], ids=["values", "histogram"])
    def test_same_bytes_twice(self, client, body):
        # DESIGN.md: the same input gives the same output (no date, fixed ids).
        assert picture(client, body).data == picture(client, body).data


class TestLargeSample:
    def test_qq_thinned(self, client):
        x = np.random.default_rng(13).normal(size=200_000)
        small = picture(client, {**values(x[:2000]), "kind": "qq"})
        r = picture(client, {**values(x), "kind": "qq"})
        root = parse(r)
        # At most 2000 points drawn (plots.py MAX_QQ_POINTS, stated in the description);
        # the picture is no larger than that of a 2000-value sample, give or take 10%
        # for the band and the tick labels (regression bound), and below 1 MB (our
        # budget for an image a page loads; common practice).
        assert qq_points(root) == 2000
        assert "200000 values (2000 of them drawn)" in list(root)[1].text
        assert len(r.data) < 1.1 * len(small.data)
        assert len(r.data) < 1_000_000

    def test_small_sample_draws_every_point(self, client):
        assert qq_points(parse(picture(client, {**values(X), "kind": "qq"}))) == X.size

    def test_both_panels_large(self, client):
        x = np.random.default_rng(14).normal(size=200_000)
        r = picture(client, {**values(x), "kind": "both"})
        root = parse(r)
        assert qq_points(root) == 2000
        assert len(r.data) < 1_000_000
        # Reference: numpy.histogram_bin_edges(x, "fd") asks for 206 bins here, past the
        # 200 the description promises at most; the picture draws 200.
        assert np.histogram_bin_edges(x, "fd").size - 1 == 206
        assert bar_count(root) == 200
