"""Blueprint for monitoring jobs and pictures: /v1/batch, /v1/compare, /v1/plot."""

from __future__ import annotations

from dataclasses import dataclass

from flask import Blueprint, Response, current_app, g

from ..stats import compare as comparing
from ..stats.errors import DataError
from .analysis import alpha_of, diagnose_options, diagnosis_document, mixture_components
from .errors import Problem, from_data_error
from .intake import load_json_body, load_options, read_sample_request, limits
from .output import document, respond, to_document
from .plots import render
from .sample_input import InputInfo, build_sample
from .schemas.forms import SampleObject
from .schemas.monitoring import BatchRequest, CompareRequest, PlotOptions, PlotRequest

bp = Blueprint("monitoring", __name__, url_prefix="/v1")


def _trim(doc: dict, keep: list[str]) -> dict:
    """Only the dotted keys asked for (a key that names a group keeps the whole group)."""
    out: dict = {}
    for key in keep:
        node, target, parts = doc, out, key.split(".")
        for i, part in enumerate(parts):
            if not isinstance(node, dict) or part not in node:
                raise Problem("invalid-request", f"fields: no key {key!r} in a diagnose result",
                              errors=[{"pointer": "/fields", "detail": f"unknown key {key}"}])
            node = node[part]
            if i == len(parts) - 1:
                target[part] = node
            else:
                target = target.setdefault(part, {})
    return out


@bp.post("/batch")
def batch():
    body = load_json_body()
    o = load_options(BatchRequest(), body)
    cfg = current_app.config
    # Results in request order (the order of the names in the body).
    samples = {name: o["samples"][name] for name in body["samples"]}
    if len(samples) > cfg["MAX_BATCH_SAMPLES"]:
        raise Problem("too-large", f"the batch holds {len(samples)} samples; this service accepts at most {cfg['MAX_BATCH_SAMPLES']}")
    total = sum(len(s["values"]) if isinstance(s, dict) and isinstance(s.get("values"), list) else 0 for s in samples.values())
    if total > cfg["MAX_BATCH_VALUES"]:
        raise Problem("too-large", f"the batch holds {total} values; this service accepts at most {cfg['MAX_BATCH_VALUES']} per batch")
    options = diagnose_options(o)
    keep = o.get("fields_")
    results, n, missing = {}, 0, 0
    for name, raw in samples.items():
        try:
            if not isinstance(raw, dict):
                raise Problem("invalid-request", f"sample {name!r} must be a sample object (values, summary, partials or histogram)",
                              errors=[{"pointer": f"/samples/{name}", "detail": "not an object"}])
            raw = load_options(SampleObject(), raw, prefix=f"/samples/{name}")
            built = build_sample(raw, limits(), quantile_definition=o.get("quantile_definition", "hf7"),
                                 prefix=f"/samples/{name}", minimum_n=3)
            body = diagnosis_document(built.input, built.profile, options)
            for key in ("service", "caution"):
                body.pop(key)
            # fields is part of the request: an unknown key fails the whole batch (422).
            results[name] = {"ok": True, "result": _trim(body, keep) if keep else body}
            n += built.input.n
            missing += built.input.missing
        except Problem as problem:
            if problem.errors and problem.errors[0].get("pointer") == "/fields":
                raise
            results[name] = {"ok": False, "problem": problem.document()}
        except DataError as exc:
            results[name] = {"ok": False, "problem": from_data_error(exc).document()}
    g.sample_n = n
    info = InputInfo("batch", n, missing)
    return respond(document(info, _Batch(results)))


@dataclass(frozen=True)
class _Batch:
    """The batch result: the slots, in request order, and no warnings of its own (each
    slot carries its sample's)."""

    results: dict
    warnings: tuple = ()


@bp.post("/compare")
def compare():
    o = load_options(CompareRequest(), load_json_body())
    sample = build_sample(o["sample"], limits(), prefix="/sample", minimum_n=3)
    reference = build_sample(o["reference"], limits(), prefix="/reference", minimum_n=3)
    forms = {sample.profile.form, reference.profile.form}
    if forms not in ({"values"}, {"histogram"}):
        raise Problem("invalid-request", "compare takes two raw samples, or two histograms on the same edges",
                      errors=[{"pointer": "/sample", "detail": f"got {sample.profile.form} against {reference.profile.form}"}])
    if forms == {"histogram"}:
        a, b = sample.profile.histogram.edges, reference.profile.histogram.edges
        if a.shape != b.shape or not (a == b).all():
            raise Problem("invalid-request", "the two histograms must share their edges",
                          errors=[{"pointer": "/sample/histogram/edges", "detail": "differs from the reference's"}])
    g.sample_n = sample.input.n
    result = comparing.compare(sample.profile, reference.profile, alpha_of(o))
    doc = document(sample.input, result)
    doc["input"]["reference"] = to_document(reference.input)
    return respond(doc)


@bp.route("/plot", methods=["POST", "GET"])
def plot():
    req = read_sample_request(PlotRequest, PlotOptions, minimum_n=3)
    o = req.options
    profile = req.profile
    if profile.sample is None and (profile.histogram is None or o["kind"] != "histogram"):
        raise Problem("invalid-request", f"a {o['kind']} plot needs raw values"
                      + (" (a histogram allows kind=histogram)" if profile.histogram is not None else ""),
                      errors=[{"pointer": "/kind", "detail": f"not from a {profile.form}"}])
    components = mixture_components(profile, o) if o["kind"] in ("histogram", "both") else None
    picture = render(o["kind"], sample=profile.sample, histogram=profile.histogram, moments=profile.moments,
                     components=components, label=req.input.label, title=o.get("title"))
    return Response(picture.svg, mimetype="image/svg+xml")
