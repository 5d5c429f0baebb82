"""The dialog that scales another file with the parameters saved in a project.

Nothing is fitted again: the new file is scaled with exactly the parameters of the
project. Before anything is written the dialog lists, for each fitted column, how many
values of the new file fall below or above the range the parameters were fitted on (and
whether they will be clipped into it), groups that were not seen when fitting, and
columns the new file lacks. The output is written in the background with a progress bar
and a Cancel button; a cancelled or failed write leaves no file behind.

The file-picking rows and the background-write panel defined here are shared with the
restore dialog.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFileDialog,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from .. import engine, tasks
from .. import io as swio
from ..errors import ScalewrightError
from ..io.options import WORKBOOK_SUFFIXES
from . import jobs, theme
from .errors import details_of, plain_message
from .import_dialog import ERROR_STYLE, MUTED_STYLE, message_label

READ_FILTER = "Data files (*.csv *.tsv *.txt *.xlsx *.xlsm *.xls *.ods);;All files (*)"
WRITE_FILTER = "Excel workbook (*.xlsx);;Comma-separated text (*.csv);;Tab-separated text (*.tsv)"
# A darker shade of the theme's bluish green, so the text reads well on the light window.
OK_STYLE = "color: #00795a; font-weight: 600;"


def same_file(a: str | Path | None, b: str | Path | None) -> bool:
    """True when both paths name the same file (resolved; existing files compared by inode)."""
    if not a or not b:
        return False
    pa, pb = Path(a).expanduser(), Path(b).expanduser()
    try:
        if pa.exists() and pb.exists():
            return pa.samefile(pb)
    except OSError:
        pass
    return pa.resolve() == pb.resolve()


def plural(n: int, word: str, words: str | None = None) -> str:
    return f"{n:,} {word if n == 1 else (words or word + 's')}"


# --------------------------------------------------------------------------- shared parts


class FileRow(QWidget):
    """A path field with a Choose button, and a sheet picker shown for workbooks.

    ``changed`` is emitted when the user picks a file or a sheet (or presses Enter in the
    field); ``path()`` and ``sheet()`` give the current choice.
    """

    changed = Signal()

    def __init__(self, caption: str, tooltip: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._caption = caption
        self.edit = QLineEdit()
        self.edit.setPlaceholderText("No file chosen yet")
        self.edit.setToolTip(tooltip)
        self.edit.setClearButtonEnabled(True)
        self.edit.editingFinished.connect(self._edited)
        self.button = QPushButton("Choose…")
        self.button.setToolTip(tooltip)
        self.button.setAutoDefault(False)
        self.button.clicked.connect(self.browse)
        self.sheet_label = QLabel("Sheet:")
        self.sheet_box = QComboBox()
        self.sheet_box.setToolTip("The sheet of the workbook that holds the table.")
        self.sheet_box.setMinimumContentsLength(12)
        self.sheet_box.activated.connect(lambda _i: self.changed.emit())
        layout = QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(theme.SPACING)
        layout.addWidget(self.edit, 1)
        layout.addWidget(self.button)
        layout.addWidget(self.sheet_label)
        layout.addWidget(self.sheet_box)
        self._last = ""
        self._show_sheets([])

    def path(self) -> Path | None:
        text = self.edit.text().strip()
        return Path(text).expanduser() if text else None

    def sheet(self) -> str | None:
        return self.sheet_box.currentData() if self.sheet_box.isVisibleTo(self) else None

    def set_path(self, path: str | Path | None, *, sheet: str | None = None) -> None:
        """Choose a file as the user would (the sheet list is filled for workbooks)."""
        self.edit.setText(str(path) if path else "")
        self._last = self.edit.text()
        self._fill_sheets(sheet)
        self.changed.emit()

    def set_sheet(self, sheet: str) -> None:
        i = self.sheet_box.findData(sheet)
        if i < 0:
            raise KeyError(sheet)
        self.sheet_box.setCurrentIndex(i)
        self.changed.emit()

    def browse(self) -> None:
        start = str(self.path().parent) if self.path() else ""
        name, _ = QFileDialog.getOpenFileName(self, self._caption, start, READ_FILTER)
        if name:
            self.set_path(name)

    def _edited(self) -> None:
        if self.edit.text() != self._last:
            self.set_path(self.edit.text().strip() or None)

    def _fill_sheets(self, wanted: str | None) -> None:
        path = self.path()
        sheets: list[str] = []
        if path is not None and path.suffix.lower() in WORKBOOK_SUFFIXES and path.is_file():
            try:
                sheets = list(swio.list_sheets(path))
            except Exception:  # the read that follows reports the problem
                sheets = []
        self._show_sheets(sheets)
        if wanted is not None and self.sheet_box.findData(wanted) >= 0:
            self.sheet_box.setCurrentIndex(self.sheet_box.findData(wanted))

    def _show_sheets(self, sheets: list[str]) -> None:
        self.sheet_box.clear()
        for name in sheets:
            self.sheet_box.addItem(name, name)
        visible = bool(sheets)
        self.sheet_label.setVisible(visible)
        self.sheet_box.setVisible(visible)


class OutputRow(QWidget):
    """Where to save: a path field with a Choose button and an inline check of the name.

    ``problem(forbidden)`` returns the reason the path cannot be used (or "").
    """

    changed = Signal()

    def __init__(self, tooltip: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.edit = QLineEdit()
        self.edit.setPlaceholderText("Where to save, for example harvest_2026_scaled.xlsx")
        self.edit.setToolTip(tooltip)
        self.edit.setClearButtonEnabled(True)
        self.edit.textChanged.connect(lambda _t: self.changed.emit())
        self.button = QPushButton("Choose…")
        self.button.setToolTip(tooltip)
        self.button.setAutoDefault(False)
        self.button.clicked.connect(self.browse)
        layout = QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(theme.SPACING)
        layout.addWidget(self.edit, 1)
        layout.addWidget(self.button)
        self.suggested_folder: Path | None = None

    def path(self) -> Path | None:
        text = self.edit.text().strip()
        return Path(text).expanduser() if text else None

    def set_path(self, path: str | Path | None) -> None:
        self.edit.setText(str(path) if path else "")

    def browse(self) -> None:
        start = str(self.path() or self.suggested_folder or "")
        name, chosen = QFileDialog.getSaveFileName(self, "Save as", start, WRITE_FILTER)
        if not name:
            return
        path = Path(name)
        if path.suffix.lower() not in swio.SUPPORTED_WRITE:
            path = path.with_suffix(".tsv" if "*.tsv" in chosen else
                                    ".csv" if "*.csv" in chosen else ".xlsx")
        self.set_path(path)

    def problem(self, forbidden: list[tuple[Path | None, str]]) -> str:
        """Why the current path cannot be written ("" when it can)."""
        path = self.path()
        if path is None:
            return ""
        if path.suffix.lower() not in swio.SUPPORTED_WRITE:
            return "Choose a name ending in .xlsx, .csv or .tsv; the ending sets the format."
        for other, why in forbidden:
            if other is not None and same_file(path, other):
                return why
        if path.exists() and path.is_dir():
            return "This is a folder; add a file name."
        if not path.parent.is_dir():
            return f"The folder {path.parent} does not exist."
        return ""


class WritingDialog(QDialog):
    """Base of the apply and restore dialogs: long reads and the final write run as
    background jobs, shown in the dialog with a progress bar and a Cancel button.

    Subclasses call ``start_write(title, func, target)`` where ``func(progress, cancelled)``
    does the whole write and returns the column reports; ``_write_done(reports)`` is then
    called on the interface thread.
    """

    fileWritten = Signal(object, object)  # (output path, list[ColumnReport])

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._written: Path | None = None
        self._reports: list[engine.ColumnReport] = []
        self._close_when_idle = False
        self.runner = jobs.JobRunner(self)
        self.runner.busy_changed.connect(self._on_busy)
        # Return in a path field must never press Cancel (which takes the focus, and with
        # it the default, when the fields are disabled at the start of a job).
        self.runner.cancel_button.setAutoDefault(False)
        self.result_label = QLabel()
        self.result_label.setObjectName("result")
        self.result_label.setWordWrap(True)
        self.result_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.result_label.hide()

    # ------------------------------------------------------------------ public API

    def is_busy(self) -> bool:
        """True while a file is being read or written."""
        return self.runner.busy

    def written_path(self) -> Path | None:
        """The file written by this dialog, or None."""
        return self._written

    def reports(self) -> list[engine.ColumnReport]:
        """The per-column reports of the last successful write."""
        return list(self._reports)

    def cancel_job(self) -> None:
        self.runner.cancel()

    def result_text(self) -> str:
        return self.result_label.text() if self.result_label.isVisibleTo(self) else ""

    # ------------------------------------------------------------------ for subclasses

    def run_job(self, title: str, func, on_done, on_error=None, on_cancel=None):
        return self.runner.run(title, func, on_done, on_error or self._job_failed,
                               on_cancel or (lambda: None))

    def start_write(self, title: str, func: Callable[[Callable, Callable], Any],
                    target: Path) -> None:
        self.result_label.hide()
        finished: dict[str, Any] = {}

        def job(progress, cancelled):
            finished["reports"] = func(progress, cancelled)
            return finished["reports"]

        def done(reports) -> None:
            self._written = target
            self._reports = list(reports or [])
            self._write_done(self._reports)
            self.fileWritten.emit(target, self.reports())

        def stopped() -> None:
            if "reports" in finished:  # Cancel came after the file was complete
                done(finished["reports"])
            else:
                self.show_result("Stopped. No file was written.", MUTED_STYLE)

        def failed(err: BaseException) -> None:
            self.show_result(f"⚠  Nothing was written. {plain_message(err)}", ERROR_STYLE,
                             details="" if isinstance(err, ScalewrightError) else details_of(err))

        self.run_job(title, job, done, failed, stopped)

    def _job_failed(self, err: BaseException) -> None:
        self.show_result(f"⚠  {plain_message(err)}", ERROR_STYLE,
                         details="" if isinstance(err, ScalewrightError) else details_of(err))

    def show_result(self, text: str, style: str, *, details: str = "") -> None:
        self.result_label.setText(text)
        self.result_label.setStyleSheet(style)
        self.result_label.setToolTip(details or text)
        self.result_label.show()

    def _on_busy(self, busy: bool) -> None:
        self._set_busy(busy)
        if not busy and self._close_when_idle:
            # busy_changed comes before the job's own outcome: close after that has run.
            self._close_when_idle = False
            QTimer.singleShot(0, self.reject)

    def _set_busy(self, busy: bool) -> None:
        """Enable or disable the controls while a job runs (subclasses extend)."""

    def _write_done(self, reports) -> None:
        """Show the summary of a successful write (subclasses override)."""

    # ------------------------------------------------------------------ closing

    def reject(self) -> None:
        if self.runner.busy:  # Escape or Close while working: stop first, close after
            self._close_when_idle = True
            self.cancel_job()
            return
        if self._written is not None:
            self.accept()
            return
        super().reject()

    def closeEvent(self, event) -> None:
        if self.runner.busy:
            self._close_when_idle = True
            self.cancel_job()
            event.ignore()
            return
        super().closeEvent(event)


# --------------------------------------------------------------------------- the dialog

REPORT_COLUMNS = (
    ("Column", "A column the project scales."),
    ("Method", "How the project scales this column; hover for the saved parameters."),
    ("Values", "Values in the new file (blanks not counted)."),
    ("Below range", "Values smaller than the smallest value the parameters were fitted on."),
    ("Above range", "Values larger than the largest value the parameters were fitted on."),
    ("Outside the range", "What happens to the values outside the fitted range."),
    ("Notes", "Groups not seen when fitting, missing columns and other remarks."),
)


class ApplyDialog(WritingDialog):
    """Scale another file with a project's saved parameters.

    ``exec()`` returns Accepted when a file was written (``written_path()`` and
    ``reports()`` then tell what); ``fileWritten(path, reports)`` is emitted on success.
    ``set_data_file``, ``set_clip``, ``set_output`` and ``save`` drive it from code the way
    the controls do.
    """

    previewReady = Signal()  # the per-column list was rebuilt for a newly chosen file

    def __init__(self, project, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._project = project
        self._table: swio.Table | None = None
        self._preview_reports: dict[str, engine.ColumnReport] = {}
        self._missing: list[str] = []
        self._problems: dict[str, str] = {}
        self._read_error = ""
        self.setWindowTitle("Apply saved scaling to another file")
        self.setObjectName("applyDialog")
        self.resize(900, 640)
        self._build()
        self._show_report()
        self._update_state()

    # ------------------------------------------------------------------ building

    def _build(self) -> None:
        plan = self._project.plan
        source = Path(self._project.source).name if self._project.source else "the original file"
        n = len(plan.columns) if plan is not None else 0
        intro = QLabel(
            "<span style='font-size:12pt'><b>Apply saved scaling to another file</b></span><br>"
            f"The new file is scaled with the parameters saved in this project "
            f"({plural(n, 'column')}, fitted on <b>{_html(source)}</b>). Nothing is fitted "
            "again, so its values land on exactly the same scale."
        )
        intro.setWordWrap(True)

        self.data_row = FileRow(
            "Choose the file to scale",
            "The new data file. It needs every column the project scales, with the same names.",
        )
        self.data_row.changed.connect(self._load_data)
        self.data_error = message_label()
        self.data_error.setObjectName("dataError")
        data_box = QGroupBox("File to scale")
        data_layout = QVBoxLayout(data_box)
        data_layout.addWidget(self.data_row)
        data_layout.addWidget(self.data_error)

        self.table = QTableWidget(0, len(REPORT_COLUMNS))
        self.table.setObjectName("report")
        self.table.setToolTip("What will happen to each column the project scales.")
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.table.setAlternatingRowColors(True)
        self.table.setWordWrap(False)
        self.table.verticalHeader().hide()
        for i, (title, tip) in enumerate(REPORT_COLUMNS):
            item = QTableWidgetItem(title)
            item.setToolTip(tip)
            self.table.setHorizontalHeaderItem(i, item)
        header = self.table.horizontalHeader()
        header.setDefaultAlignment(Qt.AlignmentFlag.AlignLeft)
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setStretchLastSection(True)

        self.clip_check = QCheckBox("Clip values into the fitted range")
        self.clip_check.setObjectName("clip")
        self.clip_check.setToolTip(
            "On: a value below the fitted range is raised to its lowest value and one above "
            "is lowered to its highest, before scaling (so min-max results stay inside the "
            "target range). Off: such values are scaled as they are and land outside the "
            "usual scaled range."
        )
        self.clip_check.toggled.connect(self._show_report)
        self.summary_label = QLabel()
        self.summary_label.setObjectName("summary")
        self.summary_label.setWordWrap(True)

        report_box = QGroupBox("What will happen")
        report_layout = QVBoxLayout(report_box)
        report_layout.addWidget(self.summary_label)
        report_layout.addWidget(self.table, 1)
        report_layout.addWidget(self.clip_check)

        self.output_row = OutputRow(
            "The file to write: .xlsx for a workbook (with a sheet of the parameters, from "
            "which original units can be restored later), .csv or .tsv for plain text. "
            "It can never be the file being scaled."
        )
        self.output_row.changed.connect(self._update_state)
        self.output_error = message_label()
        self.output_error.setObjectName("outputError")
        out_box = QGroupBox("Save the scaled file as")
        out_layout = QVBoxLayout(out_box)
        out_layout.addWidget(self.output_row)
        out_layout.addWidget(self.output_error)

        self.buttons = QDialogButtonBox()
        self.save_button = self.buttons.addButton(
            "Save scaled file", QDialogButtonBox.ButtonRole.ActionRole
        )
        self.save_button.setObjectName("save")
        self.save_button.setDefault(True)
        self.close_button = self.buttons.addButton(QDialogButtonBox.StandardButton.Close)
        self.close_button.setAutoDefault(False)
        self.close_button.setToolTip("Close this window (a file being written is stopped first).")
        self.save_button.clicked.connect(self.save)
        self.close_button.clicked.connect(self.reject)

        bottom = QHBoxLayout()
        bottom.setSpacing(theme.SPACING)
        bottom.addWidget(self.runner, 1)
        bottom.addWidget(self.buttons)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 16, 16, 16)
        layout.setSpacing(10)
        layout.addWidget(intro)
        layout.addWidget(data_box)
        layout.addWidget(report_box, 1)
        layout.addWidget(out_box)
        layout.addWidget(self.result_label)
        layout.addLayout(bottom)

    # ------------------------------------------------------------------ public API

    def set_data_file(self, path: str | Path, sheet: str | None = None) -> None:
        """Choose the file to scale (as the Choose button does); it is read in the background."""
        self.data_row.set_path(path, sheet=sheet)

    def set_output(self, path: str | Path) -> None:
        self.output_row.set_path(path)

    def set_clip(self, clip: bool) -> None:
        self.clip_check.setChecked(clip)

    def clip(self) -> bool:
        return self.clip_check.isChecked()

    def table_read(self) -> swio.Table | None:
        """The new file as read for the preview (None until read, or when unreadable)."""
        return self._table

    def preview_reports(self) -> dict[str, engine.ColumnReport]:
        """Per fitted column present in the file, the counts shown (before any clipping)."""
        return dict(self._preview_reports)

    def missing_columns(self) -> list[str]:
        return list(self._missing)

    def data_problem(self) -> str:
        """Why the chosen file cannot be scaled with this project ("" when it can)."""
        return self._data_problem()

    def output_problem(self) -> str:
        return self.output_error.toolTip() if self.output_error.isVisibleTo(self) else ""

    def can_save(self) -> bool:
        return self.save_button.isEnabled()

    # ------------------------------------------------------------------ reading

    def _load_data(self) -> None:
        self._table = None
        self._preview_reports = {}
        self._missing = []
        self._problems = {}
        self._read_error = ""
        self.result_label.hide()
        path, sheet = self.data_row.path(), self.data_row.sheet()
        if path is None:
            self._show_report()
            self._update_state()
            return
        self.output_row.suggested_folder = path.parent
        if self.runner.busy:  # a read of another file is still running: stop it first
            self.cancel_job()
            self.runner.job.ended.connect(self._load_data)
            return
        plan = self._project.plan

        def read(progress, cancelled):
            table = swio.read_table(path, swio.ReadOptions(sheet=sheet),
                                    progress=progress, cancelled=cancelled)
            return table, preview_apply(table, plan)

        self.summary_label.setText(f"Reading {_html(path.name)}…")
        self.run_job(f"Reading {path.name}…", read, self._data_read, self._data_failed,
                     self._data_stopped)

    def _data_read(self, result) -> None:
        self._table, (self._preview_reports, self._missing, self._problems) = result
        self._show_report()
        self._update_state()
        self.previewReady.emit()

    def _data_failed(self, err: BaseException) -> None:
        self._read_error = plain_message(err)
        self._show_report()
        self._update_state()
        self.previewReady.emit()

    def _data_stopped(self) -> None:
        self._read_error = "Reading was stopped; choose the file again to see the preview."
        self._show_report()
        self._update_state()

    # ------------------------------------------------------------------ showing

    def _show_report(self) -> None:
        plan = self._project.plan
        self.table.setRowCount(0)
        self.summary_label.setStyleSheet("")
        if plan is None or not plan.columns:
            self.summary_label.setText("This project has no fitted columns yet, so there is "
                                       "nothing to apply. Fit it in the main window first.")
            return
        if self._table is None:
            if not self.runner.busy:
                self.summary_label.setText(
                    "Choose a file to see, for each column, how its values compare with the "
                    "range the parameters were fitted on."
                )
                self.summary_label.setStyleSheet(MUTED_STYLE)
            return
        clip = self.clip_check.isChecked()
        rows = list(plan.columns.items())
        self.table.setRowCount(len(rows))
        outside_total = 0
        for r, (column, fc) in enumerate(rows):
            method = engine.get_method(fc.method).name
            cells: list[tuple[str, str]] = [(column, column), (method, _method_tip(fc))]
            if column in self._missing:
                cells += [("", "")] * 4 + [
                    ("⚠ not in this file", "The file has no column with this name.")
                ]
            elif column in self._problems:
                cells += [("", "")] * 4 + [
                    (f"⚠ {self._problems[column]}", self._problems[column])
                ]
            else:
                rep = self._preview_reports[column]
                outside_total += rep.n_outside
                range_tip = (
                    f"Fitted range: {fc.pooled.min:.10g} to {fc.pooled.max:.10g}"
                    if not fc.groups else "Each group has its own fitted range."
                )
                if rep.n_outside == 0:
                    fate = "none outside"
                elif clip:
                    fate = f"{rep.n_outside:,} will be clipped"
                else:
                    fate = "scaled as they are"
                notes = []
                if rep.unseen_groups:
                    notes.append("groups not seen when fitting: " + ", ".join(rep.unseen_groups)
                                 + " (scaled with the parameters fitted on all groups)")
                if rep.n_infinite:
                    notes.append(f"{rep.n_infinite:,} infinite values pass unchanged")
                if rep.n_undefined:
                    notes.append(f"{rep.n_undefined:,} values have no scaled value and will be "
                                 "left blank")
                note = "; ".join(notes)
                cells += [
                    (f"{rep.n_values:,}", "Values in the new file (blanks not counted)."),
                    (f"{rep.n_below:,}", range_tip),
                    (f"{rep.n_above:,}", range_tip),
                    (fate, "Values outside the fitted range "
                     + ("are moved to its nearest end before scaling." if clip else
                        "are scaled as they are (tick Clip to move them into the range).")),
                    (("⚠ " + note) if note else "", note or "Nothing to note."),
                ]
            for c, (text, tip) in enumerate(cells):
                item = QTableWidgetItem(text)
                item.setToolTip(tip or text)
                if 2 <= c <= 4:
                    item.setTextAlignment(
                        Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
                    )
                if text.startswith("⚠") or (c in (3, 4) and text not in ("", "0")):
                    item.setForeground(QBrush(QColor(theme.WARNING)))
                self.table.setItem(r, c, item)
        n_rows = len(self._table.data)
        text = f"{plural(n_rows, 'row')} in {_html(self._table.source.name)}. "
        if self._missing:
            text += ("<b>It has no column " + ", ".join(f"'{_html(c)}'" for c in self._missing)
                     + "</b>, so it cannot be scaled with this project.")
        elif self._problems:
            text += "<b>Some columns cannot be scaled</b> (see the list)."
        elif outside_total:
            verb = "lies" if outside_total == 1 else "lie"
            text += (f"{plural(outside_total, 'value')} {verb} outside the fitted range"
                     + (" and will be clipped into it." if clip else
                        "; they are scaled as they are unless you tick Clip."))
        else:
            text += "Every value lies inside the fitted range."
        self.summary_label.setText(text)

    def _data_problem(self) -> str:
        if self._read_error:
            return self._read_error
        if self._missing:
            names = ", ".join(f"'{c}'" for c in self._missing)
            return (f"This file has no column {names}. Every column the project scales must "
                    "be in the file, with the same name.")
        if self._problems:
            return " ".join(f"'{c}' {why}." for c, why in self._problems.items())
        return ""

    def _update_state(self) -> None:
        data_problem = self._data_problem()
        set_message(self.data_error, data_problem)
        forbidden = [
            (self.data_row.path(), "This is the file being scaled. Choose another name, so "
                                   "that the original stays as it is."),
            (_path_or_none(self._project.source),
             "This is the file the project was fitted on. Choose another name, so that it "
             "stays as it is."),
        ]
        out_problem = self.output_row.problem(forbidden)
        set_message(self.output_error, out_problem)
        busy = self.runner.busy
        ready = (
            self._project.plan is not None
            and self._table is not None
            and not data_problem
            and self.output_row.path() is not None
            and not out_problem
            and not busy
        )
        self.save_button.setEnabled(ready)
        if self._table is None:
            tip = "Choose the file to scale first."
        elif data_problem:
            tip = data_problem
        elif self.output_row.path() is None:
            tip = "Choose where to save the scaled file first."
        else:
            tip = out_problem or "Scale the new file and save the result."
        self.save_button.setToolTip(tip)

    def _set_busy(self, busy: bool) -> None:
        for w in (self.output_row, self.clip_check, self.data_row):
            w.setEnabled(not busy)
        self._update_state()

    # ------------------------------------------------------------------ writing

    def save(self) -> None:
        """Write the scaled file in the background (does nothing unless Save is enabled)."""
        self._update_state()
        if not self.save_button.isEnabled():
            return
        project, data_path = self._project, self.data_row.path()
        target, sheet, clip = self.output_row.path(), self.data_row.sheet(), self.clip()

        def write(progress, cancelled):
            return tasks.apply_to_file(project, data_path, target, clip=clip, sheet=sheet,
                                       progress=progress, cancelled=cancelled)

        self.start_write(f"Writing {target.name}…", write, target)

    def _write_done(self, reports) -> None:
        outside = sum(r.n_outside for r in reports)
        clipped = sum(r.n_clipped for r in reports)
        text = f"✓  Saved {self._written.name}: {plural(len(reports), 'column')} scaled"
        if clipped:
            text += f", {plural(clipped, 'value')} clipped into the fitted range."
        elif outside:
            text += f"; {plural(outside, 'value')} lay outside the fitted range (not clipped)."
        else:
            text += ", every value inside the fitted range."
        lines = tasks.describe_reports(reports)
        self.show_result(text, OK_STYLE, details="\n".join(lines))
        self.close_button.setText("Done")
        self.close_button.setToolTip("Close this window; the file has been saved.")


# --------------------------------------------------------------------------- helpers


def preview_apply(table: swio.Table, plan) -> tuple[dict, list[str], dict[str, str]]:
    """(reports by column, missing columns, problems by column) for applying ``plan``.

    Every fitted column is looked at, so the dialog can list all problems at once; the
    counts come from ``engine.apply`` on the columns that can be scaled.
    """
    missing: list[str] = []
    problems: dict[str, str] = {}
    present = {}
    if plan is None:
        return {}, missing, problems
    for column, fc in plan.columns.items():
        if column not in table.data.columns:
            missing.append(column)
        elif why := tasks.not_numbers(table, column):
            problems[column] = why
        else:
            present[column] = fc
    reports: dict[str, engine.ColumnReport] = {}
    if present:
        sub = engine.FittedPlan(present, plan.settings, plan.n_rows)
        _, found = engine.apply(tasks.blank_as_numbers(table, present), sub, clip=False)
        reports = {r.column: r for r in found}
    return reports, missing, problems


def _method_tip(fc) -> str:
    m = engine.get_method(fc.method)
    params = ", ".join(f"{k} = {v:.10g}" if isinstance(v, float) else f"{k} = {v}"
                       for k, v in fc.pooled.params.items())
    return f"{m.name}: {m.summary}\nSaved parameters: {params}" if params else m.name


def _path_or_none(p) -> Path | None:
    return Path(p) if p else None


def set_message(label: QLabel, text: str) -> None:
    """Show ``text`` as an inline warning under a control, or hide the label when empty."""
    label.setText(f"⚠  {text}" if text else "")
    label.setToolTip(text)
    label.setVisible(bool(text))


def _html(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


__all__ = ["ApplyDialog", "FileRow", "OutputRow", "WritingDialog", "same_file"]
