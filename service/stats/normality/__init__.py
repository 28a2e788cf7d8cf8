"""Normality tests and the verdict drawn from them.

``run_battery`` runs every test a form allows; ``decide`` draws one verdict from the
primary test for the sample size and reports the others as support.
"""

from .battery import NormalityReport, NormalityOptions, normality_of_sample
from .result import TestResult

__all__ = ["NormalityOptions", "NormalityReport", "TestResult", "normality_of_sample"]
