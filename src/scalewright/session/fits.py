"""The fit store: every column's fit for the current table and fit settings.

A fit is kept per (column, choice), so switching back to an earlier method, or undoing,
costs nothing; a change of table or fit settings clears them all. Asking for a fit gives
a typed outcome: ``Fitted`` (the parameters) or ``FitFailed`` (the message to show).

Fits that search or sort (robust, Box-Cox, Yeo-Johnson) of a large column are handed to
``runner`` when the window has attached one: the column is then ``fitting`` until the
result lands and ``on_landed`` is called. Until then the display calls say "nothing yet"
instead of waiting, while ``outcome`` (used before writing anything) fits at once.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..engine import (
    ColumnChoice,
    ColumnSummary,
    FitSettings,
    FittedColumn,
    fit_column,
    fit_rows,
    get_method,
    group_codes,
)
from ..errors import ScalewrightError
from .figures import ColumnFigures, Figures, figures_of

# ---------------------------------------------------------------------------------------
# Method facts the session needs, read from each method's own description (slow_fit,
# linear); these two sets are defined here and nowhere else.
# ---------------------------------------------------------------------------------------

# Slow fits (``Method.slow_fit``: sorting, a search for lambda, or scaled figures that need
# every scaled value) take tens of milliseconds at a million values: from this many values
# on they run in the background when a runner is attached, as do fits per group. The
# straight-line methods (``Method.linear``) are one pass and are fitted at once; their
# scaled summary figures follow exactly from the original ones.

BACKGROUND_VALUES = 200_000

GroupKeys = tuple[np.ndarray, list[str]]
# runner(work, deliver): run work() off the interface thread, then deliver(result) on it.
Runner = Callable[[Callable[[], Any], Callable[[Any], None]], None]


@dataclass(frozen=True)
class Fitted:
    """A column's choice, fitted."""

    column: FittedColumn


@dataclass(frozen=True)
class FitFailed:
    """A column's choice could not be fitted; ``message`` says why, for the user."""

    message: str


FitOutcome = Fitted | FitFailed


def choice_key(choice: ColumnChoice) -> tuple:
    """What identifies a choice among a column's fits (method and options)."""
    return (choice.method, tuple(sorted((k, repr(v)) for k, v in choice.options.items())))


def scale_with(
    x: np.ndarray,
    fc: FittedColumn,
    group_keys: GroupKeys | None,
    rows: slice | np.ndarray | None = None,
) -> np.ndarray:
    """x (the column's values, or the given rows of it) scaled with each row's group's
    parameters; rows of groups without their own parameters use the pooled ones."""
    if not fc.groups or group_keys is None:
        return fc.forward(x)
    codes, keys = group_keys
    if rows is not None:
        codes = codes[rows]
    out = np.full(x.shape, np.nan)
    pooled = np.ones(x.shape, dtype=bool)
    for code in np.unique(codes):
        if code < 0:
            continue
        ps = fc.groups.get(keys[code])
        if ps is None:
            continue
        here = codes == code
        out[here] = fc.forward(x[here], ps)
        pooled &= ~here
    if pooled.any():
        out[pooled] = fc.forward(x[pooled])
    return out


def needs_values_for_figures(fc: FittedColumn) -> bool:
    """Whether the scaled summary figures need the scaled values (not a straight line)."""
    return not get_method(fc.method).linear or bool(fc.groups)


def line_figures(s: ColumnSummary, fc: FittedColumn) -> Figures:
    """Scaled figures of a straight-line method, from the original ones.

    The map is evaluated at the figures themselves and the slope taken across the values'
    own range: at values near 1e16, f(1) - f(0) would lose every digit to rounding.
    """
    if s.count == 0:
        nan = float("nan")
        return Figures(0, s.missing, nan, nan, nan, nan, nan)
    lo, mean, hi = (float(v) for v in fc.forward(np.array([s.min, s.mean, s.max])))
    slope = (hi - lo) / (s.max - s.min) if s.max > s.min else 1.0
    skew = s.skewness if slope > 0 else (float("nan") if slope == 0 else -s.skewness)
    return Figures(s.count, s.missing, mean, abs(slope) * s.sd, lo, hi, skew)


def _fit(
    values: np.ndarray,
    choice: ColumnChoice,
    label: str,
    mask: np.ndarray | None,
    groups: GroupKeys | None,
) -> FitOutcome:
    try:
        return Fitted(fit_column(values, choice, column=label, fit_mask=mask, group_keys=groups))
    except ScalewrightError as err:
        return FitFailed(str(err))


