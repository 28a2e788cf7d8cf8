"""Fields and schemas shared by every endpoint."""

from __future__ import annotations

from marshmallow import Schema, fields, validate

from ...stats.describe import DEFAULT_KURTOSIS_THRESHOLD, DEFAULT_SKEWNESS_THRESHOLD
from ..text_input import MISSING_TOKENS

UNAVAILABLE_REF = {"$ref": "#/components/schemas/Unavailable"}


class Unavailable(Schema):
    """What a form of input cannot give."""

    available = fields.Boolean(required=True, metadata={"enum": [False]})
    reason = fields.String(required=True)


class Number(fields.Float):
    """A JSON number. marshmallow's Float also takes "0.1" and true; a request that sends a
    string where a number belongs has a bug the caller should hear about."""

    def _deserialize(self, value, attr, data, **kwargs):
        if isinstance(value, (str, bool)):
            raise self.make_error("invalid")
        return super()._deserialize(value, attr, data, **kwargs)


class Whole(fields.Integer):
    """A JSON integer: no strings, no booleans, no 2.5."""

    def __init__(self, **kwargs):
        super().__init__(strict=True, **kwargs)

    def _deserialize(self, value, attr, data, **kwargs):
        if isinstance(value, bool):
            raise self.make_error("invalid")
        return super()._deserialize(value, attr, data, **kwargs)


def number(description: str, **kw) -> fields.Float:
    return fields.Float(required=True, metadata={"description": description}, **kw)


def maybe(kind: str, description: str) -> fields.Raw:
    """A number (or string, boolean) that some forms cannot give: then an Unavailable object."""
    return fields.Raw(
        required=True,
        metadata={"description": description, "oneOf": [{"type": kind}, UNAVAILABLE_REF]},
    )


def nullable(kind: str, description: str) -> fields.Raw:
    return fields.Raw(required=True, metadata={"description": description, "type": [kind, "null"]})


class ValuesField(fields.Raw):
    """A JSON array of numbers and nulls, converted by numpy in one step (never per
    element by marshmallow); see ``service.api.values``."""


def values_field() -> ValuesField:
    return ValuesField(
        metadata={
            "description": "the sample: numbers, with null for a missing value (dropped and counted "
            "unless missing=reject)",
            "type": "array",
            "items": {"type": ["number", "null"]},
        }
    )


class ShapeThresholds(Schema):
    skewness_threshold = Number(
        load_default=DEFAULT_SKEWNESS_THRESHOLD,
        validate=validate.Range(min=0, min_inclusive=False, max=100),
        metadata={"exclusiveMinimum": 0, "description": "|G1| at or above this is labelled skewed (default 0.5, Bulmer 1979)"},
    )
    kurtosis_threshold = Number(
        load_default=DEFAULT_KURTOSIS_THRESHOLD,
        validate=validate.Range(min=0, min_inclusive=False, max=1000),
        metadata={"exclusiveMinimum": 0, "description": "|G2| at or above this is labelled lepto- or platykurtic (default 1, common practice)"},
    )


class TextOptions(Schema):
    """Options of text/csv and text/plain bodies, given as query parameters."""

    decimal = fields.String(
        load_default=".",
        validate=validate.OneOf([".", ","], error="decimal must be '.' or ','"),
        metadata={"description": "decimal mark; with ',' only semicolons, tabs, spaces and newlines separate"},
    )
    column = fields.String(
        load_default=None,
        metadata={"description": "for a table (several cells on every line): the column to analyse, by header name or 1-based number"},
    )
    layout = fields.String(
        load_default="auto",
        validate=validate.OneOf(["auto", "flat"], error="layout must be auto or flat"),
        metadata={"description": "auto: one value per line, one line of values, or a table (needs column); flat: every cell in reading order"},
    )


class OutputOptions(Schema):
    format = fields.String(
        load_default=None,
        validate=validate.OneOf(["json", "csv"]),
        metadata={"description": "csv: flat key,value rows with dotted keys (as Accept: text/csv)"},
    )
    field = fields.String(
        load_default=None,
        metadata={"description": "return only this dotted key's value as text/plain, for a spreadsheet cell (e.g. skewness.G1)"},
    )


