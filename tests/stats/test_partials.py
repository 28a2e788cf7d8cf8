"""Tests for service.stats.partials (shard partials as input): the reference partials
themselves, the exact merge against the whole sample, order independence and
feasibility."""

from __future__ import annotations

import math
import warnings
from fractions import Fraction

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from service.stats.errors import DataError
from service.stats.forms import Sample
from service.stats.normality.battery import normality
from service.stats.partials import InfeasiblePartial, Partial, check_partial, merge_partials, moments_of
from service.stats.profile import profile_of_partials, profile_of_sample

from .exact import exact_moments
from .partials_reference import as_request, partials_of

SIZES = (1, 2, 7, 500, 3000)
MOMENT_TESTS = ["skewness_test", "kurtosis_test", "dagostino_pearson", "jarque_bera"]


def partial(d: dict) -> Partial:
    return Partial(d["n"], d["mean"], d["m2"], d["m3"], d["m4"], d.get("min"), d.get("max"))


def shards_of(seed: int, offset: float = 0.0, sizes=SIZES, shape: float = 3.0) -> list[np.ndarray]:
    """Uneven shards of one seeded gamma sample (skewed, so G1 and G2 are far from 0),
    each shard shifted by its own small amount so the shard means differ."""
    rng = np.random.default_rng(seed)
    return [offset + rng.gamma(shape, size=k) + 0.1 * i for i, k in enumerate(sizes)]


def quiet(fn, *args):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        return fn(*args)


class TestPartialsReference:
    """``partials_of`` is the tests' reference, so it is tested first."""

    @pytest.mark.parametrize("seed, n", [(1, 1), (2, 2), (3, 7), (4, 40)])
    def test_against_exact_arithmetic(self, seed, n):
        x = np.random.default_rng(seed).normal(5.0, 2.0, n)
        p = partials_of(x)
        # Reference: exact rational moments of the float64 values (tests/stats/exact.py);
        # mk = n * (k-th central moment).
        e = exact_moments(x)
        assert p["n"] == n
        assert_allclose(p["mean"], float(e.mean), rtol=2e-16)
        assert_allclose([p["m2"], p["m3"], p["m4"]], [float(n * e.m2), float(n * e.m3), float(n * e.m4)],
                        rtol=1e-12, atol=1e-12 * float(n * e.m2) ** 1.5)
        assert (p["min"], p["max"]) == (float(x.min()), float(x.max()))

    @pytest.mark.parametrize("seed", [5, 6])
    def test_against_scipy_moment(self, seed):
        x = np.random.default_rng(seed).lognormal(0.0, 0.7, 333)
        p = partials_of(x)
        # Reference: scipy.stats.moment(order=k) is the k-th central moment, mean divisor.
        assert_allclose([p["m2"], p["m3"], p["m4"]], [x.size * stats.moment(x, k) for k in (2, 3, 4)], rtol=1e-12)

    def test_single_value(self):
        # One value: every central power sum is zero (definition).
        assert partials_of([7.25]) == {"n": 1, "mean": 7.25, "m2": 0.0, "m3": 0.0, "m4": 0.0, "min": 7.25, "max": 7.25}

    def test_large_offset_mean_is_within_one_ulp(self):
        x = 1e9 + np.random.default_rng(7).normal(size=3000)
        # Reference: the exact mean of the float64 values (fractions.Fraction).
        exact = sum(map(Fraction, x.tolist())) / x.size
        assert abs(Fraction(partials_of(x)["mean"]) - exact) <= Fraction(np.spacing(1e9))

    def test_as_request_drops_extremes(self):
        assert as_request([partials_of([1.0, 2.0])], with_extremes=False) == [{"n": 2, "mean": 1.5, "m2": 0.5, "m3": 0.0, "m4": 0.125}]


def shape_tolerance(offset: float, shards: list[np.ndarray]) -> float:
    """Absolute tolerance on G1 and G2 for shards whose means are stored as doubles.

    A shard mean near ``offset`` is a double within one ulp of the exact mean (fsum,
    then one division), and the partials' sums are taken around that rounded mean, not
    the exact one. To first order an error e in the mean changes m3 by -3 e m2 and m4
    by -4 e m3, so g1 moves by at most about 6 e / sd and g2 by 8 e |g1| / sd after the
    merge (error propagation, common practice). This bound is a property of the input
    format, not of the merge (TestMergeIsExact): a shard carries no first-moment residual
    to correct it. For offset 0 it reduces to rounding (1e-12 absolute, common practice)."""
    x = np.concatenate(shards)
    sd = float(np.std(x - offset))
    ulp = abs(float(np.spacing(offset))) if offset else 0.0
    g1 = abs(float(stats.skew(x - offset)))
    return max(10.0 * ulp * (1.0 + g1) / sd, 1e-12)


