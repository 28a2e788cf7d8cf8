"""Blueprint for the analyses of one sample: describe, normality, modality, tails,
transform and diagnose, and recommend (one or more samples).

Each view reads the request (``intake``), calls one function of ``service.stats`` and
sends the result (``output``); no statistics here. The ``*_options`` helpers turn a
loaded request into the statistics layer's option objects, the same way everywhere.
"""

from __future__ import annotations

import numpy as np
from flask import Blueprint, current_app

from ..stats import advice, diagnose as diagnosing, describe as describing, modality as peaks, tails as tailing
from ..stats import normality as testing
from ..stats import transforms
from ..stats.forms import Sample, require_spread
from ..stats.profile import profile_of_sample
from .errors import Problem
from .intake import limits, load_json_body, load_options, read_sample_request
from .output import document, respond
from .sample_input import InputInfo, build_sample
from .schemas.describe import DescribeOptions, DescribeRequest
from .schemas.modality import ModalityOptions, ModalityRequest
from .schemas.normality import NormalityOptions, NormalityRequest
from .schemas.results import (DiagnoseOptions, DiagnoseRequest, RecommendRequest, TailsOptions, TailsRequest,
                              TransformOptions, TransformRequest)

bp = Blueprint("analysis", __name__, url_prefix="/v1")


def alpha_of(o: dict) -> float:
    return o["alpha"] if o.get("alpha") is not None else current_app.config["DEFAULT_ALPHA"]


def describe_options(o: dict) -> describing.DescribeOptions:
    return describing.DescribeOptions(
        quantile_definition=o.get("quantile_definition", "hf7"),
        skewness_threshold=o["skewness_threshold"],
        kurtosis_threshold=o["kurtosis_threshold"],
    )


def normality_options(o: dict) -> testing.NormalityOptions:
    return testing.NormalityOptions(
        alpha=alpha_of(o),
        primary_test=o.get("primary_test"),
        adequate_n=o.get("adequate_n"),
        skewness_threshold=o["skewness_threshold"],
        kurtosis_threshold=o["kurtosis_threshold"],
    )


def modality_options(o: dict) -> peaks.ModalityOptions:
    cfg = current_app.config
    return peaks.ModalityOptions(
        alpha=alpha_of(o),
        max_components=o.get("max_components", 4),
        seed=o.get("seed", 0),
        starts=cfg["FIT_STARTS"],
        max_iterations=cfg["FIT_MAX_ITERATIONS"],
        time_limit=cfg["FIT_TIME_LIMIT"],
    )


def tail_questions(o: dict) -> dict:
    return {
        "above": tuple(o.get("above") or ()),
        "below": tuple(o.get("below") or ()),
        "intervals": tuple(tuple(pair) for pair in o.get("between") or ()),
        "lower_limit": o.get("lower_limit"),
        "upper_limit": o.get("upper_limit"),
        "quantiles": tuple(o.get("quantiles") or ()),
    }


@bp.route("/describe", methods=["POST", "GET"])
def describe():
    req = read_sample_request(DescribeRequest, DescribeOptions, minimum_n=2)
    return respond(document(req.input, describing.describe(req.profile, describe_options(req.options))))


@bp.route("/normality", methods=["POST", "GET"])
def normality():
    req = read_sample_request(NormalityRequest, NormalityOptions, minimum_n=3)
    return respond(document(req.input, testing.normality(req.profile, normality_options(req.options))))


@bp.route("/modality", methods=["POST", "GET"])
def modality():
    req = read_sample_request(ModalityRequest, ModalityOptions, minimum_n=3)
    return respond(document(req.input, peaks.modality(req.profile, modality_options(req.options))))


def mixture_components(profile, o: dict):
    """The components of the mixture /v1/modality would choose, for the tails and the
    histogram picture; ``None`` where no mixture can be fitted."""
    fit = peaks.fit_profile(profile, peaks.untied(profile, o.get("seed", 0))[0], modality_options(o))
    return None if isinstance(fit, peaks.Unavailable) else fit[0].components


