"""POST /v1/compare: a sample against a reference sample (DESIGN.md, the /v1/compare row).

The numbers through HTTP against scipy; the drift labels on seeded cases (stable,
shifted by half a reference sd, rescaled by 1.6, reshaped with the same mean and sd);
``material`` against the effect-size thresholds at a huge n where every test rejects;
two histograms on shared edges by the chi-square test of homogeneity; 422s for
mismatched edges and for forms that cannot be compared. Every 200 is checked against the
generated OpenAPI document (CompareResponse) with undeclared fields forbidden.
"""

from __future__ import annotations

import json
import math
from importlib import resources

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from ..stats.compare_reference import SCIPY_TWO_SAMPLE, quiet
from .helpers import post_ok, post_refused, values

N = 2000
MU, SD = 10.0, 2.0


def ok(client, conforms, body: dict) -> dict:
    return post_ok(client, conforms, "/v1/compare", body, "CompareResponse")


def refused(client, conforms, body: dict, status: int = 422) -> dict:
    return post_refused(client, conforms, "/v1/compare", body, status)


def pair(x, y, **options) -> dict:
    return {"sample": values(x), "reference": values(y), **options}


def standardised(dist, size: int, seed: int) -> np.ndarray:
    """Draws of ``dist`` moved to mean MU and sd SD by its exact population moments."""
    draws = dist.rvs(size=size, random_state=np.random.default_rng(seed))
    return MU + SD * (draws - dist.mean()) / dist.std()


REFERENCE = lambda: np.random.default_rng(100).normal(MU, SD, N)  # noqa: E731
CASES = {
    "stable": lambda: np.random.default_rng(101).normal(MU, SD, N),
    "shifted": lambda: np.random.default_rng(102).normal(MU + 0.5 * SD, SD, N),
    "rescaled": lambda: np.random.default_rng(103).normal(MU, 1.6 * SD, N),
    # A standardised Rayleigh: same mean and sd, skewness 0.63, and nearly the normal's
    # mean absolute deviation about the median (0.7987 sd against sqrt(2/pi) = 0.7979 sd;
    # scipy.stats.rayleigh.expect), so the Brown-Forsythe spread test has nothing to see.
    "reshaped": lambda: standardised(stats.rayleigh(), N, 104),
}


def example() -> dict:
    return json.loads(resources.files("service.api").joinpath("examples", "compare.json").read_text())


EXAMPLE_REFERENCE = SCIPY_TWO_SAMPLE  # name -> the scipy call that defines it


class TestExample:
    @pytest.mark.parametrize("name", sorted(EXAMPLE_REFERENCE))
    def test_example_against_scipy(self, client, conforms, name):
        body = example()
        doc = ok(client, conforms, body)
        x, y = np.array(body["sample"]["values"]), np.array(body["reference"]["values"])
        # Reference: scipy.stats.ks_2samp, anderson_ksamp(variant="midrank"),
        # cramervonmises_2samp, ttest_ind(equal_var=False), levene(center="median") on
        # the example's values.
        ref = EXAMPLE_REFERENCE[name](x, y)
        assert_allclose(doc["tests"][name]["statistic"], ref.statistic, rtol=1e-12)
        assert_allclose(doc["tests"][name]["p_value"], ref.pvalue, rtol=1e-10)

    def test_example_input(self, client, conforms):
        body = example()
        doc = ok(client, conforms, body)
        assert doc["input"]["n"] == len(body["sample"]["values"])
        assert doc["input"]["reference"]["n"] == len(body["reference"]["values"])
        assert doc["input"]["form"] == doc["input"]["reference"]["form"] == "values"

    def test_same_bytes_twice(self, client):
        # DESIGN.md: same input, same output.
        body = pair(CASES["shifted"](), REFERENCE())
        assert client.post("/v1/compare", json=body).data == client.post("/v1/compare", json=body).data


