"""The OpenAPI document, generated from the marshmallow schemas by apispec.

``build_spec()`` is the single source: the app serves it at ``/openapi.json`` and
``python -m service.api.openapi`` writes ``openapi/openapi.yaml``, which a test keeps
equal to the generated document.
"""

from __future__ import annotations

import json
import sys
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path

from apispec import APISpec
from apispec.ext.marshmallow import MarshmallowPlugin
from marshmallow import Schema

from .. import __version__
from .errors import PROBLEM_MEDIA_TYPE, PROBLEM_TYPES
from .schemas.common import MISSING_TOKEN_DOC, OutputOptions, ProblemDocument, ProblemType, TextOptions, Unavailable
from .schemas.describe import DescribeOptions, DescribeRequest, DescribeResponse
from .schemas.modality import MixtureOut, ModalityOptions, ModalityRequest, ModalityResponse, TwoComponentsOut
from .schemas.normality import NormalityOptions, NormalityRequest, NormalityResponse
from .schemas import monitoring as m
from .schemas import results as r

OPENAPI_VERSION = "3.1.0"


@dataclass(frozen=True)
class Operation:
    path: str
    summary: str
    description: str
    request: type[Schema]
    options: type[Schema]
    response: type[Schema]
    examples: dict
    tag: str
    errors: tuple[int, ...] = (400, 406, 413, 415, 422)
    get_form: bool = True
    extra: dict = field(default_factory=dict)


# One example per form, all from the demo scenario (kiln cooling hours).
SAMPLE_EXAMPLES = {
    "values": ("raw values with two missing", "demo.json"),
    "summary": ("the same sample as summary statistics", "summary.json"),
    "partials": ("the same sample as three shard partials", "partials.json"),
    "histogram": ("the same sample as a histogram with open-ended outer bins", "histogram.json"),
}

