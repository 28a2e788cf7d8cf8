"""Blueprint for the one-sample analyses: /v1/describe, /v1/normality, /v1/modality.

Each view reads the request (``intake``), calls one function of ``service.stats`` and
sends the result (``output``); no statistics here.
"""

from __future__ import annotations

from flask import Blueprint, current_app

from ..stats import describe as describing
from ..stats import modality as peaks
from ..stats import normality as testing
from .intake import read_sample_request
from .output import document, respond
from .schemas.describe import DescribeOptions, DescribeRequest
from .schemas.modality import ModalityOptions, ModalityRequest
from .schemas.normality import NormalityOptions, NormalityRequest

bp = Blueprint("analysis", __name__, url_prefix="/v1")


@bp.route("/describe", methods=["POST", "GET"])
def describe():
    req = read_sample_request(DescribeRequest, DescribeOptions, minimum_n=2)
    o = req.options
    options = describing.DescribeOptions(
        quantile_definition=o["quantile_definition"],
        skewness_threshold=o["skewness_threshold"],
        kurtosis_threshold=o["kurtosis_threshold"],
    )
    return respond(document(req.input, describing.describe(req.profile, options)))


@bp.route("/normality", methods=["POST", "GET"])
def normality():
    req = read_sample_request(NormalityRequest, NormalityOptions, minimum_n=3)
    o = req.options
    alpha = o["alpha"] if o["alpha"] is not None else current_app.config["DEFAULT_ALPHA"]
    options = testing.NormalityOptions(
        alpha=alpha,
        primary_test=o["primary_test"],
        adequate_n=o["adequate_n"],
        skewness_threshold=o["skewness_threshold"],
        kurtosis_threshold=o["kurtosis_threshold"],
    )
    return respond(document(req.input, testing.normality(req.profile, options)))


@bp.route("/modality", methods=["POST", "GET"])
def modality():
    req = read_sample_request(ModalityRequest, ModalityOptions, minimum_n=3)
    o = req.options
    cfg = current_app.config
    options = peaks.ModalityOptions(
        alpha=o["alpha"] if o["alpha"] is not None else cfg["DEFAULT_ALPHA"],
        max_components=o["max_components"],
        seed=o["seed"],
        starts=cfg["FIT_STARTS"],
        max_iterations=cfg["FIT_MAX_ITERATIONS"],
        time_limit=cfg["FIT_TIME_LIMIT"],
    )
    return respond(document(req.input, peaks.modality(req.profile, options)))
