"""SVG pictures of a sample: a histogram with the fitted normal and mixture densities,
and a normal Q-Q plot with a simultaneous band.

matplotlib (Agg, no display) draws; the statistics (the band, the mixture) come from
``service.stats``. The same input gives the same bytes: a fixed hash salt, no date in
the metadata, and text kept as text. Every picture carries a title and a description
for screen readers (SVG ``<title>`` and ``<desc>``, ``role="img"``).
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass
from html import escape

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from ..stats.qq import qq  # noqa: E402

matplotlib.rcParams.update({
    "svg.hashsalt": "shapegauge",  # stable ids
    "svg.fonttype": "none",  # text stays text: readable, searchable
    "font.family": "DejaVu Sans",
    "font.size": 9,
})
MAX_QQ_POINTS = 2000
MAX_BINS = 200
BIN_RULE = "Freedman-Diaconis (bin width 2 IQR / n^(1/3); numpy's 'fd'), at most 200 bins"


@dataclass(frozen=True)
class Picture:
    svg: bytes
    title: str
    description: str


def _mixture_density(x: np.ndarray, components) -> np.ndarray:
    out = np.zeros_like(x)
    for c in components:
        z = (x - c.mean) / c.sd
        out += c.weight * np.exp(-0.5 * z * z) / (c.sd * math.sqrt(2 * math.pi))
    return out


def _histogram(ax, values, edges, counts, mean: float, sd: float, components, label: str) -> str:
    widths = np.diff(edges)
    total = counts.sum()
    ax.bar(edges[:-1], counts / (total * widths), width=widths, align="edge", color="#c9d6e8", edgecolor="#5a6f8e",
           linewidth=0.4, label="data")
    lo, hi = edges[0], edges[-1]
    grid = np.linspace(lo, hi, 400)
    ax.plot(grid, np.exp(-0.5 * ((grid - mean) / sd) ** 2) / (sd * math.sqrt(2 * math.pi)), color="#b03a2e",
            linewidth=1.4, label=f"normal (mean {mean:.4g}, sd {sd:.4g})")
    text = f"a histogram of {int(total)} values with the fitted normal density (mean {mean:.4g}, sd {sd:.4g})"
    if components and len(components) > 1:
        ax.plot(grid, _mixture_density(grid, components), color="#1e7b4f", linewidth=1.2, linestyle="--",
                label=f"mixture of {len(components)}")
        text += f" and the density of the selected {len(components)}-component normal mixture"
    ax.set_xlabel(label or "value")
    ax.set_ylabel("density")
    ax.set_title("Histogram with fitted densities")
    ax.legend(frameon=False, fontsize=8)
    return text


def _qq(ax, sample, label: str) -> str:
    q = qq(sample)
    n = q.sample.size
    if n > MAX_QQ_POINTS:  # a picture of 2000 quantiles says the same and stays small
        idx = np.unique(np.round(np.linspace(0, n - 1, MAX_QQ_POINTS)).astype(int))
    else:
        idx = np.arange(n)
    t, s = q.theoretical[idx], q.sample[idx]
    outside = int(np.sum((q.sample < q.lower) | (q.sample > q.upper)))
    ax.fill_between(t, q.lower[idx], q.upper[idx], color="#f2dcc2", linewidth=0, label=f"{q.level:.0%} simultaneous band")
    ax.plot(t, q.mean + q.sd * t, color="#b03a2e", linewidth=1.2, label="fitted normal")
    ax.plot(t, s, "o", markersize=2.2, color="#2c4a73", label="data")
    ax.set_xlabel("standard normal quantile")
    ax.set_ylabel(label or "sample quantile")
    ax.set_title("Normal Q-Q plot")
    ax.legend(frameon=False, fontsize=8, loc="upper left")
    shown = "" if n <= MAX_QQ_POINTS else f" ({idx.size} of them drawn)"
    return (f"a normal Q-Q plot of {n} values{shown} with the fitted line and a {q.level:.0%} simultaneous band "
            f"({q.method}); {outside} values lie outside the band")


def _accessible(svg: bytes, title: str, description: str) -> bytes:
    text = svg.decode("utf-8")
    start = text.index("<svg")
    end = text.index(">", start)
    head = text[start:end]
    head += ' role="img" aria-labelledby="shapegauge-title shapegauge-desc"'
    inner = f'<title id="shapegauge-title">{escape(title)}</title><desc id="shapegauge-desc">{escape(description)}</desc>'
    return (text[:start] + head + ">" + inner + text[end + 1:]).encode("utf-8")


def render(kind: str, *, sample=None, histogram=None, moments, components=None, label: str | None = None,
           title: str | None = None) -> Picture:
    """``kind`` is histogram, qq or both; raw values (``sample``) allow every kind, a
    histogram form only ``histogram``."""
    panels = ["histogram", "qq"] if kind == "both" else [kind]
    fig, axes = plt.subplots(1, len(panels), figsize=(5.2 * len(panels), 3.8), squeeze=False)
    parts = []
    try:
        for ax, panel in zip(axes[0], panels):
            if panel == "histogram":
                if sample is not None:
                    x = sample.sorted
                    edges = np.histogram_bin_edges(x, bins="fd")
                    if edges.size - 1 > MAX_BINS or edges.size < 3:
                        edges = np.histogram_bin_edges(x, bins=min(MAX_BINS, max(5, int(math.sqrt(x.size)))))
                    counts = np.histogram(x, edges)[0].astype(float)
                else:
                    edges = histogram.edges.copy()
                    finite = edges[np.isfinite(edges)]
                    width = float(np.min(np.diff(finite))) if finite.size > 1 else 1.0
                    if not math.isfinite(edges[0]):
                        edges[0] = edges[1] - width
                    if not math.isfinite(edges[-1]):
                        edges[-1] = edges[-2] + width
                    counts = histogram.counts.astype(float)
                parts.append(_histogram(ax, None, edges, counts, moments.mean, moments.sd, components, label))
            else:
                parts.append(_qq(ax, sample, label))
        fig.tight_layout()
        buffer = io.BytesIO()
        fig.savefig(buffer, format="svg", metadata={"Date": None, "Title": title or "shapegauge"})
    finally:
        plt.close(fig)
    heading = title or ("Histogram and normal Q-Q plot" if kind == "both" else
                        "Histogram with fitted densities" if kind == "histogram" else "Normal Q-Q plot")
    description = "; ".join(parts) + f". Bins: {BIN_RULE}." if "histogram" in panels else "; ".join(parts) + "."
    return Picture(_accessible(buffer.getvalue(), heading, description), heading, description)
