"""The four forms a sample can take in a request, and the sample object holding one.

A *sample object* carries exactly one of ``values``, ``summary``, ``partials`` or
``histogram``, plus the options that belong to the form (``missing`` for values,
``conventions`` and ``sd_convention`` for a summary, ``sheppard`` for a histogram).
Analysis requests are a sample object with the analysis options beside it.
"""

from __future__ import annotations

from marshmallow import Schema, ValidationError, fields, validate, validates_schema

from ...stats.moments import KURTOSIS_CONVENTIONS, SKEWNESS_CONVENTIONS
from .common import Number, Whole, values_field

FORM_KEYS = ("values", "summary", "partials", "histogram")
# Options that belong to one form; given with another they are a mistake, not a no-op.
FORM_OPTIONS = {"missing": "values", "conventions": "summary", "sd_convention": "summary", "sheppard": "histogram"}


class SummaryInput(Schema):
    """Summary statistics of a sample."""

    n = Whole(required=True, validate=validate.Range(min=2, max=10**15), metadata={"description": "sample size"})
    mean = Number(required=True)
    sd = Number(required=True, validate=validate.Range(min=0, min_inclusive=False),
                      metadata={"description": "standard deviation (sample, n-1, unless sd_convention is population)"})
    skewness = Number(load_default=None, metadata={"description": "in conventions.skewness (default G1)"})
    kurtosis = Number(load_default=None, metadata={"description": "excess kurtosis in conventions.kurtosis (default G2)"})
    median = Number(load_default=None)
    q1 = Number(load_default=None)
    q3 = Number(load_default=None)
    min = Number(load_default=None)
    max = Number(load_default=None)


class Conventions(Schema):
    skewness = fields.String(load_default="G1", validate=validate.OneOf(SKEWNESS_CONVENTIONS),
                             metadata={"description": "G1 (adjusted, spreadsheet SKEW), g1 (moment coefficient) or b1 (m3/s^3)"})
    kurtosis = fields.String(load_default="G2", validate=validate.OneOf(KURTOSIS_CONVENTIONS),
                             metadata={"description": "G2 (adjusted, spreadsheet KURT), g2 (moment coefficient) or b2 (m4/s^4 - 3); always excess"})


class PartialInput(Schema):
    """One shard's aggregates: mk is the sum of (x - shard mean)^k over the shard."""

    n = Whole(required=True, validate=validate.Range(min=1, max=10**15))
    mean = Number(required=True)
    m2 = Number(required=True, metadata={"description": "sum of (x - mean)^2 over the shard"})
    m3 = Number(required=True, metadata={"description": "sum of (x - mean)^3 over the shard"})
    m4 = Number(required=True, metadata={"description": "sum of (x - mean)^4 over the shard"})
    min = Number(load_default=None)
    max = Number(load_default=None)


class EdgesField(fields.Raw):
    """Bin edges: numbers, the first may be "-inf" (or null) and the last "+inf" (or null),
    for open-ended bins as monitoring histograms have."""


class HistogramInput(Schema):
    edges = EdgesField(
        required=True,
        metadata={
            "description": "k+1 increasing edges; the first may be \"-inf\" or null, the last \"+inf\" or null (open-ended bins)",
            "type": "array",
            "items": {"type": ["number", "string", "null"]},
        },
    )
    counts = fields.Raw(
        required=True,
        metadata={"description": "k non-negative whole counts", "type": "array", "items": {"type": "number"}},
    )


class SampleObject(Schema):
    """Exactly one form of one sample."""

    values = values_field()
    summary = fields.Nested(SummaryInput, load_default=None)
    partials = fields.List(fields.Nested(PartialInput), load_default=None, validate=validate.Length(min=1),
                           metadata={"description": "shard aggregates, merged exactly (Chan et al.; Pebay 2008)"})
    histogram = fields.Nested(HistogramInput, load_default=None)
    missing = fields.String(load_default=None, validate=validate.OneOf(["drop", "reject"]),
                            metadata={"description": "values: drop missing values and count them (default), or reject the request"})
    conventions = fields.Nested(Conventions, load_default=None, metadata={"description": "summary: conventions of skewness and kurtosis"})
    sd_convention = fields.String(load_default=None, validate=validate.OneOf(["sample", "population"]),
                                  metadata={"description": "summary: sd with the n-1 divisor (sample, default) or n (population)"})
    sheppard = fields.Boolean(load_default=None, metadata={"description": "histogram: apply Sheppard's corrections to the binned moments (equal widths)"})

    @validates_schema
    def _one_form(self, data, **kwargs):
        present = [key for key in FORM_KEYS if data.get(key) is not None]
        if len(present) != 1:
            message = (
                "a sample needs exactly one of values, summary, partials or histogram"
                + (f"; got {', '.join(present)}" if present else "")
            )
            raise ValidationError(message, field_name=present[1] if len(present) > 1 else "values")
        form = present[0]
        for option, owner in FORM_OPTIONS.items():
            if data.get(option) is not None and owner != form:
                raise ValidationError(f"{option} applies to {owner} only, not to {form}", field_name=option)
