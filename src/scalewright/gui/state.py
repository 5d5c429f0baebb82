"""The session: everything the window shows, kept apart from the widgets.

One ``Session`` holds the loaded table, the choice for every column, the fit settings,
what has been fitted, the current selection, the project path and whether there are
unsaved changes. It announces every change with psygnal signals, so that it can be built,
changed and checked in tests without a single widget.

Caching rules (so that the window stays quick at a million rows):

- a column's values (float64), its histogram (counts on original bins), its summary
  (``describe``) and suggestion (``suggest``) are computed once per loaded table; the
  window computes them in the loading job (``column_facts``), so that the first visit of
  a column does not touch its values on the interface thread; a sorted copy of the finite
  values is made the first time a range is selected;
- a fitted column is kept per (column, choice) for the current fit settings, so switching
  back to an earlier method, or undoing, costs nothing; a change of fit settings clears it;
- the scaled histogram is the same counts on ``mapped_edges``: switching a method maps
  31 edges and never re-bins the values;
- fits that search or sort (robust, Box-Cox, Yeo-Johnson) of a large column are handed to
  ``fit_runner`` when the window has attached one: the column is then ``fitting`` until
  the result lands and ``fitted`` is emitted again. Until then the display calls say
  "nothing yet" (no edges, no figures, no warnings) instead of waiting, while ``plan``
  and ``problems`` (used before writing anything) fit at once if they must; the window
  therefore keeps its writing actions off while ``fits_pending``.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from psygnal import Signal

from ..engine import (
    METHODS,
    ColumnChoice,
    ColumnSummary,
    FitSettings,
    FittedColumn,
    FittedPlan,
    Histogram,
    Suggestion,
    bars_in_range,
    column_values,
    describe,
    fit_column,
    fit_rows,
    get_method,
    group_codes,
    histogram,
    mapped_edges,
    numerics,
    suggest,
    value_key,
)
from ..errors import ScalewrightError
from ..tasks import why_not_scaled

BINS = 30

# Methods whose fit sorts or searches (robust: quantiles; Box-Cox and Yeo-Johnson: a search
# for lambda), or whose scaled figures need a pass over every scaled value (the logarithm
# and the power transforms), take tens of milliseconds at a million values: from this many
# values on they run in the background when a runner is attached, as do fits per group.
# The straight-line methods are one pass over the values and are fitted at once.
BACKGROUND_METHODS = frozenset(m.id for m in METHODS.values() if m.slow_fit)
BACKGROUND_VALUES = 200_000

# Methods whose forward map is a straight line a*x + b: their scaled summary figures follow
# exactly from the original ones, without touching the values.
AFFINE_METHODS = frozenset(m.id for m in METHODS.values() if m.linear)

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


def scale_with(
    x: np.ndarray,
    fc: FittedColumn,
    group_keys: tuple[np.ndarray, list[str]] | None,
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


def _needs_values_for_figures(fc: FittedColumn) -> bool:
    """Whether the scaled summary figures need the scaled values (not a straight line)."""
    return fc.method not in AFFINE_METHODS or bool(fc.groups)


def _fit_in_background(
    values: np.ndarray,
    choice: ColumnChoice,
    label: str,
    mask: np.ndarray | None,
    groups: tuple[np.ndarray, list[str]] | None,
) -> tuple[FittedColumn | str, Figures | None]:
    """A fit and its scaled summary figures, from arrays only (safe in a worker thread)."""
    try:
        fc = fit_column(values, choice, column=label, fit_mask=mask, group_keys=groups)
    except ScalewrightError as err:
        return str(err), None
    except Exception as err:  # shown as the column's problem, not lost in a thread
        return f"column '{label}': the fit failed ({type(err).__name__}: {err})", None
    figures = figures_of(scale_with(values, fc, groups)) if _needs_values_for_figures(fc) else None
    return fc, figures


def _line_figures(s: ColumnSummary, fc: FittedColumn) -> Figures:
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


def _choice_key(choice: ColumnChoice) -> tuple:
    return (choice.method, tuple(sorted((k, repr(v)) for k, v in choice.options.items())))


class Session:
    """The state of one window: table, choices, fit settings, fits, selection, file."""

    table_loaded = Signal()
    choices_changed = Signal(list)  # labels whose choice changed
    fitted = Signal(str)  # label refitted (or its fit failed)
    settings_changed = Signal()
    selection_changed = Signal(list)
    dirty_changed = Signal(bool)
    project_path_changed = Signal(object)

    def __init__(self, bins: int = BINS) -> None:
        self.bins = bins
        self.table: Any | None = None  # scalewright.io.Table
        self._choices: dict[str, ColumnChoice] = {}
        self._settings = FitSettings()
        self._selection: list[str] = []
        self._project_path: Path | None = None
        self._dirty = False
        self._generation = 0  # changes whenever the fits are cleared
        self._clear_caches()
        self.fit_count = 0  # how many times a column was fitted (tests and benchmark)
        # fit_runner(work, deliver): run work() off the interface thread, then call
        # deliver(result) on it. None (no window): every fit happens at once.
        self.fit_runner: Callable[[Callable[[], Any], Callable[[Any], None]], None] | None = None
        self.background_values = BACKGROUND_VALUES

    # ------------------------------------------------------------------ caches

    def _clear_caches(self) -> None:
        self._values: dict[str, np.ndarray] = {}
        self._sorted: dict[str, np.ndarray] = {}
        self._hist: dict[str, Histogram] = {}
        self._summary: dict[str, ColumnSummary] = {}
        self._suggestion: dict[str, Suggestion] = {}
        self._distinct: dict[str, int] = {}
        self._clear_fits()

    def _clear_fits(self) -> None:
        # label -> {choice key -> FittedColumn | error text}
        self._fits: dict[str, dict[tuple, FittedColumn | str]] = {}
        self._pending: set[tuple[str, tuple]] = set()  # (label, choice key) being fitted
        self._generation += 1  # results of fits started before this are dropped
        self._scaled_figures: dict[int, Figures] = {}
        self._fit_mask: np.ndarray | None = None
        self._group_keys: tuple[np.ndarray, list[str]] | None = None
        self._settings_error: str | None = None

    # ------------------------------------------------------------------ table

    @property
    def data(self) -> pd.DataFrame:
        if self.table is None:
            return pd.DataFrame()
        return self.table.data

    @property
    def labels(self) -> list[str]:
        return [str(c) for c in self.data.columns]

    @property
    def n_rows(self) -> int:
        return len(self.data)

    def header(self, label: str) -> str:
        """The column's name as written in the file."""
        if self.table is None:
            return label
        try:
            return str(self.table.headers[self.labels.index(label)])
        except (ValueError, IndexError):
            return label

    def kind(self, label: str) -> str:
        if self.table is None:
            return ""
        return str(self.table.kinds.get(label, "text"))

    def why_not_scalable(self, label: str) -> str | None:
        """None when the column can be scaled, otherwise the reason in plain words."""
        kind = self.kind(label)
        if kind == "number":
            if label == self._settings.group_by:
                return "the grouping column, so it cannot be scaled too"
            return None
        return why_not_scaled(kind)

    def scalable(self, label: str) -> bool:
        return self.why_not_scalable(label) is None

    @property
    def numeric_labels(self) -> list[str]:
        return [lab for lab in self.labels if self.kind(lab) == "number"]

    def load_table(
        self,
        table: Any,
        *,
        choices: Mapping[str, ColumnChoice] | None = None,
        settings: FitSettings | None = None,
        project_path: str | Path | None = None,
        dirty: bool = False,
        fitted: Mapping[str, FittedColumn] | None = None,
        facts: Mapping[str, ColumnFacts] | None = None,
    ) -> None:
        """Show a newly read table, optionally with a project's choices, in one update.

        Listeners hear ``table_loaded`` once (not one event per column). Choices for
        columns that are not in the table are dropped; invalid ones raise before anything
        changes.
        ``fitted`` holds saved parameters (a project's) to use instead of fitting again;
        a saved column is used only when its method and options match the choice.
        ``facts`` holds ``column_facts(table)`` when the caller computed them already.
        """
        labels = [str(c) for c in table.data.columns]
        new_choices: dict[str, ColumnChoice] = {}
        for label, choice in (choices or {}).items():
            if label in labels:
                new_choices[label] = choice.normalized()
        self.table = table
        self._clear_caches()
        self._choices = {lab: new_choices.get(lab, ColumnChoice()) for lab in labels}
        self._settings = settings or FitSettings()
        self._project_path = Path(project_path) if project_path else None
        self._selection = []
        for label, f in (facts or {}).items():
            if label in labels:
                self._values[label] = f.values
                self._hist[label] = f.histogram
                self._summary[label] = f.summary
                self._suggestion[label] = f.suggestion
        for label, n in getattr(facts, "distinct", {}).items():
            if label in labels:
                self._distinct[label] = n
        for label, fc in (fitted or {}).items():
            choice = self._choices.get(label)
            if choice is not None and (fc.method, dict(fc.options)) == (
                choice.method,
                dict(choice.options),
            ):
                self._fits.setdefault(label, {})[_choice_key(choice)] = fc
        for label in labels:
            if self._choices[label].method != "none":
                self._start_fit(label)
        self.table_loaded.emit()
        self.project_path_changed.emit(self._project_path)
        self.settings_changed.emit()
        self.set_dirty(dirty)
        first = next((lab for lab in labels if self.scalable(lab)), None)
        self.set_selection([first] if first else [])

    # ------------------------------------------------------------------ choices

    def choice(self, label: str) -> ColumnChoice:
        return self._choices.get(label, ColumnChoice())

    @property
    def choices(self) -> dict[str, ColumnChoice]:
        """Every column's choice (a copy), 'leave as is' included."""
        return dict(self._choices)

    def chosen(self) -> dict[str, ColumnChoice]:
        """The columns with a method other than 'leave as is'."""
        return {k: v for k, v in self._choices.items() if v.method != "none"}

    def set_choices(self, new: Mapping[str, ColumnChoice]) -> list[str]:
        """Set several columns' choices; refit only those that changed. Returns them.

        This is the raw setter the undo commands call; widgets go through the commands.
        """
        checked = {}
        for label, choice in new.items():  # check everything before changing anything
            if label not in self._choices:
                raise ScalewrightError(f"there is no column '{label}'")
            choice = choice.normalized()
            if choice.method != "none" and not self.scalable(label):
                raise ScalewrightError(f"'{label}' is {self.why_not_scalable(label)}")
            checked[label] = choice
        changed = []
        for label, choice in checked.items():
            if _choice_key(choice) != _choice_key(self._choices[label]):
                self._choices[label] = choice
                changed.append(label)
        for label in changed:
            if self._choices[label].method != "none":
                self._start_fit(label)
            self.fitted.emit(label)
        if changed:
            self.choices_changed.emit(changed)
            self.set_dirty(True)
        return changed

    # ------------------------------------------------------------------ settings

    @property
    def settings(self) -> FitSettings:
        return self._settings

    def set_settings(self, settings: FitSettings) -> bool:
        """Change which rows are fitted (and the grouping); every chosen column is refitted."""
        if settings == self._settings:
            return False
        if settings.group_by is not None and self.choice(settings.group_by).method != "none":
            raise ScalewrightError(
                f"'{settings.group_by}' is being scaled, so it cannot be the grouping column"
            )
        self._settings = settings
        self._clear_fits()
        chosen = list(self.chosen())
        for label in chosen:
            self._start_fit(label)
        self.settings_changed.emit()
        for label in chosen:
            self.fitted.emit(label)
        self.set_dirty(True)
        return True

    @property
    def settings_error(self) -> str | None:
        """Why the fit settings cannot be used (for example no row has the value), or None."""
        self._fit_inputs()
        return self._settings_error

    def _fit_inputs(self) -> tuple[np.ndarray | None, tuple | None]:
        if self._fit_mask is None and self._settings_error is None and self.table is not None:
            try:
                self._fit_mask = fit_rows(self.data, self._settings)
                gb = self._settings.group_by
                if gb is not None:
                    if gb not in self.data.columns:
                        raise ScalewrightError(f"the grouping column '{gb}' is not in the table")
                    self._group_keys = group_codes(self.data[gb])
            except ScalewrightError as err:
                self._settings_error = str(err)
                self._fit_mask, self._group_keys = None, None
        return self._fit_mask, self._group_keys

    def distinct_count(self, label: str) -> int:
        """How many different values the column holds (counted when the file was read)."""
        if label not in self._distinct:
            self._distinct[label] = distinct_count(self.data, label)
        return self._distinct[label]

    def values_of_fit_column(self, label: str) -> list[str]:
        """The distinct values of a column, as text, for 'Fit on rows where'."""
        if label not in self.data.columns:
            return []
        uniques = pd.unique(self.data[label].dropna())
        keys = sorted({value_key(u) for u in uniques} - {""})
        return keys

    # ------------------------------------------------------------------ fitting

    def _fit(self, label: str) -> FittedColumn | str:
        choice = self._choices[label]
        key = _choice_key(choice)
        per_label = self._fits.setdefault(label, {})
        if key in per_label:
            return per_label[key]
        mask, groups = self._fit_inputs()
        if self._settings_error is not None:
            result: FittedColumn | str = self._settings_error
        else:
            try:
                result = fit_column(
                    self.values(label), choice, column=label, fit_mask=mask, group_keys=groups
                )
                self.fit_count += 1
            except ScalewrightError as err:
                result = str(err)
        per_label[key] = result
        return result

    def _start_fit(self, label: str) -> None:
        """Fit the column's choice now, or hand a slow fit of a large column to the runner."""
        choice = self._choices[label]
        key = _choice_key(choice)
        if key in self._fits.get(label, {}) or (label, key) in self._pending:
            return
        mask, groups = self._fit_inputs()
        slow = choice.method in BACKGROUND_METHODS or groups is not None
        if (
            self.fit_runner is None
            or not slow
            or self._settings_error is not None
            or self.summary(label).count < self.background_values
        ):
            self._fit(label)
            return
        values = self.values(label)
        generation = self._generation
        self._pending.add((label, key))
        self.fit_runner(
            lambda: _fit_in_background(values, choice, label, mask, groups),
            lambda result: self._fit_landed(label, key, generation, result),
        )

    def _fit_landed(self, label: str, key: tuple, generation: int, result) -> None:
        """A background fit is back (on the interface thread)."""
        if generation != self._generation:
            return  # the table or the fit settings changed meanwhile
        self._pending.discard((label, key))
        state, figures = result
        per_label = self._fits.setdefault(label, {})
        if key not in per_label:  # not fitted meanwhile by plan() or problems()
            per_label[key] = state
            if isinstance(state, FittedColumn):
                self.fit_count += 1
                if figures is not None:
                    self._scaled_figures[id(state)] = figures
        if label in self._choices and _choice_key(self._choices[label]) == key:
            self.fitted.emit(label)

    def fitting(self, label: str) -> bool:
        """True while the column's current choice is being fitted in the background."""
        choice = self._choices.get(label)
        if choice is None or choice.method == "none":
            return False
        key = _choice_key(choice)
        return (label, key) in self._pending and key not in self._fits.get(label, {})

    @property
    def fits_pending(self) -> bool:
        """True while any chosen column is still being fitted in the background (then
        ``plan`` and ``problems`` would fit it on this thread: writing waits instead)."""
        return any(self.fitting(label) for label in self.chosen())

    def fit_state(self, label: str) -> FittedColumn | str | None:
        """The column's fitted parameters, the fit's error text, or None for 'leave as is'.

        Fits at once if need be, even while a background fit of it is on its way.
        """
        if label not in self._choices or self._choices[label].method == "none":
            return None
        return self._fit(label)

    def fitted_column(self, label: str) -> FittedColumn | None:
        """The fitted column (None for 'leave as is', a failed fit, or while fitting)."""
        if self.fitting(label):
            return None
        state = self.fit_state(label)
        return state if isinstance(state, FittedColumn) else None

    def fit_error(self, label: str) -> str | None:
        """Why the column's choice cannot be fitted (None when it can, or while fitting)."""
        if self.fitting(label):
            return None
        state = self.fit_state(label)
        return state if isinstance(state, str) else None

    def warnings(self, label: str) -> list[str]:
        """Plain sentences about the column's fit: the error, or the fit's warnings."""
        if self.fitting(label):
            return []
        state = self.fit_state(label)
        if isinstance(state, str):
            prefix = f"column '{label}': "  # the window already says which column
            return [state[len(prefix) :] if state.startswith(prefix) else state]
        if isinstance(state, FittedColumn):
            out = list(state.warnings)
            if state.groups:
                out.append(
                    f"fitted separately for each of {len(state.groups)} groups of "
                    f"'{self._settings.group_by}'"
                )
            return out
        return []

    def plan(self) -> FittedPlan:
        """The fitted plan for every chosen column (raises the first fit error)."""
        columns = {}
        for label in self.chosen():
            state = self._fit(label)
            if isinstance(state, str):
                raise ScalewrightError(state)
            columns[label] = state
        mask, _ = self._fit_inputs()
        n = int(np.count_nonzero(mask)) if mask is not None else 0
        return FittedPlan(columns, self._settings, n)

    def problems(self) -> dict[str, str]:
        """Columns whose choice cannot be fitted, with the reason."""
        # _fit, not fit_error: a column still fitting in the background is fitted now.
        return {lab: st for lab in self.chosen() if isinstance(st := self._fit(lab), str)}

    # ------------------------------------------------------------------ per-column figures

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

    def scaled_edges(self, label: str) -> np.ndarray:
        """The original bins' edges in scaled units (the same edges for 'leave as is';
        NaN edges while fitting or when the fit failed)."""
        edges = self.histogram(label).edges
        if self.fitting(label):
            return np.full_like(edges, np.nan)
        fc = self.fitted_column(label)
        if fc is None:
            return edges.copy() if self.fit_error(label) is None else np.full_like(edges, np.nan)
        return mapped_edges(edges, fc)

    def summary(self, label: str) -> ColumnSummary:
        if label not in self._summary:
            self._summary[label] = describe(self.values(label))
        return self._summary[label]

    def suggestion(self, label: str) -> Suggestion:
        if label not in self._suggestion:
            self._suggestion[label] = suggest(self.summary(label))
        return self._suggestion[label]

    def figures(self, label: str) -> Figures:
        s = self.summary(label)
        return Figures(s.count, s.missing, s.mean, s.sd, s.min, s.max, s.skewness)

    def scaled_figures(self, label: str) -> Figures | None:
        """Summary figures in scaled units (None when the fit failed or while fitting).

        For straight-line methods they follow from the original figures exactly; for the
        others (logarithm, power transforms, or one fit per group) they are computed once
        from the scaled values and kept with the fitted column (by the background fit,
        when there was one).
        """
        if self.fitting(label):
            return None
        state = self.fit_state(label)
        if isinstance(state, str):
            return None
        if state is None:
            return self.figures(label)
        cached = self._scaled_figures.get(id(state))
        if cached is not None:
            return cached
        s = self.summary(label)
        if not _needs_values_for_figures(state):
            out = _line_figures(s, state)
        else:
            out = figures_of(self.scaled_values(label))
        self._scaled_figures[id(state)] = out
        return out

    def scaled_values(self, label: str, rows: slice | np.ndarray | None = None) -> np.ndarray:
        """Scaled values of the column (or of some rows), with each row's group parameters
        (NaN while fitting or when the fit failed)."""
        x = self.values(label)
        if rows is not None:
            x = x[rows]
        if self.fitting(label):
            return np.full_like(x, np.nan)
        fc = self.fitted_column(label)
        if fc is None:
            return x.copy() if self.fit_error(label) is None else np.full_like(x, np.nan)
        return scale_with(x, fc, self._group_keys, rows)

    def range_info(self, label: str, low: float, high: float, *, scaled: bool) -> RangeInfo:
        """Count and bounds, in both units, of the values in [low, high] on either side."""
        if low > high:
            low, high = high, low
        fc = self.fitted_column(label)
        unknown = self.fitting(label)  # no scaled bounds yet
        if scaled and fc is not None:
            edges = self.scaled_edges(label)
            finite = edges[np.isfinite(edges)]
            if finite.size:
                low = float(np.clip(low, finite[0], finite[-1]))
                high = float(np.clip(high, finite[0], finite[-1]))
            slo, shi = low, high
            low, high = (float(v) for v in fc.inverse(np.array([slo, shi])))
        else:
            if fc is not None:
                slo, shi = (float(v) for v in fc.forward(np.array([low, high])))
            elif unknown:
                slo = shi = float("nan")
            else:
                slo, shi = low, high
        srt = self.sorted_values(label)
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
        first, last = bars_in_range(self.histogram(label).edges, low, high)
        return RangeInfo(low, high, slo, shi, count, first, last)

    # ------------------------------------------------------------------ selection, file

    @property
    def selection(self) -> list[str]:
        return list(self._selection)

    @property
    def current(self) -> str | None:
        """The column shown in the histograms: the first selected one."""
        return self._selection[0] if self._selection else None

    def set_selection(self, labels: Iterable[str]) -> None:
        labels = [lab for lab in labels if lab in self._choices]
        if labels != self._selection:
            self._selection = labels
            self.selection_changed.emit(list(labels))

    @property
    def project_path(self) -> Path | None:
        return self._project_path

    def set_project_path(self, path: str | Path | None) -> None:
        path = Path(path) if path else None
        if path != self._project_path:
            self._project_path = path
            self.project_path_changed.emit(path)

    @property
    def dirty(self) -> bool:
        return self._dirty

    def set_dirty(self, dirty: bool) -> None:
        if dirty != self._dirty:
            self._dirty = dirty
            self.dirty_changed.emit(dirty)

    def describe_fit(self, label: str) -> str:
        """The fitted parameters in one plain line, e.g. 'mean 75.5, sd 36.7, sample sd (...)'."""
        if self.fitting(label):
            return "Fitting…"
        state = self.fit_state(label)
        if state is None:
            return "Kept as it is."
        if isinstance(state, str):
            return state
        method = get_method(state.method)
        words = method.describe_params(state.pooled.params, digits=6)
        text = f"Fitted on {state.pooled.n:,} values: {words}"
        if state.groups:
            text += f"; one set per group ({len(state.groups)} groups)"
        return f"{method.name}. {text}."