OPERATIONS = (
    Operation(
        path="/v1/describe",
        summary="Location, spread, skewness and excess kurtosis with standard errors",
        description=(
            "Mean, median, mode, sd, quartiles, MAD, skewness in three conventions (G1, g1, b1) with "
            "its standard error, z and p-value, Pearson's and Bowley's skewness, excess kurtosis in "
            "three conventions (G2, g2, b2), and the share of values within 1, 2 and 3 sd beside the "
            "normal shares."
        ),
        request=DescribeRequest,
        options=DescribeOptions,
        response=DescribeResponse,
        examples=SAMPLE_EXAMPLES,
        tag="analysis",
    ),
    Operation(
        path="/v1/normality",
        summary="Nine normality tests and one sample-size-aware verdict",
        description=(
            "Shapiro-Wilk, Shapiro-Francia, D'Agostino-Pearson K^2, the skewness and kurtosis tests, "
            "Anderson-Darling, Lilliefors, Cramer-von Mises and Jarque-Bera, each with its method and "
            "reference. One primary test per sample-size range decides the verdict; small samples give "
            "'inconclusive' rather than 'normal', large samples weigh the size of the departure."
        ),
        request=NormalityRequest,
        options=NormalityOptions,
        response=NormalityResponse,
        examples=SAMPLE_EXAMPLES,
        tag="analysis",
    ),
    Operation(
        path="/v1/modality",
        summary="How many peaks: modes of a fitted Gaussian mixture, the dip test, the bimodality coefficient",
        description=(
            "Gaussian mixtures with k = 1..max_components fitted by EM from seeded starts and selected by "
            "BIC; modes and antimodes found on the fitted density (components are not modes); Hartigan's "
            "dip test; the bimodality coefficient (a heuristic); one verdict: unimodal, bimodal or multimodal."
        ),
        request=ModalityRequest,
        options=ModalityOptions,
        response=ModalityResponse,
        examples={"values": ("raw values with two missing", "demo.json"),
                  "histogram": ("the same sample as a histogram", "histogram.json")},
        tag="analysis",
    ),
    Operation(
        path="/v1/tails",
        summary="Tail probabilities, out-of-limit parts per million and quantiles under several models",
        description=(
            "For each value, interval or probability asked about: the z-score, the normal model's probability "
            "(with its log), the empirical share with a Wilson interval, the fitted mixture's probability, "
            "Chebyshev and Cantelli bounds; Cornish-Fisher, empirical and mixture quantiles; parts per million "
            "outside specification limits. Answers come in request order."
        ),
        request=r.TailsRequest,
        options=r.TailsOptions,
        response=r.TailsResponse,
        examples={"values": ("tail questions about the demo sample", "tails.json"),
                  "summary": ("the same questions from summary statistics", "tails_summary.json")},
        tag="analysis",
    ),
    Operation(
        path="/v1/transform",
        summary="Box-Cox and Yeo-Johnson: lambda with its interval, a simple nearby lambda, normality before and after",
        description="Maximum-likelihood lambda with a profile-likelihood interval for both families (Box-Cox needs "
                    "positive data), a named lambda inside the interval when there is one, and the shape and "
                    "normality verdict before and after; with a note on back-transforming results.",
        request=r.TransformRequest,
        options=r.TransformOptions,
        response=r.TransformResponse,
        examples={"values": ("the demo sample", "demo.json")},
        tag="analysis",
    ),
    Operation(
        path="/v1/diagnose",
        summary="The one call: describe, normality and modality (tails and a recommendation when asked), one verdict",
        description="Everything about one sample from one sort, one set of moments and one mixture fit, with an "
                    "overall verdict {label, normal, flags, summary}: a label and flags for programs, one sentence "
                    "for a person.",
        request=r.DiagnoseRequest,
        options=r.DiagnoseOptions,
        response=r.DiagnoseResponse,
        examples={"values": ("the demo sample, with tail questions and a goal", "diagnose.json"),
                  "histogram": ("the demo sample as a histogram", "histogram.json")},
        tag="analysis",
    ),
    Operation(
        path="/v1/plot",
        summary="An SVG: histogram with the fitted normal and mixture densities, and a normal Q-Q plot with a band",
        description="kind=histogram (Freedman-Diaconis bins, fitted normal and mixture densities), qq (normal Q-Q "
                    "plot with a simultaneous band from the Lilliefors critical value) or both. Title, axis labels and "
                    "a text description inside the SVG for screen readers; the same input gives the same bytes.",
        request=m.PlotRequest,
        options=m.PlotOptions,
        response=None,
        examples={"values": ("the demo sample", "demo.json")},
        tag="pictures",
        errors=(400, 413, 415, 422),
    ),
)

JSON_ONLY_OPERATIONS = (
    Operation(
        path="/v1/recommend",
        summary="The follow-up test for an intended analysis, with alternatives, a transform and cautions",
        description="For a goal (one_sample_mean, two_sample, paired, k_sample, correlation, regression_residuals, "
                    "control_chart, capability) and its samples in any form: the recommended test and why, the "
                    "alternatives, a transformation when one helps, cautions, the rules that fired (each from the "
                    "literature), and for capability the indices. Advice, not a decision.",
        request=r.RecommendRequest,
        options=r.RecommendOptions,
        response=r.RecommendResponse,
        examples={"two_sample": ("two kilns compared", "recommend.json")},
        tag="analysis",
        get_form=False,
    ),
    Operation(
        path="/v1/batch",
        summary="Many named samples in one request, each diagnosed; a bad sample gets a problem in its slot",
        description="samples: {name: sample}, each in any form, each diagnosed as by /v1/diagnose with the options "
                    "given beside; results under the same names in the same order; fields trims every result to "
                    "the dotted keys a job stores. Limits on the number of samples and values (413 beyond).",
        request=m.BatchRequest,
        options=m.BatchRequest,
        response=m.BatchResponse,
        examples={"monitoring": ("three kiln logs of one day, one of them garbled", "batch.json")},
        tag="monitoring",
        get_form=False,
    ),
    Operation(
        path="/v1/compare",
        summary="A sample against a reference: distribution, location, spread and shape tests, PSI, a drift verdict",
        description="Two-sample Kolmogorov-Smirnov, Anderson-Darling k-sample, Cramer-von Mises, Welch (location), "
                    "Brown-Forsythe (spread), the change in skewness and kurtosis, the population stability index, "
                    "and a drift verdict {label: stable | shifted | rescaled | reshaped, material, flags, summary}.",
        request=m.CompareRequest,
        options=m.CompareOptions,
        response=m.CompareResponse,
        examples={"drift": ("this week's kiln against last month's", "compare.json")},
        tag="monitoring",
        get_form=False,
    ),
)

