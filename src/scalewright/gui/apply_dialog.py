"""The dialog that scales another file with the parameters saved in a project.

Nothing is fitted again: the new file is scaled with exactly the parameters of the
project. Before anything is written the dialog lists, for each fitted column, how many
values of the new file fall below or above the range the parameters were fitted on (and
whether they will be clipped into it), groups that were not seen when fitting, and
columns the new file lacks. The output is written in the background with a progress bar
and a Cancel button; a cancelled or failed write leaves no file behind.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QGroupBox,
    QHeaderView,
    QLabel,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from .. import engine, tasks
from .. import io as swio
from ..engine.number_text import number_text
from . import theme
from .widgets import MUTED_STYLE, escape_html, plural, set_message
from .writing_dialog import WritingDialog, saved_parameters

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

    stopped_reading = "Reading was stopped; choose the file again to see the preview."

    def __init__(self, project, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._project = project
        self._preview_reports: dict[str, engine.ColumnReport] = {}
        self._missing: list[str] = []
        self._problems: dict[str, str] = {}
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
        intro = (
            f"The new file is scaled with the parameters saved in this project "
            f"({plural(n, 'column')}, fitted on <b>{escape_html(source)}</b>). Nothing is "
            "fitted again, so its values land on exactly the same scale."
        )
        data_box = self.make_file_box(
            "File to scale",
            "Choose the file to scale",
            "The new data file. It needs every column the project scales, with the same names.",
        )

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
        self.reading_label = self.summary_label

        report_box = QGroupBox("What will happen")
        report_layout = QVBoxLayout(report_box)
        report_layout.addWidget(self.summary_label)
        report_layout.addWidget(self.table, 1)
        report_layout.addWidget(self.clip_check)

        out_box = self.make_output_box(
            "Save the scaled file as",
            "The file to write: .xlsx for a workbook (with a sheet of the parameters, from "
            "which original units can be restored later), .csv or .tsv for plain text. "
            "It can never be the file being scaled.",
        )
        self.lay_out(intro, "Save scaled file", data_box, (report_box, 1), out_box)

    # ------------------------------------------------------------------ public API

    def set_clip(self, clip: bool) -> None:
        self.clip_check.setChecked(clip)

    def clip(self) -> bool:
        return self.clip_check.isChecked()

    def preview_reports(self) -> dict[str, engine.ColumnReport]:
        """Per fitted column present in the file, the counts shown (before any clipping)."""
        return dict(self._preview_reports)

    def missing_columns(self) -> list[str]:
        return list(self._missing)

    # ------------------------------------------------------------------ reading

    def _forget_file(self) -> None:
        self._preview_reports = {}
        self._missing = []
        self._problems = {}

    def _reader(self, path: Path, sheet: str | None):
        plan = self._project.plan
        reading = tasks.reading_for(self._project, swio.ReadOptions(sheet=sheet))

        def read(progress, cancelled):
            table = swio.read_table(path, reading, progress=progress, cancelled=cancelled)
            return table, preview_apply(table, plan)

        return read

    def _take_read(self, result) -> None:
        self._table, (self._preview_reports, self._missing, self._problems) = result

    def _show_file(self) -> None:
        self._show_report()
        self._update_state()

    # ------------------------------------------------------------------ showing

    def _show_report(self) -> None:
        plan = self._project.plan
        self.table.setRowCount(0)
        self.summary_label.setStyleSheet("")
        if plan is None or not plan.columns:
            self.summary_label.setText(
                "This project has no fitted columns yet, so there is "
                "nothing to apply. Fit it in the main window first."
            )
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
                cells += [("", "")] * 4 + [(f"⚠ {self._problems[column]}", self._problems[column])]
            else:
                rep = self._preview_reports[column]
                outside_total += rep.n_outside
                range_tip = (
                    f"Fitted range: {number_text(fc.pooled.min)} to {number_text(fc.pooled.max)}"
                    if not fc.groups
                    else "Each group has its own fitted range."
                )
                if rep.n_outside == 0:
                    fate = "none outside"
                elif clip:
                    fate = f"{rep.n_outside:,} will be clipped"
                else:
                    fate = "scaled as they are"
                notes = []
                if rep.unseen_groups:
                    notes.append(
                        "groups not seen when fitting: "
                        + ", ".join(rep.unseen_groups)
                        + " (scaled with the parameters fitted on all groups)"
                    )
                if rep.n_infinite:
                    notes.append(f"{rep.n_infinite:,} infinite values pass unchanged")
                if rep.n_undefined:
                    notes.append(
                        f"{rep.n_undefined:,} values have no scaled value and will be left blank"
                    )
                note = "; ".join(notes)
                cells += [
                    (f"{rep.n_values:,}", "Values in the new file (blanks not counted)."),
                    (f"{rep.n_below:,}", range_tip),
                    (f"{rep.n_above:,}", range_tip),
                    (
                        fate,
                        "Values outside the fitted range "
                        + (
                            "are moved to its nearest end before scaling."
                            if clip
                            else "are scaled as they are (tick Clip to move them into the range)."
                        ),
                    ),
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
        text = f"{plural(n_rows, 'row')} in {escape_html(self._table.source.name)}. "
        if self._missing:
            text += (
                "<b>It has no column "
                + ", ".join(f"'{escape_html(c)}'" for c in self._missing)
                + "</b>, so it cannot be scaled with this project."
            )
        elif self._problems:
            text += "<b>Some columns cannot be scaled</b> (see the list)."
        elif outside_total:
            verb = "lies" if outside_total == 1 else "lie"
            text += f"{plural(outside_total, 'value')} {verb} outside the fitted range" + (
                " and will be clipped into it."
                if clip
                else "; they are scaled as they are unless you tick Clip."
            )
        else:
            text += "Every value lies inside the fitted range."
        self.summary_label.setText(text)

    def _data_problem(self) -> str:
        if self._read_error:
            return self._read_error
        if self._missing:
            names = ", ".join(f"'{c}'" for c in self._missing)
            return (
                f"This file has no column {names}. Every column the project scales must "
                "be in the file, with the same name."
            )
        if self._problems:
            return " ".join(f"'{c}' {why}." for c, why in self._problems.items())
        return ""

    def _update_state(self) -> None:
        data_problem = self._data_problem()
        set_message(self.data_error, data_problem)
        out_problem = self.output_check()
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

    def _writer(self, target: Path):
        # The table read for the preview is the one scaled: the file is not read again.
        project, table, clip = self._project, self._table, self.clip()

        def write(progress, cancelled):
            return tasks.apply_table(
                project, table, target, clip=clip, progress=progress, cancelled=cancelled
            )

        return write

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
        self.show_written(text, tasks.describe_reports(reports))


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
    params = saved_parameters(fc)
    return f"{m.name}: {m.summary}\nSaved parameters: {params}" if params else m.name
