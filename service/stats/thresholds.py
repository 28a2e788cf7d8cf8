"""Default magnitudes from which skewness and excess kurtosis count as departures.

Both are options of every endpoint that uses them.

* Skewness: |G1| below 1/2 is "approximately symmetric" (Bulmer, M. G. (1979).
  *Principles of Statistics*, Dover; threshold recalled from memory).
* Excess kurtosis: |G2| below 1 reads as mesokurtic (common practice; no published
  source settles this).
"""

DEFAULT_SKEWNESS_THRESHOLD = 0.5
DEFAULT_KURTOSIS_THRESHOLD = 1.0
