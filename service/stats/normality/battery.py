"""Run every normality test a form allows, and draw the verdict."""

from __future__ import annotations

from dataclasses import dataclass, fields

from ..forms import Sample
from ..profile import Profile, profile_of_sample
from ..results import Method, Notice
from ..thresholds import DEFAULT_KURTOSIS_THRESHOLD, DEFAULT_SKEWNESS_THRESHOLD
from . import binned_tests, edf_tests, moment_tests, regression_tests
from .result import TestResult, not_applicable
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
    chi_square: TestResult

    def as_dict(self) -> dict[str, TestResult]:
        return {f.name: getattr(self, f.name) for f in fields(self)}


TEST_NAMES = tuple(f.name for f in fields(Tests))
RAW_ONLY = {
    "shapiro_wilk": regression_tests.SHAPIRO_WILK,
    "shapiro_francia": regression_tests.SHAPIRO_FRANCIA,
    "anderson_darling": edf_tests.ANDERSON_DARLING,
    "lilliefors": edf_tests.LILLIEFORS,
    "cramer_von_mises": edf_tests.CRAMER_VON_MISES,
}


@dataclass(frozen=True)
class NormalityReport:
    tests: Tests
    verdict: Verdict
    warnings: tuple[Notice, ...]


def _moment_tests(profile: Profile, alpha: float) -> dict[str, TestResult]:
    m = profile.moments
    n = profile.n
    results = {
        "dagostino_pearson": moment_tests.dagostino_pearson(n, m.g1, m.g2, alpha),
        "skewness_test": moment_tests.skewness_test(n, m.g1, alpha),
        "kurtosis_test": moment_tests.kurtosis_test(n, m.g2, alpha),
        "jarque_bera": moment_tests.jarque_bera(n, m.g1, m.g2, alpha),
    }
    if profile.form == "histogram":
        note = "moments from binned data" + (" with Sheppard's corrections" if profile.sheppard_applied else "")
        if any(n.code == "open-bins-modelled" for n in profile.notices):
            note += ", open-ended bins modelled by the fitted normal"
        results = {
            k: r if not r.applicable else TestResult(
                r.statistic, r.p_value, r.p_value_bound, True, r.reject,
                f"{note}; approximate" + (f"; {r.reason}" if r.reason else ""), r.method)
            for k, r in results.items()
        }
    return results


def _not_from(form: str, method: Method) -> TestResult:
    what = {"summary": "a summary carries only moments", "partials": "shard partials carry only moments",
            "histogram": "a histogram has lost the individual values"}[form]
    return not_applicable(method, f"needs raw values: {what}")


def run_battery(profile: Profile, alpha: float) -> Tests:
    """Every test the profile's form allows; the others present with the reason."""
    results = _moment_tests(profile, alpha)
    if profile.sample is not None:
        s = profile.sample.sorted
        std = edf_tests.Standardised(s, profile.moments)
        results |= {
            "shapiro_wilk": regression_tests.shapiro_wilk(s, alpha),
            "shapiro_francia": regression_tests.shapiro_francia(s, alpha, profile.moments),
            "anderson_darling": edf_tests.anderson_darling(std, alpha),
            "lilliefors": edf_tests.lilliefors(std, alpha),
            "cramer_von_mises": edf_tests.cramer_von_mises(std, alpha),
            "chi_square": not_applicable(
                binned_tests.CHI_SQUARE,
                "applies to histograms; on raw values the EDF tests use every value without binning",
            ),
        }
    else:
        results |= {name: _not_from(profile.form, method) for name, method in RAW_ONLY.items()}
        if profile.histogram is not None:
            results["chi_square"] = binned_tests.chi_square_test(profile.histogram, profile.fit, alpha)
        else:
            results["chi_square"] = not_applicable(binned_tests.CHI_SQUARE, f"needs a histogram, not {profile.form}")
    return Tests(**{name: results[name] for name in TEST_NAMES})


def run_tests(sample: Sample, alpha: float) -> Tests:
    """Every test on raw values (one sort, one set of moments, one standardisation)."""
    return run_battery(profile_of_sample(sample), alpha)


BASIS = {
    "values": None,
    "summary": "rests on the moments only (n, mean, sd, skewness, kurtosis): tests of the whole distribution need raw values",
    "partials": "rests on the merged moments only: tests of the whole distribution need raw values",
    "histogram": "rests on binned data: the chi-square test of the counts against a fitted normal decides; it has less power than tests on raw values",
}


def normality(profile: Profile, options: NormalityOptions = NormalityOptions()) -> NormalityReport:
    tests = run_battery(profile, options.alpha)
    m = profile.moments
    verdict = decide_normality(
        tests.as_dict(),
        profile.n,
        m.skewness("G1"),
        m.excess_kurtosis("G2"),
        form=profile.form,
        alpha=options.alpha,
        skewness_threshold=options.skewness_threshold,
        kurtosis_threshold=options.kurtosis_threshold,
        primary_test=options.primary_test,
        adequate_n=options.adequate_n,
        basis=BASIS[profile.form],
        rounded=any(n.code == "rounded-data" for n in profile.notices),
    )
    return NormalityReport(tests=tests, verdict=verdict, warnings=profile.notices)


def normality_of_sample(sample: Sample, options: NormalityOptions = NormalityOptions()) -> NormalityReport:
    return normality(profile_of_sample(sample), options)
