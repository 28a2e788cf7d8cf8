"""Kernel density estimate on a grid, and the mode as its highest peak.

The estimate uses a Gaussian kernel with Silverman's rule-of-thumb bandwidth. For
speed at any n, the data are linearly binned onto a regular grid and convolved with
the kernel by FFT, the standard binned approximation; the grid step is at most a
quarter of the bandwidth, so the approximation error is far below the estimate's
own statistical error.

A far outlier would stretch one grid over empty space, so the mode is searched cluster
by cluster: the sorted data split wherever two neighbours are more than 8 bandwidths
apart (beyond 4 bandwidths a Gaussian kernel is below 0.04% of its peak, so clusters
do not overlap), each cluster gets its own grid, and clusters too small to beat the
best peak found so far are skipped.

References
----------
.. [1] Silverman, B. W. (1986). *Density Estimation for Statistics and Data Analysis*.
       Chapman & Hall. Eq. (3.31) for the bandwidth.
.. [2] Wand, M. P. (1994). Fast computation of multivariate kernel estimators.
       *Journal of Computational and Graphical Statistics* 3(4), 433-445.
       doi:10.1080/10618600.1994.10474656 (linear binning and FFT).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import signal

_MIN_GRID = 512
_MAX_GRID = 1 << 16
_REACH = 4.0  # kernel support kept, in bandwidths
_STEPS_PER_BANDWIDTH = 4.0


@dataclass(frozen=True)
class DensityGrid:
    """A density estimate evaluated on an evenly spaced grid.

    ``density`` integrates to the share of the sample in the cluster gridded (1 for the
    whole sample)."""

    x: np.ndarray
    density: np.ndarray
    bandwidth: float


def silverman_bandwidth(sd: float, iqr: float, n: int) -> float:
    """``0.9 * min(sd, iqr / 1.34) * n**(-1/5)`` ([1], eq. 3.31); sd alone when iqr is 0."""
    spread = min(sd, iqr / 1.34) if iqr > 0 else sd
    return 0.9 * spread * n ** (-0.2)


def _smoothed_counts(values: np.ndarray, bandwidth: float) -> tuple[np.ndarray, np.ndarray]:
    """Grid and kernel-smoothed counts (kernel peak 1, unnormalised) for sorted values."""
    lo = float(values[0]) - _REACH * bandwidth
    hi = float(values[-1]) + _REACH * bandwidth
    cells = _STEPS_PER_BANDWIDTH * (hi - lo) / bandwidth
    size = int(min(_MAX_GRID, max(_MIN_GRID, math.ceil(cells) + 1))) if math.isfinite(cells) else _MAX_GRID
    step = (hi - lo) / (size - 1)
    # Linear binning ([2], section 2): each value shares its unit weight between the
    # two grid points around it.
    # The grid reaches 4 bandwidths beyond the data, so every position lies strictly
    # inside it: no clipping needed.
    position = (values - lo) / step
    left = position.astype(np.int64)
    frac = position - left
    weights = np.bincount(left, weights=1.0 - frac, minlength=size)
    weights += np.bincount(left + 1, weights=frac, minlength=size)
    half = int(min(size, math.ceil(_REACH * bandwidth / step)))
    offsets = np.arange(-half, half + 1) * (step / bandwidth)
    kernel = np.exp(-0.5 * offsets * offsets)
    fft_size = 1 << (size + kernel.size - 2).bit_length()
    conv = np.fft.irfft(np.fft.rfft(weights, fft_size) * np.fft.rfft(kernel, fft_size), fft_size)
    smoothed = np.maximum(conv[half : half + size], 0.0)
    return lo + step * np.arange(size), smoothed


def kde_grid(sorted_values: np.ndarray, bandwidth: float, total: int | None = None) -> DensityGrid:
    """Gaussian KDE of ``sorted_values`` on a regular grid by linear binning and FFT.

    ``total`` is the size of the whole sample when ``sorted_values`` is one cluster of it.
    """
    x, smoothed = _smoothed_counts(sorted_values, bandwidth)
    n = sorted_values.size if total is None else total
    return DensityGrid(x=x, density=smoothed / (n * bandwidth * math.sqrt(2.0 * math.pi)), bandwidth=bandwidth)


def _refine(x: np.ndarray, y: np.ndarray, i: int) -> float:
    """Vertex of the parabola through the three grid points around a maximum."""
    if 0 < i < x.size - 1:
        y0, y1, y2 = y[i - 1 : i + 2]
        denom = y0 - 2.0 * y1 + y2
        if denom < 0:
            shift = 0.5 * (y0 - y2) / denom
            return float(x[i] + shift * (x[1] - x[0]))
    return float(x[i])


def highest_peak(grid: DensityGrid) -> float:
    """Location of a grid density's maximum, refined by a parabola (exact for a locally
    quadratic peak)."""
    return _refine(grid.x, grid.density, int(np.argmax(grid.density)))


def _resolvable(x: np.ndarray, bandwidth: float) -> float:
    """A bandwidth below the data's own floating-point resolution cannot resolve anything."""
    return max(bandwidth, 4.0 * float(np.spacing(max(abs(x[0]), abs(x[-1])))))


