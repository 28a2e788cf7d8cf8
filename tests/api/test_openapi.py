"""The OpenAPI document: generated from the schemas, valid, committed, served."""

from __future__ import annotations

from pathlib import Path

import yaml
from openapi_spec_validator import validate

from service.api.openapi import build_spec, spec_yaml

COMMITTED = Path(__file__).resolve().parents[2] / "openapi" / "openapi.yaml"


def test_generated_spec_is_valid_openapi():
    validate(build_spec())


def test_committed_spec_matches_generated():
    # Regenerate with `make openapi` after changing a schema.
    assert COMMITTED.read_text() == spec_yaml()


def test_served_spec_is_the_generated_one(client):
    assert client.get("/openapi.json").get_json() == yaml.safe_load(spec_yaml())


def test_every_analysis_operation_has_an_example():
    for path, ops in build_spec()["paths"].items():
        if path.startswith("/v1/"):
            body = ops["post"]["requestBody"]["content"]["application/json"]
            assert body["examples"], path


def test_conformance_check_rejects_drift(client, demo_payload, conforms):
    """The check the other API tests rely on fails on an undeclared, a mistyped and a
    missing field, so it cannot pass vacuously."""
    import copy

    import pytest

    good = client.post("/v1/describe", json=demo_payload).get_json()
    conforms(good, "DescribeResponse")
    extra, mistyped, missing = (copy.deepcopy(good) for _ in range(3))
    extra["skewness"]["extra"] = 1
    mistyped["skewness"]["G1"] = "0.5"
    del missing["spread"]["mad"]
    for bad in (extra, mistyped, missing):
        with pytest.raises(AssertionError):
            conforms(bad, "DescribeResponse")


def test_every_request_example_is_answered(client, conforms):
    """The examples in the OpenAPI document are real requests: each gets a 200 that
    conforms to the documented response."""
    spec = build_spec()
    for path, ops in spec["paths"].items():
        if not path.startswith("/v1/"):
            continue
        content = ops["post"]["requestBody"]["content"]["application/json"]
        media = ops["post"]["responses"]["200"]["content"]
        for name, example in content["examples"].items():
            r = client.post(path, json=example["value"])
            assert r.status_code == 200, (path, name, r.get_json())
            if "application/json" in media:
                conforms(r.get_json(), media["application/json"]["schema"]["$ref"].rsplit("/", 1)[1])
            else:
                assert r.mimetype in media, (path, r.mimetype)
