"""Request helpers shared by the API tests (not tests themselves)."""

from __future__ import annotations

import json
from importlib import resources

import numpy as np

PROBLEM = "application/problem+json"


def example(name: str) -> dict:
    """A shipped example body from service/api/examples/."""
    return json.loads(resources.files("service.api").joinpath("examples", name).read_text())


def values(x) -> dict:
    return {"values": np.asarray(x, dtype=float).tolist()}


def post_ok(client, conforms, path: str, body: dict, component: str) -> dict:
    """POST a JSON body; the answer is a 200 that conforms to ``component`` of the spec."""
    r = client.post(path, json=body)
    assert r.status_code == 200, r.get_data(as_text=True)
    doc = r.get_json()
    conforms(doc, component)
    return doc


def post_refused(client, conforms, path: str, body: dict, status: int = 422) -> dict:
    """POST a JSON body; the answer is a problem document with ``status``."""
    r = client.post(path, json=body)
    assert r.status_code == status, r.get_data(as_text=True)
    assert r.mimetype == PROBLEM
    doc = r.get_json()
    conforms(doc, "ProblemDocument")
    return doc