class ServiceInfo(Schema):
    name = fields.String(required=True)
    version = fields.String(required=True)


class InputInfo(Schema):
    form = fields.String(required=True, metadata={"enum": ["values", "summary", "partials", "histogram", "samples", "batch"],
                                                  "description": "the sample's form; samples (recommend) and batch: several, n and missing summed"})
    n = fields.Integer(required=True, metadata={"description": "values analysed (missing ones excluded)"})
    missing = fields.Integer(required=True, metadata={"description": "missing values dropped (raw values only)"})
    label = fields.Raw(required=True, metadata={"type": ["string", "null"], "description": "column name from a text header"})
    shards = fields.Raw(required=True, metadata={"type": ["integer", "null"], "description": "partials: shards merged"})
    bins = fields.Raw(required=True, metadata={"type": ["integer", "null"], "description": "histogram: bins given"})
    reference = fields.Raw(metadata={"type": "object", "description": "compare: the reference sample's input block"})


# Every warning code a response may carry, with what it means (documentation; the
# statistics layer emits them).
WARNING_CODES = {
    "rounded-data": "the values sit on a grid coarse enough, at this n, for normality tests to reject the rounding itself",
    "small-sample": "fewer than 20 values: shape statistics are very uncertain",
    "several-peaks": "the kernel density has several clear peaks: summaries describe a mixture of groups",
    "open-bins-modelled": "a histogram's open-ended bins hold values, modelled by the fitted normal's tail",
    "sheppard-not-applied": "Sheppard's correction was asked for but needs equal bin widths (or narrower bins)",
    "ties-spread": "heavy ties were spread over their rounding unit before the dip test and the mixture fit",
    "fit-time-limit": "the mixture fit reached its time limit",
    "option-ignored": "a text-body option (decimal, column, layout) came with a JSON body, where it means nothing",
    "cornish-fisher-not-monotone": "with this skewness and kurtosis the Cornish-Fisher quantiles are not monotone in p",
}


class Notice(Schema):
    code = fields.String(required=True, metadata={
        "description": "machine-readable warning code: " + "; ".join(f"{k}: {v}" for k, v in WARNING_CODES.items()),
        "enum": list(WARNING_CODES),
    })
    message = fields.String(required=True)


class MethodRef(Schema):
    name = fields.String(required=True)
    reference = fields.String(required=True)


class Envelope(Schema):
    """Fields every analysis response carries."""

    service = fields.Nested(ServiceInfo, required=True)
    input = fields.Nested(InputInfo, required=True)
    warnings = fields.List(fields.Nested(Notice), required=True)
    caution = fields.String(required=True)


class ProblemItem(Schema):
    pointer = fields.String(metadata={"description": "RFC 6901 JSON pointer into the request"})
    detail = fields.String(required=True)
    line = fields.Integer(metadata={"description": "text bodies: 1-based line"})
    column = fields.Integer(metadata={"description": "text bodies: 1-based column"})
    position = fields.Integer(metadata={"description": "JSON bodies that do not parse: byte offset of the fault"})


class ProblemType(Schema):
    """GET /problems/<code>."""

    type = fields.String(required=True)
    title = fields.String(required=True)
    status = fields.Integer(required=True)
    description = fields.String(required=True)


class ProblemDocument(Schema):
    """RFC 9457 problem details."""

    type = fields.String(required=True)
    title = fields.String(required=True)
    status = fields.Integer(required=True)
    detail = fields.String(required=True)
    instance = fields.String(metadata={"type": ["string", "null"]})
    request_id = fields.String(metadata={"type": ["string", "null"], "description": "the X-Request-ID of the request: quote it when reporting a fault"})
    errors = fields.List(fields.Nested(ProblemItem))


MISSING_TOKEN_DOC = ", ".join(repr(t) for t in MISSING_TOKENS)
