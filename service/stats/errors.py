"""Errors for data that cannot be analysed.

The API layer maps every :class:`DataError` to a 422 problem document carrying
``code`` as its type and ``message`` as its detail.
"""

from __future__ import annotations


class DataError(ValueError):
    """The input is well formed but cannot be analysed."""

    code = "unanalysable-data"

    def __init__(self, message: str, *, pointer: str | None = None):
        super().__init__(message)
        self.message = message
        self.pointer = pointer


class TooFewValues(DataError):
    code = "too-few-values"


class ConstantData(DataError):
    code = "constant-data"


class NotOneDimensional(DataError):
    code = "not-one-dimensional"


class NonFiniteValue(DataError):
    code = "non-finite-value"


class OutOfRange(DataError):
    code = "out-of-range-value"
