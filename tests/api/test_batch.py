"""POST /v1/batch: many named samples in one request (DESIGN.md, the /v1/batch row).

One bad sample gets a problem document in its slot and leaves the others alone; every
good slot is the body of a single POST /v1/diagnose on the same sample with the same
options, minus the envelope fields the batch drops by design (``service`` and
``caution``; each slot keeps its own ``input`` and ``warnings``, see
service/api/monitoring.py); slots come back under the request's names in the request's
order; ``fields`` trims each slot; MAX_BATCH_SAMPLES and MAX_BATCH_VALUES give 413s; the
same request gives the same bytes. Every 200 is checked against the generated OpenAPI
document (BatchResponse) with undeclared fields forbidden.

The reference for a slot is our own /v1/diagnose (whose numbers tests/api/test_diagnose.py
checks against scipy and the separate endpoints); the batch contract is "identical to",
so equality is exact.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from service import create_app

from ..stats.partials_reference import partials_of
from .helpers import PROBLEM

DROPPED = ("service", "caution")  # removed from each slot by design (service/api/monitoring.py)
OPTIONS = {  # non-default options, so that a slot that ignored them would differ
    "alpha": 0.01,
    "seed": 11,
    "max_components": 3,
    "quantile_definition": "hf6",
    "tails": {"above": [1.5], "below": [0.2], "quantiles": [0.05, 0.95], "lower_limit": -2.0, "upper_limit": 6.0},
}


# ------------------------------------------------------------------ the 100 samples

def _summary(x: np.ndarray) -> dict:
    # The summary a caller would send: numpy moments, and the service's default
    # conventions G1 = g1 sqrt(n(n-1)) / (n-2) and G2 = (n-1)((n+1) g2 + 6) / ((n-2)(n-3))
    # (Joanes & Gill 1998).
    n = x.size
    m = float(x.mean())
    d = x - m
    m2, m3, m4 = (float(np.mean(d**k)) for k in (2, 3, 4))
    g1, g2 = m3 / m2**1.5, m4 / m2**2 - 3.0
    big_g1 = g1 * math.sqrt(n * (n - 1)) / (n - 2)
    big_g2 = (n - 1) / ((n - 2) * (n - 3)) * ((n + 1) * g2 + 6)
    return {"summary": {"n": int(n), "mean": m, "sd": float(x.std(ddof=1)), "skewness": big_g1, "kurtosis": big_g2,
                        "median": float(np.median(x))}}


def _values(x: np.ndarray, missing_every: int = 0) -> dict:
    out: list = np.round(x, 6).tolist()
    if missing_every:
        out[::missing_every] = [None] * len(out[::missing_every])
    return {"values": out}


def _histogram(x: np.ndarray, bins: int) -> dict:
    counts, edges = np.histogram(x, bins=bins)
    return {"histogram": {"edges": np.round(edges, 9).tolist(), "counts": counts.astype(int).tolist()}}


def _partials(x: np.ndarray, shards: int) -> dict:
    return {"partials": [partials_of(part) for part in np.array_split(x, shards)]}


def _draw(kind: str, rng: np.random.Generator, n: int) -> np.ndarray:
    if kind == "normal":
        return rng.normal(2.0, 1.0, n)
    if kind == "lognormal":
        return rng.lognormal(0.0, 0.6, n)
    if kind == "uniform":
        return rng.uniform(0.0, 4.0, n)
    if kind == "t3":
        return 2.0 + rng.standard_t(3.0, n)
    if kind == "bimodal":
        return np.where(rng.uniform(size=n) < 0.5, rng.normal(0.0, 0.5, n), rng.normal(3.5, 0.5, n))
    return np.round(rng.normal(2.0, 0.8, n), 1)  # "rounded": heavy ties


KINDS = ("normal", "lognormal", "uniform", "t3", "bimodal", "rounded")
BAD = "kiln_bad"


def hundred_samples() -> dict:
    """100 seeded samples in every form, named in a shuffled (not sorted) order, one bad."""
    rng = np.random.default_rng(20250101)
    made = []
    for i in range(99):
        kind = KINDS[i % len(KINDS)]
        n = int(rng.integers(20, 120))
        x = _draw(kind, rng, n)
        form = ("values", "values", "summary", "partials", "histogram")[i % 5]
        if form == "values":
            sample = _values(x, missing_every=7 if i % 3 == 0 else 0)
        elif form == "summary":
            sample = _summary(x)
        elif form == "partials":
            sample = _partials(x, 1 + i % 4)
        else:
            sample = _histogram(x, 8 + i % 5)
        made.append((f"{form}_{kind}_{i:02d}", sample))
    made.insert(37, (BAD, {"values": [1.0, 2.5, "err", 4.0, 3.0]}))
    order = rng.permutation(len(made))
    return {made[j][0]: made[j][1] for j in order}


SAMPLES = hundred_samples()
GOOD = [name for name in SAMPLES if name != BAD]


@pytest.fixture(scope="module")
def module_client():
    return create_app({"TESTING": True}).test_client()


@pytest.fixture(scope="module")
def batch_doc(module_client, conforms):
    r = send(module_client, {"samples": SAMPLES, **OPTIONS})
    assert r.status_code == 200, r.get_data(as_text=True)
    doc = r.get_json()
    conforms(doc, "BatchResponse")
    return doc


def send(client, body: dict, headers: dict | None = None):
    """POST the body as written: Flask's test client (json=...) sorts the keys, which
    would hide the order the batch must keep."""
    return client.post("/v1/batch", data=json.dumps(body), content_type="application/json", headers=headers or {})


def diagnose_body(client, conforms, sample: dict, options: dict) -> dict:
    r = client.post("/v1/diagnose", json={**sample, **options})
    assert r.status_code == 200, r.get_data(as_text=True)
    doc = r.get_json()
    conforms(doc, "DiagnoseResponse")
    return {k: v for k, v in doc.items() if k not in DROPPED}


def post_batch(client, conforms, body: dict, headers: dict | None = None) -> dict:
    r = send(client, body, headers)
    assert r.status_code == 200, r.get_data(as_text=True)
    doc = r.get_json()
    conforms(doc, "BatchResponse")
    return doc


def sample_size(sample: dict) -> int:
    if "values" in sample:
        return sum(v is not None for v in sample["values"])
    if "summary" in sample:
        return sample["summary"]["n"]
    if "partials" in sample:
        return sum(p["n"] for p in sample["partials"])
    return sum(sample["histogram"]["counts"])


# ------------------------------------------------------------------------- tests

class TestHundredSamples:
    def test_mix_of_forms(self):
        # The fixture really holds every form (a check of the test data itself).
        forms = {next(k for k in ("values", "summary", "partials", "histogram") if k in s) for s in SAMPLES.values()}
        assert len(SAMPLES) == 100 and forms == {"values", "summary", "partials", "histogram"}

    def test_names_in_request_order(self, batch_doc):
        # Contract (DESIGN.md, BatchRequest): results under the same names, in the same order.
        assert list(batch_doc["results"]) == list(SAMPLES)
        assert list(SAMPLES) != sorted(SAMPLES)  # the order is not also the sorted one

    def test_bad_slot_holds_a_problem(self, batch_doc, conforms):
        slot = batch_doc["results"][BAD]
        assert set(slot) == {"ok", "problem"} and slot["ok"] is False
        problem = slot["problem"]
        conforms(problem, "ProblemDocument")
        # RFC 9457 section 3.1: type, title, status, detail; the string is element 2.
        assert problem["status"] == 422 and problem["type"] == "/problems/invalid-value"
        assert problem["title"] and "string" in problem["detail"]
        assert problem["errors"][0]["pointer"] == f"/samples/{BAD}/values/2"

    def test_every_good_slot_is_ok(self, batch_doc):
        assert all(batch_doc["results"][name]["ok"] is True for name in GOOD)
        assert all(set(batch_doc["results"][name]) == {"ok", "result"} for name in GOOD)

    @pytest.mark.parametrize("name", GOOD)
    def test_slot_equals_single_diagnose(self, batch_doc, module_client, conforms, name):
        # Expected: POST /v1/diagnose on the same sample with the same options, minus
        # service and caution (dropped by design). The contract is identity between
        # the two endpoints, not a numerical reference; diagnose's numbers are checked
        # against scipy in tests/api/test_diagnose.py.
        expected = diagnose_body(module_client, conforms, SAMPLES[name], OPTIONS)
        assert batch_doc["results"][name]["result"] == expected

    @pytest.mark.parametrize("name", GOOD)
    def test_slot_input(self, batch_doc, name):
        # Counted from the request: non-null values, summary n, the shards' n, the
        # histogram's counts (DESIGN.md: input {form, n, missing}).
        assert batch_doc["results"][name]["result"]["input"]["n"] == sample_size(SAMPLES[name])

    def test_batch_input_totals(self, batch_doc):
        # The batch's own input counts what was analysed: the good samples' sizes and
        # their nulls, counted from the request.
        assert batch_doc["input"]["form"] == "batch"
        assert batch_doc["input"]["n"] == sum(sample_size(SAMPLES[name]) for name in GOOD)
        nulls = sum(s.get("values", []).count(None) for name, s in SAMPLES.items() if name != BAD)
        assert batch_doc["input"]["missing"] == nulls > 0
        assert batch_doc["warnings"] == []  # each slot carries its own


GOOD_PAIR = {"first": {"values": np.random.default_rng(5).normal(10.0, 2.0, 40).round(3).tolist()},
             "second": {"histogram": {"edges": [0, 1, 2, 3, 4, 5], "counts": [3, 9, 14, 8, 2]}}}
_FIVE = {"n": 10, "mean": 0.0, "sd": 1.0}


class TestBadSample:
    @pytest.mark.parametrize(
        "bad, pointer, status",
        [
            ({"values": [1.0, "2.0", 3.0, 4.0]}, "/samples/bad/values/1", 422),
            # Pearson (1916): g2 + 3 >= 1 + g1^2; g1 = 1 with g2 = -1.1 is no sample.
            # (pointer checked in TestBadSamplePointer)
            ({"summary": {**_FIVE, "skewness": 1.0, "kurtosis": -1.1}, "conventions": {"skewness": "g1", "kurtosis": "g2"}},
             None, 422),
            ({"summary": {**_FIVE, "sd": -1.0}}, "/samples/bad/summary/sd", 422),
            ({"values": [1.0, 2.0]}, None, 422),  # too few values (diagnose needs 3)
            ({"values": [4.2] * 30}, None, 422),  # constant data (DESIGN.md: a structured 422)
            ({"values": [[1.0, 2.0, 3.0, 4.0]]}, "/samples/bad/values/0", 422),  # DESIGN.md: [[...]] is a 422, not a flatten
            ({"values": [1.0, 2.0, 3.0], "summary": _FIVE}, "/samples/bad/summary", 422),  # two forms
            ([1.0, 2.0, 3.0], "/samples/bad", 422),  # not a sample object
            ({"histogram": {"edges": [0, 1, 2], "counts": [3, -1]}}, None, 422),
        ],
        ids=["string", "infeasible_summary", "negative_sd", "too_few", "constant", "nested", "two_forms", "not_an_object",
             "negative_count"],
    )
    def test_problem_in_its_slot_only(self, client, conforms, bad, pointer, status):
        doc = post_batch(client, conforms, {"samples": {"first": GOOD_PAIR["first"], "bad": bad, "second": GOOD_PAIR["second"]}})
        slot = doc["results"]["bad"]
        assert slot["ok"] is False
        conforms(slot["problem"], "ProblemDocument")
        assert slot["problem"]["status"] == status and slot["problem"]["detail"]
        if pointer:
            assert slot["problem"]["errors"][0]["pointer"] == pointer
        # The neighbours are not affected: the same as a batch without the bad sample.
        alone = post_batch(client, conforms, {"samples": GOOD_PAIR})
        assert doc["results"]["first"] == alone["results"]["first"]
        assert doc["results"]["second"] == alone["results"]["second"]
        assert list(doc["results"]) == ["first", "bad", "second"]

    def test_empty_batch_is_422(self, client, conforms):
        r = send(client, {"samples": {}})
        assert r.status_code == 422 and r.mimetype == PROBLEM
        conforms(r.get_json(), "ProblemDocument")


class TestBadSamplePointer:
    @pytest.mark.parametrize(
        "bad, pointer",
        [
            # Pearson (1916): g2 + 3 >= 1 + g1^2; g1 = 1 with g2 = -1.1 is no sample.
            ({"summary": {**_FIVE, "skewness": 1.0, "kurtosis": -1.1}, "conventions": {"skewness": "g1", "kurtosis": "g2"}},
             "/samples/bad/summary/kurtosis"),
            ({"histogram": {"edges": [0, 1, 2], "counts": [3, -1]}}, "/samples/bad/histogram/counts/1"),
            ({"histogram": {"edges": [0, 2, 1], "counts": [3, 1]}}, "/samples/bad/histogram/edges/2"),
            ({"partials": [{"n": 2, "mean": 0.0, "m2": -1.0, "m3": 0.0, "m4": 1.0}]}, "/samples/bad/partials/0"),
        ],
        ids=["infeasible_summary", "negative_count", "decreasing_edges", "negative_m2"],
    )
    def test_pointer_names_the_slot(self, client, conforms, bad, pointer):
        # RFC 6901 pointers into the request body: the sample sits at /samples/<name>,
        # as the schema-level errors of the same slot already say (e.g. /samples/bad/summary/sd).
        doc = post_batch(client, conforms, {"samples": {"bad": bad}})
        assert doc["results"]["bad"]["problem"]["errors"][0]["pointer"] == pointer


class TestFields:
    KEEP = ["verdict.label", "normality.verdict.normal", "describe.skewness.G1", "modality"]

    @pytest.mark.parametrize("name", sorted(GOOD_PAIR))
    def test_trimmed_to_the_dotted_keys(self, client, conforms, name):
        full = post_batch(client, conforms, {"samples": GOOD_PAIR})
        trimmed = post_batch(client, conforms, {"samples": GOOD_PAIR, "fields": self.KEEP})
        f, t = full["results"][name]["result"], trimmed["results"][name]["result"]
        # Reference: the same keys picked by hand from the untrimmed slot; a key naming
        # a group (modality) keeps the whole group.
        assert t == {
            "verdict": {"label": f["verdict"]["label"]},
            "normality": {"verdict": {"normal": f["normality"]["verdict"]["normal"]}},
            "describe": {"skewness": {"G1": f["describe"]["skewness"]["G1"]}},
            "modality": f["modality"],
        }

    def test_bad_slot_untouched_by_fields(self, client, conforms):
        doc = post_batch(client, conforms, {"samples": {**GOOD_PAIR, "bad": {"values": ["x", 1, 2]}}, "fields": ["verdict.label"]})
        assert doc["results"]["bad"]["ok"] is False
        assert doc["results"]["first"]["result"].keys() == {"verdict"}

    @pytest.mark.parametrize("key", ["verdict.nope", "nope", "verdict.label.deeper"])
    def test_unknown_key_is_422(self, client, conforms, key):
        # Contract of the brief: an unknown key is a 422 for the whole request (it is
        # the request that is wrong, not one sample).
        r = send(client, {"samples": GOOD_PAIR, "fields": [key]})
        assert r.status_code == 422, r.get_data(as_text=True)
        assert r.mimetype == PROBLEM
        assert r.get_json()["errors"][0]["pointer"] == "/fields"


class TestLimits:
    @staticmethod
    def small_client():
        return create_app({"TESTING": True, "MAX_BATCH_SAMPLES": 3, "MAX_BATCH_VALUES": 30}).test_client()

    @staticmethod
    def samples(count: int, size: int) -> dict:
        rng = np.random.default_rng(count * 100 + size)
        return {f"s{i}": {"values": rng.normal(size=size).round(4).tolist()} for i in range(count)}

    @pytest.mark.parametrize("count, size, status", [
        (3, 10, 200),  # 3 samples, 30 values: both limits reached, not passed
        (4, 5, 413),  # one sample too many
        (3, 11, 413),  # 33 values > 30
        (2, 16, 413),  # 32 values > 30
    ])
    def test_limits(self, conforms, count, size, status):
        r = send(self.small_client(), {"samples": self.samples(count, size)})
        assert r.status_code == status, r.get_data(as_text=True)
        if status == 413:
            # DESIGN.md, errors and limits: 413 for a sample or batch too large, as a problem document.
            assert r.mimetype == PROBLEM
            conforms(r.get_json(), "ProblemDocument")
            assert r.get_json()["type"] == "/problems/too-large"
        else:
            conforms(r.get_json(), "BatchResponse")

    def test_missing_values_count_towards_the_limit(self, conforms):
        # MAX_BATCH_VALUES counts the entries sent (config.py: "most raw values in one
        # batch"), nulls included, like MAX_VALUES ("missing ones included").
        body = {"samples": {"a": {"values": [1.0, 2.0, 3.5, 4.0] + [None] * 27}}}
        assert send(self.small_client(), body).status_code == 413


class TestDeterminism:
    def test_same_bytes_twice(self, client):
        # DESIGN.md: the same input always gives the same output. The problem document
        # in the bad slot carries the request id (RFC 9457 extension), so the id is fixed.
        body = {"samples": dict(list(SAMPLES.items())[:30]) | {BAD: SAMPLES[BAD]}, **OPTIONS}
        headers = {"X-Request-ID": "batch-determinism"}
        first = send(client, body, headers)
        second = send(create_app({"TESTING": True}).test_client(), body, headers)
        assert first.status_code == second.status_code == 200
        assert first.data == second.data

    def test_same_bytes_without_request_id(self, client):
        # With no problem in any slot, nothing in the body depends on the request.
        body = {"samples": {name: SAMPLES[name] for name in GOOD[:20]}, **OPTIONS}
        assert send(client, body).data == send(client, body).data


class TestGoal:
    X = {"values": np.random.default_rng(5).lognormal(0.0, 0.6, 80).round(4).tolist()}

    def test_goal_one_sample_mean(self, client, conforms):
        options = {"goal": "one_sample_mean"}
        expected = diagnose_body(client, conforms, self.X, options)
        assert expected["recommend"]["transform"] is not None  # the reference does offer one
        got = post_batch(client, conforms, {"samples": {"a": self.X}, **options})["results"]["a"]["result"]
        assert got["recommend"] == expected["recommend"]

    def test_goal_capability_with_limits(self, client, conforms):
        options = {"goal": "capability", "tails": {"lower_limit": 0.1, "upper_limit": 4.0}}
        expected = diagnose_body(client, conforms, self.X, options)
        assert "cp" in expected["recommend"]["capability"]  # the reference computes Cp
        got = post_batch(client, conforms, {"samples": {"a": self.X}, **options})["results"]["a"]["result"]
        assert got["recommend"]["capability"] == expected["recommend"]["capability"]
