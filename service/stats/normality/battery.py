"""Run every normality test a form allows, and draw the verdict."""

from __future__ import annotations

from dataclasses import dataclass, fields

from ..describe import DEFAULT_KURTOSIS_THRESHOLD, DEFAULT_SKEWNESS_THRESHOLD, sample_notices
from ..forms import Sample
from ..moments import Moments, central_moments
from ..results import Notice
from . import edf_tests, moment_tests, regression_tests
from .result import TestResult
from .verdict import Verdict, decide_normality


@dataclass(frozen=True)
class NormalityOptions:
    alpha: float = 0.05
    primary_test: str | None = None
    adequate_n: int | None = None
    skewness_threshold: float = DEFAULT_SKEWNESS_THRESHOLD
    kurtosis_threshold: float = DEFAULT_KURTOSIS_THRESHOLD


@dataclass(frozen=True)
class Tests:
    """The battery, in the order the API lists it."""

    __test__ = False  # not a pytest test class

    shapiro_wilk: TestResult
    shapiro_francia: TestResult
    dagostino_pearson: TestResult
    skewness_test: TestResult
    kurtosis_test: TestResult
    anderson_darling: TestResult
    lilliefors: TestResult
    cramer_von_mises: TestResult
    jarque_bera: TestResult

    def as_dict(self) -> dict[str, TestResult]:
        return {f.name: getattr(self, f.name) for f in fields(self)}


TEST_NAMES = tuple(f.name for f in fields(Tests))


@dataclass(frozen=True)
class NormalityReport:
    tests: Tests
    verdict: Verdict
    warnings: tuple[Notice, ...]


def run_tests(sample: Sample, alpha: float, moments: Moments | None = None) -> Tests:
    """Every test on raw values, sharing one sort, one set of moments and one
    standardisation."""
    m = central_moments(sample.values) if moments is None else moments
    s = sample.sorted
    n = sample.n
    std = edf_tests.Standardised(s, m)
    return Tests(
        shapiro_wilk=regression_tests.shapiro_wilk(s, alpha),
        shapiro_francia=regression_tests.shapiro_francia(s, alpha, m),
        dagostino_pearson=moment_tests.dagostino_pearson(n, m.g1, m.g2, alpha),
        skewness_test=moment_tests.skewness_test(n, m.g1, alpha),
        kurtosis_test=moment_tests.kurtosis_test(n, m.g2, alpha),
        anderson_darling=edf_tests.anderson_darling(std, alpha),
        lilliefors=edf_tests.lilliefors(std, alpha),
        cramer_von_mises=edf_tests.cramer_von_mises(std, alpha),
        jarque_bera=moment_tests.jarque_bera(n, m.g1, m.g2, alpha),
    )


def normality_of_sample(
    sample: Sample, options: NormalityOptions = NormalityOptions(), moments: Moments | None = None
) -> NormalityReport:
    m = central_moments(sample.values) if moments is None else moments
    tests = run_tests(sample, options.alpha, m)
    verdict = decide_normality(
        tests.as_dict(),
        sample.n,
        m.skewness("G1"),
        m.excess_kurtosis("G2"),
        alpha=options.alpha,
        skewness_threshold=options.skewness_threshold,
        kurtosis_threshold=options.kurtosis_threshold,
        primary_test=options.primary_test,
        adequate_n=options.adequate_n,
    )
    return NormalityReport(tests=tests, verdict=verdict, warnings=sample_notices(sample))
