"""POST /v1/tails, /v1/transform, /v1/recommend and /v1/diagnose: requests and responses."""

from __future__ import annotations

from marshmallow import Schema, ValidationError, fields, validate, validates_schema

from ...stats.advice import GOALS
from ...stats.quantiles import DEFINITIONS
from .common import Envelope, MethodRef, Number, ShapeThresholds, maybe, nullable, number
from .describe import DescribeBody
from .forms import SampleObject
from .modality import ModalityBody, ModalityOptions
from .normality import NormalityBody, NormalityOptions

MAX_POINTS = 1000


def _points(description: str) -> fields.List:
    return fields.List(Number(), load_default=list, validate=validate.Length(max=MAX_POINTS), metadata={"description": description})


class TailQuestions(Schema):
    above = _points("values x: the probability of a value above each")
    below = _points("values x: the probability of a value below each")
    between = fields.List(
        fields.List(Number(), validate=validate.Length(equal=2)), load_default=list, validate=validate.Length(max=MAX_POINTS),
        metadata={"description": "intervals [a, b]: the probability of a value in (a, b]"},
    )
    lower_limit = Number(load_default=None, metadata={"description": "lower specification limit (parts per million below)"})
    upper_limit = Number(load_default=None, metadata={"description": "upper specification limit (parts per million above)"})
    quantiles = fields.List(Number(validate=validate.Range(min=0, max=1, min_inclusive=False, max_inclusive=False)),
                            load_default=list, validate=validate.Length(max=MAX_POINTS),
                            metadata={"description": "probabilities p in (0, 1): normal, Cornish-Fisher, empirical and mixture quantiles"})

    @validates_schema
    def _ordered(self, data, **kwargs):
        for i, pair in enumerate(data.get("between") or []):
            if pair[0] >= pair[1]:
                raise ValidationError(f"interval {i} must have a < b", field_name="between")
        lo, hi = data.get("lower_limit"), data.get("upper_limit")
        if lo is not None and hi is not None and lo >= hi:
            raise ValidationError("lower_limit must be below upper_limit", field_name="lower_limit")


class TailsOptions(TailQuestions, ModalityOptions):
    quantile_definition = fields.String(load_default="hf7", validate=validate.OneOf(sorted(DEFINITIONS)))


class TailsRequest(SampleObject, TailsOptions):
    """A sample in any form and the questions about its tails."""


class ProbabilityOut(Schema):
    probability = number("probability")
    log_probability = number("natural log of the probability (finite where the probability underflows); -inf is sent as null")


class IntervalOut(Schema):
    lower = number("lower end")
    upper = number("upper end")
    level = number("confidence level")


class EmpiricalOut(Schema):
    probability = number("observed share")
    count = number("observed count (implied count for a histogram)")
    interval = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/IntervalOut"}, {"$ref": "#/components/schemas/Unavailable"}]})
    method = fields.String(required=True)


class BoundsOut(Schema):
    chebyshev = maybe("number", "Chebyshev bound 1/k^2 (on both tails together, so on this one too), for x beyond the mean on this side")
    cantelli = maybe("number", "one-sided Cantelli bound 1/(1 + k^2)")


def _either(ref: str) -> fields.Raw:
    return fields.Raw(required=True, metadata={"oneOf": [{"$ref": f"#/components/schemas/{ref}"}, {"$ref": "#/components/schemas/Unavailable"}]})


class TailPointOut(Schema):
    x = number("the value asked about")
    z = number("(x - mean) / sd")
    normal = fields.Nested(ProbabilityOut, required=True)
    empirical = _either("EmpiricalOut")
    mixture = _either("ProbabilityOut")
    bounds = fields.Nested(BoundsOut, required=True)


class BetweenOut(Schema):
    interval = fields.List(fields.Float(), required=True)
    z = fields.List(fields.Float(), required=True)
    normal = fields.Nested(ProbabilityOut, required=True)
    empirical = _either("EmpiricalOut")
    mixture = _either("ProbabilityOut")


class PpmOut(Schema):
    ppm_below = maybe("number", "parts per million below the lower limit")
    ppm_above = maybe("number", "parts per million above the upper limit")
    ppm = maybe("number", "parts per million outside the limits")


class LimitsOut(Schema):
    lower = nullable("number", "lower limit")
    upper = nullable("number", "upper limit")
    normal = fields.Nested(PpmOut, required=True)
    empirical = _either("PpmOut")
    mixture = _either("PpmOut")