TEXT_BODY_DOC = (
    "The sample as text: numbers separated by commas, semicolons, tabs, spaces or newlines, "
    "with an optional header line. Missing-value markers (dropped and counted): "
    f"{MISSING_TOKEN_DOC}. Options go in the query string."
)


def example(name: str) -> dict:
    return json.loads(resources.files("service.api").joinpath("examples", name).read_text())


def _error_responses(codes) -> dict:
    return {
        str(code): {
            "description": {400: "malformed body", 401: "missing or wrong API key", 406: "the Accept header allows neither JSON nor CSV",
                            413: "body or sample too large", 415: "unsupported media type",
                            422: "valid syntax that cannot be analysed"}[code],
            "content": {PROBLEM_MEDIA_TYPE: {"schema": ProblemDocument}},
        }
        for code in codes
    }


def _operations(op: Operation) -> dict:
    if op.response is None:  # a picture
        ok = {"description": "the picture", "content": {"image/svg+xml": {"schema": {"type": "string"}}}}
    else:
        ok = {
            "description": "the analysis",
            "content": {
                "application/json": {"schema": op.response},
                "text/csv": {"schema": {"type": "string", "description": "key,value rows with dotted keys"}},
                "text/plain": {"schema": {"type": "string", "description": "one value, when ?field= is given"}},
            },
        }

    def query() -> list[dict]:
        # Fresh dicts each time: apispec pops "schema" from a parameter as it expands it.
        output = (OutputOptions,) if op.response is not None else ()
        return [{"in": "query", "schema": s} for s in (*output, TextOptions, op.options)]

    post = {
        "tags": [op.tag],
        "summary": op.summary,
        "operationId": op.path.strip("/").replace("/", "_") + "_post",
        "description": op.description + " Options go in the JSON body or in the query string (not both for "
        "the same option); decimal, column and layout apply to text bodies only.",
        "parameters": query(),
        "requestBody": {
            "required": True,
            "description": "JSON with the sample in `values`, or the sample as text (options then in the query)",
            "content": {
                "application/json": {
                    "schema": op.request,
                    "examples": {name: {"summary": text, "value": example(file)} for name, (text, file) in op.examples.items()},
                },
                "text/csv": {"schema": {"type": "string", "description": TEXT_BODY_DOC}},
                "text/plain": {"schema": {"type": "string", "description": TEXT_BODY_DOC}},
            },
        },
        "responses": {"200": ok, **_error_responses(op.errors)},
    }
    operations = {"post": post}
    if op.get_form:
        values_param = {
            "in": "query",
            "name": "values",
            "required": True,
            "description": "the sample as text, e.g. 1.2,3.4,5.6 (same rules as a text body; repeated values "
            "parameters are joined). The request line is limited to 8190 bytes (a few hundred values): post longer "
            "columns as a text body",
            "schema": {"type": "string"},
        }
        operations["get"] = {
            "tags": [op.tag],
            "summary": op.summary + " (GET form for spreadsheet cell formulas)",
            "description": "The same analysis with the sample and options in the query string. "
            "With field=<dotted key> the answer is that one value as text/plain.",
            "operationId": op.path.strip("/").replace("/", "_") + "_get",
            "parameters": [values_param] + query(),
            "responses": {"200": ok, **_error_responses(tuple(c for c in op.errors if c != 415))},
        }
    return operations