class TestDriftLabel:
    @pytest.mark.parametrize("case, label, flag", [
        ("stable", "stable", None),
        ("shifted", "shifted", "location_shift"),
        ("rescaled", "rescaled", "scale_change"),
        ("reshaped", "reshaped", "skewness_change"),
    ])
    def test_seeded_cases(self, client, conforms, case, label, flag):
        x, y = CASES[case](), REFERENCE()
        doc = ok(client, conforms, pair(x, y))
        assert doc["verdict"]["label"] == label, doc["verdict"]
        # The label follows the tests it rests on: scipy.stats.anderson_ksamp (primary),
        # ttest_ind(equal_var=False) (location), levene(center="median") (spread).
        ad = quiet(stats.anderson_ksamp, [x, y], variant="midrank").pvalue
        welch = stats.ttest_ind(x, y, equal_var=False).pvalue
        bf = stats.levene(x, y, center="median").pvalue
        expected = ("stable" if ad >= 0.05 else "shifted" if welch < 0.05 else "rescaled" if bf < 0.05 else "reshaped")
        assert expected == label
        assert doc["verdict"]["primary_test"] == "anderson_darling"
        if flag:
            assert flag in doc["verdict"]["flags"]
        else:
            assert "material" not in doc["verdict"]["flags"] and doc["verdict"]["material"] is False

    @pytest.mark.parametrize("dist", ["uniform", "lognormal"])
    def test_reshaped_with_equal_sd(self, client, conforms, dist):
        shape = {"uniform": stats.uniform(), "lognormal": stats.lognorm(0.5)}[dist]
        x, y = standardised(shape, N, 105), REFERENCE()
        doc = ok(client, conforms, pair(x, y))
        # Reference: the population mean and sd are equal by construction; the sample
        # sd ratio (numpy, ddof=1) is within 6% of 1.
        assert abs(x.std(ddof=1) / y.std(ddof=1) - 1) < 0.06
        assert doc["verdict"]["label"] == "reshaped", doc["verdict"]


class TestMaterial:
    @pytest.mark.parametrize("case", [
        "shifted",
        "rescaled",
        pytest.param("reshaped"),
    ])
    def test_large_effects_are_material(self, client, conforms, case):
        # Large effects by construction: a shift of 0.5 sd (Cohen 1988: "medium"), an sd
        # ratio of 1.6 (outside 0.8-1.25, common practice), a change of skewness of
        # about 0.63 (the standardised Rayleigh's, scipy.stats.rayleigh.stats) that crosses
        # Bulmer's (1979) 1/2 for "approximately symmetric" (recalled from memory).
        doc = ok(client, conforms, pair(CASES[case](), REFERENCE()))
        effects = doc["effects"]
        assert doc["verdict"]["material"] is True and effects["material"] is True and effects["reasons"]
        assert "material" in doc["verdict"]["flags"]

    @pytest.mark.parametrize("case, shift, ratio", [
        # By construction (numpy, ddof=1): mean + 0.5 sd and sd x 1.6; tolerances
        # 4 standard errors (sd/sqrt(n) for the shift, about 1/sqrt(n) for the ratio).
        ("shifted", 0.5, 1.0),
        ("rescaled", 0.0, 1.6),
    ])
    def test_effect_sizes(self, client, conforms, case, shift, ratio):
        x, y = CASES[case](), REFERENCE()
        effects = ok(client, conforms, pair(x, y))["effects"]
        assert_allclose(effects["mean_shift_in_sd"], (x.mean() - y.mean()) / y.std(ddof=1), rtol=1e-10)
        assert_allclose(effects["sd_ratio"], x.std(ddof=1) / y.std(ddof=1), rtol=1e-12)
        assert abs(effects["mean_shift_in_sd"] - shift) < 4 * math.sqrt(2 / N) * ratio
        assert abs(effects["sd_ratio"] - ratio) < 4 * ratio / math.sqrt(N)

    def test_trivial_shift_at_huge_n(self, client, conforms):
        # A shift of 0.03 sd with 100 000 values each: Welch's test rejects (z about
        # 0.03 sqrt(50 000) = 6.7) and so does Anderson-Darling, but 0.03 is far below
        # Cohen's (1988) "small" d = 0.2, the sd ratio is 1, and PSI is below 0.1.
        n = 100_000
        x = np.random.default_rng(201).normal(MU + 0.03 * SD, SD, n)
        y = np.random.default_rng(202).normal(MU, SD, n)
        doc = ok(client, conforms, pair(x, y))
        # Reference: scipy.stats.ttest_ind(equal_var=False) and anderson_ksamp reject.
        assert stats.ttest_ind(x, y, equal_var=False).pvalue < 1e-6
        assert quiet(stats.anderson_ksamp, [x, y], variant="midrank").pvalue <= 0.001
        assert doc["tests"]["location"]["reject"] is True and doc["tests"]["anderson_darling"]["reject"] is True
        assert doc["verdict"]["label"] == "shifted"
        assert doc["verdict"]["material"] is False and doc["effects"]["reasons"] == []
        assert "material" not in doc["verdict"]["flags"] and "not material" in doc["verdict"]["summary"]
        assert doc["stability"]["psi"] < 0.1


