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
from flask import current_app, g, request
from marshmallow import Schema, ValidationError, fields

from ..stats.profile import Profile
from .errors import Problem
from .sample_input import InputInfo, Limits, build_sample, sample_of_values
from .schemas.common import Number, TextOptions, Whole
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


def validation_problem(err: ValidationError, prefix: str = "", schema: Schema | None = None) -> Problem:
    errors = []
    accepted = sorted(schema.fields) if schema is not None else []

    def walk(messages, path):
        if isinstance(messages, dict):
            for key, sub in messages.items():
                walk(sub, path + ([] if key == "_schema" else [key]))
        elif isinstance(messages, list) and messages and all(isinstance(m, str) for m in messages):
            for message in messages:
                if message == "Unknown field." and len(path) == 1 and accepted:
                    message = f"unknown field; this endpoint accepts {', '.join(accepted)}"
                errors.append({"pointer": prefix + _pointer(path), "detail": message})
        elif isinstance(messages, list):
            for i, sub in enumerate(messages):
                walk(sub, path + [i])
        else:
            errors.append({"pointer": prefix + _pointer(path), "detail": str(messages)})

    walk(err.messages, [])
    summary = "; ".join(f"{e['pointer'] or '/'}: {e['detail']}" for e in errors[:5])
    return Problem("invalid-request", f"the request is not valid: {summary}", errors=errors)


def read_body() -> bytes:
    """The request body, refused with a 413 when larger than the limit.

    Flask's MAX_CONTENT_LENGTH is checked against Content-Length; a chunked body has
    none, so the body is read here up to one byte past the limit and refused whole
    rather than silently cut.
    """
    limit = current_app.config["MAX_BODY_BYTES"]
    raw = request.stream.read(limit + 1)
    if len(raw) > limit:
        raise Problem("too-large", f"the request body is larger than this service's limit of {limit} bytes")
    return raw


def read_text_body() -> str:
    charset = request.mimetype_params.get("charset", "utf-8")
    raw = read_body()
    try:
        return raw.decode(charset)
    except LookupError:
        raise Problem("unsupported-media-type", f"charset {charset!r} is not known; send utf-8 (or name the charset)") from None
    except UnicodeDecodeError as exc:
        raise Problem("malformed-body", f"the body is not valid {charset} at byte {exc.start}; "
                      "name the charset the file was saved in (e.g. text/csv; charset=cp1252)") from None


def _values_index(raw: bytes, position: int) -> str:
    """JSON pointer of the array element at byte ``position`` of a flat values array."""
    key = raw.rfind(b'"values"', 0, position)
    start = raw.find(b"[", key) if key >= 0 else -1
    if start < 0 or start > position:
        return ""
    return f"/values/{raw.count(b',', start, position)}"


def load_json_body() -> dict:
    raw = read_body()
    if not raw or raw.isspace():
        raise Problem("malformed-body", "the request body is empty; send a JSON object")
    try:
        body = orjson.loads(raw)
    except orjson.JSONDecodeError as exc:
        where = {"detail": str(exc), "position": exc.pos}
        if "infinity" in str(exc):
            pointer = _values_index(raw, exc.pos)
            at = f" at {pointer}" if pointer else f" at byte {exc.pos}"
            raise Problem(
                "non-finite-value",
                f"a number{at} is too large for a double and would be infinite",
                errors=[{"pointer": pointer, **where}],
            ) from None
        raise Problem("malformed-body", f"the body is not valid JSON: {exc} (NaN and Infinity are not JSON; "
                      "send null for a missing value)", errors=[where]) from None
    if not isinstance(body, dict):
        raise Problem("invalid-request", "the body must be a JSON object holding the sample and options",
                      errors=[{"pointer": "", "detail": f"got a JSON {type(body).__name__}"}])
    return body


def load_options(schema: Schema, data: dict, prefix: str = "") -> dict:
    try:
        return schema.load(data)
    except ValidationError as err:
        raise validation_problem(err, prefix, schema) from None


