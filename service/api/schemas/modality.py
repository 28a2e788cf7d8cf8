"""POST /v1/modality: request and response."""

from __future__ import annotations

from marshmallow import Schema, fields, validate

from .common import Envelope, Number, Whole, maybe, nullable, number
from .forms import SampleObject
from .normality import TestOutcome


class ModalityOptions(Schema):
    alpha = Number(
        load_default=None,
        validate=validate.Range(min=1e-6, max=0.5),
        metadata={"description": "significance level of the dip test (default 0.05, or SHAPEGAUGE_DEFAULT_ALPHA)"},
    )
    max_components = Whole(
        load_default=4,
        validate=validate.Range(min=1, max=6),
        metadata={"description": "largest number of mixture components tried (1-6; default 4; at most n/10 are fitted)"},
    )
    seed = Whole(
        load_default=0,
        validate=validate.Range(min=0, max=2**32 - 1),
        metadata={"description": "seed of the k-means++ starts and of tie spreading; the same seed gives the same answer"},
    )


class ModalityRequest(SampleObject, ModalityOptions):
    """A sample in any form, with the modality options."""


class ComponentOut(Schema):
    weight = number("mixing weight")
    mean = number("component mean (original scale)")
    sd = number("component standard deviation (original scale)")


class CandidateOut(Schema):
    k = fields.Integer(required=True)
    log_likelihood = number("log-likelihood of the best fit with k components (original scale)")
    bic = number("-2 log L + (3k - 1) log n")
    converged = fields.Boolean(required=True, metadata={"description": "EM met its tolerance within its iteration limit"})
    iterations = fields.Integer(required=True)


class ExtremumOut(Schema):
    x = number("location")
    density = number("fitted mixture density there")


class TwoComponentsOut(Schema):
    ashman_d = number("Ashman's D = sqrt(2)|mu1 - mu2| / sqrt(sd1^2 + sd2^2), the distance of the means in pooled "
                      "sds; above 2 the components separate cleanly (equal normals are bimodal only beyond 2)")
    separation = number("(mu2 - mu1) / (2 (sd1 + sd2)), the bimodal separation index")


class MixtureOut(Schema):
    components = fields.List(fields.Nested(ComponentOut), required=True, metadata={"description": "sorted by mean"})
    candidates = fields.List(fields.Nested(CandidateOut), required=True)
    selected_k = fields.Integer(required=True)
    modes = fields.List(fields.Nested(ExtremumOut), required=True, metadata={"description": "local maxima of the fitted density"})
    antimodes = fields.List(fields.Nested(ExtremumOut), required=True, metadata={"description": "local minima between modes"})
    n_modes = fields.Integer(required=True)
    two_components = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/TwoComponentsOut"}, {"$ref": "#/components/schemas/Unavailable"}]})
    fitted_on = fields.String(required=True, metadata={"description": "what the EM ran on"})


class BimodalityCoefficientOut(Schema):
    value = maybe("number", "(G1^2 + 1) / (G2 + 3(n-1)^2 / ((n-2)(n-3)))")
    threshold = number("5/9, the value of a uniform distribution")
    exceeds = nullable("boolean", "value > threshold")
    note = fields.String(required=True)


class ModalityVerdictOut(Schema):
    label = fields.String(required=True, metadata={"enum": ["unimodal", "bimodal", "multimodal", "insufficient_data"]})
    n_modes = nullable("integer", "modes the verdict counts")
    reasons = fields.List(fields.String(), required=True)


class ModalityBody(Schema):
    mixture = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/MixtureOut"}, {"$ref": "#/components/schemas/Unavailable"}]})
    dip = fields.Nested(TestOutcome, required=True, metadata={
        "description": "Hartigan's dip test; not rejecting is no evidence of multimodality, not proof of one peak"})
    bimodality_coefficient = fields.Nested(BimodalityCoefficientOut, required=True)
    verdict = fields.Nested(ModalityVerdictOut, required=True)


class ModalityResponse(Envelope, ModalityBody):
    pass