def _json_operations(op: Operation) -> dict:
    return {"post": {
        "tags": [op.tag],
        "summary": op.summary,
        "description": op.description,
        "operationId": op.path.strip("/").replace("/", "_") + "_post",
        "parameters": [{"in": "query", "schema": OutputOptions}],
        "requestBody": {"required": True, "content": {"application/json": {
            "schema": op.request,
            "examples": {name: {"summary": text, "value": example(file)} for name, (text, file) in op.examples.items()},
        }}},
        "responses": {
            "200": {"description": "the analysis", "content": {
                "application/json": {"schema": op.response},
                "text/csv": {"schema": {"type": "string", "description": "key,value rows with dotted keys"}},
                "text/plain": {"schema": {"type": "string", "description": "one value, when ?field= is given"}},
            }},
            **_error_responses((400, 406, 413, 415, 422)),
        },
    }}


@lru_cache(maxsize=1)
def build_spec() -> dict:
    spec = APISpec(
        title="shapegauge",
        version=__version__,
        openapi_version=OPENAPI_VERSION,
        plugins=[MarshmallowPlugin()],
        info={
            "description": (
                "Distribution diagnostics for analysts, quality engineers and the jobs they write: "
                "moments with standard errors, normality tests with an honest verdict, and more. "
                "A screening aid, not a substitute for a qualified statistician; for health, safety "
                "or regulated decisions follow the applicable standards and validated procedures."
            ),
        },
    )
    spec.components.schema("Unavailable", schema=Unavailable)
    spec.components.schema("TwoComponentsOut", schema=TwoComponentsOut)
    spec.components.schema("MixtureOut", schema=MixtureOut)
    for name in ("IntervalOut", "EmpiricalOut", "ProbabilityOut", "PpmOut", "LimitsOut", "SuggestedOut", "ShapeOut",
                 "TransformHintOut", "CapabilityOut", "TailsBody", "RecommendBody"):
        spec.components.schema(name, schema=getattr(r, name))
    spec.components.schema("BatchSlot", schema=m.BatchSlot)
    for op in OPERATIONS:
        spec.path(path=op.path, operations=_operations(op))
    for op in JSON_ONLY_OPERATIONS:
        spec.path(path=op.path, operations=_json_operations(op))
    spec.path(
        path="/openapi.json",
        operations={"get": {"tags": ["operations"], "summary": "this document", "operationId": "openapi",
                            "responses": {"200": {"description": "the OpenAPI document",
                                                  "content": {"application/json": {"schema": {"type": "object"}}}}}}},
    )
    spec.path(
        path="/problems/{code}",
        operations={"get": {
            "tags": ["operations"], "summary": "what a problem type means", "operationId": "problem_type",
            "parameters": [{"in": "path", "name": "code", "required": True, "schema": {"type": "string", "enum": sorted(PROBLEM_TYPES)}}],
            "responses": {
                "200": {"description": "the problem type", "content": {"application/json": {"schema": ProblemType}}},
                "404": {"description": "no such problem type", "content": {PROBLEM_MEDIA_TYPE: {"schema": ProblemDocument}}},
            },
        }},
    )
    spec.path(
        path="/healthz",
        operations={"get": {"tags": ["operations"], "summary": "liveness", "operationId": "healthz",
                            "responses": {"200": {"description": "the process is alive",
                                                  "content": {"application/json": {"schema": {"type": "object"}}}}}}},
    )
    return spec.to_dict()


def spec_yaml() -> str:
    import yaml

    return yaml.safe_dump(build_spec(), sort_keys=False, allow_unicode=True, width=100)


def main(argv: list[str]) -> int:
    target = Path(argv[1]) if len(argv) > 1 else Path("openapi/openapi.yaml")
    target.write_text(spec_yaml())
    print(f"wrote {target}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
