"""From an HTTP request to validated options and a ``Sample``.

JSON bodies are parsed by orjson and their envelope validated by the endpoint's
marshmallow schema; the values array is converted by :mod:`.values`. ``text/csv`` and
``text/plain`` bodies (and ``GET ...?values=1,2,3``) go through :mod:`.text_input`,
with the options taken from the query string through the same schema.
"""

from __future__ import annotations

from dataclasses import dataclass

import orjson
from flask import current_app, request
from marshmallow import Schema, ValidationError

from ..stats.forms import Sample
from .errors import Problem
from .schemas.common import TextOptions
from .text_input import parse_text_values
from .values import parse_json_values

JSON_TYPES = ("application/json",)
TEXT_TYPES = ("text/csv", "text/plain")
# Query parameters that shape the output, never the analysis.
OUTPUT_PARAMS = ("format", "field")


@dataclass(frozen=True)
class InputInfo:
    form: str
    n: int
    missing: int
    label: str | None = None


@dataclass(frozen=True)
class SampleRequest:
    options: dict
    sample: Sample
    input: InputInfo


def _pointer(path: list) -> str:
    return "/" + "/".join(str(p) for p in path) if path else ""


def validation_problem(err: ValidationError, prefix: str = "") -> Problem:
    errors = []

    def walk(messages, path):
        if isinstance(messages, dict):
            for key, sub in messages.items():
                walk(sub, path + [key])
        elif isinstance(messages, list) and messages and all(isinstance(m, str) for m in messages):
            for message in messages:
                errors.append({"pointer": prefix + _pointer(path), "detail": message})
        elif isinstance(messages, list):
            for i, sub in enumerate(messages):
                walk(sub, path + [i])
        else:
            errors.append({"pointer": prefix + _pointer(path), "detail": str(messages)})

    walk(err.messages, [])
    summary = "; ".join(f"{e['pointer'] or '/'}: {e['detail']}" for e in errors[:5])
    return Problem("invalid-request", f"the request is not valid: {summary}", errors=errors)


def load_json_body() -> dict:
    raw = request.get_data(cache=False)
    if not raw.strip():
        raise Problem("malformed-body", "the request body is empty; send a JSON object")
    try:
        body = orjson.loads(raw)
    except orjson.JSONDecodeError as exc:
        if "infinity" in str(exc):
            raise Problem(
                "non-finite-value",
                f"a number in the body is too large for a double and would be infinite ({exc})",
                errors=[{"pointer": "", "detail": str(exc)}],
            ) from None
        raise Problem("malformed-body", f"the body is not valid JSON: {exc}") from None
    if not isinstance(body, dict):
        raise Problem("invalid-request", "the body must be a JSON object holding the sample and options",
                      errors=[{"pointer": "", "detail": f"got a JSON {type(body).__name__}"}])
    return body


def load_options(schema: Schema, data: dict, prefix: str = "") -> dict:
    try:
        return schema.load(data)
    except ValidationError as err:
        raise validation_problem(err, prefix) from None


def _query_options() -> dict:
    return {k: v for k, v in request.args.items() if k not in OUTPUT_PARAMS}


def read_sample_request(schema_cls: type[Schema]) -> SampleRequest:
    """Parse the request for an endpoint whose schema has a ``values`` field."""
    limit = current_app.config["MAX_VALUES"]
    mimetype = request.mimetype
    if request.method == "GET" or (mimetype in TEXT_TYPES):
        query = _query_options()
        if request.method == "GET":
            if "values" not in query:
                raise Problem("invalid-request", "GET needs the sample in the query: ?values=1.2,3.4,5",
                              errors=[{"pointer": "/values", "detail": "missing"}])
            text = query.pop("values")
        else:
            text = request.get_data(as_text=True, cache=False)
        text_opts = load_options(TextOptions(), {k: query.pop(k) for k in list(query) if k in TextOptions().fields})
        options = load_options(schema_cls(exclude=("values",)), query)
        parsed = parse_text_values(text, decimal=text_opts["decimal"], column=text_opts["column"],
                                   missing=options["missing"], max_values=limit)
        sample = Sample(parsed.values, parsed.missing)
        return SampleRequest(options, sample, InputInfo("values", sample.n, parsed.missing, parsed.label))
    if mimetype in JSON_TYPES or mimetype.endswith("+json"):
        body = load_json_body()
        raw_values = body.get("values")
        options = load_options(schema_cls(), body)
        if raw_values is None:
            raise Problem("invalid-request", "the request needs a sample: \"values\": [numbers]",
                          errors=[{"pointer": "/values", "detail": "missing"}])
        parsed = parse_json_values(raw_values, pointer="/values", max_values=limit, missing=options["missing"])
        sample = Sample(parsed.values, parsed.missing)
        return SampleRequest(options, sample, InputInfo("values", sample.n, parsed.missing))
    raise Problem(
        "unsupported-media-type",
        f"Content-Type {mimetype or '(none)'} is not accepted here; send application/json, text/csv or text/plain",
    )
