"""Tests for service.stats.quantiles: the nine Hyndman & Fan sample quantiles."""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from numpy.testing import assert_allclose

from service.stats.quantiles import DEFINITIONS, DESCRIPTIONS, quantiles_sorted

SIZES = [1, 2, 3, 5, 10, 11, 100]
ALL = sorted(DEFINITIONS)
CONTINUOUS = ["hf4", "hf5", "hf6", "hf7", "hf8", "hf9"]
# Dyadic probabilities are exact in binary, so n*p is computed exactly in float64 and
# the discontinuities of definitions 1-3 are hit exactly where the paper puts them.
DYADIC = [0.0, 0.0625, 0.125, 0.25, 0.375, 0.5, 0.625, 0.75, 0.875, 0.9375, 1.0]
GENERAL = [0.0, 0.01, 0.1, 0.2, 1 / 3, 0.5, 2 / 3, 0.9, 0.95, 0.99, 1.0]


def sorted_integers(n: int, seed: int) -> np.ndarray:
    """Integer-valued data (exact as fractions), with ties for n > 20."""
    return np.sort(np.random.default_rng(seed).integers(-50, 50, size=n).astype(float))


def hf_reference(sorted_values, p: float, definition: str) -> Fraction:
    """Hyndman & Fan (1996), section 2, in exact rational arithmetic:
    Q(p) = (1 - gamma) x_(j) + gamma x_(j+1) with j = floor(n p + m), g = n p + m - j,
    x_(k) = x_(1) for k < 1 and x_(n) for k > n; m and gamma per definition."""
    x = [Fraction(float(v)) for v in sorted_values]
    n = len(x)
    p = Fraction(p)
    m = {
        "hf1": Fraction(0),
        "hf2": Fraction(0),
        "hf3": Fraction(-1, 2),
        "hf4": Fraction(0),
        "hf5": Fraction(1, 2),
        "hf6": p,
        "hf7": 1 - p,
        "hf8": (p + 1) / 3,
        "hf9": p / 4 + Fraction(3, 8),
    }[definition]
    h = n * p + m
    j = math.floor(h)
    g = h - j
    if definition == "hf1":
        gamma = Fraction(1) if g > 0 else Fraction(0)
    elif definition == "hf2":
        gamma = Fraction(1) if g > 0 else Fraction(1, 2)
    elif definition == "hf3":
        gamma = Fraction(0) if g == 0 and j % 2 == 0 else Fraction(1)
    else:
        gamma = g

    def order(k: int) -> Fraction:
        return x[min(max(k, 1), n) - 1]

    return (1 - gamma) * order(j) + gamma * order(j + 1)


