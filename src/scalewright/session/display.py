"""What the window shows of one fitted column: a range in both units, and the fit in words.

Plain functions of the column's figures and its fit outcome, so that they can be checked
without a session or a widget.
"""

from __future__ import annotations

import numpy as np

from ..engine import FittedColumn, bars_in_range, get_method
from .figures import RangeInfo
from .fits import FitFailed, FitOutcome


def range_info(
    sorted_values: np.ndarray,
    edges: np.ndarray,
    scaled_edges: np.ndarray,
    fc: FittedColumn | None,
    fitting: bool,
    low: float,
    high: float,
    *,
    scaled: bool,
) -> RangeInfo:
    """Count and bounds, in both units, of the values in [low, high] on either side.

    ``edges`` are the histogram's original edges and ``scaled_edges`` the same in scaled
    units; ``fc`` is None for 'leave as is', a failed fit, or while ``fitting``.
    """
    if low > high:
        low, high = high, low
    if scaled and fc is not None:
        finite = scaled_edges[np.isfinite(scaled_edges)]
        if finite.size:
            low = float(np.clip(low, finite[0], finite[-1]))
            high = float(np.clip(high, finite[0], finite[-1]))
        slo, shi = low, high
        low, high = (float(v) for v in fc.inverse(np.array([slo, shi])))
    elif fc is not None:
        slo, shi = (float(v) for v in fc.forward(np.array([low, high])))
    elif fitting:  # no scaled bounds yet
        slo = shi = float("nan")
    else:
        slo, shi = low, high
    srt = sorted_values
    start = int(np.searchsorted(srt, low, side="left"))
    stop = int(np.searchsorted(srt, high, side="right"))
    if scaled and fc is not None:
        # The bounds came back through the inverse and may be off by a rounding step:
        # settle the values at each end by their scaled value (the map is increasing).
        def f(i: int) -> float:
            return float(fc.forward(srt[i : i + 1])[0])

        while start > 0 and f(start - 1) >= slo:
            start -= 1
        while start < srt.size and f(start) < slo:
            start += 1
        while stop < srt.size and f(stop) <= shi:
            stop += 1
        while stop > 0 and f(stop - 1) > shi:
            stop -= 1
    count = max(stop - start, 0)
    first, last = bars_in_range(edges, low, high)
    return RangeInfo(low, high, slo, shi, count, first, last)


def fit_warnings(label: str, outcome: FitOutcome | None, group_by: str | None) -> list[str]:
    """Plain sentences about the column's fit: the error, or the fit's warnings."""
    if outcome is None:
        return []
    if isinstance(outcome, FitFailed):
        prefix = f"column '{label}': "  # the window already says which column
        text = outcome.message
        return [text[len(prefix) :] if text.startswith(prefix) else text]
    fc = outcome.column
    out = list(fc.warnings)
    if fc.groups:
        out.append(f"fitted separately for each of {len(fc.groups)} groups of '{group_by}'")
    return out


def describe_outcome(outcome: FitOutcome | None) -> str:
    """The fitted parameters in one plain line, e.g. 'mean 75.5, sd 36.7, sample sd (...)'."""
    if outcome is None:
        return "Kept as it is."
    if isinstance(outcome, FitFailed):
        return outcome.message
    state = outcome.column
    method = get_method(state.method)
    words = method.describe_params(state.pooled.params, digits=6)
    text = f"Fitted on {state.pooled.n:,} values: {words}"
    if state.groups:
        text += f"; one set per group ({len(state.groups)} groups)"
    return f"{method.name}. {text}."
