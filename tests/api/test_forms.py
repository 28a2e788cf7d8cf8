"""The three aggregated input forms (summary, shard partials, histogram) through
POST /v1/describe and /v1/normality: the same moment tests as the raw values, 422s with
pointers for what no sample can have, order-independent merging, binned data, and the
spreadsheet (CSV) output of every form. Every 200 response is checked against the
generated OpenAPI document."""

from __future__ import annotations

import csv
import io
import logging
import math
import warnings

import numpy as np
import pytest
from scipy import stats

from ..stats import samples
from ..stats.exact import exact_moments
from ..stats.partials_reference import as_request, partials_of
from .helpers import post_ok, post_refused

RAW_ONLY = ["shapiro_wilk", "shapiro_francia", "anderson_darling", "lilliefors", "cramer_von_mises"]
MOMENT_TESTS = ["skewness_test", "kurtosis_test", "dagostino_pearson", "jarque_bera"]
RESPONSE = {"/v1/describe": "DescribeResponse", "/v1/normality": "NormalityResponse"}


def ok(client, conforms, path: str, body: dict, query: str = "") -> dict:
    return post_ok(client, conforms, path + query, body, RESPONSE[path])


def refused(client, conforms, path: str, body: dict) -> dict:
    return post_refused(client, conforms, path, body)


def quiet(fn, *args):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        return fn(*args)


def scipy_moment_tests(x: np.ndarray) -> dict:
    # Reference: scipy.stats.skewtest, kurtosistest, normaltest, jarque_bera on raw values.
    return {"skewness_test": quiet(stats.skewtest, x), "kurtosis_test": quiet(stats.kurtosistest, x),
            "dagostino_pearson": quiet(stats.normaltest, x), "jarque_bera": stats.jarque_bera(x)}


# --------------------------------------------------------------------------- summary

SKEW = {  # Reference: scipy.stats.skew; b1 = m3 / s^3 with the n-1 sd (Joanes & Gill 1998).
    "G1": lambda x: float(stats.skew(x, bias=False)),
    "g1": lambda x: float(stats.skew(x, bias=True)),
    "b1": lambda x: float(stats.moment(x, 3) / np.std(x, ddof=1) ** 3),
}
KURT = {  # Reference: scipy.stats.kurtosis (excess); b2 = m4 / s^4 - 3 (Joanes & Gill 1998).
    "G2": lambda x: float(stats.kurtosis(x, bias=False)),
    "g2": lambda x: float(stats.kurtosis(x, bias=True)),
    "b2": lambda x: float(stats.moment(x, 4) / np.std(x, ddof=1) ** 4 - 3.0),
}
CONVENTIONS = [("G1", "G2", "sample"), ("g1", "g2", "sample"), ("b1", "b2", "sample"), ("G1", "G2", "population")]


def summary_body(x: np.ndarray, skew_c: str = "G1", kurt_c: str = "G2", sd_c: str = "sample", **extra) -> dict:
    body = {
        "summary": {
            "n": int(x.size), "mean": float(np.mean(x)), "sd": float(np.std(x, ddof=1 if sd_c == "sample" else 0)),
            "skewness": SKEW[skew_c](x), "kurtosis": KURT[kurt_c](x), **extra,
        },
        "conventions": {"skewness": skew_c, "kurtosis": kurt_c},
    }
    if sd_c == "population":
        body["sd_convention"] = "population"
    return body


class TestSummaryNormality:
    @pytest.mark.parametrize("skew_c, kurt_c, sd_c", CONVENTIONS)
    @pytest.mark.parametrize("name", ["normal_n50", "lognormal_n500", "diabetes", "nile"])
    def test_moment_tests_equal_scipy_on_raw_values(self, client, conforms, name, skew_c, kurt_c, sd_c):
        x = samples.named(name)
        doc = ok(client, conforms, "/v1/normality", summary_body(x, skew_c, kurt_c, sd_c))
        assert doc["input"] == {"form": "summary", "n": x.size, "missing": 0, "label": None, "shards": None, "bins": None}
        for test, ref in scipy_moment_tests(x).items():
            got = doc["tests"][test]
            assert got["applicable"] is True
            assert got["statistic"] == pytest.approx(ref.statistic, rel=1e-9), test
            assert got["p_value"] == pytest.approx(ref.pvalue, rel=1e-9), test

    def test_raw_only_tests_and_verdict(self, client, conforms):
        doc = ok(client, conforms, "/v1/normality", summary_body(samples.named("diabetes")))
        for test in RAW_ONLY:
            assert doc["tests"][test]["applicable"] is False
            assert doc["tests"][test]["reason"] == "needs raw values: a summary carries only moments"
        assert doc["tests"]["chi_square"]["applicable"] is False and doc["tests"]["chi_square"]["reason"]
        verdict = doc["verdict"]
        assert verdict["primary_test"] == "dagostino_pearson"
        assert any("rests on the moments only" in reason for reason in verdict["reasons"])
        assert sorted(verdict["supporting"]["not_applicable"]) == sorted([*RAW_ONLY, "chi_square"])


