"""Problem documents (RFC 9457, "Problem Details for HTTP APIs") for every error.

One registry of problem types; one exception, :class:`Problem`; handlers that turn it,
the statistics layer's :class:`~service.stats.errors.DataError`, werkzeug's HTTP errors
and anything unexpected into ``application/problem+json``. A 500 never carries a stack
trace: the trace goes to the log, the client gets a request id to quote.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import orjson
from flask import Flask, Response, current_app, g, request
from werkzeug.exceptions import HTTPException

from ..stats.errors import DataError

log = logging.getLogger("shapegauge")

PROBLEM_MEDIA_TYPE = "application/problem+json"


@dataclass(frozen=True)
class ProblemType:
    status: int
    title: str
    description: str


# RFC 9457 section 3.1.1: `type` is a URI reference; ours resolve on this service,
# where GET /problems/<code> describes the problem.
PROBLEM_TYPES: dict[str, ProblemType] = {
    "malformed-body": ProblemType(400, "Malformed request body", "The body could not be parsed as the media type it claims."),
    "unauthorized": ProblemType(401, "Unauthorized", "The request needs a valid API key."),
    "not-found": ProblemType(404, "Not found", "No resource lives at this path."),
    "method-not-allowed": ProblemType(405, "Method not allowed", "The resource exists but does not answer this HTTP method."),
    "not-acceptable": ProblemType(406, "Not acceptable", "The service cannot answer in any of the media types the Accept header lists."),
    "too-large": ProblemType(413, "Request too large", "The body, or a sample in it, is larger than this service's configured limits."),
    "unsupported-media-type": ProblemType(415, "Unsupported media type", "Send application/json, text/csv or text/plain."),
    "invalid-request": ProblemType(422, "Invalid request", "The body parsed but its fields are missing, unknown or out of range."),
    "invalid-value": ProblemType(422, "Invalid value in a sample", "A sample holds something other than a number or a missing-value marker."),
    "non-finite-value": ProblemType(422, "Non-finite value", "A sample holds an infinite value (or a number too large for a double)."),
    "missing-values-rejected": ProblemType(422, "Missing values rejected", "The request asked for missing=reject and the sample has missing values."),
    "not-one-dimensional": ProblemType(422, "Sample is not one-dimensional", "A sample is a flat list of numbers; nested arrays are not flattened."),
    "out-of-range-value": ProblemType(422, "Value out of range", "A value is so large in magnitude that its square would overflow double precision."),
    "too-few-values": ProblemType(422, "Too few values", "The analysis needs more non-missing values than the sample has."),
    "constant-data": ProblemType(422, "Constant data", "Every value is the same (or differs only by rounding): there is no shape to describe."),
    "unanalysable-data": ProblemType(422, "Data cannot be analysed", "The data are well formed but the analysis cannot be carried out on them."),
    "internal-error": ProblemType(500, "Internal error", "The service failed unexpectedly. Quote the request id when reporting it."),
}

_STATUS_CODES = {400: "malformed-body", 401: "unauthorized", 404: "not-found", 405: "method-not-allowed",
                 406: "not-acceptable", 413: "too-large", 415: "unsupported-media-type", 422: "invalid-request"}


class Problem(Exception):
    """An error answered with a problem document.

    ``errors`` lists the individual faults, each ``{"pointer", "detail"}`` where the
    pointer is an RFC 6901 JSON pointer into the request (``/values/17``); text bodies
    add ``line`` and ``column``.
    """

    def __init__(self, code: str, detail: str, *, errors: list[dict] | None = None, status: int | None = None):
        super().__init__(detail)
        kind = PROBLEM_TYPES[code]
        self.code = code
        self.status = status or kind.status
        self.title = kind.title
        self.detail = detail
        self.errors = errors

    def document(self) -> dict:
        body = {
            "type": f"/problems/{self.code}",
            "title": self.title,
            "status": self.status,
            "detail": self.detail,
            "instance": request.path if request else None,
            "request_id": g.get("request_id") if g else None,  # RFC 9457 section 3.2 extension member
        }
        if self.errors:
            body["errors"] = self.errors
        return body


def problem_response(problem: Problem) -> Response:
    response = Response(orjson.dumps(problem.document()), status=problem.status, mimetype=PROBLEM_MEDIA_TYPE)
    if problem.status == 405 and getattr(problem, "allowed", None):
        response.headers["Allow"] = ", ".join(problem.allowed)
    for name, value in getattr(problem, "headers", {}).items():
        response.headers[name] = value
    return response


def from_data_error(exc: DataError) -> Problem:
    code = exc.code if exc.code in PROBLEM_TYPES else "unanalysable-data"
    errors = [{"pointer": exc.pointer, "detail": exc.message}] if exc.pointer else None
    return Problem(code, exc.message, errors=errors)


def from_http_exception(exc: HTTPException) -> Problem:
    status = exc.code or 500
    code = _STATUS_CODES.get(status, "internal-error")
    detail = {
        404: f"no resource at {request.path}",
        405: f"{request.method} is not allowed on {request.path}",
        413: f"the request body is larger than this service's limit of {current_app.config.get('MAX_BODY_BYTES')} bytes",
    }.get(status, exc.description or PROBLEM_TYPES[code].description)
    problem = Problem(code, detail, status=status)
    if status == 405:
        problem.allowed = sorted(getattr(exc, "valid_methods", None) or [])
    return problem


def register(app: Flask) -> None:
    app.register_error_handler(Problem, problem_response)
    app.register_error_handler(DataError, lambda exc: problem_response(from_data_error(exc)))
    app.register_error_handler(HTTPException, lambda exc: problem_response(from_http_exception(exc)))

    @app.errorhandler(Exception)
    def _unexpected(exc: Exception) -> Response:
        log.exception("unhandled error on %s %s", request.method, request.path)
        return problem_response(Problem("internal-error", "the service failed unexpectedly; the failure is logged"))
