"""A loaded sample object (any of the four forms) to the statistics layer's ``Profile``.

The marshmallow ``SampleObject`` schema has checked the envelope; the arrays (values,
histogram edges and counts) are converted here in whole-array steps, and the
statistics layer checks feasibility (summaries, partials, histograms) and raises a
``DataError`` naming the field when the numbers describe no possible sample.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..stats.errors import DataError, TooFewValues
from ..stats.forms import Sample, require_spread
from ..stats.histogram import check_histogram
from ..stats.partials import Partial
from ..stats.profile import Profile, profile_of_histogram, profile_of_partials, profile_of_sample, profile_of_summary
from ..stats.summary import Summary
from .errors import Problem
from .values import parse_json_values

_OPEN_LOW = {"-inf", "-infinity"}
_OPEN_HIGH = {"inf", "+inf", "infinity", "+infinity"}


@dataclass(frozen=True)
class InputInfo:
    form: str
    n: int
    missing: int
    label: str | None = None
    shards: int | None = None
    bins: int | None = None


@dataclass(frozen=True, eq=False)
class SampleInput:
    profile: Profile
    input: InputInfo


@dataclass(frozen=True)
class Limits:
    max_values: int
    max_parts: int


def form_of(data: dict) -> str:
    return next(key for key in ("values", "summary", "partials", "histogram") if data.get(key) is not None)


def _edge(value, index: int, last: int, prefix: str) -> float:
    if value is None or isinstance(value, str):
        word = "" if value is None else value.strip().lower()
        if index == 0 and (value is None or word in _OPEN_LOW):
            return -np.inf
        if index == last and (value is None or word in _OPEN_HIGH):
            return np.inf
        raise Problem("invalid-value", f"edge {index} is {value!r}: only the first edge may be \"-inf\" (or null) and only the last \"+inf\" (or null)",
                      errors=[{"pointer": f"{prefix}/histogram/edges/{index}", "detail": "not a number"}])
    return value


def _histogram_arrays(raw: dict, limits: Limits, prefix: str) -> tuple[np.ndarray, np.ndarray]:
    edges, counts = raw["edges"], raw["counts"]
    for name, array in (("edges", edges), ("counts", counts)):
        if not isinstance(array, list):
            raise Problem("invalid-request", f"histogram.{name} must be an array",
                          errors=[{"pointer": f"{prefix}/histogram/{name}", "detail": "expected an array"}])
        if len(array) > limits.max_parts + 1:
            raise Problem("too-large", f"histogram.{name} holds {len(array)} entries; this service accepts at most {limits.max_parts} bins")
    if len(edges) >= 2:
        edges = [_edge(edges[0], 0, len(edges) - 1, prefix), *edges[1:-1], _edge(edges[-1], len(edges) - 1, len(edges) - 1, prefix)]
    e = parse_json_values(edges, pointer=f"{prefix}/histogram/edges", max_values=limits.max_parts + 1, missing="reject").values
    c = parse_json_values(counts, pointer=f"{prefix}/histogram/counts", max_values=limits.max_parts, missing="reject").values
    return e, c


def _require_n(profile: Profile, minimum_n: int) -> None:
    if profile.n < minimum_n:
        raise TooFewValues(f"at least {minimum_n} values are needed; the {profile.form} describes n={profile.n}")


def sample_of_values(values, missing: int, *, quantile_definition: str = "hf7", minimum_n: int = 2,
                     label: str | None = None) -> SampleInput:
    """Raw values already parsed and checked (finite float64, missing ones removed and
    counted), from a JSON array or a text body, as a profile and its ``input`` block."""
    sample = Sample(values, missing)
    require_spread(sample, minimum_n=minimum_n)
    return SampleInput(profile_of_sample(sample, quantile_definition), InputInfo("values", sample.n, missing, label))


def build_sample(data: dict, limits: Limits, *, quantile_definition: str = "hf7", prefix: str = "", minimum_n: int = 2) -> SampleInput:
    """Turn one loaded sample object into a ``Profile`` and its ``input`` block; a fault
    the statistics layer finds points into the request under ``prefix``."""
    try:
        return _build(data, limits, quantile_definition, prefix, minimum_n)
    except DataError as exc:
        if prefix and exc.pointer is not None and not exc.pointer.startswith(prefix):
            exc.pointer = prefix + exc.pointer
        raise


def _build(data: dict, limits: Limits, quantile_definition: str, prefix: str, minimum_n: int) -> SampleInput:
    form = form_of(data)
    if form == "values":
        parsed = parse_json_values(data["values"], pointer=f"{prefix}/values", max_values=limits.max_values,
                                   missing=data.get("missing") or "drop")
        return sample_of_values(parsed.values, parsed.missing, quantile_definition=quantile_definition,
                                minimum_n=minimum_n)
    if form == "summary":
        s = data["summary"]
        conventions = data.get("conventions") or {"skewness": "G1", "kurtosis": "G2"}
        summary = Summary(
            n=s["n"], mean=s["mean"], sd=s["sd"], skewness=s["skewness"], kurtosis=s["kurtosis"],
            median=s["median"], q1=s["q1"], q3=s["q3"], minimum=s["min"], maximum=s["max"],
            skewness_convention=conventions["skewness"], kurtosis_convention=conventions["kurtosis"],
            sd_convention=data.get("sd_convention") or "sample",
        )
        profile = profile_of_summary(summary)
        _require_n(profile, minimum_n)
        return SampleInput(profile, InputInfo("summary", profile.n, 0))
    if form == "partials":
        parts = data["partials"]
        if len(parts) > limits.max_parts:
            raise Problem("too-large", f"partials holds {len(parts)} shards; this service accepts at most {limits.max_parts}")
        profile = profile_of_partials([
            Partial(p["n"], p["mean"], p["m2"], p["m3"], p["m4"], p["min"], p["max"]) for p in parts
        ])
        if profile.moments.m2 <= 0:
            raise Problem("constant-data", "the merged shards have zero variance: a constant has no shape to describe")
        _require_n(profile, minimum_n)
        return SampleInput(profile, InputInfo("partials", profile.n, 0, shards=len(parts)))
    edges, counts = _histogram_arrays(data["histogram"], limits, prefix)
    histogram = check_histogram(edges, counts)
    profile = profile_of_histogram(histogram, sheppard=bool(data.get("sheppard")))
    _require_n(profile, minimum_n)
    return SampleInput(profile, InputInfo("histogram", profile.n, 0, bins=int(counts.size)))
