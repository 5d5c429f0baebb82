"""Histograms drawn as small standalone SVG text, so a report needs no Qt and no files.

The bars are given by their edges and counts (see :mod:`scalewright.engine.histogram`): the
scaled side passes the original edges mapped through the transform, so its bars may have
unequal widths. Edges that are not finite (outside the method's domain) drop their bars;
the caller says so in words. Text is escaped, so a column name may hold ``<``, ``&`` or
quotes.
"""

from __future__ import annotations

import math
from html import escape

import numpy as np

from ..engine.histogram import COUNT_PER_UNIT, bar_heights
from ..engine.number_text import number_text

# The window's colours (gui/theme.py, Okabe-Ito): original units blue, scaled orange.
ORIGINAL = "#0072B2"
SCALED = "#E69F00"
AXIS = "#444444"
GRID = "#e4e4e4"
FONT = "DejaVu Sans, Arial, Helvetica, sans-serif"

WIDTH = 460
HEIGHT = 260
_LEFT, _RIGHT, _TOP, _BOTTOM = 58, 14, 12, 46


def nice_ticks(lo: float, hi: float, target: int = 5) -> list[float]:
    """Round tick positions (steps of 1, 2, 2.5 or 5 times a power of ten) within [lo, hi]."""
    span = hi - lo
    if not (math.isfinite(span) and span > 0):
        return [lo] if math.isfinite(lo) else []
    raw = span / target
    magnitude = 10.0 ** math.floor(math.log10(raw))
    step = magnitude * 10
    for m in (1, 2, 2.5, 5, 10):
        if span / (m * magnitude) <= target:
            step = m * magnitude
            break
    first, last = math.ceil(lo / step - 1e-9), math.floor(hi / step + 1e-9)
    return [k * step for k in range(first, last + 1)]


def tick_text(value: float, *, grouped: bool = False) -> str:
    """A short label for an axis tick (no '-0'); ``grouped`` whole numbers get commas."""
    if grouped and value == int(value) and abs(value) < 1e15:
        return f"{int(value):,}"
    return number_text(value, ".4g")


def _fmt(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def histogram_svg(
    edges: np.ndarray,
    counts: np.ndarray,
    *,
    colour: str,
    axis_title: str,
    description: str = "",
    width: int = WIDTH,
    height: int = HEIGHT,
) -> str:
    """One histogram as an ``<svg>`` element: bars, both axes with round ticks, a title.

    ``description`` becomes the image's accessible title (shown by browsers on hover).
    """
    edges = np.asarray(edges, dtype=np.float64)
    counts = np.asarray(counts)
    usable = np.isfinite(edges[:-1]) & np.isfinite(edges[1:])
    finite_edges = edges[np.isfinite(edges)]
    lo = float(finite_edges.min()) if finite_edges.size else 0.0
    hi = float(finite_edges.max()) if finite_edges.size else 1.0
    if not hi > lo:  # one value (a constant column scaled to 0): give it a visible width
        lo, hi = lo - 0.5, hi + 0.5
    heights, per_unit = bar_heights(edges, counts, usable)
    top = float(heights[usable].max()) if usable.any() else 0.0
    if not top > 0:
        top = 1.0

    plot_w = width - _LEFT - _RIGHT
    plot_h = height - _TOP - _BOTTOM
    bottom_y = _TOP + plot_h

    def sx(v: float) -> float:
        return _LEFT + (v - lo) / (hi - lo) * plot_w

    def sy(c: float) -> float:
        return bottom_y - c / top * plot_h

    parts = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
        f'viewBox="0 0 {width} {height}" role="img" class="histogram">',
        f"<title>{escape(description or axis_title)}</title>",
        f'<rect x="0" y="0" width="{width}" height="{height}" fill="#ffffff"/>',
    ]
    y_ticks = nice_ticks(0.0, top, 4)
    if not per_unit:
        y_ticks = [t for t in y_ticks if t == int(t)]
    for t in y_ticks:
        y = _fmt(sy(t))
        parts.append(
            f'<line x1="{_LEFT}" y1="{y}" x2="{_LEFT + plot_w}" y2="{y}" stroke="{GRID}" '
            'stroke-width="1"/>'
        )
        parts.append(
            f'<text x="{_LEFT - 6}" y="{_fmt(sy(t) + 4)}" text-anchor="end" '
            f'font-family="{FONT}" font-size="11" fill="{AXIS}">{tick_text(t, grouped=True)}</text>'
        )
    parts.append(f'<g class="bars" fill="{colour}" stroke="#ffffff" stroke-width="0.5">')
    for i in np.flatnonzero(usable & (counts > 0)):
        x0, x1 = sx(float(edges[i])), sx(float(edges[i + 1]))
        y = sy(float(heights[i]))
        parts.append(
            f'<rect x="{_fmt(x0)}" y="{_fmt(y)}" width="{_fmt(max(x1 - x0, 1.0))}" '
            f'height="{_fmt(max(bottom_y - y, 0.5))}"><title>{int(counts[i]):,} values from '
            f"{escape(tick_text(float(edges[i])))} to {escape(tick_text(float(edges[i + 1])))}"
            "</title></rect>"
        )
    parts.append("</g>")
    parts.append(
        f'<line x1="{_LEFT}" y1="{bottom_y}" x2="{_LEFT + plot_w}" y2="{bottom_y}" '
        f'stroke="{AXIS}" stroke-width="1"/>'
    )
    parts.append(
        f'<line x1="{_LEFT}" y1="{_TOP}" x2="{_LEFT}" y2="{bottom_y}" stroke="{AXIS}" '
        'stroke-width="1"/>'
    )
    for t in nice_ticks(lo, hi, 5):
        x = _fmt(sx(t))
        parts.append(
            f'<line x1="{x}" y1="{bottom_y}" x2="{x}" y2="{bottom_y + 4}" stroke="{AXIS}"/>'
        )
        parts.append(
            f'<text x="{x}" y="{bottom_y + 16}" text-anchor="middle" font-family="{FONT}" '
            f'font-size="11" fill="{AXIS}">{escape(tick_text(t))}</text>'
        )
    parts.append(
        f'<text x="{_LEFT + plot_w / 2:.1f}" y="{height - 8}" text-anchor="middle" '
        f'font-family="{FONT}" font-size="12" fill="#222222">{escape(axis_title)}</text>'
    )
    parts.append(
        f'<text x="14" y="{_TOP + plot_h / 2:.1f}" text-anchor="middle" font-family="{FONT}" '
        f'font-size="{9 if per_unit else 11}" fill="{AXIS}" transform="rotate(-90 14 {_TOP + plot_h / 2:.1f})">'
        f"{COUNT_PER_UNIT if per_unit else 'count'}</text>"
    )
    parts.append("</svg>")
    return "".join(parts)
