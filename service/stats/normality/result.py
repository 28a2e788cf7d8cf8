"""The result every normality test returns, and the rules shared by all of them."""

from __future__ import annotations

from dataclasses import dataclass

from ..pvalues import clip_probability
from ..results import Method


@dataclass(frozen=True)
class TestResult:
    """One test's outcome.

    ``p_value_bound`` is ``"<"`` or ``">"`` when the method can only bound the p-value
    (a table's edge): ``p_value`` is then the bound, not an estimate. ``reject`` is
    ``None`` when a bound cannot decide at the requested alpha, or the test does not
    apply. ``reason`` says why a test does not apply, or what limits its accuracy.
    """

    __test__ = False  # not a pytest test class

    statistic: float | None
    p_value: float | None
    p_value_bound: str | None
    applicable: bool
    reject: bool | None
    reason: str | None
    method: Method


def not_applicable(method: Method, reason: str) -> TestResult:
    return TestResult(None, None, None, False, None, reason, method)


def decide(p_value: float, bound: str | None, alpha: float) -> bool | None:
    """Reject at ``alpha``? A bound decides only when it lies on the right side."""
    if bound is None:
        return p_value < alpha
    if bound == "<":
        return True if p_value <= alpha else None
    return False if p_value >= alpha else None


def outcome(
    method: Method,
    statistic: float,
    p_value: float,
    alpha: float,
    *,
    bound: str | None = None,
    reason: str | None = None,
) -> TestResult:
    p = clip_probability(p_value)
    return TestResult(float(statistic), p, bound, True, decide(p, bound, alpha), reason, method)