def sd_tolerance(offset: float, shards: list[np.ndarray]) -> float:
    """Relative tolerance on the merged sd: the between-shard term sum n_i (mu_i - mu)^2
    uses the rounded shard means, an error of 2 ulp sum n_i |mu_i - mu| in M2 (first-order
    propagation, common practice), half of that relative in the sd; 1e-9 at least."""
    if not offset:
        return 1e-9
    x = np.concatenate(shards)
    ulp = abs(float(np.spacing(offset)))
    spread = sum(s.size * abs(float(np.mean(s - offset)) - float(np.mean(x - offset))) for s in shards) / x.size
    return max(2.0 * ulp * spread / float(np.var(x - offset)), 1e-9)


def exact_merge(parts: list[dict]) -> tuple[Fraction, Fraction, Fraction, Fraction, int]:
    """The given partials combined in exact rational arithmetic by the binomial expansion
    of (x - mu)^k = ((x - c_i) + (c_i - mu))^k around each shard's stated mean c_i, with
    sum (x - c_i) = 0 as the format states -- not by the pairwise update formulas the code
    uses. Returns mean, M2, M3, M4 (sums) and n."""
    n = sum(p["n"] for p in parts)
    mean = sum(Fraction(p["n"]) * Fraction(p["mean"]) for p in parts) / n
    M2 = M3 = M4 = Fraction(0)
    for p in parts:
        d = Fraction(p["mean"]) - mean
        m2, m3, m4 = Fraction(p["m2"]), Fraction(p["m3"]), Fraction(p["m4"])
        M2 += m2 + p["n"] * d**2
        M3 += m3 + 3 * d * m2 + p["n"] * d**3
        M4 += m4 + 4 * d * m3 + 6 * d**2 * m2 + p["n"] * d**4
    return mean, M2, M3, M4, n


# Our values (seed 13, offset 1e9): merged m2 10559.63879075547 against the exact merge
# of the same partials 10559.638792251506 (4.9e-10 relative), m4 4.9e-10 relative, g2
# off by 1.1e-9; the same partials with their means shifted by the first shard's mean
# before merging (exact, Sterbenz) agree with the exact merge to 2e-16.


class TestMergeIsExact:
    """The merge adds nothing to the error already in the partials."""

    @pytest.mark.parametrize("seed, offset", [
        (11, 0.0),
        (12, 0.0),
        pytest.param(13, 1e9),
        pytest.param(15, -3e8),
    ])
    def test_against_exact_rational_merge(self, seed, offset):
        parts = [partials_of(s) for s in shards_of(seed, offset)]
        merged = merge_partials([partial(p) for p in parts])
        # Reference: exact_merge above (Fraction arithmetic, binomial expansion).
        mean, M2, M3, M4, n = exact_merge(parts)
        assert merged.n == n
        assert_allclose(merged.mean, float(mean), rtol=1e-15)
        assert_allclose([merged.m2, merged.m3, merged.m4], [float(M2), float(M3), float(M4)], rtol=1e-12)
        m = moments_of(merged)
        g1 = float(M3 / n) / float(M2 / n) ** 1.5
        g2 = float((M4 / n) / (M2 / n) ** 2) - 3.0
        assert_allclose([m.g1, m.g2], [g1, g2], rtol=1e-12)


