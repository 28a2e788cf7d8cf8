"""Service endpoints: liveness, the OpenAPI document, and the problem-type pages."""

from __future__ import annotations

import orjson
from flask import Blueprint, Response

from .. import __version__
from .errors import PROBLEM_TYPES, Problem
from .openapi import build_spec

bp = Blueprint("meta", __name__)


def _json(doc) -> Response:
    return Response(orjson.dumps(doc), mimetype="application/json")


@bp.get("/healthz")
def healthz():
    return _json({"status": "ok", "service": "shapegauge", "version": __version__})


@bp.get("/openapi.json")
def openapi_json():
    return _json(build_spec())


@bp.get("/problems/<code>")
def problem_type(code: str):
    kind = PROBLEM_TYPES.get(code)
    if kind is None:
        raise Problem("not-found", f"no problem type {code!r}")
    return _json({"type": f"/problems/{code}", "title": kind.title, "status": kind.status, "description": kind.description})