class QuantileOut(Schema):
    p = number("probability")
    normal = number("normal-model quantile")
    cornish_fisher = maybe("number", "Cornish-Fisher quantile from G1 and G2")
    empirical = maybe("number", "empirical quantile (the quantile_definition; histograms: interpolated)")
    mixture = maybe("number", "quantile of the fitted mixture")


class TailsMethods(Schema):
    z = fields.String(required=True)
    normal = fields.String(required=True)
    empirical = fields.String(required=True)
    mixture = fields.String(required=True)
    bounds = fields.String(required=True)
    cornish_fisher = fields.String(required=True)
    ppm = fields.String(required=True)


class TailsBody(Schema):
    above = fields.List(fields.Nested(TailPointOut), required=True, metadata={"description": "in request order"})
    below = fields.List(fields.Nested(TailPointOut), required=True, metadata={"description": "in request order"})
    between = fields.List(fields.Nested(BetweenOut), required=True, metadata={"description": "in request order"})
    limits = _either("LimitsOut")
    quantiles = fields.List(fields.Nested(QuantileOut), required=True, metadata={"description": "in request order"})
    methods = fields.Nested(TailsMethods, required=True)


class TailsResponse(Envelope, TailsBody):
    pass


# ---- transform -------------------------------------------------------------

class TransformOptions(ShapeThresholds):
    alpha = Number(load_default=None, validate=validate.Range(min=1e-6, max=0.5),
                   metadata={"description": "significance level of the normality checks before and after"})
    confidence = Number(load_default=0.95, validate=validate.Range(min=0.5, max=0.999),
                        metadata={"description": "level of the profile-likelihood interval for lambda"})


class TransformRequest(SampleObject, TransformOptions):
    """Raw values (a transformation needs the values themselves)."""


class ShapeOut(Schema):
    G1 = nullable("number", "skewness")
    G2 = nullable("number", "excess kurtosis")
    normality_label = fields.String(required=True)
    normal = nullable("boolean", "the normality verdict")
    primary_test = nullable("string", "the test that decided")
    p_value = nullable("number", "its p-value")


class SuggestedOut(Schema):
    # "lambda" is a keyword in Python, so the field is declared by data_key.
    lam = fields.Float(required=True, data_key="lambda")
    name = fields.String(required=True)


class TransformResultOut(Schema):
    applicable = fields.Boolean(required=True)
    reason = nullable("string", "why it does not apply, or what limits it")
    lam = fields.Raw(required=True, data_key="lambda", metadata={"type": ["number", "null"], "description": "maximum-likelihood lambda"})
    interval = fields.Raw(required=True, metadata={"type": ["array", "null"], "items": {"type": "number"}, "description": "profile-likelihood interval"})
    suggested = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/SuggestedOut"}, {"type": "null"}],
                                                    "description": "a named lambda inside the interval, if any"})
    after = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/ShapeOut"}, {"type": "null"}]})
    method = fields.Nested(MethodRef, required=True)


class TransformBody(Schema):
    before = fields.Nested(ShapeOut, required=True)
    box_cox = fields.Nested(TransformResultOut, required=True)
    yeo_johnson = fields.Nested(TransformResultOut, required=True)
    back_transform = fields.String(required=True)
    confidence = number("level of the lambda intervals")


class TransformResponse(Envelope, TransformBody):
    pass


# ---- recommend -------------------------------------------------------------

SAMPLES_FOR_GOAL = {"one_sample_mean": (1, 1), "two_sample": (2, 2), "paired": (2, 2), "k_sample": (2, 100),
                    "correlation": (2, 2), "regression_residuals": (1, 1), "control_chart": (1, 1), "capability": (1, 1)}


class RecommendOptions(ShapeThresholds):
    goal = fields.String(required=True, validate=validate.OneOf(GOALS), metadata={"description": "the analysis you intend"})
    alpha = Number(load_default=None, validate=validate.Range(min=1e-6, max=0.5))
    lower_limit = Number(load_default=None, metadata={"description": "capability: lower specification limit"})
    upper_limit = Number(load_default=None, metadata={"description": "capability: upper specification limit"})