class TestAlpha:
    @pytest.mark.parametrize("alpha", [0.01, 0.2])
    def test_reject_at_alpha(self, client, conforms, alpha):
        x = np.random.default_rng(301).normal(0.15, 1.0, 150)
        y = np.random.default_rng(302).normal(0.0, 1.0, 150)
        doc = ok(client, conforms, pair(x, y, alpha=alpha))
        # Reference: scipy.stats.ks_2samp and ttest_ind(equal_var=False), p < alpha.
        assert doc["tests"]["kolmogorov_smirnov"]["reject"] == (stats.ks_2samp(x, y).pvalue < alpha)
        assert doc["tests"]["location"]["reject"] == (stats.ttest_ind(x, y, equal_var=False).pvalue < alpha)

    def test_large_shift_at_alpha_0_001(self, client, conforms):
        x, y = CASES["shifted"](), REFERENCE()
        # Reference: scipy.stats.ks_2samp rejects far below 0.001.
        assert stats.ks_2samp(x, y).pvalue < 1e-20
        doc = ok(client, conforms, pair(x, y, alpha=0.001))
        assert doc["verdict"]["label"] == "shifted"


EDGES = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0]


def histograms(a, b, edges=EDGES) -> dict:
    return {"sample": {"histogram": {"edges": list(edges), "counts": list(a)}},
            "reference": {"histogram": {"edges": list(edges), "counts": list(b)}}}


HIST_CASES = {
    "similar": ([4, 12, 25, 33, 21, 9, 3, 1], [6, 14, 30, 29, 18, 8, 4, 2]),
    "shifted": ([1, 4, 10, 22, 35, 40, 28, 10], [8, 25, 44, 38, 20, 9, 3, 1]),
    "empty_shared_bin": ([5, 18, 30, 0, 22, 11, 4, 2], [7, 20, 26, 0, 25, 9, 6, 1]),
}


class TestHistograms:
    @pytest.mark.parametrize("case", sorted(HIST_CASES))
    def test_chi_square_homogeneity(self, client, conforms, case):
        a, b = HIST_CASES[case]
        doc = ok(client, conforms, histograms(a, b))
        # Reference: scipy.stats.chi2_contingency on the 2 x k table of counts (Pearson's
        # statistic, no Yates correction), bins empty in both dropped (their expected
        # count is 0 and they carry no information).
        table = np.array([a, b])
        table = table[:, table.sum(axis=0) > 0]
        ref = stats.chi2_contingency(table, correction=False)
        chi = doc["tests"]["chi_square"]
        assert chi["applicable"] is True
        assert_allclose(chi["statistic"], ref.statistic, rtol=1e-12)
        assert_allclose(chi["p_value"], ref.pvalue, rtol=1e-10)
        assert chi["reject"] == (ref.pvalue < 0.05)
        assert doc["verdict"]["primary_test"] == "chi_square"
        assert (doc["verdict"]["label"] == "stable") == (ref.pvalue >= 0.05)

    @pytest.mark.parametrize("case", sorted(HIST_CASES))
    def test_psi_on_shared_bins(self, client, conforms, case):
        a, b = (np.array(c, dtype=float) for c in HIST_CASES[case])
        stability = ok(client, conforms, histograms(a, b))["stability"]
        # Siddiqi (2006): PSI = sum (p_a - p_r) ln(p_a / p_r) over the shared bins; empty
        # shares raised to 1e-4 in both (compare.py's rule, read from the code).
        pa, pr = np.maximum(a / a.sum(), 1e-4), np.maximum(b / b.sum(), 1e-4)
        assert_allclose(stability["psi"], np.sum((pa - pr) * np.log(pa / pr)), rtol=1e-12)
        assert stability["bins"] == len(EDGES) - 1

    @pytest.mark.parametrize("case", sorted(HIST_CASES))
    def test_location_from_binned_moments(self, client, conforms, case):
        a, b = (np.array(c, dtype=float) for c in HIST_CASES[case])
        location = ok(client, conforms, histograms(a, b))["tests"]["location"]
        # Reference: scipy.stats.ttest_ind_from_stats(equal_var=False) on the binned mean
        # and sd (bin midpoints, n-1 divisor; no Sheppard correction, as requested by default).
        mid = (np.array(EDGES[:-1]) + np.array(EDGES[1:])) / 2

        def moments(c):
            m = np.sum(c * mid) / c.sum()
            return m, math.sqrt(np.sum(c * (mid - m) ** 2) / (c.sum() - 1)), c.sum()

        ref = stats.ttest_ind_from_stats(*moments(a), *moments(b), equal_var=False)
        assert_allclose(location["statistic"], ref.statistic, rtol=1e-10)
        assert_allclose(location["p_value"], ref.pvalue, rtol=1e-8)
        assert location["reason"]  # says it is approximate

    @pytest.mark.parametrize("name", ["kolmogorov_smirnov", "anderson_darling", "cramer_von_mises", "scale"])
    def test_raw_value_tests_not_applicable(self, client, conforms, name):
        doc = ok(client, conforms, histograms(*HIST_CASES["similar"]))
        assert doc["tests"][name]["applicable"] is False and doc["tests"][name]["reason"]

    def test_open_edges(self, client, conforms):
        edges = ["-inf", 1.0, 2.0, 3.0, 4.0, "+inf"]
        a, b = [3, 10, 25, 12, 2], [2, 14, 22, 15, 4]
        chi = ok(client, conforms, histograms(a, b, edges))["tests"]["chi_square"]
        # Reference: scipy.stats.chi2_contingency (the edges do not enter the statistic).
        assert_allclose(chi["statistic"], stats.chi2_contingency(np.array([a, b]), correction=False).statistic, rtol=1e-12)

    def test_input_reports_bins_of_both(self, client, conforms):
        doc = ok(client, conforms, histograms(*HIST_CASES["similar"]))
        assert doc["input"]["reference"]["bins"] == len(EDGES) - 1
        assert doc["input"]["bins"] == len(EDGES) - 1


