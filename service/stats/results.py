"""Small result types shared by every statistics module."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Method:
    """The published method behind a number, and where it was published."""

    name: str
    reference: str


@dataclass(frozen=True)
class Notice:
    """A warning for the caller: a machine-readable code and a sentence for a person."""

    code: str
    message: str


@dataclass(frozen=True)
class Unavailable:
    """A result that the input cannot give, with the reason.

    Serialised as ``{"available": false, "reason": ...}``: never silently absent,
    never invented.
    """

    reason: str
