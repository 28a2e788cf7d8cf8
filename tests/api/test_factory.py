"""The application factory and its configuration."""

from __future__ import annotations

import os

import pytest

from service import create_app
from service.config import load_config


def test_defaults(monkeypatch):
    for name in [k for k in os.environ if k.startswith("SHAPEGAUGE_")]:
        monkeypatch.delenv(name)  # the defaults, whatever the machine running the tests sets
    app = create_app()
    assert not app.testing
    assert app.config["MAX_VALUES"] == 2_000_000
    assert app.config["MAX_CONTENT_LENGTH"] == app.config["MAX_BODY_BYTES"]


def test_explicit_config_wins():
    assert create_app({"TESTING": True, "MAX_VALUES": 7}).config["MAX_VALUES"] == 7


def test_environment(monkeypatch):
    monkeypatch.setenv("SHAPEGAUGE_MAX_VALUES", "1_000")
    monkeypatch.setenv("SHAPEGAUGE_DEFAULT_ALPHA", "0.01")
    app = create_app()
    assert app.config["MAX_VALUES"] == 1000
    assert app.config["DEFAULT_ALPHA"] == 0.01


def test_bad_environment_value_refuses_to_start():
    with pytest.raises(ValueError, match="SHAPEGAUGE_MAX_VALUES"):
        load_config({"SHAPEGAUGE_MAX_VALUES": "many"})


def test_health(client):
    r = client.get("/healthz")
    assert r.status_code == 200 and r.get_json()["status"] == "ok"
