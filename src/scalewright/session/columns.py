"""What the window reads about each column: its figures, and its fit under the current
choice (fitted, failed, or still fitting in the background).

``ColumnReads`` is the read-only half of ``Session``: it only puts the column's current
choice to the column figures (``ColumnFigures``) and the fits (``FitStore``), and says
"nothing yet" for a column still being fitted instead of waiting for it.
"""

from __future__ import annotations

import numpy as np

from ..engine import (
    ColumnChoice,
    ColumnSummary,
    FitSettings,
    FittedColumn,
    Histogram,
    Suggestion,
    mapped_edges,
)
from . import display
from .figures import ColumnFigures, Figures, RangeInfo, summary_figures
from .fits import FitFailed, FitOutcome, FitStore, Fitted, Runner, scale_with


class ColumnReads:
    """Per-column reads over a session's figures, fits and choices."""

    column_figures: ColumnFigures
    fits: FitStore
    _choices: dict[str, ColumnChoice]

    @property
    def settings(self) -> FitSettings:
        return self.fits.settings

    def chosen(self) -> dict[str, ColumnChoice]:
        """The columns with a method other than 'leave as is'."""
        return {k: v for k, v in self._choices.items() if v.method != "none"}

    # ------------------------------------------------------------------ fit store knobs

    @property
    def fit_runner(self) -> Runner | None:
        """Runs slow fits off the interface thread (None: every fit happens at once)."""
        return self.fits.runner

    @fit_runner.setter
    def fit_runner(self, runner: Runner | None) -> None:
        self.fits.runner = runner

    @property
    def background_values(self) -> int:
        return self.fits.background_values

    @background_values.setter
    def background_values(self, n: int) -> None:
        self.fits.background_values = n

    @property
    def fit_count(self) -> int:
        """How many times a column was fitted (tests and benchmark)."""
        return self.fits.fit_count

    # ------------------------------------------------------------------ fits

    def fitting(self, label: str) -> bool:
        """True while the column's current choice is being fitted in the background."""
        choice = self._choices.get(label)
        if choice is None or choice.method == "none":
            return False
        return self.fits.fitting(label, choice)

    @property
    def fits_pending(self) -> bool:
        """True while any chosen column is still being fitted in the background (then
        ``plan`` and ``problems`` would fit it on this thread: writing waits instead)."""
        return any(self.fitting(label) for label in self.chosen())

    def outcome(self, label: str) -> FitOutcome | None:
        """The column's fit (fitted or failed), or None for 'leave as is'.

        Fits at once if need be, even while a background fit of it is on its way.
        """
        if label not in self._choices or self._choices[label].method == "none":
            return None
        return self.fits.outcome(label, self._choices[label])

    def _shown(self, label: str) -> FitOutcome | None:
        """The outcome for display: None while the column is still fitting."""
        return None if self.fitting(label) else self.outcome(label)

    def fitted_column(self, label: str) -> FittedColumn | None:
        """The fitted column (None for 'leave as is', a failed fit, or while fitting)."""
        outcome = self._shown(label)
        return outcome.column if isinstance(outcome, Fitted) else None

    def fit_error(self, label: str) -> str | None:
        """Why the column's choice cannot be fitted (None when it can, or while fitting)."""
        outcome = self._shown(label)
        return outcome.message if isinstance(outcome, FitFailed) else None

    def warnings(self, label: str) -> list[str]:
        """Plain sentences about the column's fit: the error, or the fit's warnings."""
        return display.fit_warnings(label, self._shown(label), self.settings.group_by)

    def describe_fit(self, label: str) -> str:
        """The fitted parameters in one plain line, e.g. 'mean 75.5, sd 36.7 (sample sd)'."""
        if self.fitting(label):
            return "Fitting…"
        return display.describe_outcome(self.outcome(label))

    # ------------------------------------------------------------------ per-column figures

    def values(self, label: str) -> np.ndarray:
        return self.column_figures.values(label)

    def sorted_values(self, label: str) -> np.ndarray:
        return self.column_figures.sorted_values(label)

    def histogram(self, label: str) -> Histogram:
        return self.column_figures.histogram(label)

    def summary(self, label: str) -> ColumnSummary:
        return self.column_figures.summary(label)

    def suggestion(self, label: str) -> Suggestion:
        return self.column_figures.suggestion(label)

    def distinct_count(self, label: str) -> int:
        """How many different values the column holds (counted when the file was read)."""
        return self.column_figures.distinct_count(label)

    def figures(self, label: str) -> Figures:
        return summary_figures(self.summary(label))

    def scaled_edges(self, label: str) -> np.ndarray:
        """The original bins' edges in scaled units (the same edges for 'leave as is';
        NaN edges while fitting or when the fit failed)."""
        edges = self.histogram(label).edges
        outcome = self._shown(label)
        if isinstance(outcome, Fitted):
            return mapped_edges(edges, outcome.column)
        if outcome is None and not self.fitting(label):
            return edges.copy()
        return np.full_like(edges, np.nan)

    def scaled_figures(self, label: str) -> Figures | None:
        """Summary figures in scaled units (None when the fit failed or while fitting).

        For straight-line methods they follow from the original figures exactly; for the
        others (logarithm, power transforms, or one fit per group) they are computed once
        from the scaled values and kept with the fitted column.
        """
        if self.fitting(label):
            return None
        outcome = self.outcome(label)
        if outcome is None:
            return self.figures(label)
        if isinstance(outcome, FitFailed):
            return None
        return self.fits.scaled_figures(label, outcome.column)

    def scaled_figures_waiting(self, label: str) -> bool:
        """True while the scaled figures are being made in the background (after the fit
        landed); ``scaled_figures`` would make them at once."""
        if self.fitting(label):
            return False
        outcome = self.outcome(label)
        return isinstance(outcome, Fitted) and not self.fits.figures_ready(outcome.column)

    def scaled_values(self, label: str, rows: slice | np.ndarray | None = None) -> np.ndarray:
        """Scaled values of the column (or of some rows), with each row's group parameters
        (NaN while fitting or when the fit failed)."""
        x = self.values(label)
        if rows is not None:
            x = x[rows]
        outcome = self._shown(label)
        if isinstance(outcome, Fitted):
            return scale_with(x, outcome.column, self.fits.group_keys, rows)
        if outcome is None and not self.fitting(label):
            return x.copy()
        return np.full_like(x, np.nan)

    def range_info(self, label: str, low: float, high: float, *, scaled: bool) -> RangeInfo:
        """Count and bounds, in both units, of the values in [low, high] on either side."""
        return display.range_info(
            self.sorted_values(label),
            self.histogram(label).edges,
            self.scaled_edges(label),
            self.fitted_column(label),
            self.fitting(label),
            low,
            high,
            scaled=scaled,
        )