class TestSummaryDescribe:
    @pytest.mark.parametrize("skew_c, kurt_c, sd_c", CONVENTIONS)
    @pytest.mark.parametrize("name", ["lognormal_n40", "nile"])
    def test_conventions_converted(self, client, conforms, name, skew_c, kurt_c, sd_c):
        x = samples.named(name)
        doc = ok(client, conforms, "/v1/describe", summary_body(x, skew_c, kurt_c, sd_c))
        # Reference: scipy on the raw values (SKEW, KURT above) and numpy.std(ddof=1).
        for key in ("G1", "g1", "b1"):
            assert doc["skewness"][key] == pytest.approx(SKEW[key](x), rel=1e-12), key
        for key in ("G2", "g2", "b2"):
            assert doc["kurtosis"][key] == pytest.approx(KURT[key](x), rel=1e-12), key
        assert doc["spread"]["sd"] == pytest.approx(np.std(x, ddof=1), rel=1e-14)

    def test_pearson_and_bowley_skewness(self, client, conforms):
        x = samples.named("diabetes")
        q1, med, q3 = (float(v) for v in np.quantile(x, [0.25, 0.5, 0.75]))
        doc = ok(client, conforms, "/v1/describe", summary_body(x, q1=q1, median=med, q3=q3))
        # Reference: Kenney & Keeping (1962): 3 (mean - median) / sd and
        # (q3 + q1 - 2 median) / (q3 - q1), with numpy on the raw values.
        assert doc["skewness"]["pearson_median"] == pytest.approx(3 * (x.mean() - med) / x.std(ddof=1), rel=1e-12)
        assert doc["skewness"]["quartile"] == pytest.approx((q3 + q1 - 2 * med) / (q3 - q1), rel=1e-12)
        assert doc["skewness"]["pearson_mode"]["available"] is False

    def test_without_quantiles(self, client, conforms):
        doc = ok(client, conforms, "/v1/describe", summary_body(samples.named("nile")))
        assert doc["skewness"]["pearson_median"] == {"available": False, "reason": "needs the median: median was not given in the summary"}
        assert doc["skewness"]["quartile"] == {"available": False, "reason": "needs the quartiles and the median"}


def _extreme(n: int) -> dict:
    """n-1 zeros and a one: the sample on Dalen's bounds (checked in tests/stats/test_summary.py)."""
    x = np.array([0.0] * (n - 1) + [1.0])
    return {"n": n, "mean": float(x.mean()), "sd": float(x.std(ddof=1))}


BASE = {"n": 10, "mean": 0.0, "sd": 1.0}


