"""High-precision references computed from the float64 inputs themselves.

Every float64 is a dyadic rational, so ``fractions.Fraction(x)`` is exact; sums of
powers of deviations are then exact rationals, and the only irrational steps (square
roots and the powers 3/2) are done in mpmath at 50 significant digits. These are the
definitions written out, independent of the code under test:

* ``m_k = (1/n) sum (x_i - mean)^k``
* ``g1 = m3 / m2^(3/2)``, ``g2 = m4 / m2^2 - 3``
* ``G1 = g1 sqrt(n(n-1)) / (n-2)``, ``G2 = (n-1)/((n-2)(n-3)) ((n+1) g2 + 6)``
  (Joanes & Gill 1998, eqs. for G1 and G2)
* ``b1 = m3 / s^3``, ``b2 = m4 / s^4 - 3`` with ``s^2 = sum (x_i - mean)^2 / (n-1)``
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

import mpmath


def _mpf(q: Fraction):
    with mpmath.workdps(50):
        return mpmath.mpf(q.numerator) / mpmath.mpf(q.denominator)


@dataclass(frozen=True)
class ExactMoments:
    n: int
    mean: Fraction
    m2: Fraction
    m3: Fraction
    m4: Fraction

    @property
    def variance(self) -> Fraction:
        return self.m2 * self.n / (self.n - 1)

    def sd(self) -> float:
        with mpmath.workdps(50):
            return float(mpmath.sqrt(_mpf(self.variance)))

    def g1(self):
        with mpmath.workdps(50):
            return _mpf(self.m3) / _mpf(self.m2) ** mpmath.mpf(1.5)

    def g2(self):
        with mpmath.workdps(50):
            return _mpf(self.m4 / (self.m2 * self.m2)) - 3

    def G1(self) -> float:
        n = self.n
        with mpmath.workdps(50):
            return float(self.g1() * mpmath.sqrt(n * (n - 1)) / (n - 2))

    def G2(self) -> float:
        n = self.n
        with mpmath.workdps(50):
            return float(mpmath.mpf(n - 1) / ((n - 2) * (n - 3)) * ((n + 1) * self.g2() + 6))

    def b1(self) -> float:
        with mpmath.workdps(50):
            return float(_mpf(self.m3) / _mpf(self.variance) ** mpmath.mpf(1.5))

    def b2(self) -> float:
        # m4 / s^4 is rational: no rounding until the final conversion.
        return float(self.m4 / (self.variance * self.variance) - 3)


def exact_moments(values) -> ExactMoments:
    xs = [Fraction(float(v)) for v in values]
    n = len(xs)
    mean = sum(xs, Fraction(0)) / n
    d = [x - mean for x in xs]
    d2 = [t * t for t in d]
    m2 = sum(d2, Fraction(0)) / n
    m3 = sum((a * b for a, b in zip(d2, d)), Fraction(0)) / n
    m4 = sum((t * t for t in d2), Fraction(0)) / n
    return ExactMoments(n=n, mean=mean, m2=m2, m3=m3, m4=m4)
