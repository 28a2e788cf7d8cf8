"""The forms a sample can take on its way into the statistics layer.

``Sample`` holds raw values. The values are sorted once, on first use, and every
order-statistic method (quantiles, EDF tests, Shapiro–Wilk, the mode) shares that
one sorted copy.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from .errors import ConstantData, NonFiniteValue, NotOneDimensional, OutOfRange, TooFewValues

# Spread below this many units in the last place of the largest magnitude is
# rounding noise, not variation (common practice: a few dozen ulps).
_NEGLIGIBLE_SPREAD_ULPS = 64
# Beyond this magnitude the variance itself would overflow a double; below this
# spread it would underflow.
MAX_MAGNITUDE = 1e150
MIN_SPREAD = 1e-150


@dataclass(frozen=True, eq=False)
class Sample:
    """A one-dimensional sample of finite float64 values.

    Parameters
    ----------
    values : numpy.ndarray
        The observed values in the order given (missing values already removed).
    missing : int
        How many missing values the caller's input held and were dropped.
    """

    values: np.ndarray
    missing: int = 0

    def __post_init__(self) -> None:
        values = np.asarray(self.values, dtype=np.float64)
        if values.ndim != 1:
            raise NotOneDimensional(
                f"a sample is one-dimensional; got an array of shape {values.shape}"
            )
        values.flags.writeable = False
        object.__setattr__(self, "values", values)

    @classmethod
    def from_array(cls, values, missing: int = 0) -> "Sample":
        """Build a sample from any array-like, refusing non-finite values.

        The API layer validates values itself (naming positions in the request) and
        then constructs ``Sample`` directly, so the check runs once per request.
        """
        array = np.asarray(values, dtype=np.float64)
        if array.ndim == 1:
            bad = ~np.isfinite(array)
            if bad.any():
                first = int(np.flatnonzero(bad)[0])
                raise NonFiniteValue(f"value {first} is not finite", pointer=f"/values/{first}")
        return cls(array, missing)

    @property
    def n(self) -> int:
        return int(self.values.shape[0])

    @cached_property
    def sorted(self) -> np.ndarray:
        out = np.sort(self.values)
        out.flags.writeable = False
        return out

    @cached_property
    def n_distinct(self) -> int:
        s = self.sorted
        return int(np.count_nonzero(s[1:] != s[:-1])) + 1 if s.size else 0

    @cached_property
    def rounding_unit(self) -> float | None:
        """The step of the grid the values sit on, or None when they do not sit on one.

        The step is the smallest gap between distinct values; the values sit on its grid
        when each is within 1e-6 steps of a multiple of it (counted from the smallest).
        Computed once per sample: the notices, the mode and the tie spreading share it."""
        if self.n_distinct >= self.n:
            return None
        s = self.sorted
        distinct = s[np.concatenate([[True], s[1:] != s[:-1]])]
        if distinct.size < 2:
            return None
        unit = float(np.min(np.diff(distinct)))
        if distinct[-1] - distinct[0] > 1e9 * unit:  # no grid this fine is a rounding grid
            return None
        steps = (distinct - distinct[0]) / unit
        return unit if np.all(np.abs(steps - np.round(steps)) < 1e-6) else None


def require_spread(sample: Sample, *, minimum_n: int = 2) -> None:
    """Refuse samples that no shape statistic can describe.

    Raises :class:`TooFewValues` below ``minimum_n`` values and :class:`ConstantData`
    when every value is the same, or when the values differ only at the level of
    floating-point rounding (their range is below a few dozen ulps of their magnitude),
    where every moment would be noise.
    """
    if sample.n < minimum_n:
        raise TooFewValues(
            f"at least {minimum_n} non-missing values are needed; got n={sample.n}"
        )
    lo, hi = float(sample.sorted[0]), float(sample.sorted[-1])
    if lo == hi:
        raise ConstantData(f"all {sample.n} values equal {lo!r}: a constant has no shape to describe")
    scale = max(abs(lo), abs(hi))
    if scale > MAX_MAGNITUDE:
        raise OutOfRange(
            f"a value of magnitude {scale:.3g} is beyond {MAX_MAGNITUDE:g}: its variance would "
            "overflow double precision; rescale the data (the shape does not change)"
        )
    if hi - lo < MIN_SPREAD:
        raise OutOfRange(
            f"the values span only {hi - lo:.3g}: their variance would underflow double precision; "
            "rescale the data (the shape does not change)"
        )
    if hi - lo <= _NEGLIGIBLE_SPREAD_ULPS * np.spacing(scale):
        raise ConstantData(
            f"the values span only {hi - lo!r} around {scale!r}, which is floating-point rounding, "
            "not variation: the data are constant for every practical purpose"
        )