class TestSummaryRefused:
    @pytest.mark.parametrize(
        "body, pointer",
        [
            ({"summary": {**BASE, "n": 1}}, "/summary/n"),
            ({"summary": {**BASE, "n": 0}}, "/summary/n"),
            ({"summary": {**BASE, "n": 2.5}}, "/summary/n"),
            ({"summary": {**BASE, "n": 10.0}}, "/summary/n"),
            ({"summary": {**BASE, "n": "10"}}, "/summary/n"),
            ({"summary": {**BASE, "sd": 0.0}}, "/summary/sd"),
            ({"summary": {**BASE, "sd": -0.5}}, "/summary/sd"),
            # Pearson (1916): g2 + 3 >= 1 + g1^2; here g1 = 1 and g2 + 3 = 1.9.
            ({"summary": {**BASE, "skewness": 1.0, "kurtosis": -1.1}, "conventions": {"skewness": "g1", "kurtosis": "g2"}}, "/summary/kurtosis"),
            # Pearson (1916) without a skewness: g2 + 3 >= 1.
            ({"summary": {**BASE, "kurtosis": -2.5}, "conventions": {"kurtosis": "g2"}}, "/summary/kurtosis"),
            # Dalen (1987): |g1| <= (n-2)/sqrt(n-1) = 8/3 for n = 10.
            ({"summary": {**_extreme(10), "skewness": 8 / 3 * (1 + 1e-6)}, "conventions": {"skewness": "g1"}}, "/summary/skewness"),
            ({"summary": {**_extreme(10), "skewness": -3.0}, "conventions": {"skewness": "g1"}}, "/summary/skewness"),
            # Dalen (1987): g2 + 3 <= (n^2-3n+3)/(n-1) = 73/9 for n = 10.
            ({"summary": {**_extreme(10), "kurtosis": 73 / 9 * (1 + 1e-6) - 3}, "conventions": {"kurtosis": "g2"}}, "/summary/kurtosis"),
            ({"summary": {**BASE, "q1": 0.5, "median": 0.2}}, "/summary/median"),
            ({"summary": {**BASE, "median": 0.5, "q3": 0.4}}, "/summary/q3"),
            ({"summary": {**BASE, "q3": 2.0, "max": 1.0}}, "/summary/max"),
            ({"summary": {**BASE, "min": 0.1}}, "/summary/mean"),
            ({"summary": {**BASE, "max": -0.1}}, "/summary/mean"),
            # Bhatia & Davis (2000): population variance <= (max - mean)(mean - min) = 1.
            ({"summary": {**BASE, "min": -1.0, "max": 1.0, "sd": 1.1}}, "/summary/sd"),
            ({"summary": {**BASE, "n": 2, "skewness": 0.0}}, "/summary/skewness"),
            ({"summary": {**BASE, "n": 3, "kurtosis": 0.0}}, "/summary/kurtosis"),
            # Two forms: the pointer names the second in the order values, summary, partials,
            # histogram; no form: it points at values.
            ({"summary": BASE, "values": [1.0, 2.0, 3.0]}, "/summary"),
            ({"summary": BASE, "histogram": {"edges": [0, 1, 2], "counts": [1, 1]}}, "/histogram"),
            ({"summary": BASE, "partials": [{"n": 2, "mean": 0.0, "m2": 2.0, "m3": 0.0, "m4": 2.0}]}, "/partials"),
            ({}, "/values"),
            ({"missing": "drop"}, "/values"),
            ({"values": [1.0, 2.0, 3.0], "conventions": {"skewness": "g1"}}, "/conventions"),
            ({"histogram": {"edges": [0, 1, 2], "counts": [1, 1]}, "conventions": {"kurtosis": "b2"}}, "/conventions"),
            ({"summary": BASE, "conventions": {"skewness": "G2"}}, "/conventions/skewness"),
            ({"summary": BASE, "sd_convention": "n-1"}, "/sd_convention"),
        ],
    )
    @pytest.mark.parametrize("path", ["/v1/describe", "/v1/normality"])
    def test_refused_with_pointer(self, client, conforms, path, body, pointer):
        doc = refused(client, conforms, path, body)
        assert [e["pointer"] for e in doc["errors"]][:1] == [pointer], doc

    def test_bounds_attained_are_accepted(self, client, conforms):
        # The extreme sample itself (g1 = 8/3, g2 + 3 = 73/9 for n = 10, Dalen 1987) passes.
        body = {"summary": {**_extreme(10), "skewness": 8 / 3, "kurtosis": 73 / 9 - 3}, "conventions": {"skewness": "g1", "kurtosis": "g2"}}
        doc = ok(client, conforms, "/v1/describe", body)
        # Reference: scipy.stats.skew(bias=False) of nine zeros and a one.
        assert doc["skewness"]["G1"] == pytest.approx(stats.skew([0.0] * 9 + [1.0], bias=False), rel=1e-12)

    def test_median_too_far_from_the_mean(self, client, conforms):
        doc = refused(client, conforms, "/v1/describe", {"summary": {**BASE, "median": 5.0}})
        assert doc["errors"][0]["pointer"] == "/summary/median"

    @pytest.mark.parametrize(
        "body, pointer",
        [
            ({"values": [1.0, 2.0, 4.0, 8.0], "sd_convention": "population"}, "/sd_convention"),
            ({"summary": BASE, "sheppard": True}, "/sheppard"),
            ({"partials": [{"n": 2, "mean": 0.0, "m2": 2.0, "m3": 0.0, "m4": 2.0}], "sd_convention": "population"}, "/sd_convention"),
        ],
    )
    def test_options_of_another_form(self, client, conforms, body, pointer):
        doc = refused(client, conforms, "/v1/describe", body)
        assert doc["errors"][0]["pointer"] == pointer


