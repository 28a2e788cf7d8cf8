"""POST /v1/normality: request and response."""

from __future__ import annotations

from marshmallow import Schema, fields, validate

from ...stats.normality.battery import TEST_NAMES
from .common import Envelope, MethodRef, Number, ShapeThresholds, Whole, maybe, nullable, number
from .forms import SampleObject


class NormalityOptions(ShapeThresholds):
    alpha = Number(
        load_default=None,
        validate=validate.Range(min=1e-6, max=0.5),
        metadata={"description": "significance level of every test (default 0.05, or the service's SHAPEGAUGE_DEFAULT_ALPHA)"},
    )
    primary_test = fields.String(
        load_default=None,
        validate=validate.OneOf(TEST_NAMES),
        metadata={"description": "the test that decides the verdict (default: raw values shapiro_wilk up to n=5000, anderson_darling above; summaries and partials dagostino_pearson; histograms chi_square)"},
    )
    adequate_n = Whole(
        load_default=None,
        validate=validate.Range(min=0, max=10**9),
        metadata={"description": "below this n a non-rejection is 'inconclusive' (default: where the primary test reaches 80% power against a skewness of 1)"},
    )


class NormalityRequest(SampleObject, NormalityOptions):
    """A sample in any form, with the normality options."""


class TestOutcome(Schema):
    statistic = nullable("number", "the test statistic; null when the test does not apply")
    p_value = nullable("number", "the p-value in [0, 1], or the bound when p_value_bound is set")
    p_value_bound = fields.Raw(required=True, metadata={"enum": ["<", ">", None], "description": "'<' or '>' when only a bound is known"})
    applicable = fields.Boolean(required=True)
    reject = nullable("boolean", "p_value < alpha; null when the test does not apply or a bound cannot decide")
    reason = nullable("string", "why the test does not apply, or what limits its accuracy")
    method = fields.Nested(MethodRef, required=True)


class Tests(Schema):
    shapiro_wilk = fields.Nested(TestOutcome, required=True)
    shapiro_francia = fields.Nested(TestOutcome, required=True)
    dagostino_pearson = fields.Nested(TestOutcome, required=True)
    skewness_test = fields.Nested(TestOutcome, required=True)
    kurtosis_test = fields.Nested(TestOutcome, required=True)
    anderson_darling = fields.Nested(TestOutcome, required=True)
    lilliefors = fields.Nested(TestOutcome, required=True)
    cramer_von_mises = fields.Nested(TestOutcome, required=True)
    jarque_bera = fields.Nested(TestOutcome, required=True)
    chi_square = fields.Nested(TestOutcome, required=True)


class Practical(Schema):
    skewness = maybe("number", "G1")
    excess_kurtosis = maybe("number", "G2")
    skewness_threshold = number("|G1| at or above this matters in practice")
    kurtosis_threshold = number("|G2| at or above this matters in practice")
    exceeds_thresholds = nullable("boolean", "either magnitude reaches its threshold")
    mean_min_n = maybe("number", "25 G1^2: the n above which the sample mean is close to normal (Cochran 1977)")
    mean_approximately_normal = nullable("boolean", "n > mean_min_n")


class Support(Schema):
    rejecting = fields.List(fields.String(), required=True)
    not_rejecting = fields.List(fields.String(), required=True)
    undecided = fields.List(fields.String(), required=True)
    not_applicable = fields.List(fields.String(), required=True)


class Verdict(Schema):
    normal = nullable("boolean", "true: consistent with normal and enough data to say so; false: the primary test rejects; null: cannot say")
    label = fields.String(
        required=True,
        metadata={"enum": ["insufficient_data", "inconclusive", "consistent_with_normal", "minor_departure", "not_normal"]},
    )
    primary_test = nullable("string", "the test that decided")
    alpha = number("significance level used")
    reasons = fields.List(fields.String(), required=True)
    practical = fields.Nested(Practical, required=True)
    supporting = fields.Nested(Support, required=True)
    power = maybe("number", "estimated power of the primary test against a skewness of 1 at this n and alpha")


class NormalityBody(Schema):
    tests = fields.Nested(Tests, required=True)
    verdict = fields.Nested(Verdict, required=True)


class NormalityResponse(Envelope, NormalityBody):
    pass
