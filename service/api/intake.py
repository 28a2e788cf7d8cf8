"""From an HTTP request to validated options and a sample ``Profile``.

JSON bodies are parsed by orjson and their envelope validated by the endpoint's
marshmallow schema; the sample object (any of the four forms) is converted by
:mod:`.sample_input`. ``text/csv`` and ``text/plain`` bodies (and ``GET ...?values=``)
carry raw values, parsed by :mod:`.text_input`, with the options taken from the query
string through the same schema.
"""

from __future__ import annotations

from dataclasses import dataclass

import orjson
from flask import current_app, request
from marshmallow import Schema, ValidationError

from ..stats.forms import Sample, require_spread
from ..stats.profile import Profile, profile_of_sample
from .errors import Problem
from .sample_input import InputInfo, Limits, build_sample
from .schemas.common import TextOptions
from .text_input import parse_text_values

JSON_TYPES = ("application/json",)
TEXT_TYPES = ("text/csv", "text/plain")
# Query parameters that shape the output, never the analysis.
OUTPUT_PARAMS = ("format", "field")


@dataclass(frozen=True, eq=False)
class SampleRequest:
    options: dict
    profile: Profile
    input: InputInfo


def _pointer(path: list) -> str:
    return "/" + "/".join(str(p) for p in path) if path else ""


def validation_problem(err: ValidationError, prefix: str = "") -> Problem:
    errors = []

    def walk(messages, path):
        if isinstance(messages, dict):
            for key, sub in messages.items():
                walk(sub, path + ([] if key == "_schema" else [key]))
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


def limits() -> Limits:
    return Limits(max_values=current_app.config["MAX_VALUES"], max_parts=current_app.config["MAX_PARTS"])


def _text_sample(options_cls: type[Schema], minimum_n: int) -> SampleRequest:
    query = {k: v for k, v in request.args.items() if k not in OUTPUT_PARAMS}
    if request.method == "GET":
        if "values" not in query:
            raise Problem("invalid-request", "GET needs the sample in the query: ?values=1.2,3.4,5",
                          errors=[{"pointer": "/values", "detail": "missing"}])
        text = query.pop("values")
    else:
        text = request.get_data(as_text=True, cache=False)
    text_fields = TextOptions().fields
    text_opts = load_options(TextOptions(), {k: query.pop(k) for k in list(query) if k in text_fields})
    missing = query.pop("missing", "drop")
    if missing not in ("drop", "reject"):
        raise Problem("invalid-request", "missing must be drop or reject", errors=[{"pointer": "/missing", "detail": f"got {missing!r}"}])
    options = load_options(options_cls(), query)
    parsed = parse_text_values(text, decimal=text_opts["decimal"], column=text_opts["column"],
                               missing=missing, max_values=limits().max_values)
    sample = Sample(parsed.values, parsed.missing)
    require_spread(sample, minimum_n=minimum_n)
    profile = profile_of_sample(sample, options.get("quantile_definition", "hf7"))
    return SampleRequest(options, profile, InputInfo("values", sample.n, parsed.missing, parsed.label))


def read_sample_request(schema_cls: type[Schema], options_cls: type[Schema], *, minimum_n: int = 2) -> SampleRequest:
    """Parse the request of a one-sample endpoint: ``schema_cls`` is its JSON body (a
    ``SampleObject`` with options), ``options_cls`` the options alone (the query string
    of a text body)."""
    mimetype = request.mimetype
    if request.method == "GET" or mimetype in TEXT_TYPES:
        return _text_sample(options_cls, minimum_n)
    if mimetype in JSON_TYPES or mimetype.endswith("+json"):
        options = load_options(schema_cls(), load_json_body())
        built = build_sample(options, limits(), quantile_definition=options.get("quantile_definition", "hf7"), minimum_n=minimum_n)
        return SampleRequest(options, built.profile, built.input)
    raise Problem(
        "unsupported-media-type",
        f"Content-Type {mimetype or '(none)'} is not accepted here; send application/json, text/csv or text/plain",
    )