class TestMergeEqualsWholeSample:
    @pytest.mark.parametrize("seed, offset", [(11, 0.0), (12, 0.0), (13, 1e9), (14, 1e9), (15, -3e8)])
    def test_moments(self, seed, offset):
        shards = shards_of(seed, offset)
        x = np.concatenate(shards)
        m = moments_of(merge_partials([partial(partials_of(s)) for s in shards]))
        # Reference: exact rational moments of the concatenated float64 values
        # (tests/stats/exact.py); scipy's own skew on values near 1e9 is off by ~1e-7.
        e = exact_moments(x)
        assert m.n == x.size
        assert_allclose(m.mean, float(e.mean), rtol=1e-15)
        assert_allclose(m.sd, e.sd(), rtol=sd_tolerance(offset, shards))
        atol = shape_tolerance(offset, shards)
        assert_allclose(m.skewness("G1"), e.G1(), rtol=1e-9, atol=atol)
        assert_allclose(m.excess_kurtosis("G2"), e.G2(), rtol=1e-9, atol=atol)

    @pytest.mark.parametrize("seed, offset", [(11, 0.0), (13, 1e9)])
    def test_moment_tests(self, seed, offset):
        shards = shards_of(seed, offset)
        # x - offset is exact for values near the offset (Sterbenz lemma), so scipy on the
        # shifted values is a reference free of the offset's rounding.
        shifted = np.concatenate(shards) - offset
        report = normality(profile_of_partials([partial(partials_of(s)) for s in shards]))
        tests = report.tests.as_dict()
        # Reference: scipy.stats.skewtest, kurtosistest, normaltest, jarque_bera.
        refs = {"skewness_test": stats.skewtest(shifted), "kurtosis_test": stats.kurtosistest(shifted),
                "dagostino_pearson": stats.normaltest(shifted), "jarque_bera": stats.jarque_bera(shifted)}
        # The shape tolerance carried into the statistics by first-order propagation
        # (common practice): |dz/dg| < sqrt(n) for both z statistics, K^2 = z1^2 + z2^2
        # moves by 2(|z1| + |z2|) times the z tolerance, JB = n/6 (g1^2 + g2^2/4) by
        # n (|g1| + |g2|) times the shape tolerance.
        n, tol = shifted.size, shape_tolerance(offset, shards) if offset else 0.0
        z1, z2 = abs(refs["skewness_test"].statistic), abs(refs["kurtosis_test"].statistic)
        g1, g2 = abs(stats.skew(shifted)), abs(stats.kurtosis(shifted))
        atol = {"skewness_test": math.sqrt(n) * tol, "kurtosis_test": math.sqrt(n) * tol,
                "dagostino_pearson": 2.0 * (z1 + z2) * math.sqrt(n) * tol, "jarque_bera": n * (g1 + g2) * tol}
        for name, ref in refs.items():
            assert_allclose(tests[name].statistic, ref.statistic, rtol=1e-9, atol=atol[name], err_msg=name)
        assert report.verdict.primary_test == "dagostino_pearson"
        assert any("merged moments only" in r for r in report.verdict.reasons)

    def test_single_shard_equals_raw_values(self):
        x = np.random.default_rng(16).gamma(2.0, size=800)
        from_partials = normality(profile_of_partials([partial(partials_of(x))]))
        from_values = normality(profile_of_sample(Sample.from_array(x)))
        a, b = from_partials.tests.as_dict(), from_values.tests.as_dict()
        # Reference: scipy.stats.skewtest, kurtosistest, normaltest, jarque_bera on x.
        refs = {"skewness_test": stats.skewtest(x), "kurtosis_test": stats.kurtosistest(x),
                "dagostino_pearson": stats.normaltest(x), "jarque_bera": stats.jarque_bera(x)}
        for name, ref in refs.items():
            assert_allclose(a[name].statistic, ref.statistic, rtol=1e-9, err_msg=name)
            assert_allclose(a[name].p_value, ref.pvalue, rtol=1e-9, err_msg=name)
        # And the same numbers as our raw-values path (a regression value, not a reference):
        # both are two-pass computations of the same sums.
        for name in MOMENT_TESTS:
            assert_allclose(a[name].statistic, b[name].statistic, rtol=1e-12, err_msg=name)
            assert_allclose(a[name].p_value, b[name].p_value, rtol=1e-10, err_msg=name)

    def test_min_and_max_merge(self):
        shards = shards_of(17)
        merged = merge_partials([partial(partials_of(s)) for s in shards])
        x = np.concatenate(shards)
        # Reference: numpy.min and numpy.max of the concatenated values.
        assert (merged.minimum, merged.maximum) == (x.min(), x.max())
        without = merge_partials([partial(partials_of(shards[0])), partial(as_request([partials_of(shards[1])], with_extremes=False)[0])])
        assert without.minimum is None and without.maximum is None


PERMUTATIONS = [list(np.random.default_rng(seed).permutation(len(SIZES))) for seed in range(6)] + [[4, 3, 2, 1, 0]]


class TestOrderIndependence:
    @pytest.mark.parametrize("order", PERMUTATIONS, ids=lambda o: "".join(map(str, o)))
    def test_same_bits_in_any_order(self, order):
        parts = [partial(partials_of(s)) for s in shards_of(18, 1e9)]
        reference = merge_partials(parts)
        # The same shards in another order give the same merged numbers to the last bit.
        assert merge_partials([parts[i] for i in order]) == reference


