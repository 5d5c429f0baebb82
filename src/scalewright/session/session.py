"""The session: what one window holds, kept apart from the widgets.

A ``Session`` holds the loaded table, the choice for every column, the fit settings, the
selection, the project path, the unsaved flag and where each column's parameters came
from. It announces every change with psygnal signals, so that it can be built, changed
and checked in tests without a single widget. The column figures (``ColumnFigures``) and
the fits (``FitStore``) are kept by their own objects, and the per-column reads
(``ColumnReads``, columns.py) only put the column's current choice to them.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

import pandas as pd
from psygnal import Signal

from ..engine import (
    ColumnChoice,
    FitSettings,
    FittedColumn,
    FittedPlan,
    value_key,
)
from ..errors import ScalewrightError
from ..project import FittedOn
from ..tasks import why_not_scaled
from .columns import ColumnReads
from .figures import BINS, ColumnFacts, ColumnFigures
from .fits import FitFailed, FitStore, Fitted, choice_key


class Session(ColumnReads):
    """The state of one window: table, choices, fit settings, selection, file, provenance.

    The per-column reads (figures, fit outcome, scaled values) come from ``ColumnReads``.
    """

    table_loaded = Signal()
    choices_changed = Signal(list)  # labels whose choice changed
    fitted = Signal(str)  # label refitted (or its fit failed)
    scaled_figures_ready = Signal(str)  # label's scaled figures, made in the background
    settings_changed = Signal()
    selection_changed = Signal(list)
    dirty_changed = Signal(bool)
    project_path_changed = Signal(object)

    def __init__(self, bins: int = BINS) -> None:
        self.bins = bins
        self.table: Any | None = None  # scalewright.io.Table
        self._labels_of: Any = None  # the columns index _label_positions was made from
        self.sample: Any = None  # large_file.SampleInfo when the table is a file's sample
        self._label_positions: dict[str, int] = {}
        self._choices: dict[str, ColumnChoice] = {}
        self._selection: list[str] = []
        self._project_path: Path | None = None
        self._dirty = False
        # label -> (saved parameters in use, what they were fitted on); see fitted_on()
        self._kept: dict[str, tuple[FittedColumn, FittedOn]] = {}
        self.column_figures = ColumnFigures(pd.DataFrame(), bins)
        self.fits = FitStore()
        self.fits.on_landed = self._fit_landed
        self.fits.on_figures = self.scaled_figures_ready.emit

    # ------------------------------------------------------------------ table

    @property
    def data(self) -> pd.DataFrame:
        if self.table is None:
            return pd.DataFrame()
        return self.table.data

    @property
    def labels(self) -> list[str]:
        return list(self._label_index())

    def _label_index(self) -> dict[str, int]:
        """label -> position, made once per columns index (the column list asks for every
        row's header on each repaint; listing an Arrow-backed index each time was slow)."""
        columns = self.data.columns
        if self._labels_of is not columns:
            self._labels_of = columns
            self._label_positions = {}
            for i, c in enumerate(columns):
                self._label_positions.setdefault(str(c), i)
        return self._label_positions

    @property
    def n_rows(self) -> int:
        return len(self.data)

    def header(self, label: str) -> str:
        """The column's name as written in the file."""
        if self.table is None:
            return label
        try:
            return str(self.table.headers[self._label_index()[label]])
        except (KeyError, IndexError):
            return label

    def kind(self, label: str) -> str:
        if self.table is None:
            return ""
        return str(self.table.kinds.get(label, "text"))

    def why_not_scalable(self, label: str) -> str | None:
        """None when the column can be scaled, otherwise the reason in plain words."""
        kind = self.kind(label)
        if kind == "number":
            if label == self.settings.group_by:
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
        fitted_on: Mapping[str, FittedOn] | None = None,
        facts: Mapping[str, ColumnFacts] | None = None,
        sample: Any = None,
    ) -> None:
        """Show a newly read table, optionally with a project's choices, in one update.

        ``sample`` (a ``large_file.SampleInfo``) says the table is a sample of a file too
        large to hold whole: every fit is then made on the whole file.

        Listeners hear ``table_loaded`` once (not one event per column). Choices for
        columns that are not in the table are dropped; invalid ones raise before anything
        changes.
        ``fitted`` holds saved parameters (a project's) to use instead of fitting again;
        a saved column is used only when its method and options match the choice.
        ``fitted_on`` says what each saved column was fitted on, which saving records
        for as long as its parameters stay in use.
        ``facts`` holds ``column_facts(table)`` when the caller computed them already.
        """
        labels = [str(c) for c in table.data.columns]
        new_choices: dict[str, ColumnChoice] = {}
        for label, choice in (choices or {}).items():
            if label in labels:
                new_choices[label] = choice.normalized()
        self.table = table
        self._choices = {lab: new_choices.get(lab, ColumnChoice()) for lab in labels}
        self._project_path = Path(project_path) if project_path else None
        self._selection = []
        self.sample = sample
        self.fits.whole_file_fit = None if sample is None else sample.fit_with_rows
        self.fits.whole_file_rows = None
        self.column_figures = ColumnFigures(table.data, self.bins, facts)
        self.fits.reset(self.column_figures, table.data, settings or FitSettings())
        self._kept = {}
        for label, fc in (fitted or {}).items():
            choice = self._choices.get(label)
            if choice is not None and (fc.method, dict(fc.options)) == (
                choice.method,
                dict(choice.options),
            ):
                self.fits.keep(label, choice, fc)
                if fitted_on is not None and label in fitted_on:
                    self._kept[label] = (fc, fitted_on[label])
        for label in labels:
            if self._choices[label].method != "none":
                self.fits.start(label, self._choices[label])
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
            if choice_key(choice) != choice_key(self._choices[label]):
                self._choices[label] = choice
                changed.append(label)
        for label in changed:
            if self._choices[label].method != "none":
                self.fits.start(label, self._choices[label])
            self.fitted.emit(label)
        if changed:
            self.choices_changed.emit(changed)
            self.set_dirty(True)
        return changed

    # ------------------------------------------------------------------ settings

    def set_settings(self, settings: FitSettings) -> bool:
        """Change which rows are fitted (and the grouping); every chosen column is refitted."""
        if settings == self.settings:
            return False
        if settings.group_by is not None and self.choice(settings.group_by).method != "none":
            raise ScalewrightError(
                f"'{settings.group_by}' is being scaled, so it cannot be the grouping column"
            )
        self.fits.reset(self.column_figures, self.data, settings)
        self._kept = {}  # the saved parameters were fitted under the old settings
        chosen = self.chosen()
        for label, choice in chosen.items():
            self.fits.start(label, choice)
        self.settings_changed.emit()
        for label in chosen:
            self.fitted.emit(label)
        self.set_dirty(True)
        return True

    @property
    def settings_error(self) -> str | None:
        """Why the fit settings cannot be used (for example no row has the value), or None."""
        return self.fits.settings_error if self.table is not None else None

    def values_of_fit_column(self, label: str) -> list[str]:
        """The distinct values of a column, as text, for 'Fit on rows where'."""
        if label not in self.data.columns:
            return []
        uniques = pd.unique(self.data[label].dropna())
        return sorted({value_key(u) for u in uniques} - {""})

    # ------------------------------------------------------------------ fits

    def _fit_landed(self, label: str, key: tuple) -> None:
        if label in self._choices and choice_key(self._choices[label]) == key:
            self.fitted.emit(label)

    def fitted_on(self, label: str) -> FittedOn | None:
        """What the column's parameters were fitted on when they were kept from a saved
        project (None: fitted now on this table, or not fitted)."""
        kept = self._kept.get(label)
        if kept is None or self.fitting(label):
            return None
        outcome = self.outcome(label)
        return kept[1] if isinstance(outcome, Fitted) and outcome.column is kept[0] else None

    def plan(self) -> FittedPlan:
        """The fitted plan for every chosen column (raises the first fit error)."""
        columns = {}
        for label in self.chosen():
            outcome = self.outcome(label)
            if isinstance(outcome, FitFailed):
                raise ScalewrightError(outcome.message)
            columns[label] = outcome.column
        return FittedPlan(columns, self.settings, self.fits.rows_fitted())

    def problems(self) -> dict[str, str]:
        """Columns whose choice cannot be fitted, with the reason."""
        # outcome, not fit_error: a column still fitting in the background is fitted now.
        return {
            lab: out.message
            for lab in self.chosen()
            if isinstance(out := self.outcome(lab), FitFailed)
        }

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