# -------------------------------------------------------------------------- partials

SIZES = (1, 2, 7, 500, 3000)


def shards(seed: int, offset: float = 0.0) -> list[np.ndarray]:
    rng = np.random.default_rng(seed)
    return [offset + rng.gamma(3.0, size=k) + 0.1 * i for i, k in enumerate(SIZES)]


def shape_atol(offset: float, parts: list[np.ndarray]) -> float:
    """The shape tolerance from shard means stored as doubles: 10 ulp(offset)(1 + |g1|)/sd
    (first-order propagation; derived in tests/stats/test_partials.py::shape_tolerance)."""
    if not offset:
        return 1e-12
    x = np.concatenate(parts) - offset  # exact (Sterbenz)
    return 10 * abs(float(np.spacing(offset))) * (1 + abs(float(stats.skew(x)))) / float(np.std(x))


class TestPartialsForm:
    @pytest.mark.parametrize("seed, offset", [(21, 0.0), (22, 1e9)])
    def test_describe_equals_whole_sample(self, client, conforms, seed, offset):
        parts = shards(seed, offset)
        x = np.concatenate(parts)
        doc = ok(client, conforms, "/v1/describe", {"partials": [partials_of(s) for s in parts]})
        assert doc["input"]["form"] == "partials" and doc["input"]["shards"] == len(SIZES) and doc["input"]["n"] == x.size
        # Reference: exact rational moments of the concatenated values (tests/stats/exact.py),
        # and numpy.min / max.
        e = exact_moments(x)
        assert doc["location"]["mean"] == pytest.approx(float(e.mean), rel=1e-15)
        assert doc["spread"]["sd"] == pytest.approx(e.sd(), rel=2e-9)
        atol = shape_atol(offset, parts)
        assert doc["skewness"]["G1"] == pytest.approx(e.G1(), rel=1e-9, abs=atol)
        assert doc["kurtosis"]["G2"] == pytest.approx(e.G2(), rel=1e-9, abs=atol)
        assert (doc["spread"]["min"], doc["spread"]["max"]) == (x.min(), x.max())
        assert doc["spread"]["q1"] == {"available": False, "reason": "shard partials carry no quantiles"}

    def test_normality_equals_scipy_on_whole_sample(self, client, conforms):
        parts = shards(23)
        x = np.concatenate(parts)
        doc = ok(client, conforms, "/v1/normality", {"partials": [partials_of(s) for s in parts]})
        for test, ref in scipy_moment_tests(x).items():
            assert doc["tests"][test]["statistic"] == pytest.approx(ref.statistic, rel=1e-9), test
            assert doc["tests"][test]["p_value"] == pytest.approx(ref.pvalue, rel=1e-9), test
        for test in RAW_ONLY:
            assert doc["tests"][test]["reason"] == "needs raw values: shard partials carry only moments"
        assert doc["verdict"]["primary_test"] == "dagostino_pearson"
        assert any("rests on the merged moments only" in r for r in doc["verdict"]["reasons"])

    def test_extremes_need_every_shard(self, client, conforms):
        parts = [partials_of(s) for s in shards(24)]
        parts[2] = as_request([parts[2]], with_extremes=False)[0]
        doc = ok(client, conforms, "/v1/describe", {"partials": parts})
        assert doc["spread"]["min"] == {"available": False, "reason": "min was not given by every shard"}

    @pytest.mark.parametrize("path", ["/v1/describe", "/v1/normality"])
    def test_single_shard_equals_raw_values(self, client, conforms, path):
        x = np.random.default_rng(25).gamma(2.0, size=600)
        from_partials = ok(client, conforms, path, {"partials": [partials_of(x)]})
        from_values = ok(client, conforms, path, {"values": x.tolist()})
        # Reference: scipy and numpy on x.
        if path == "/v1/describe":
            assert from_partials["skewness"]["G1"] == pytest.approx(stats.skew(x, bias=False), rel=1e-12)
            assert from_partials["kurtosis"]["G2"] == pytest.approx(stats.kurtosis(x, bias=False), rel=1e-12)
            assert from_partials["spread"]["sd"] == pytest.approx(np.std(x, ddof=1), rel=1e-13)
        else:
            for test, ref in scipy_moment_tests(x).items():
                assert from_partials["tests"][test]["statistic"] == pytest.approx(ref.statistic, rel=1e-9)
        # And the same numbers as the raw-values response (a regression value, not a
        # reference): both are two-pass computations of the same sums.
        if path == "/v1/describe":
            for block, key in [("location", "mean"), ("spread", "sd"), ("skewness", "G1"), ("kurtosis", "G2"),
                               ("skewness", "b1"), ("kurtosis", "b2"), ("spread", "min"), ("spread", "max")]:
                assert from_partials[block][key] == pytest.approx(from_values[block][key], rel=1e-12), key
        else:
            for test in MOMENT_TESTS:
                assert from_partials["tests"][test]["statistic"] == pytest.approx(from_values["tests"][test]["statistic"], rel=1e-12)
                assert from_partials["tests"][test]["p_value"] == pytest.approx(from_values["tests"][test]["p_value"], rel=1e-10)