GOOD = {"values": np.random.default_rng(400).normal(size=30).round(3).tolist()}
HIST = {"histogram": {"edges": EDGES, "counts": [4, 12, 25, 33, 21, 9, 3, 1]}}


class TestRefused:
    @pytest.mark.parametrize("sample, reference, pointer", [
        ({"histogram": {"edges": [0.0, 1.0, 2.5, 3.0], "counts": [3, 4, 5]}},
         {"histogram": {"edges": [0.0, 1.0, 2.0, 3.0], "counts": [3, 4, 5]}}, "/sample/histogram/edges"),
        ({"histogram": {"edges": [0.0, 1.0, 2.0], "counts": [3, 4]}},
         {"histogram": {"edges": [0.0, 1.0, 2.0, 3.0], "counts": [3, 4, 5]}}, "/sample/histogram/edges"),
        (GOOD, HIST, "/sample"),
        (HIST, GOOD, "/sample"),
        ({"summary": {"n": 30, "mean": 0.0, "sd": 1.0}}, {"summary": {"n": 30, "mean": 0.1, "sd": 1.0}}, "/sample"),
        (GOOD, {"partials": [{"n": 3, "mean": 0.0, "m2": 2.0, "m3": 0.0, "m4": 2.0}]}, "/sample"),
    ], ids=["different_edges", "different_bin_count", "values_vs_histogram", "histogram_vs_values",
            "summaries", "values_vs_partials"])
    def test_cannot_compare(self, client, conforms, sample, reference, pointer):
        doc = refused(client, conforms, {"sample": sample, "reference": reference})
        assert doc["errors"][0]["pointer"] == pointer

    @pytest.mark.parametrize("body, pointer", [
        ({"sample": GOOD}, "/reference"),
        ({"reference": GOOD}, "/sample"),
        ({"sample": GOOD, "reference": {"values": [1.0, "x", 3.0]}}, "/reference/values/1"),
        ({"sample": GOOD, "reference": GOOD, "alpha": 0.9}, "/alpha"),
    ])
    def test_invalid_request(self, client, conforms, body, pointer):
        doc = refused(client, conforms, body)
        assert doc["errors"][0]["pointer"] == pointer

    def test_pointer_names_the_reference(self, client, conforms):
        body = {"sample": HIST, "reference": {"histogram": {"edges": EDGES, "counts": [4, -1, 25, 33, 21, 9, 3, 1]}}}
        doc = refused(client, conforms, body)
        # RFC 6901 pointer into the request body.
        assert doc["errors"][0]["pointer"] == "/reference/histogram/counts/1"

    def test_constant_reference(self, client, conforms):
        # DESIGN.md: constant data is a structured 422, never NaN.
        doc = refused(client, conforms, {"sample": GOOD, "reference": {"values": [2.0] * 20}})
        assert doc["status"] == 422
