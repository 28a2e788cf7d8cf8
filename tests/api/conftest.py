"""Checks shared by the API tests: every response conforms to the generated OpenAPI
document, with no field the document does not declare."""

from __future__ import annotations

import copy

import pytest
from jsonschema import Draft202012Validator
from referencing import Registry, Resource
from referencing.jsonschema import DRAFT202012

from service.api.openapi import build_spec


def _strict(node):
    """Forbid undeclared properties everywhere, so a field added to a response but not
    to its schema fails the test instead of drifting."""
    if isinstance(node, dict):
        if "properties" in node and "additionalProperties" not in node:
            node["additionalProperties"] = False
        for value in node.values():
            _strict(value)
    elif isinstance(node, list):
        for value in node:
            _strict(value)
    return node


@pytest.fixture(scope="session")
def conforms():
    spec = _strict(copy.deepcopy(build_spec()))
    resource = Resource.from_contents(spec, default_specification=DRAFT202012)
    registry = Registry().with_resource("urn:spec", resource)

    def check(doc: dict, component: str) -> None:
        schema = {"$ref": f"urn:spec#/components/schemas/{component}"}
        validator = Draft202012Validator(schema, registry=registry)
        errors = sorted(validator.iter_errors(doc), key=lambda e: list(e.absolute_path))
        assert not errors, "\n".join(f"{list(e.absolute_path)}: {e.message}" for e in errors[:10])

    return check
