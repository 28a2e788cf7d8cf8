"""Service endpoints: liveness, readiness, metrics, the OpenAPI document and its docs
page (assets from the swagger-ui-bundle package, served here: no internet needed), and
the problem-type pages."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

import numpy as np
import orjson
import swagger_ui_bundle
from flask import Blueprint, Response, send_from_directory

from .. import __version__
from ..stats.forms import Sample
from ..stats.normality import normality_of_sample
from .errors import PROBLEM_TYPES, Problem
from .openapi import build_spec
from .ops import metrics_response

bp = Blueprint("meta", __name__)
SWAGGER_DIR = Path(swagger_ui_bundle.swagger_ui_path)
_READY_SAMPLE = Sample(np.linspace(-1.5, 1.5, 25) ** 3)

DOCS_PAGE = """<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>shapegauge API</title>
<link rel="stylesheet" href="/docs/assets/swagger-ui.css">
</head>
<body>
<div id="api"></div>
<script src="/docs/assets/swagger-ui-bundle.js"></script>
<script>
window.onload = function () {
  SwaggerUIBundle({url: "/openapi.json", dom_id: "#api", deepLinking: true});
};
</script>
</body>
</html>
"""


def _json(doc, status: int = 200) -> Response:
    return Response(orjson.dumps(doc), status=status, mimetype="application/json")


@bp.get("/")
def index():
    """A page for people: paste a column, read the verdict, see the plots. It calls the
    public API like any other client and loads nothing from outside."""
    page = resources.files("service.api").joinpath("static", "index.html").read_text()
    return Response(page, mimetype="text/html")


@bp.get("/healthz")
def healthz():
    return _json({"status": "ok", "service": "shapegauge", "version": __version__})


@bp.get("/readyz")
def readyz():
    """Ready when the statistics stack computes: one small real normality test."""
    try:
        verdict = normality_of_sample(_READY_SAMPLE).verdict
        ok = verdict.primary_test == "shapiro_wilk"
    except Exception:  # noqa: BLE001 - any failure means not ready
        ok = False
    return _json({"status": "ready" if ok else "not ready", "version": __version__}, 200 if ok else 503)


@bp.get("/metrics")
def metrics():
    return metrics_response()


@bp.get("/openapi.json")
def openapi_json():
    return _json(build_spec())


@bp.get("/docs")
def docs():
    return Response(DOCS_PAGE, mimetype="text/html")


@bp.get("/docs/assets/<path:name>")
def docs_assets(name: str):
    if name not in ("swagger-ui.css", "swagger-ui-bundle.js"):
        raise Problem("not-found", f"no docs asset {name!r}")
    return send_from_directory(SWAGGER_DIR, name, max_age=86400)


@bp.get("/problems/<code>")
def problem_type(code: str):
    kind = PROBLEM_TYPES.get(code)
    if kind is None:
        raise Problem("not-found", f"no problem type {code!r}")
    return _json({"type": f"/problems/{code}", "title": kind.title, "status": kind.status, "description": kind.description})