PERMUTATIONS = [list(np.random.default_rng(seed).permutation(len(SIZES))) for seed in range(5)] + [[4, 3, 2, 1, 0]]


class TestPartialsOrder:
    @pytest.mark.parametrize("order", PERMUTATIONS, ids=lambda o: "".join(map(str, o)))
    @pytest.mark.parametrize("path", ["/v1/describe", "/v1/normality"])
    def test_byte_identical_in_any_order(self, client, path, order):
        parts = [partials_of(s) for s in shards(26, 1e9)]
        reference = client.post(path, json={"partials": parts})
        shuffled = client.post(path, json={"partials": [parts[i] for i in order]})
        assert reference.status_code == shuffled.status_code == 200
        assert shuffled.data == reference.data


GOOD = {"n": 5, "mean": 0.0, "m2": 4.0, "m3": 0.0, "m4": 5.0}


class TestPartialsRefused:
    @pytest.mark.parametrize(
        "shard, pointer",
        [
            ({"m2": -1.0}, "/partials/1"),
            ({"n": 1, "m2": 1.0, "m4": 1.0}, "/partials/1"),
            ({"m2": 0.0, "m3": 0.5, "m4": 0.0}, "/partials/1"),
            ({"m4": 1.0}, "/partials/1"),  # Pearson (1916): n m4 / m2^2 = 0.31 < 1
            ({"min": 1.0, "max": -1.0}, "/partials/1"),
            ({"n": 0}, "/partials/1/n"),
            ({"n": 2.5}, "/partials/1/n"),
            ({"m3": "x"}, "/partials/1/m3"),
        ],
    )
    @pytest.mark.parametrize("path", ["/v1/describe", "/v1/normality"])
    def test_refused_with_pointer(self, client, conforms, path, shard, pointer):
        doc = refused(client, conforms, path, {"partials": [GOOD, {**GOOD, **shard}]})
        assert doc["errors"][0]["pointer"] == pointer

    def test_empty_list(self, client, conforms):
        doc = refused(client, conforms, "/v1/describe", {"partials": []})
        assert doc["errors"][0]["pointer"] == "/partials"

    def test_constant_merge(self, client, conforms):
        doc = refused(client, conforms, "/v1/describe", {"partials": [{"n": 3, "mean": 2.0, "m2": 0.0, "m3": 0.0, "m4": 0.0}] * 2})
        assert doc["type"] == "/problems/constant-data"

    def test_shard_beyond_dalen_bound(self, client, conforms):
        doc = refused(client, conforms, "/v1/describe", {"partials": [GOOD, {"n": 2, "mean": 0.0, "m2": 2.0, "m3": 0.0, "m4": 100.0}]})
        assert doc["errors"][0]["pointer"] == "/partials/1"


# ------------------------------------------------------------------------- histogram

N, SIGMA, H = 200_000, 4.0, 0.8


@pytest.fixture(scope="module")
def big():
    # Seeded (np.random.default_rng(2024)): 200 000 normal values, mean 50, sd 4.
    x = np.random.default_rng(2024).normal(50.0, SIGMA, N)
    counts, edges = np.histogram(x, bins=np.arange(30.0, 70.0 + 1e-9, H))
    return x, edges, counts


