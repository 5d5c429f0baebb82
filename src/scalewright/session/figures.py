"""Column figures: what the window shows about each number column, computed once.

A column's values (float64), its histogram (counts on original bins), its summary
(``describe``) and suggestion (``suggest``) are computed once per loaded table. The window
computes them in the loading job (``column_facts``), so that the first visit of a column
does not touch its values on the interface thread; a sorted copy of the finite values is
made the first time a range is selected.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..engine import (
    ColumnSummary,
    Histogram,
    Suggestion,
    column_values,
    describe,
    histogram,
    numerics,
    suggest,
)

BINS = 30

# Kinds of columns whose values can say which rows to fit on ("Fit on rows where").
FIT_WHERE_KINDS = ("text", "boolean", "number")


@dataclass(frozen=True)
class Figures:
    """The summary figures shown under a histogram."""

    n: int
    missing: int
    mean: float
    sd: float
    min: float
    max: float
    skewness: float


@dataclass(frozen=True)
class RangeInfo:
    """A range on one histogram, in both units, with how many values fall in it."""

    low: float  # original units
    high: float
    scaled_low: float
    scaled_high: float
    count: int
    first_bar: int
    last_bar: int


def figures_of(values: np.ndarray) -> Figures:
    """The summary figures of an array, as ``describe`` computes them but without quartiles."""
    x = np.asarray(values, dtype=np.float64)
    finite = x[np.isfinite(x)]
    missing = int(np.count_nonzero(np.isnan(x)))
    if finite.size == 0:
        nan = float("nan")
        return Figures(0, missing, nan, nan, nan, nan, nan)
    m = numerics.mean(finite)
    return Figures(
        int(finite.size),
        missing,
        m,
        numerics.sd(finite, ddof=1, center=m),
        float(np.min(finite)),
        float(np.max(finite)),
        numerics.skewness(finite),
    )


def summary_figures(s: ColumnSummary) -> Figures:
    """The figures of a column summary."""
    return Figures(s.count, s.missing, s.mean, s.sd, s.min, s.max, s.skewness)


@dataclass(frozen=True)
class ColumnFacts:
    """What the window shows about one number column before any method is chosen."""

    values: np.ndarray  # float64, NaN for missing
    histogram: Histogram
    summary: ColumnSummary
    suggestion: Suggestion


class TableFacts(dict):
    """``column_facts``: label -> ColumnFacts of every number column, and ``distinct``,
    label -> how many different values a column that can choose the fitted rows holds."""

    def __init__(self) -> None:
        super().__init__()
        self.distinct: dict[str, int] = {}


def distinct_count(data: pd.DataFrame, label: str) -> int:
    """How many different values (blanks not counted) a column holds."""
    return int(data[label].nunique(dropna=True))


def column_facts(
    table: Any,
    bins: int = BINS,
    cancelled: Callable[[], bool] | None = None,
) -> TableFacts:
    """Values, histogram, summary and suggestion of every number column of a table, and
    the number of different values of every column that can choose the fitted rows.

    Pure numpy work on a table nobody else holds yet: the window runs it in the job that
    reads the file, so that visiting a column later costs no pass over its values.
    """
    out = TableFacts()
    for label in (str(c) for c in table.data.columns):
        if cancelled is not None and cancelled():
            break
        kind = str(table.kinds.get(label, "text"))
        if kind in FIT_WHERE_KINDS:
            out.distinct[label] = distinct_count(table.data, label)
        if kind != "number":
            continue
        values = column_values(table.data, label)
        summary = describe(values)
        out[label] = ColumnFacts(values, histogram(values, bins), summary, suggest(summary))
    return out


class ColumnFigures:
    """A cache of every column's values, histogram, summary and suggestion for one table.

    Filled from ``column_facts`` when the loading job computed them, otherwise computed
    the first time each is asked for.
    """

    def __init__(
        self,
        data: pd.DataFrame,
        bins: int = BINS,
        facts: Mapping[str, ColumnFacts] | None = None,
    ) -> None:
        self.data = data
        self.bins = bins
        self._values: dict[str, np.ndarray] = {}
        self._sorted: dict[str, np.ndarray] = {}
        self._hist: dict[str, Histogram] = {}
        self._summary: dict[str, ColumnSummary] = {}
        self._suggestion: dict[str, Suggestion] = {}
        self._distinct: dict[str, int] = {}
        labels = {str(c) for c in data.columns}
        for label, f in (facts or {}).items():
            if label in labels:
                self._values[label] = f.values
                self._hist[label] = f.histogram
                self._summary[label] = f.summary
                self._suggestion[label] = f.suggestion
        for label, n in getattr(facts, "distinct", {}).items():
            if label in labels:
                self._distinct[label] = n

    def values(self, label: str) -> np.ndarray:
        if label not in self._values:
            self._values[label] = column_values(self.data, label)
        return self._values[label]

    def sorted_values(self, label: str) -> np.ndarray:
        if label not in self._sorted:
            x = self.values(label)
            self._sorted[label] = np.sort(x[np.isfinite(x)])
        return self._sorted[label]

    def histogram(self, label: str) -> Histogram:
        if label not in self._hist:
            self._hist[label] = histogram(self.values(label), self.bins)
        return self._hist[label]

    def summary(self, label: str) -> ColumnSummary:
        if label not in self._summary:
            self._summary[label] = describe(self.values(label))
        return self._summary[label]

    def suggestion(self, label: str) -> Suggestion:
        if label not in self._suggestion:
            self._suggestion[label] = suggest(self.summary(label))
        return self._suggestion[label]

    def distinct_count(self, label: str) -> int:
        """How many different values the column holds (counted when the file was read)."""
        if label not in self._distinct:
            self._distinct[label] = distinct_count(self.data, label)
        return self._distinct[label]
