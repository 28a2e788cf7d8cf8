"""Property tests (hypothesis): invariances every shape statistic must have, and
robustness of the two entry points on any finite input.

References for the properties (the definitions): G1, G2 and the normality statistics
W, W', A^2, D, W^2, K^2 and JB are location and scale invariant, since they depend on
the data only through (x - mean) / sd or ratios of central moments; under x -> -x
skewness changes sign while the others (normal is symmetric) do not change; none depends
on the order of the values.
"""

from __future__ import annotations

import dataclasses
import math
import warnings

import numpy as np
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp
from numpy.testing import assert_allclose

from service.stats.describe import describe_sample
from service.stats.errors import DataError
from service.stats.forms import Sample, require_spread
from service.stats.moments import central_moments
from service.stats.normality import normality_of_sample
from service.stats.normality.battery import run_tests
from service.stats.results import Unavailable

# Bounded and reproducible: derandomize fixes the examples (seeded, like every other
# random input of the suite); no example database is written.
SETTINGS = settings(max_examples=100, deadline=None, derandomize=True, database=None)
ROBUSTNESS = settings(max_examples=100, deadline=None, derandomize=True, database=None)

# Statistics whose value must not change under x -> a + b x (b > 0).
INVARIANT = (
    "shapiro_wilk",
    "shapiro_francia",
    "anderson_darling",
    "lilliefors",
    "cramer_von_mises",
    "dagostino_pearson",
    "jarque_bera",
    "skewness_test",
    "kurtosis_test",
)

# "Reasonable" finite values: zero, or magnitudes from 1e-3 to 1e6, with either sign.
_magnitudes = st.floats(min_value=1e-3, max_value=1e6, allow_nan=False, allow_infinity=False)
reasonable = st.one_of(
    st.just(0.0),
    _magnitudes,
    _magnitudes.map(lambda v: -v),
    st.integers(-1000, 1000).map(float),
)
reasonable_arrays = hnp.arrays(np.float64, st.integers(8, 60), elements=reasonable)


def has_real_spread(x: np.ndarray) -> bool:
    """At least three distinct values and a range that is not negligible next to the
    magnitude (relative 1e-6), so that rounding in a + b x cannot dominate the shape."""
    if np.unique(x).size < 3:
        return False
    spread = float(np.ptp(x))
    return spread > 1e-6 * float(np.max(np.abs(x)))


def statistics(x: np.ndarray) -> dict[str, float]:
    tests = run_tests(Sample.from_array(x), 0.05).as_dict()
    out = {name: tests[name].statistic for name in INVARIANT}
    m = central_moments(x)
    out["G1"] = m.skewness("G1")
    out["G2"] = m.excess_kurtosis("G2")
    return out


class TestInvariance:
    @SETTINGS
    @given(
        x=reasonable_arrays,
        a=st.floats(min_value=-1e3, max_value=1e3),
        b=st.floats(min_value=1e-3, max_value=1e3),
    )
    def test_location_and_scale(self, x, a, b):
        assume(has_real_spread(x))
        y = a + b * x
        assume(has_real_spread(y))
        before, after = statistics(x), statistics(y)
        for name in before:
            # Tolerance: relative 1e-6 (plus 1e-9 absolute for values near 0); the
            # transformation itself rounds each value at the 1e-16 level.
            assert_allclose(after[name], before[name], rtol=1e-6, atol=1e-9, err_msg=name)

    @SETTINGS
    @given(x=reasonable_arrays)
    def test_negation(self, x):
        assume(has_real_spread(x))
        before, after = statistics(x), statistics(-x)
        for name in before:
            expected = -before[name] if name in ("G1", "skewness_test") else before[name]
            assert_allclose(after[name], expected, rtol=1e-9, atol=1e-12, err_msg=name)
        # The describe labels swap with the sign.
        d, e = describe_sample(Sample.from_array(x)), describe_sample(Sample.from_array(-x))
        swap = {"right_skewed": "left_skewed", "left_skewed": "right_skewed", "symmetric": "symmetric"}
        if abs(d.skewness.G1 - 0.5) > 1e-9 and abs(d.skewness.G1 + 0.5) > 1e-9:
            assert e.skewness.label == swap[d.skewness.label]
        if isinstance(d.skewness.quartile, Unavailable):  # the IQR is zero
            assert isinstance(e.skewness.quartile, Unavailable)
        else:
            assert_allclose(e.skewness.quartile, -d.skewness.quartile, rtol=1e-9, atol=1e-12)

    @SETTINGS
    @given(x=reasonable_arrays, data=st.data())
    def test_order_does_not_matter(self, x, data):
        assume(has_real_spread(x))
        order = data.draw(st.permutations(range(x.size)))
        before, after = statistics(x), statistics(x[np.array(order, dtype=int)])
        for name in before:
            assert_allclose(after[name], before[name], rtol=1e-9, atol=1e-12, err_msg=name)


