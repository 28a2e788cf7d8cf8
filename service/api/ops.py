"""What an operator needs around every request: request ids, API keys, CORS and
Prometheus metrics.

* ``X-Request-ID`` is taken from the request when it is a sane token (letters, digits,
  ``._-``, at most 128) and generated otherwise; it is echoed on the response and put in
  every problem document. gunicorn's access log (``docker/gunicorn.conf.py``) writes one
  JSON line per request with it, the status, the duration and the sample size (from the
  ``Shapegauge-N`` response header): never the body.
* API keys, when ``SHAPEGAUGE_API_KEYS`` or ``SHAPEGAUGE_API_KEYS_FILE`` is set, guard the
  analysis endpoints: ``Authorization: Bearer <key>`` or ``X-API-Key: <key>``, compared
  in constant time against every configured key. Health, metrics and docs stay open.
* CORS is off unless ``SHAPEGAUGE_CORS_ORIGINS`` lists origins (or ``*``).
* Metrics use prometheus-client; under gunicorn the library's multiprocess mode
  aggregates the workers (``PROMETHEUS_MULTIPROC_DIR``, set by the gunicorn config).
"""

from __future__ import annotations

import hmac
import os
import re
import time
import uuid
from pathlib import Path

from flask import Flask, Response, g, request
from prometheus_client import CONTENT_TYPE_LATEST, CollectorRegistry, Counter, Gauge, Histogram, generate_latest, multiprocess

from .errors import Problem

_REQUEST_ID = re.compile(r"^[A-Za-z0-9._-]{1,128}$")

REQUESTS = Counter("shapegauge_requests_total", "HTTP requests answered", ["endpoint", "method", "status"])
LATENCY = Histogram("shapegauge_request_seconds", "time to answer a request", ["endpoint"],
                    buckets=(0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30))
SAMPLE_SIZE = Histogram("shapegauge_sample_size", "values per analysed sample", ["endpoint"],
                        buckets=(10, 30, 100, 300, 1_000, 3_000, 10_000, 30_000, 100_000, 300_000, 1_000_000, 3_000_000))
IN_FLIGHT = Gauge("shapegauge_in_flight_requests", "requests being answered", multiprocess_mode="livesum")


def load_keys(config) -> tuple[bytes, ...]:
    keys = [k.strip() for k in (config.get("API_KEYS") or "").split(",") if k.strip()]
    path = config.get("API_KEYS_FILE")
    if path:
        keys += [line.strip() for line in Path(path).read_text().splitlines() if line.strip() and not line.startswith("#")]
    return tuple(k.encode() for k in keys)


def _presented_key() -> bytes | None:
    auth = request.headers.get("Authorization", "")
    if auth[:7].lower() == "bearer ":
        return auth[7:].strip().encode()
    key = request.headers.get("X-API-Key")
    return key.strip().encode() if key else None


def _key_ok(presented: bytes | None, keys: tuple[bytes, ...]) -> bool:
    if presented is None:
        return False
    ok = False
    for key in keys:  # every key is compared, so the time does not tell which one nearly matched
        ok |= hmac.compare_digest(presented, key)
    return ok


def _endpoint() -> str:
    rule = request.url_rule
    return rule.rule if rule is not None else "unmatched"


def register(app: Flask) -> None:
    keys = load_keys(app.config)
    origins = tuple(o.strip() for o in (app.config.get("CORS_ORIGINS") or "").split(",") if o.strip())

    @app.before_request
    def _start():
        g.started = time.perf_counter()
        incoming = request.headers.get("X-Request-ID", "")
        g.request_id = incoming if _REQUEST_ID.match(incoming) else uuid.uuid4().hex
        g.sample_n = None
        IN_FLIGHT.inc()
        g.in_flight = True
        if request.method == "OPTIONS" and origins:
            return Response(status=204)
        if keys and request.path.startswith("/v1/") and not _key_ok(_presented_key(), keys):
            problem = Problem("unauthorized", "this service needs an API key: send Authorization: Bearer <key> or X-API-Key: <key>")
            problem.headers = {"WWW-Authenticate": 'Bearer realm="shapegauge"'}
            raise problem
        return None

    @app.after_request
    def _finish(response: Response) -> Response:
        response.headers["X-Request-ID"] = getattr(g, "request_id", "")
        if getattr(g, "sample_n", None) is not None:
            response.headers["Shapegauge-N"] = str(g.sample_n)
        origin = request.headers.get("Origin")
        if origins and origin and ("*" in origins or origin in origins):
            response.headers["Access-Control-Allow-Origin"] = "*" if "*" in origins else origin
            response.headers["Access-Control-Allow-Headers"] = "Content-Type, Authorization, X-API-Key, X-Request-ID"
            response.headers["Access-Control-Allow-Methods"] = "GET, POST, OPTIONS"
            response.headers["Access-Control-Expose-Headers"] = "X-Request-ID, Shapegauge-Empty-Reason"
            response.headers["Vary"] = "Origin"
        endpoint = _endpoint()
        REQUESTS.labels(endpoint, request.method, str(response.status_code)).inc()
        if hasattr(g, "started"):
            LATENCY.labels(endpoint).observe(time.perf_counter() - g.started)
        if getattr(g, "sample_n", None) is not None:
            SAMPLE_SIZE.labels(endpoint).observe(g.sample_n)
        return response

    @app.teardown_request
    def _leave(_exc=None):
        if getattr(g, "in_flight", False):
            IN_FLIGHT.dec()
            g.in_flight = False


def metrics_response() -> Response:
    if os.environ.get("PROMETHEUS_MULTIPROC_DIR"):
        registry = CollectorRegistry()
        multiprocess.MultiProcessCollector(registry)
        return Response(generate_latest(registry), mimetype=CONTENT_TYPE_LATEST.split(";")[0],
                        headers={"Content-Type": CONTENT_TYPE_LATEST})
    from prometheus_client import REGISTRY

    return Response(generate_latest(REGISTRY), headers={"Content-Type": CONTENT_TYPE_LATEST})