class TestInfeasiblePartials:
    GOOD = {"n": 5, "mean": 0.0, "m2": 4.0, "m3": 0.0, "m4": 5.0}

    @pytest.mark.parametrize(
        "fields, match",
        [
            ({"m2": -1.0}, "cannot be negative"),
            ({"m4": -1.0}, "cannot be negative"),
            ({"n": 1, "m2": 1.0, "m4": 1.0}, "one value"),
            ({"n": 1, "m2": 0.0, "m3": 0.5, "m4": 0.0}, "one value"),
            ({"m2": 0.0, "m3": 1.0, "m4": 0.0}, "all values are equal"),
            ({"m2": 0.0, "m3": 0.0, "m4": 1.0}, "all values are equal"),
            ({"m4": 1.0}, "m4 is too small"),
            ({"m3": 4.0, "m4": 5.0}, "m4 is too small"),
            ({"min": 2.0, "max": 1.0}, "min > max"),
            ({"min": 0.5}, "mean below min"),
            ({"max": -0.5}, "mean above max"),
            ({"n": 0}, "at least one value"),
        ],
    )
    def test_refused_with_pointer(self, fields, match):
        bad = partial({**self.GOOD, **fields})
        with pytest.raises(InfeasiblePartial, match=match) as err:
            merge_partials([partial(self.GOOD), bad])
        assert err.value.pointer.startswith("/partials/1")
        assert err.value.code == "infeasible-partial"

    def test_pearson_bound_is_attained(self):
        # A two-point shard has b2 = 1 + g1^2 exactly (Pearson 1916): it must pass.
        check_partial(partial(partials_of([0.0, 0.0, 0.0, 1.0, 1.0])), 0)

    def test_equal_values_shard_is_accepted(self):
        check_partial(partial(partials_of([3.0, 3.0, 3.0])), 0)

    def test_empty_list(self):
        with pytest.raises(DataError, match="empty"):
            merge_partials([])

    @pytest.mark.parametrize(
        "shard",
        [
            # n=2: Dalen's bound b2 <= (n^2-3n+3)/(n-1) = 1; this shard has b2 = n m4 / m2^2 = 50.
            {"n": 2, "mean": 0.0, "m2": 2.0, "m3": 0.0, "m4": 100.0},
            # n=3: |g1| <= (n-2)/sqrt(n-1) = 0.707; this shard has g1 = sqrt(n) m3 / m2^1.5 = 6.1.
            {"n": 3, "mean": 0.0, "m2": 2.0, "m3": 10.0, "m4": 100.0},
            # Bhatia-Davis: m2/n <= (max - mean)(mean - min) = 0.01; this shard has m2/n = 0.8.
            {"n": 5, "mean": 0.0, "m2": 4.0, "m3": 0.0, "m4": 5.0, "min": -0.1, "max": 0.1},
            # One value: min, mean and max are that value; here min=0, mean=1, max=3.
            {"n": 1, "mean": 1.0, "m2": 0.0, "m3": 0.0, "m4": 0.0, "min": 0.0, "max": 3.0},
        ],
    )
    def test_sample_bounds_of_a_shard(self, shard):
        with pytest.raises(InfeasiblePartial) as err:
            merge_partials([partial(self.GOOD), partial(shard)])
        assert err.value.pointer.startswith("/partials/1")


class TestLargeOffsetShards:
    def test_two_values_near_1e12_are_accepted(self):
        # x2 - x1 is 8193 ulps of 1e12, an odd number, so the shard mean (x1 + x2)/2 rounds by
        # half an ulp (6.1e-5) and the sums around it give b2 = 1 + 4 (e/d)^2 < 1 + b1 = 1 + 9 (e/d)^2
        # (expansion about the rounded mean, common practice), a relative deficit of 7e-8.
        # Our value: InfeasiblePartial "m4 is too small"; the same two values as raw values
        # are analysed without complaint.
        ulp = float(np.spacing(1e12))
        x = np.array([1e12, 1e12 + 8193 * ulp])
        other = 1e12 + np.random.default_rng(19).normal(size=50)
        merged = merge_partials([partial(partials_of(x)), partial(partials_of(other))])
        assert merged.n == 52

    def test_two_values_with_an_exact_mean_are_accepted(self):
        ulp = float(np.spacing(1e12))
        x = np.array([1e12, 1e12 + 8194 * ulp])  # an even number of ulps: the mean is exact
        check_partial(partial(partials_of(x)), 0)