# Any finite float64, and shapes that stress the edges: heavy ties, a large shared
# offset, magnitudes near the limits of require_spread, single outliers.
_any_finite = st.floats(allow_nan=False, allow_infinity=False, width=64)
edge_arrays = st.one_of(
    hnp.arrays(np.float64, st.integers(3, 40), elements=_any_finite),
    hnp.arrays(np.float64, st.integers(3, 40), elements=st.sampled_from([0.0, 1.0, 2.0, -3.5, 1e7, 1e7 + 0.1])),
    st.lists(st.integers(0, 2**20), min_size=3, max_size=40).map(lambda v: 1e12 + np.array(v, dtype=float) / 4096),
    hnp.arrays(np.float64, st.integers(3, 40), elements=st.floats(min_value=-2e150, max_value=2e150)),
    hnp.arrays(np.float64, st.integers(3, 40), elements=st.floats(min_value=-1e-148, max_value=1e-148)),
    st.lists(st.floats(-1.0, 1.0), min_size=2, max_size=40).map(lambda v: np.array(v + [1e9])),
)


def _numbers(obj):
    """Every float in a (nested) result dataclass, skipping Unavailable."""
    if isinstance(obj, Unavailable) or obj is None or isinstance(obj, (str, bool)):
        return
    if dataclasses.is_dataclass(obj):
        for f in dataclasses.fields(obj):
            yield from _numbers(getattr(obj, f.name))
    elif isinstance(obj, (tuple, list)):
        for item in obj:
            yield from _numbers(item)
    elif isinstance(obj, (int, float, np.floating)):
        yield float(obj)


def _run_recording_warnings(fn, *args):
    """Run ``fn`` with every warning recorded rather than raised. RuntimeWarnings from
    the KDE grid (service/stats/density.py) are a known, reported defect
    (test_describe.py::TestMode::test_no_overflow_warning); any other is a failure."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = fn(*args)
    unexpected = [w for w in caught if not w.filename.endswith("density.py")]
    assert not unexpected, [f"{w.filename}:{w.lineno}: {w.message}" for w in unexpected]
    return result


class TestRobustness:
    @ROBUSTNESS
    @given(values=edge_arrays)
    def test_describe_raises_only_data_errors(self, values):
        try:
            sample = Sample.from_array(values)
            require_spread(sample, minimum_n=2)  # as the API does before describing
        except DataError:
            return
        try:
            d = _run_recording_warnings(describe_sample, sample)
        except DataError:
            return
        for v in _numbers(d):
            assert math.isfinite(v), d

    @ROBUSTNESS
    @given(values=edge_arrays)
    def test_normality_raises_only_data_errors(self, values):
        try:
            sample = Sample.from_array(values)
            require_spread(sample, minimum_n=3)  # as the API does before testing
        except DataError:
            return
        try:
            r = _run_recording_warnings(normality_of_sample, sample)
        except DataError:
            return
        for name, t in r.tests.as_dict().items():
            if t.applicable:
                assert 0.0 <= t.p_value <= 1.0, name
                assert math.isfinite(t.statistic), name
        assert all(math.isfinite(v) for v in _numbers(r.verdict.practical))
