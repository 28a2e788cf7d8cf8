"""Normality tests and the verdict drawn from them.

``normality(profile)`` runs every test the profile's form allows and draws one verdict
from the primary test for the sample size and form, reporting the others as support.
"""

from .battery import NormalityOptions, NormalityReport, normality, normality_of_sample
from .result import TestResult

__all__ = ["NormalityOptions", "NormalityReport", "TestResult", "normality", "normality_of_sample"]