class TestHistogramForm:
    @pytest.mark.parametrize("sheppard", [False, True])
    def test_describe_close_to_raw(self, client, conforms, big, sheppard):
        x, edges, counts = big
        doc = ok(client, conforms, "/v1/describe", {"histogram": {"edges": edges.tolist(), "counts": counts.tolist()}, "sheppard": sheppard})
        assert doc["input"]["form"] == "histogram" and doc["input"]["bins"] == counts.size and doc["input"]["n"] == N
        s = float(np.std(x, ddof=1))
        # Reference: numpy.mean / std(ddof=1) / quantile of the raw values. Tolerances
        # (derived in tests/stats/test_histogram.py): mean 5 H / sqrt(12 n); sd 4 H / sqrt(12 n)
        # around sqrt(s^2 + H^2/12) without and s with Sheppard's correction (Sheppard 1898);
        # quartiles 0.08 H.
        assert abs(doc["location"]["mean"] - x.mean()) <= 5 * H / math.sqrt(12 * N)
        target = s if sheppard else math.sqrt(s * s + H * H / 12)
        assert abs(doc["spread"]["sd"] - target) <= 4 * H / math.sqrt(12 * N)
        for key, prob in (("q1", 0.25), ("q3", 0.75)):
            assert abs(doc["spread"][key] - np.quantile(x, prob)) <= 0.08 * H
        assert abs(doc["location"]["median"] - np.median(x)) <= 0.08 * H
        first, last = np.flatnonzero(counts)[[0, -1]]
        assert doc["spread"]["min"] == {"available": False, "reason": f"binned data: the smallest value lies in [{edges[first]:g}, {edges[first + 1]:g}]"}
        assert doc["spread"]["max"] == {"available": False, "reason": f"binned data: the largest value lies in [{edges[last]:g}, {edges[last + 1]:g}]"}
        assert ("Sheppard's corrections applied" in doc["methods"]["moments"]) is sheppard

    def test_chi_square_does_not_reject(self, client, conforms, big):
        _, edges, counts = big
        doc = ok(client, conforms, "/v1/normality", {"histogram": {"edges": edges.tolist(), "counts": counts.tolist()}})
        # Seeded result: normal data, p = 0.69 (regression value); any p >= 0.01 passes.
        assert doc["tests"]["chi_square"]["applicable"] is True and doc["tests"]["chi_square"]["p_value"] >= 0.01
        assert doc["verdict"]["primary_test"] == "chi_square"
        assert doc["verdict"]["normal"] is not False and doc["verdict"]["label"] != "not_normal"
        assert doc["tests"]["shapiro_wilk"]["reason"] == "needs raw values: a histogram has lost the individual values"
        assert doc["tests"]["skewness_test"]["reason"].startswith("moments from binned data")

    @pytest.mark.parametrize("low, high", [("-inf", "+inf"), (None, None), ("-inf", None), ("-Infinity", "inf")])
    def test_open_ended_bins(self, client, conforms, big, low, high):
        x, _, _ = big
        inner = np.arange(42.0, 58.0 + 1e-9, H)
        counts, _ = np.histogram(x, bins=np.concatenate([[-np.inf], inner, [np.inf]]))
        body = {"histogram": {"edges": [low, *inner.tolist(), high], "counts": counts.tolist()}}
        described = ok(client, conforms, "/v1/describe", body)
        tested = ok(client, conforms, "/v1/normality", body)
        assert described["spread"]["min"] == {"available": False, "reason": "binned data: the smallest value lies in [-inf, 42]"}
        assert described["spread"]["max"] == {"available": False, "reason": "binned data: the largest value lies in [58, inf]"}
        assert [w["code"] for w in described["warnings"]] == ["open-bins-modelled"]
        assert [w["code"] for w in tested["warnings"]] == ["open-bins-modelled"]
        # Reference: numpy.mean of the raw values; 5 H / sqrt(12 n) plus 3 sd / sqrt(n) for
        # the imputed open bins (see tests/stats/test_histogram.py).
        assert abs(described["location"]["mean"] - x.mean()) <= 5 * H / math.sqrt(12 * N) + 3 * SIGMA / math.sqrt(N)
        assert abs(described["location"]["median"] - np.median(x)) <= 0.08 * H
        assert tested["tests"]["chi_square"]["p_value"] >= 0.01  # seeded, as above
        assert "open-ended bins modelled" in tested["tests"]["dagostino_pearson"]["reason"]

    def test_gamma_is_rejected(self, client, conforms):
        g = np.random.default_rng(5).gamma(4.0, size=5000)
        counts, edges = np.histogram(g, bins=30)
        doc = ok(client, conforms, "/v1/normality", {"histogram": {"edges": edges.tolist(), "counts": counts.tolist()}})
        # Reference: scipy.stats.normaltest of the raw values rejects far below 0.01.
        assert stats.normaltest(g).pvalue < 1e-10
        assert doc["tests"]["chi_square"]["reject"] is True
        assert doc["verdict"]["label"] == "not_normal"

    def test_too_few_classes(self, client, conforms):
        doc = ok(client, conforms, "/v1/normality", {"histogram": {"edges": [0, 1, 2, 3, 4, 5], "counts": [2, 3, 4, 2, 1]}})
        assert doc["tests"]["chi_square"]["applicable"] is False
        assert "classes remain" in doc["tests"]["chi_square"]["reason"]
        assert doc["verdict"]["label"] == "insufficient_data"


