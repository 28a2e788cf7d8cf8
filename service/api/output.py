"""Result objects to JSON, to flat CSV rows, or to one value for a spreadsheet cell.

The statistics layer's frozen dataclasses carry the published field names, so one
generic conversion serves every endpoint: dataclasses become objects, ``Unavailable``
becomes ``{"available": false, "reason": ...}``, tuples become arrays and numpy scalars
plain numbers. JSON goes out through orjson; the same input gives the same bytes.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import math

import numpy as np
import orjson
from flask import Response, g, request

from .. import __version__
from ..stats.results import Unavailable
from .errors import Problem
from .sample_input import InputInfo

CAUTION = (
    "A screening aid, not a substitute for a qualified statistician. For health, safety or "
    "regulated decisions, follow the applicable standards and validated procedures."
)


def to_document(obj):
    """Convert a result (dataclasses, tuples, numpy scalars) to JSON-ready Python."""
    if isinstance(obj, Unavailable):
        return {"available": False, "reason": obj.reason}
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        # A trailing underscore only dodges a Python keyword: lambda_ is published as lambda.
        return {f.name.rstrip("_"): to_document(getattr(obj, f.name)) for f in dataclasses.fields(obj)}
    if isinstance(obj, dict):
        return {str(k): to_document(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_document(v) for v in obj]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        value = float(obj)
        return value if math.isfinite(value) else None
    return obj


def document(info: InputInfo, result) -> dict:
    """The response body: service and input first, the result's own fields, then its
    warnings and the standing caution."""
    body = to_document(result)
    warnings = body.pop("warnings", [])
    ignored = g.get("ignored_options") if g else None
    if ignored:
        warnings.append({"code": "option-ignored",
                         "message": f"{', '.join(ignored)} apply to text bodies only and were ignored with a JSON body"})
    return {
        "service": {"name": "shapegauge", "version": __version__},
        "input": to_document(info),
        **body,
        "warnings": warnings,
        "caution": CAUTION,
    }


def flatten(doc, prefix: str = "") -> list[tuple[str, object]]:
    """Dotted-key rows: ``{"a": {"b": 1}, "c": [2, 3]}`` -> ``a.b, c.0, c.1``."""
    rows: list[tuple[str, object]] = []
    if isinstance(doc, dict):
        for key, value in doc.items():
            rows.extend(flatten(value, f"{prefix}{key}."))
    elif isinstance(doc, list):
        if not doc:
            rows.append((prefix[:-1], ""))
        for i, value in enumerate(doc):
            rows.extend(flatten(value, f"{prefix}{i}."))
    else:
        rows.append((prefix[:-1], doc))
    return rows


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return repr(value)
    return str(value)


def csv_text(doc: dict) -> str:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(["key", "value"])
    for key, value in flatten(doc):
        writer.writerow([key, _cell(value)])
    return out.getvalue()


def field_value(doc: dict, field: str) -> tuple[str, str | None]:
    """The text of one dotted key and, when it has no value, why: a null (not decided,
    not applicable) and an unavailable value both give an empty cell, the reason in a
    header, so a cell formula sees one consistent thing."""
    node = doc
    for part in field.split("."):
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and part.isdigit() and int(part) < len(node):
            node = node[int(part)]
        else:
            keys = [k for k, _ in flatten(doc)]
            near = [k for k in keys if k.startswith(field.split(".")[0])][:12]
            raise Problem("invalid-request", f"no field {field!r} in this response; fields start e.g. {', '.join(near) or ', '.join(keys[:12])}",
                          errors=[{"pointer": "/field", "detail": "unknown field"}])
    if isinstance(node, dict) and node.get("available") is False:
        return "", f"not available: {node.get('reason')}"
    if isinstance(node, (dict, list)):
        raise Problem("invalid-request", f"{field} is a group, not one value; name one of its keys",
                      errors=[{"pointer": "/field", "detail": "not a leaf"}])
    if node is None:
        return "", "null: not decided or not applicable (see the full response)"
    return _cell(node), None


def respond(doc: dict) -> Response:
    """Send ``doc`` as JSON, CSV (Accept: text/csv or ?format=csv) or one field."""
    field = request.args.get("field")
    if field:
        text, why = field_value(doc, field)
        response = Response(text, mimetype="text/plain")
        if why:
            response.headers["Shapegauge-Empty-Reason"] = why
        return response
    fmt = request.args.get("format")
    if fmt not in (None, "json", "csv"):
        raise Problem("invalid-request", "format must be json or csv", errors=[{"pointer": "/format", "detail": f"got {fmt!r}"}])
    if fmt is None and request.accept_mimetypes:
        best = request.accept_mimetypes.best_match(["application/json", "text/csv"])
        if best is None:
            raise Problem("not-acceptable", f"cannot answer with {request.headers.get('Accept')}; this endpoint gives application/json or text/csv")
        fmt = "csv" if best == "text/csv" else "json"
    if fmt == "csv":
        return Response(csv_text(doc), mimetype="text/csv")
    return Response(orjson.dumps(doc), mimetype="application/json")