class TestQuantilesSorted:
    @pytest.mark.parametrize("definition", ALL)
    @pytest.mark.parametrize("n", SIZES)
    def test_reference_values(self, definition, n):
        s = np.sort(np.random.default_rng(100 + n).normal(size=n))
        ours = quantiles_sorted(s, GENERAL, definition)
        # Reference: numpy.quantile with the method of the same definition.
        expected = np.quantile(s, GENERAL, method=DEFINITIONS[definition])
        assert_allclose(ours, expected, rtol=1e-12, atol=1e-15)

    @pytest.mark.parametrize("definition", ALL)
    @pytest.mark.parametrize("n", SIZES)
    def test_paper_definitions_exact(self, definition, n):
        s = sorted_integers(n, 200 + n)
        ours = quantiles_sorted(s, DYADIC, definition)
        # Reference: Hyndman & Fan (1996), section 2, evaluated exactly (hf_reference).
        expected = [float(hf_reference(s, p, definition)) for p in DYADIC]
        assert_allclose(ours, expected, rtol=1e-14, atol=1e-13)

    @pytest.mark.parametrize("definition", CONTINUOUS)
    @pytest.mark.parametrize("n", [3, 10, 11, 100])
    def test_paper_definitions_general_p(self, definition, n):
        s = sorted_integers(n, 300 + n)
        ours = quantiles_sorted(s, GENERAL, definition)
        # Reference: hf_reference (exact) at the float64 probabilities; the continuous
        # definitions are continuous in p, so only rounding separates the two.
        expected = [float(hf_reference(s, p, definition)) for p in GENERAL]
        assert_allclose(ours, expected, rtol=1e-12, atol=1e-12)

    def test_worked_example(self):
        # Hand-computed from Hyndman & Fan's definitions for x = 1, ..., 10 and p = 1/4
        # (n p = 2.5):
        #   1: g > 0 -> x_(3) = 3            2: g > 0 -> x_(3) = 3
        #   3: h = 2, g = 0, j even -> x_(2) = 2
        #   4: h = 2.5 -> 2.5                5: h = 3 -> 3
        #   6: h = 2.75 -> 2.75              7: h = 3.25 -> 3.25
        #   8: h = 2.5 + 5/12 -> 2 + 11/12   9: h = 2.5 + 7/16 -> 2.9375
        # Recalled from memory: spreadsheet QUARTILE.INC(1..10, 1) = 3.25 and
        # QUARTILE.EXC(1..10, 1) = 2.75, which are definitions 7 and 6.
        s = np.arange(1.0, 11.0)
        expected = {
            "hf1": 3.0,
            "hf2": 3.0,
            "hf3": 2.0,
            "hf4": 2.5,
            "hf5": 3.0,
            "hf6": 2.75,
            "hf7": 3.25,
            "hf8": 2.0 + 11.0 / 12.0,
            "hf9": 2.9375,
        }
        for definition, value in expected.items():
            assert_allclose(quantiles_sorted(s, [0.25], definition)[0], value, rtol=1e-14, err_msg=definition)

    def test_median_of_even_n(self):
        # Hand-computed from Hyndman & Fan (1996), section 2, for x = 1, 2, 4, 8 and
        # p = 1/2 (n p = 2): definitions 2 and 5-9 give the usual median
        # (x_(2) + x_(3)) / 2 = 3; definitions 1, 3 and 4 give x_(2) = 2.
        s = np.array([1.0, 2.0, 4.0, 8.0])
        for definition in ["hf2", "hf5", "hf6", "hf7", "hf8", "hf9"]:
            assert quantiles_sorted(s, [0.5], definition)[0] == 3.0, definition
        for definition in ["hf1", "hf3", "hf4"]:
            assert quantiles_sorted(s, [0.5], definition)[0] == 2.0, definition

    @pytest.mark.parametrize("definition", ALL)
    def test_one_observation(self, definition):
        # With n = 1 every definition returns the single value at every p.
        s = np.array([4.5])
        assert_allclose(quantiles_sorted(s, GENERAL, definition), 4.5, rtol=0)

    @pytest.mark.parametrize("definition", ALL)
    def test_monotone_and_within_range(self, definition):
        # Common practice (every definition is built so): quantiles are non-decreasing
        # in p and lie within [x_(1), x_(n)]; up to 4 ulps of rounding allowed here (the
        # exact property is test_exactly_within_range).
        s = np.sort(np.random.default_rng(7).lognormal(size=37))
        p = np.linspace(0.0, 1.0, 201)
        q = quantiles_sorted(s, p, definition)
        slack = 4 * np.spacing(s[-1])
        assert np.all(np.diff(q) >= -slack)
        assert q[0] >= s[0] - slack and q[-1] <= s[-1] + slack

    @pytest.mark.parametrize("definition", ALL)
    def test_exactly_within_range(self, definition):
        # Reference: numpy.quantile on the same data is exactly monotone and within
        # [x_(1), x_(n)] for every method (checked first, so the claim is not ours).
        s = np.sort(np.random.default_rng(7).lognormal(size=37))
        p = np.linspace(0.0, 1.0, 201)
        expected = np.quantile(s, p, method=DEFINITIONS[definition])
        assert np.all(np.diff(expected) >= 0) and expected.min() >= s[0] and expected.max() <= s[-1]
        q = quantiles_sorted(s, p, definition)
        assert np.all(np.diff(q) >= 0)
        assert q.min() >= s[0] and q.max() <= s[-1]

    def test_result_fields(self):
        s = np.arange(5.0)
        out = quantiles_sorted(s, (0.25, 0.5, 0.75))
        assert isinstance(out, np.ndarray) and out.shape == (3,)
        # The default is definition 7 (numpy's default "linear").
        assert_allclose(out, np.quantile(s, (0.25, 0.5, 0.75)), rtol=1e-15)
        assert quantiles_sorted(s, 0.5).shape == (1,)
        assert set(DESCRIPTIONS) == set(DEFINITIONS)

    def test_unknown_definition(self):
        with pytest.raises(ValueError, match="unknown quantile definition"):
            quantiles_sorted(np.arange(3.0), [0.5], "hf10")
