"""Shared fixtures: the app built by the factory, and a test client."""

from __future__ import annotations

import json
from importlib import resources

import pytest

from service import create_app


@pytest.fixture
def app():
    return create_app({"TESTING": True})


@pytest.fixture
def client(app):
    return app.test_client()


@pytest.fixture(scope="session")
def demo_payload() -> dict:
    return json.loads(resources.files("service.api").joinpath("examples", "demo.json").read_text())