def smoothed_density(sorted_values: np.ndarray, bandwidth: float) -> np.ndarray:
    """The KDE on a grid, unnormalised (kernel peak 1), for comparing heights only; safe
    for any bandwidth, as no 1/bandwidth factor is applied."""
    return _smoothed_counts(sorted_values, _resolvable(sorted_values, bandwidth))[1]


def kde_mode(sorted_values: np.ndarray, bandwidth: float) -> float:
    """The highest peak of the Gaussian KDE, searched cluster by cluster (see module)."""
    x = sorted_values
    bandwidth = _resolvable(x, bandwidth)
    breaks = np.flatnonzero(np.diff(x) > 2.0 * _REACH * bandwidth) + 1
    starts = np.concatenate([[0], breaks])
    ends = np.concatenate([breaks, [x.size]])
    counts = ends - starts
    best_height, best_at = -1.0, float(x[0])
    for k in np.argsort(-counts, kind="stable"):
        if counts[k] <= best_height:  # a cluster's peak is at most its count (kernel peak 1)
            break
        grid, smoothed = _smoothed_counts(x[starts[k] : ends[k]], bandwidth)
        i = int(np.argmax(smoothed))
        if smoothed[i] > best_height:
            best_height = float(smoothed[i])
            best_at = min(max(_refine(grid, smoothed, i), float(x[starts[k]])), float(x[ends[k] - 1]))
    return best_at


def count_peaks(density: np.ndarray, prominence: float) -> int:
    """Local maxima of a gridded density with a topographic prominence of at least
    ``prominence`` times the highest value (``scipy.signal.find_peaks``)."""
    padded = np.concatenate([[0.0], density, [0.0]])
    peaks, _ = signal.find_peaks(padded, prominence=prominence * float(density.max()))
    return max(int(peaks.size), 1)


def kde_mode_and_peaks(sorted_values: np.ndarray, bandwidth: float, peak_bandwidth: float, prominence: float) -> tuple[float, int]:
    """``kde_mode`` and the number of KDE peaks with the given prominence (at
    ``peak_bandwidth``), sharing one density evaluation in the common case of a single
    cluster and equal bandwidths."""
    x = sorted_values
    bandwidth = _resolvable(x, bandwidth)
    peak_bandwidth = _resolvable(x, peak_bandwidth)
    single = not np.any(np.diff(x) > 2.0 * _REACH * bandwidth)
    if single and peak_bandwidth == bandwidth:
        grid, smoothed = _smoothed_counts(x, bandwidth)
        i = int(np.argmax(smoothed))
        mode = min(max(_refine(grid, smoothed, i), float(x[0])), float(x[-1]))
        return mode, count_peaks(smoothed, prominence)
    return kde_mode(x, bandwidth), count_peaks(smoothed_density(x, peak_bandwidth), prominence)