@bp.route("/tails", methods=["POST", "GET"])
def tails():
    req = read_sample_request(TailsRequest, TailsOptions, minimum_n=2)
    o = req.options
    report = tailing.tails(req.profile, mixture=mixture_components(req.profile, o),
                           quantile_definition=o["quantile_definition"], **tail_questions(o))
    return respond(document(req.input, report))


@bp.route("/transform", methods=["POST", "GET"])
def transform():
    req = read_sample_request(TransformRequest, TransformOptions, minimum_n=3)
    if req.profile.sample is None:
        raise Problem("invalid-request", f"a transformation needs the raw values; a {req.profile.form} cannot be transformed",
                      errors=[{"pointer": f"/{req.profile.form}", "detail": "send values"}])
    o = req.options
    report = transforms.transform(req.profile.sample, normality_options(o), confidence=o["confidence"], profile=req.profile)
    return respond(document(req.input, report))


def _paired(profiles, goal: str):
    a, b = profiles
    if a.sample is None or b.sample is None:
        raise Problem("invalid-request", f"goal {goal} pairs values: both samples must be raw values",
                      errors=[{"pointer": "/samples", "detail": "send values"}])
    if a.sample.n != b.sample.n or a.sample.missing or b.sample.missing:
        raise Problem("invalid-request", f"goal {goal} pairs values: both samples need the same number of values and no missing ones "
                      f"(got {a.sample.n} and {b.sample.n} values, {a.sample.missing} and {b.sample.missing} missing)",
                      errors=[{"pointer": "/samples", "detail": "unequal lengths"}])


@bp.post("/recommend")
def recommend():
    body = load_json_body()
    o = load_options(RecommendRequest(), body)
    goal = o["goal"]
    built = [build_sample(s, limits(), prefix=f"/samples/{i}", minimum_n=3) for i, s in enumerate(o["samples"])]
    profiles = [b.profile for b in built]
    if goal in ("paired", "correlation"):
        _paired(profiles, goal)
    if goal == "paired":
        differences = Sample(np.asarray(profiles[0].sample.values) - np.asarray(profiles[1].sample.values))
        require_spread(differences, minimum_n=3)
        profiles = [profile_of_sample(differences)]
    options = normality_options(o)
    report = advice.recommend(goal, profiles, options, lower_limit=o.get("lower_limit"),
                              upper_limit=o.get("upper_limit"), offer_transform=True)
    info = built[0].input if len(built) == 1 else InputInfo("samples", sum(b.input.n for b in built),
                                                            sum(b.input.missing for b in built))
    return respond(document(info, report))


def diagnose_options(o: dict) -> diagnosing.DiagnoseOptions:
    """The loaded options of /v1/diagnose (and of every /v1/batch sample) for stats."""
    tails = o.get("tails") or {}
    return diagnosing.DiagnoseOptions(
        describe=describe_options(o),
        normality=normality_options(o),
        modality=modality_options(o),
        tails=tail_questions(tails) if tails else None,
        goal=o.get("goal"),
        lower_limit=tails.get("lower_limit"),
        upper_limit=tails.get("upper_limit"),
        offer_transform=True,
    )


def diagnosis_document(info: InputInfo, profile, options: diagnosing.DiagnoseOptions) -> dict:
    """The diagnosis as a response body, its parts' warnings gathered (without repeats) at
    the top level only."""
    doc = document(info, diagnosing.diagnose(profile, options))
    for part in ("describe", "normality", "modality", "tails", "recommend"):
        if isinstance(doc.get(part), dict):
            doc[part].pop("warnings", None)
    return doc


@bp.route("/diagnose", methods=["POST", "GET"])
def diagnose():
    req = read_sample_request(DiagnoseRequest, DiagnoseOptions, minimum_n=3)
    return respond(diagnosis_document(req.input, req.profile, diagnose_options(req.options)))