def typed_query(schema: Schema, query: dict) -> dict:
    """Query-string values are text; read the numbers the schema expects as numbers,
    so that the same schema (which refuses strings in JSON) checks both."""
    typed = {}
    for name, value in query.items():
        field = schema.fields.get(name)
        try:
            if isinstance(field, Whole):
                value = int(value)
            elif isinstance(field, Number):
                value = float(value)
            elif isinstance(field, fields.List) and isinstance(field.inner, Number):
                value = [float(v) for v in value.split(",") if v.strip()]
        except ValueError:
            pass  # left as text: the schema names the field and what is wrong
        typed[name] = value
    return typed


def limits() -> Limits:
    return Limits(max_values=current_app.config["MAX_VALUES"], max_parts=current_app.config["MAX_PARTS"])


def _query_options() -> dict:
    return {k: v for k, v in request.args.items() if k not in OUTPUT_PARAMS}


def _text_sample(options_cls: type[Schema], minimum_n: int) -> SampleRequest:
    query = _query_options()
    if request.method in ("GET", "HEAD"):
        if "values" not in query:
            raise Problem("invalid-request", "GET needs the sample in the query: ?values=1.2,3.4,5",
                          errors=[{"pointer": "/values", "detail": "missing"}])
        query.pop("values")
        text = "\n".join(request.args.getlist("values"))
    else:
        text = read_text_body()
    text_opts = _pop_text_options(query)
    missing = query.pop("missing", "drop")
    if missing not in ("drop", "reject"):
        raise Problem("invalid-request", "missing must be drop or reject", errors=[{"pointer": "/missing", "detail": f"got {missing!r}"}])
    schema = options_cls()
    options = load_options(schema, typed_query(schema, query))
    parsed = parse_text_values(text, decimal=text_opts["decimal"], column=text_opts["column"],
                               layout=text_opts["layout"], missing=missing, max_values=limits().max_values)
    built = sample_of_values(parsed.values, parsed.missing, quantile_definition=options.get("quantile_definition", "hf7"),
                             minimum_n=minimum_n, label=parsed.label)
    return SampleRequest(options, built.profile, built.input)


def read_sample_request(schema_cls: type[Schema], options_cls: type[Schema], *, minimum_n: int = 2) -> SampleRequest:
    """Parse the request of a one-sample endpoint: ``schema_cls`` is its JSON body (a
    ``SampleObject`` with options), ``options_cls`` the options alone (the query string
    of a text body)."""
    mimetype = request.mimetype
    if request.method in ("GET", "HEAD") or mimetype in TEXT_TYPES:
        req = _text_sample(options_cls, minimum_n)
    elif mimetype in JSON_TYPES or mimetype.endswith("+json"):
        req = _json_sample(schema_cls, options_cls, minimum_n)
    else:
        raise Problem(
            "unsupported-media-type",
            f"Content-Type {mimetype or '(none)'} is not accepted here; send application/json, text/csv or text/plain",
        )
    g.sample_n = req.input.n
    return req


_TEXT_FIELDS = frozenset(TextOptions().fields)


def _pop_text_options(query: dict) -> dict:
    """Take the text-body options (decimal, column, layout) out of ``query``, checked."""
    return load_options(TextOptions(), {k: query.pop(k) for k in list(query) if k in _TEXT_FIELDS})


def _json_sample(schema_cls: type[Schema], options_cls: type[Schema], minimum_n: int) -> SampleRequest:
    body = load_json_body()
    query = _query_options()
    text_only = sorted(_TEXT_FIELDS.intersection(query))
    _pop_text_options(query)  # still checked, so a typo is a 422
    g.ignored_options = text_only
    twice = sorted(set(query) & set(body))
    if twice:
        raise Problem("invalid-request", f"{', '.join(twice)} given both in the body and in the query string; give each once",
                      errors=[{"pointer": f"/{name}", "detail": "given twice"} for name in twice])
    schema = schema_cls()
    options = load_options(schema, {**body, **typed_query(options_cls(), query)})
    built = build_sample(options, limits(), quantile_definition=options.get("quantile_definition", "hf7"), minimum_n=minimum_n)
    return SampleRequest(options, built.profile, built.input)