def _fit_in_background(
    values: np.ndarray,
    choice: ColumnChoice,
    label: str,
    mask: np.ndarray | None,
    groups: GroupKeys | None,
) -> FitOutcome:
    """A fit, from arrays only (safe in a worker thread)."""
    try:
        return _fit(values, choice, label, mask, groups)
    except Exception as err:  # shown as the column's problem, not lost in a thread
        return FitFailed(f"column '{label}': the fit failed ({type(err).__name__}: {err})")


class FitStore:
    """Fits of one table under one set of fit settings, made at once or in the background."""

    def __init__(self) -> None:
        self.fit_count = 0  # how many times a column was fitted (tests and benchmark)
        self.runner: Runner | None = None  # None (no window): every fit happens at once
        self.background_values = BACKGROUND_VALUES
        # Set for a file too large to hold whole (a sample is loaded): every fit is made
        # on the whole file by this call (label, choice, settings) -> (FittedColumn, rows
        # fitted), in the background when a runner is attached.
        self.whole_file_fit: Callable[..., tuple[FittedColumn, int]] | None = None
        self.whole_file_rows: int | None = None
        # Called with the label when a background fit lands (on the interface thread).
        self.on_landed: Callable[[str, tuple], None] = lambda label, key: None
        # Called with the label when scaled figures made in the background land.
        self.on_figures: Callable[[str], None] = lambda label: None
        self._generation = 0
        self.reset(None, pd.DataFrame(), FitSettings())

    def reset(self, figures: ColumnFigures | None, data: pd.DataFrame, settings: FitSettings):
        """Forget every fit: a new table or new fit settings. Background fits started
        before this are dropped when they land."""
        self._figures = figures
        self._data = data
        self.settings = settings
        self._fits: dict[str, dict[tuple, FitOutcome]] = {}  # label -> {choice key -> outcome}
        self._pending: set[tuple[str, tuple]] = set()  # (label, choice key) being fitted
        self._generation += 1
        self._scaled_figures: dict[int, Figures] = {}
        self._figures_pending: set[int] = set()  # id(fitted column) of figures on their way
        self._inputs_ready = False
        self._fit_mask: np.ndarray | None = None
        self._group_keys: GroupKeys | None = None
        self._settings_error: str | None = None

    # ------------------------------------------------------------------ fit inputs

    def _fit_inputs(self) -> tuple[np.ndarray | None, GroupKeys | None]:
        if not self._inputs_ready and self._figures is not None:
            self._inputs_ready = True
            try:
                self._fit_mask = fit_rows(self._data, self.settings)
                gb = self.settings.group_by
                if gb is not None:
                    if gb not in self._data.columns:
                        raise ScalewrightError(f"the grouping column '{gb}' is not in the table")
                    self._group_keys = group_codes(self._data[gb])
            except ScalewrightError as err:
                self._settings_error = str(err)
                self._fit_mask, self._group_keys = None, None
        return self._fit_mask, self._group_keys

    @property
    def settings_error(self) -> str | None:
        """Why the fit settings cannot be used (for example no row has the value), or None."""
        self._fit_inputs()
        return self._settings_error

    @property
    def group_keys(self) -> GroupKeys | None:
        return self._fit_inputs()[1]

    def rows_fitted(self) -> int:
        """How many rows the fit settings choose (in the whole file, for a sample)."""
        if self.whole_file_fit is not None and self.whole_file_rows is not None:
            return self.whole_file_rows
        mask, _ = self._fit_inputs()
        return int(np.count_nonzero(mask)) if mask is not None else 0

    # ------------------------------------------------------------------ fitting

    def keep(self, label: str, choice: ColumnChoice, fc: FittedColumn) -> None:
        """Use saved parameters for this choice instead of fitting it."""
        self._fits.setdefault(label, {})[choice_key(choice)] = Fitted(fc)

    def outcome(self, label: str, choice: ColumnChoice) -> FitOutcome:
        """The choice fitted: at once if need be, even while a background fit is on its way."""
        key = choice_key(choice)
        per_label = self._fits.setdefault(label, {})
        if key in per_label:
            return per_label[key]
        mask, groups = self._fit_inputs()
        if self._settings_error is not None:
            result: FitOutcome = FitFailed(self._settings_error)
        elif self.whole_file_fit is not None:
            result = self._whole_file_outcome(label, choice, self.settings)
            if isinstance(result, Fitted):
                self.fit_count += 1
        else:
            assert self._figures is not None
            result = _fit(self._figures.values(label), choice, label, mask, groups)
            if isinstance(result, Fitted):
                self.fit_count += 1
        per_label[key] = result
        return result

    def _whole_file_outcome(
        self, label: str, choice: ColumnChoice, settings: FitSettings
    ) -> FitOutcome:
        """The choice fitted on the whole file (safe in a worker thread)."""
        assert self.whole_file_fit is not None
        try:
            fc, rows = self.whole_file_fit(label, choice, settings)
        except ScalewrightError as err:
            return FitFailed(str(err))
        except Exception as err:  # shown as the column's problem, not lost in a thread
            return FitFailed(f"column '{label}': the fit failed ({type(err).__name__}: {err})")
        self.whole_file_rows = rows
        return Fitted(fc)

    def start(self, label: str, choice: ColumnChoice) -> None:
        """Fit the choice now, or hand a slow fit of a large column to the runner."""
        key = choice_key(choice)
        if key in self._fits.get(label, {}) or (label, key) in self._pending:
            return
        mask, groups = self._fit_inputs()
        slow = get_method(choice.method).slow_fit or groups is not None
        assert self._figures is not None
        whole_file = self.whole_file_fit is not None and self._settings_error is None
        if whole_file and self.runner is not None:  # every fit reads the whole file
            settings, generation = self.settings, self._generation
            self._pending.add((label, key))
            self.runner(
                lambda: self._whole_file_outcome(label, choice, settings),
                lambda result: self._landed(label, key, generation, result),
            )
            return
        if (
            self.runner is None
            or not slow
            or self._settings_error is not None
            or self._figures.summary(label).count < self.background_values
        ):
            self.outcome(label, choice)
            return
        values = self._figures.values(label)
        generation = self._generation
        self._pending.add((label, key))
        self.runner(
            lambda: _fit_in_background(values, choice, label, mask, groups),
            lambda result: self._landed(label, key, generation, result),
        )

    def _landed(self, label: str, key: tuple, generation: int, result) -> None:
        """A background fit is back (on the interface thread)."""
        if generation != self._generation:
            return  # the table or the fit settings changed meanwhile
        self._pending.discard((label, key))
        outcome = result
        per_label = self._fits.setdefault(label, {})
        if key not in per_label:  # not fitted meanwhile by outcome()
            per_label[key] = outcome
            if isinstance(outcome, Fitted):
                self.fit_count += 1
                self._figures_in_background(label, outcome.column)
        self.on_landed(label, key)

    def _figures_in_background(self, label: str, fc: FittedColumn) -> None:
        """Scaled figures that need every scaled value are made after the fit has landed,
        so that the scaled bars (which need only the fit) are drawn first."""
        if self.runner is None or not needs_values_for_figures(fc):
            return
        assert self._figures is not None
        values, groups, generation = self._figures.values(label), self.group_keys, self._generation
        self._figures_pending.add(id(fc))

        def deliver(figures: Figures) -> None:
            self._figures_pending.discard(id(fc))
            if generation == self._generation and id(fc) not in self._scaled_figures:
                self._scaled_figures[id(fc)] = figures
                self.on_figures(label)

        self.runner(lambda: figures_of(scale_with(values, fc, groups)), deliver)

    def figures_ready(self, fc: FittedColumn) -> bool:
        """False while the column's scaled figures are being made in the background."""
        return id(fc) in self._scaled_figures or id(fc) not in self._figures_pending

    def fitting(self, label: str, choice: ColumnChoice) -> bool:
        """True while this choice of the column is being fitted in the background."""
        key = choice_key(choice)
        return (label, key) in self._pending and key not in self._fits.get(label, {})

    # ------------------------------------------------------------------ scaled figures

    def scaled_figures(self, label: str, fc: FittedColumn) -> Figures:
        """Summary figures in scaled units, computed once per fitted column (by the
        background fit, when there was one)."""
        cached = self._scaled_figures.get(id(fc))
        if cached is not None:
            return cached
        assert self._figures is not None
        if not needs_values_for_figures(fc):
            out = line_figures(self._figures.summary(label), fc)
        else:
            out = figures_of(scale_with(self._figures.values(label), fc, self.group_keys))
        self._scaled_figures[id(fc)] = out
        return out