class TestHistogramRefused:
    @pytest.mark.parametrize(
        "edges, counts, pointer",
        [
            ([0, 1, 1, 2], [1, 2, 3], "/histogram/edges/2"),
            ([0, 2, 1, 3], [1, 2, 3], "/histogram/edges/2"),
            ([0, 1, 2], [1, 2, 3], "/histogram/edges"),
            ([0, 1, 2, 3, 4], [1, 2, 3], "/histogram/edges"),
            ([0, 1, 2, 3], [1, -2, 3], "/histogram/counts/1"),
            ([0, 1, 2, 3], [1, 2.5, 3], "/histogram/counts/1"),
            ([0, "+inf", 2, 3], [1, 2, 3], "/histogram/edges/1"),
            ([0, 1, None, 3], [1, 2, 3], "/histogram/edges/2"),
            ([0, 1, 2, 3], [1, 0, 0], "/histogram/counts"),
            ([0, 1, 2, 3], [0, 5, 0], "/histogram/counts"),
            (["-inf", 0, 1, 2, "+inf"], [0, 0, 7, 0], "/histogram/counts"),
            ([0, 1, 2, "inf2"], [1, 2, 3], "/histogram/edges/3"),
            (["-inf", 1, 2, "-inf"], [1, 2, 3], "/histogram/edges/3"),
            (["+inf", 1, 2, 3], [1, 2, 3], "/histogram/edges/0"),
            (["low", 1, 2, 3], [1, 2, 3], "/histogram/edges/0"),
            ([0, 1, 2, 3], [1, "2", 3], "/histogram/counts/1"),
            ([0, 1, 2, 3], [1, True, 3], "/histogram/counts/1"),
            ([0, 1, 2, 3], "123", "/histogram/counts"),
        ],
    )
    @pytest.mark.parametrize("path", ["/v1/describe", "/v1/normality"])
    def test_refused_with_pointer(self, client, conforms, path, edges, counts, pointer):
        doc = refused(client, conforms, path, {"histogram": {"edges": edges, "counts": counts}})
        assert doc["errors"][0]["pointer"] == pointer


class TestHugeCounts:
    """A 500 never: counts too large for the arithmetic are a 4xx problem, or analysed."""

    @pytest.mark.parametrize(
        "path, body",
        [
            ("/v1/normality", {"summary": {"n": 10**17, "mean": 0.0, "sd": 1.0, "skewness": 0.01, "kurtosis": 0.01}}),
            ("/v1/normality", {"partials": [{"n": 10**17, "mean": 0.0, "m2": 1e17, "m3": 0.0, "m4": 3e17}]}),
            ("/v1/normality", {"histogram": {"edges": [0, 1, 2, 3, 4, 5], "counts": [1e17, 4e17, 6e17, 4e17, 1e17]}}),
            ("/v1/describe", {"histogram": {"edges": [0, 1, 2, 3], "counts": [1, 2, 3e20]}}),
            ("/v1/describe", {"histogram": {"edges": [0, 1, 2, 3], "counts": [1e300, 2e300, 1e300]}}),
        ],
        ids=["summary-n1e17", "partials-n1e17", "histogram-n1.6e18", "histogram-count3e20", "histogram-count1e300"],
    )
    def test_no_server_error(self, client, path, body):
        logging.disable(logging.CRITICAL)  # the service logs the traceback of a 500
        try:
            r = client.post(path, json=body)
        finally:
            logging.disable(logging.NOTSET)
        assert r.status_code != 500, r.get_json()

    def test_large_but_ordinary_counts(self, client, conforms):
        # 1.6e12 values in five bins: analysed.
        doc = ok(client, conforms, "/v1/normality", {"histogram": {"edges": [0, 1, 2, 3, 4, 5], "counts": [1e11, 4e11, 6e11, 4e11, 1e11]}})
        assert doc["input"]["n"] == 16 * 10**11


