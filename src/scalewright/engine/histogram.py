"""Histogram counts on original bins, and the same bins mapped into scaled units.

Because every method is increasing, the scaled histogram is the original one with its
edges sent through the transform: bar i on one side holds exactly the values of bar i on
the other. Switching a method therefore only maps the edges (a few dozen numbers) and
never touches the column's values again.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .plan import FittedColumn, ParamSet


@dataclass(frozen=True)
class Histogram:
    edges: np.ndarray  # bins + 1 edges, original units
    counts: np.ndarray  # values per bar (integers)


def histogram(values: np.ndarray, bins: int = 30) -> Histogram:
    """Equal-width bins over the finite values (missing and infinite values left out).

    Whole-number columns (ages, counts) get bars of a whole-number width centred on the
    numbers (edges at k - 0.5), at most ``bins`` of them: equal-width bins that ignore the
    integers show empty bars between full ones, which reads as gaps in the data.
    """
    x = np.asarray(values, dtype=np.float64)
    x = x[np.isfinite(x)]
    if x.size == 0:
        return Histogram(np.array([0.0, 1.0]), np.zeros(1, dtype=np.int64))
    lo, hi = float(np.min(x)), float(np.max(x))
    if hi - lo < 2**52 and np.array_equal(x, np.round(x)):
        width = max(1.0, float(np.ceil((hi - lo + 1) / bins)))
        n = int((hi - lo) // width) + 1
        edges = lo - 0.5 + width * np.arange(n + 1)
        counts, _ = np.histogram(x, bins=edges)
        return Histogram(edges, counts)
    if lo == hi:
        lo, hi = lo - 0.5, hi + 0.5
    counts, edges = np.histogram(x, bins=bins, range=(lo, hi))
    return Histogram(edges, counts)


def mapped_edges(
    edges: np.ndarray, fitted: FittedColumn, params: ParamSet | None = None
) -> np.ndarray:
    """The edges in scaled units; NaN where an edge is outside the method's domain."""
    return fitted.forward(np.asarray(edges, dtype=np.float64), params)


def bars_in_range(edges: np.ndarray, low: float, high: float) -> tuple[int, int]:
    """First and last bar (inclusive) that overlap [low, high] on the same axis as ``edges``."""
    first = int(np.clip(np.searchsorted(edges, low, side="right") - 1, 0, len(edges) - 2))
    last = int(np.clip(np.searchsorted(edges, high, side="left") - 1, 0, len(edges) - 2))
    return min(first, last), max(first, last)


COUNT_PER_UNIT = "count per unit of width"


def bar_heights(edges: np.ndarray, counts: np.ndarray, usable: np.ndarray):
    """(heights, per_unit): the counts when the bars are equally wide, else the count per
    unit of width, so that a bar's area is its number of values and a bar widened by the
    transform does not look larger than it is. The window and the report both draw so."""
    x0, x1 = edges[:-1], edges[1:]
    widths = (x1 - x0)[usable]
    if widths.size == 0 or np.all(np.abs(widths - widths[0]) <= 1e-9 * abs(widths[0])):
        return np.asarray(counts, dtype=np.float64), False
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(usable & (x1 > x0), counts / (x1 - x0), 0.0), True