class RecommendRequest(RecommendOptions):
    samples = fields.List(fields.Nested(SampleObject), required=True, validate=validate.Length(min=1, max=100),
                          metadata={"description": "one sample per group, in any form (paired and correlation: two raw samples of equal length)"})

    @validates_schema
    def _count(self, data, **kwargs):
        lo, hi = SAMPLES_FOR_GOAL[data["goal"]]
        k = len(data["samples"])
        if not lo <= k <= hi:
            want = str(lo) if lo == hi else f"{lo} to {hi}"
            noun = "sample" if want == "1" else "samples"
            raise ValidationError(f"goal {data['goal']} takes {want} {noun}; got {k}", field_name="samples")


class ChoiceOut(Schema):
    test = fields.String(required=True)
    why = fields.String(required=True)


class SampleShapeOut(Schema):
    n = fields.Integer(required=True)
    form = fields.String(required=True)
    G1 = nullable("number", "skewness")
    G2 = nullable("number", "excess kurtosis")
    normality = fields.String(required=True, metadata={"description": "the normality verdict's label"})
    normal = nullable("boolean", "the normality verdict")


class CapabilityOut(Schema):
    cp = maybe("number", "(USL - LSL) / 6 sd")
    cpk = maybe("number", "min(USL - mean, mean - LSL) / 3 sd")
    percentile_cp = maybe("number", "(USL - LSL) / (P99.865 - P0.135)")
    percentile_cpk = maybe("number", "min((USL - median)/(P99.865 - median), (median - LSL)/(median - P0.135))")
    method = fields.String(required=True)


class TransformHintOut(Schema):
    family = fields.String(required=True)
    lam = fields.Float(required=True, data_key="lambda")
    interval = fields.List(fields.Float(), required=True)
    suggested = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/SuggestedOut"}, {"type": "null"}]})
    after = fields.Nested(ShapeOut, required=True)


class RecommendBody(Schema):
    goal = fields.String(required=True)
    recommended = fields.Nested(ChoiceOut, required=True)
    alternatives = fields.List(fields.Nested(ChoiceOut), required=True)
    transform = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/TransformHintOut"}, {"type": "null"}],
                                                    "description": "a transformation that makes the data closer to normal, when one helps"})
    cautions = fields.List(fields.String(), required=True)
    rules = fields.List(fields.String(), required=True, metadata={"description": "names of the rules that fired"})
    samples = fields.List(fields.Nested(SampleShapeOut), required=True)
    capability = _either("CapabilityOut")
    note = fields.String(required=True)


class RecommendResponse(Envelope, RecommendBody):
    pass


# ---- diagnose --------------------------------------------------------------

class DiagnoseOptions(NormalityOptions, ModalityOptions):
    quantile_definition = fields.String(load_default="hf7", validate=validate.OneOf(sorted(DEFINITIONS)))
    tails = fields.Nested(TailQuestions, load_default=None, metadata={"description": "ask tail questions too"})
    goal = fields.String(load_default=None, validate=validate.OneOf(("one_sample_mean", "regression_residuals", "control_chart", "capability")),
                         metadata={"description": "add a recommendation for this one-sample goal (others: /v1/recommend)"})


class DiagnoseRequest(SampleObject, DiagnoseOptions):
    """A sample in any form: the one call an app makes."""


class OverallVerdictOut(Schema):
    label = fields.String(required=True, metadata={"enum": ["insufficient_data", "multimodal", "skewed", "heavy_tailed", "light_tailed",
                                                            "non_normal", "near_normal", "normal", "inconclusive"]})
    normal = nullable("boolean", "the normality verdict: true, false, or null when it cannot say")
    flags = fields.List(fields.String(), required=True, metadata={"description": "machine-readable: not_normal, right_skewed, left_skewed, "
                                                                               "heavy_tails, light_tails, multimodal, rounded, small_sample, mean_not_yet_normal"})
    summary = fields.String(required=True, metadata={"description": "one sentence for a person"})


class DiagnoseResponse(Envelope):
    verdict = fields.Nested(OverallVerdictOut, required=True)
    describe = fields.Nested(DescribeBody, required=True)
    normality = fields.Nested(NormalityBody, required=True)
    modality = fields.Nested(ModalityBody, required=True)
    tails = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/TailsBody"}, {"$ref": "#/components/schemas/Unavailable"}]})
    recommend = fields.Raw(required=True, metadata={"oneOf": [{"$ref": "#/components/schemas/RecommendBody"}, {"$ref": "#/components/schemas/Unavailable"}]})
