"""POST /v1/batch, /v1/compare and /v1/plot: requests and responses."""

from __future__ import annotations

from marshmallow import Schema, ValidationError, fields, validate, validates_schema

from .common import Envelope, Number, maybe, nullable, number
from .forms import SampleObject
from .normality import TestOutcome
from .results import DiagnoseOptions


class BatchRequest(DiagnoseOptions):
    samples = fields.Dict(
        keys=fields.String(validate=validate.Length(min=1, max=200)),
        values=fields.Raw(),
        required=True,
        metadata={"description": "named samples, each a sample object in any form (see SampleObject); results come back "
                                 "under the same names, in the same order. A sample that is not valid gets a problem "
                                 "document in its slot; the batch itself still answers 200.",
                  "additionalProperties": {"type": "object"}},
    )
    fields_ = fields.List(fields.String(), data_key="fields", load_default=None,
                          metadata={"description": "dotted keys to keep in each result (e.g. verdict.label, normality.verdict.normal); default: all"})

    @validates_schema
    def _some(self, data, **kwargs):
        if not data.get("samples"):
            raise ValidationError("a batch needs at least one sample", field_name="samples")


class BatchResponse(Envelope):
    results = fields.Dict(
        keys=fields.String(), values=fields.Raw(),
        required=True,
        metadata={"description": "by name: {ok: true, result: <diagnose body, trimmed to fields>} or {ok: false, problem: <RFC 9457 document>}",
                  "additionalProperties": {"$ref": "#/components/schemas/BatchSlot"}},
    )


class BatchSlot(Schema):
    ok = fields.Boolean(required=True)
    result = fields.Raw(metadata={"type": "object", "description": "the diagnose body (without envelope), trimmed to fields"})
    problem = fields.Raw(metadata={"$ref": "#/components/schemas/ProblemDocument"})


class CompareOptions(Schema):
    alpha = Number(load_default=None, validate=validate.Range(min=1e-6, max=0.5))


class CompareRequest(CompareOptions):
    sample = fields.Nested(SampleObject, required=True, metadata={"description": "the sample to check (raw values, or a histogram on the reference's edges)"})
    reference = fields.Nested(SampleObject, required=True, metadata={"description": "the reference period"})


class CompareTestsOut(Schema):
    kolmogorov_smirnov = fields.Nested(TestOutcome, required=True)
    anderson_darling = fields.Nested(TestOutcome, required=True)
    cramer_von_mises = fields.Nested(TestOutcome, required=True)
    chi_square = fields.Nested(TestOutcome, required=True)
    location = fields.Nested(TestOutcome, required=True)
    scale = fields.Nested(TestOutcome, required=True)


class ShapeChangeOut(Schema):
    sample = nullable("number", "the sample's G1 (or G2)")
    reference = nullable("number", "the reference's")
    difference = maybe("number", "sample minus reference")
    se = maybe("number", "normal-theory standard error of the difference")
    z = maybe("number", "difference / se")
    p_value = maybe("number", "two-sided")


class StabilityOut(Schema):
    psi = maybe("number", "population stability index")
    band = maybe("string", "stable (< 0.1), moderate_shift (0.1-0.25) or major_shift (>= 0.25), common practice")
    bins = maybe("integer", "bins used")
    noise_level = maybe("number", "95% point of PSI between two samples of one distribution of these sizes: below it the band means nothing")
    method = fields.String(required=True)


class EffectsOut(Schema):
    mean_shift_in_sd = number("(mean - reference mean) / reference sd")
    sd_ratio = number("sd / reference sd")
    material = fields.Boolean(required=True)
    reasons = fields.List(fields.String(), required=True)


class DriftOut(Schema):
    label = fields.String(required=True, metadata={"enum": ["stable", "shifted", "rescaled", "reshaped"]})
    material = fields.Boolean(required=True, metadata={"description": "the change is large enough to act on"})
    flags = fields.List(fields.String(), required=True, metadata={"description": "location_shift, scale_change, skewness_change, kurtosis_change, material"})
    summary = fields.String(required=True)
    primary_test = fields.String(required=True)


class CompareResponse(Envelope):
    tests = fields.Nested(CompareTestsOut, required=True)
    skewness = fields.Nested(ShapeChangeOut, required=True)
    kurtosis = fields.Nested(ShapeChangeOut, required=True)
    stability = fields.Nested(StabilityOut, required=True)
    effects = fields.Nested(EffectsOut, required=True)
    verdict = fields.Nested(DriftOut, required=True)


class PlotOptions(Schema):
    kind = fields.String(load_default="both", validate=validate.OneOf(["histogram", "qq", "both"]),
                         metadata={"description": "histogram (with fitted normal and mixture), qq (normal Q-Q with a simultaneous band), or both"})
    title = fields.String(load_default=None, validate=validate.Length(max=200))
    seed = fields.Integer(load_default=0, strict=True, validate=validate.Range(min=0, max=2**32 - 1))


class PlotRequest(SampleObject, PlotOptions):
    """Raw values (every kind) or a histogram (kind histogram)."""