# ----------------------------------------------------------------- spreadsheet output


def leaves(doc, prefix: str = "") -> dict:
    """Dotted keys of a JSON document, written out here (lists by index, an empty list
    as one empty cell) to check the CSV against the JSON."""
    out: dict = {}
    if isinstance(doc, dict):
        for key, value in doc.items():
            out.update(leaves(value, f"{prefix}{key}."))
    elif isinstance(doc, list):
        if not doc:
            out[prefix[:-1]] = ""
        for i, value in enumerate(doc):
            out.update(leaves(value, f"{prefix}{i}."))
    else:
        out[prefix[:-1]] = doc
    return out


def unavailable(doc, prefix: str = "") -> dict:
    """Dotted key -> reason of every {"available": false, "reason": ...} in the document."""
    out: dict = {}
    if isinstance(doc, dict):
        if doc.get("available") is False:
            return {prefix[:-1]: doc["reason"]}
        for key, value in doc.items():
            out.update(unavailable(value, f"{prefix}{key}."))
    elif isinstance(doc, list):
        for i, value in enumerate(doc):
            out.update(unavailable(value, f"{prefix}{i}."))
    return out


def cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    return str(value)


FORM_BODIES = {
    "values": lambda: {"values": [1.0, 2.0, 4.0]},
    "values-n40": lambda: {"values": samples.named("lognormal_n40").tolist()},
    "summary": lambda: summary_body(samples.named("nile"), median=float(np.median(samples.named("nile")))),
    "partials": lambda: {"partials": [partials_of(s) for s in shards(27)]},
    "histogram": lambda: {"histogram": {"edges": ["-inf", 0, 1, 2, 3, 4, "+inf"], "counts": [3, 10, 25, 30, 20, 12]}},
}


class TestSpreadsheetOutput:
    @pytest.mark.parametrize("form", list(FORM_BODIES))
    @pytest.mark.parametrize("path", ["/v1/describe", "/v1/normality"])
    def test_csv_rows_match_json(self, client, conforms, path, form):
        body = FORM_BODIES[form]()
        as_json = ok(client, conforms, path, body)
        r = client.post(path + "?format=csv", json=body)
        assert r.status_code == 200 and r.mimetype == "text/csv"
        rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
        assert rows[0] == ["key", "value"]
        assert all(len(row) == 2 for row in rows)
        table = dict(rows[1:])
        assert len(table) == len(rows) - 1  # keys are unique
        expected = leaves(as_json)
        assert list(table) == list(expected)
        for key, value in expected.items():
            if isinstance(value, float):
                assert float(table[key]) == value, key  # floats round-trip exactly (repr)
            else:
                assert table[key] == cell(value), key
        assert table["input.form"] == ("values" if form.startswith("values") else form)
        for key, reason in unavailable(as_json).items():
            assert table[f"{key}.available"] == "false"
            assert table[f"{key}.reason"] == reason

    @pytest.mark.parametrize(
        "form, path, key",
        [
            ("values", "/v1/describe", "kurtosis.G2"),
            ("summary", "/v1/describe", "location.mode"),
            ("summary", "/v1/describe", "spread.min"),
            ("partials", "/v1/describe", "spread.q1"),
            ("histogram", "/v1/describe", "spread.max"),
            ("histogram", "/v1/describe", "spread.mad"),
            ("values", "/v1/normality", "verdict.practical.excess_kurtosis"),
        ],
    )
    def test_unavailable_fields_flatten(self, client, form, path, key):
        r = client.post(path, json=FORM_BODIES[form](), headers={"Accept": "text/csv"})
        table = dict(list(csv.reader(io.StringIO(r.get_data(as_text=True))))[1:])
        assert table[f"{key}.available"] == "false"
        assert table[f"{key}.reason"]
        assert key not in table
