"""JSON arrays of values to float64 arrays, in whole-array steps.

A sample can hold millions of values, so nothing here touches elements one by one in
Python: the element types are collected by ``map`` (a C loop), the conversion is one
``numpy.array`` call, and the missing-value mask is one comparison. The slower
search for the first bad element runs only when there is one.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import Problem

_NUMBER_TYPES = (float, int)
_ALLOWED = {float, int, type(None)}
_KIND = {bool: "a boolean", str: "a string", list: "an array", dict: "an object"}


@dataclass(frozen=True)
class ParsedValues:
    values: np.ndarray  # finite float64, missing removed
    missing: int
    total: int


def _first_of_type(raw: list, wanted: set[type]) -> int:
    kinds = np.fromiter(map(type, raw), dtype=object, count=len(raw))
    hit = np.zeros(len(raw), dtype=bool)
    for kind in wanted:
        hit |= kinds == kind
    return int(np.argmax(hit))


def parse_json_values(raw, *, pointer: str, max_values: int, missing: str) -> ParsedValues:
    """Validate and convert one JSON array of numbers and nulls.

    ``missing`` is ``"drop"`` (nulls are dropped and counted) or ``"reject"`` (a null is
    a 422 naming its position).
    """
    if not isinstance(raw, list):
        raise Problem(
            "invalid-request",
            f"{pointer} must be an array of numbers (null for a missing value)",
            errors=[{"pointer": pointer, "detail": f"expected an array, got {_KIND.get(type(raw), type(raw).__name__)}"}],
        )
    total = len(raw)
    if total > max_values:
        raise Problem("too-large", f"{pointer} holds {total} values; this service accepts at most {max_values} per sample")
    kinds = set(map(type, raw))
    if not kinds <= _ALLOWED:
        bad_kinds = kinds - _ALLOWED
        i = _first_of_type(raw, bad_kinds)
        kind = type(raw[i])
        code = "not-one-dimensional" if kind is list else "invalid-value"
        what = _KIND.get(kind, kind.__name__)
        detail = (
            f"element {i} is an array: a sample is a flat list of numbers, never flattened"
            if kind is list
            else f"element {i} is {what} ({raw[i]!r:.40}), not a number; send numbers, or null for a missing value"
        )
        raise Problem(code, detail, errors=[{"pointer": f"{pointer}/{i}", "detail": detail}])
    if type(None) in kinds:
        array = np.array(raw, dtype=np.float64)  # None -> nan; JSON itself cannot carry NaN
        absent = np.isnan(array)
        n_missing = int(np.count_nonzero(absent))
        if missing == "reject":
            i = int(np.argmax(absent))
            detail = f"element {i} is missing (null) and the request asked for missing=reject"
            raise Problem("missing-values-rejected", detail, errors=[{"pointer": f"{pointer}/{i}", "detail": detail}])
        array = array[~absent]
    else:
        array = np.array(raw, dtype=np.float64)
        n_missing = 0
    if array.ndim != 1:  # pragma: no cover - ruled out by the type check above
        raise Problem("not-one-dimensional", f"{pointer} must be a flat list of numbers")
    return ParsedValues(values=array, missing=n_missing, total=total)
