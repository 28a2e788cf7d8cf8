"""POST /v1/describe: request and response."""

from __future__ import annotations

from marshmallow import Schema, fields, validate

from ...stats.quantiles import DEFINITIONS
from .common import Envelope, ShapeThresholds, maybe, number
from .forms import SampleObject


class DescribeOptions(ShapeThresholds):
    quantile_definition = fields.String(
        load_default="hf7",
        validate=validate.OneOf(sorted(DEFINITIONS)),
        metadata={"description": "raw values: Hyndman & Fan (1996) quantile definition; hf7 is numpy's default and spreadsheet QUARTILE.INC"},
    )


class DescribeRequest(SampleObject, DescribeOptions):
    """A sample in any form, with the describe options."""


class Location(Schema):
    mean = number("arithmetic mean")
    median = maybe("number", "median (the quantile definition's 0.5 quantile)")
    mode = maybe("number", "highest peak of a kernel density estimate (see methods.mode)")


class Spread(Schema):
    sd = number("sample standard deviation (n-1 divisor)")
    variance = number("sample variance (n-1 divisor)")
    min = maybe("number", "smallest value")
    max = maybe("number", "largest value")
    q1 = maybe("number", "first quartile")
    q3 = maybe("number", "third quartile")
    iqr = maybe("number", "q3 - q1")
    mad = maybe("number", "median absolute deviation from the median, unscaled")
    mad_normal = maybe("number", "1.4826 * mad: estimates the sd for normal data")


class Skewness(Schema):
    G1 = maybe("number", "adjusted Fisher-Pearson skewness (spreadsheet SKEW)")
    g1 = maybe("number", "moment coefficient m3 / m2^1.5 (biased)")
    b1 = maybe("number", "m3 / s^3 with the n-1 sd")
    se = maybe("number", "standard error of G1 under normality")
    z = maybe("number", "G1 / se")
    p_value = maybe("number", "two-sided normal p-value of z")
    pearson_median = maybe("number", "3 (mean - median) / sd")
    pearson_mode = maybe("number", "(mean - mode) / sd")
    quartile = maybe("number", "Bowley's quartile skewness (q3 + q1 - 2 median) / (q3 - q1)")
    label = maybe("string", "symmetric, right_skewed or left_skewed, from |G1| and skewness_threshold")


class Kurtosis(Schema):
    G2 = maybe("number", "adjusted excess kurtosis (spreadsheet KURT); 0 for a normal distribution")
    g2 = maybe("number", "excess moment coefficient m4 / m2^2 - 3 (biased)")
    b2 = maybe("number", "m4 / s^4 - 3 with the n-1 sd")
    se = maybe("number", "standard error of G2 under normality")
    z = maybe("number", "G2 / se")
    p_value = maybe("number", "two-sided normal p-value of z")
    label = maybe("string", "mesokurtic, leptokurtic or platykurtic, from |G2| and kurtosis_threshold")


class Share(Schema):
    observed = maybe("number", "share of values within k sd of the mean")
    normal = number("the same share for a normal distribution")


class WithinSd(Schema):
    one = fields.Nested(Share, required=True)
    two = fields.Nested(Share, required=True)
    three = fields.Nested(Share, required=True)


class DescribeMethods(Schema):
    moments = fields.String(required=True, metadata={"description": "how the moments were obtained from this form"})
    quantiles = fields.String(required=True)
    mode = fields.String(required=True)
    mad = fields.String(required=True)
    standard_errors = fields.String(required=True)
    labels = fields.String(required=True)


class DescribeBody(Schema):
    location = fields.Nested(Location, required=True)
    spread = fields.Nested(Spread, required=True)
    skewness = fields.Nested(Skewness, required=True)
    kurtosis = fields.Nested(Kurtosis, required=True)
    within_sd = fields.Nested(WithinSd, required=True)
    methods = fields.Nested(DescribeMethods, required=True)


class DescribeResponse(Envelope, DescribeBody):
    pass
