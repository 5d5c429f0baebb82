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
from ..guide import CAUTION_CLIPPING
from . import theme
from .column_pairing import ColumnPairing
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
        self.resize(900, 760)
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
            "The new data file. Each column the project scales is paired with a column of "
            "this file: by name, or as you choose below.",
        )

        self.pairing = ColumnPairing("scale")
        self.pairing.changed.connect(self._pairing_changed)
        self.pairing_hint = QLabel(
            "Columns named like a fitted column are paired with it; pair the others with "
            "the box on their row (for example yield_2026 with yield_kg)."
        )
        self.pairing_hint.setWordWrap(True)
        self.pairing_hint.setStyleSheet(MUTED_STYLE)
        pairing_box = QGroupBox("Which parameters scale each column")
        pairing_layout = QVBoxLayout(pairing_box)
        pairing_layout.addWidget(self.pairing_hint)
        pairing_layout.addWidget(self.pairing, 1)

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
        self.clip_note = QLabel(CAUTION_CLIPPING)
        self.clip_note.setObjectName("clipNote")
        self.clip_note.setWordWrap(True)
        self.clip_note.setProperty("role", "hint")
        report_layout.addWidget(self.clip_note)

        out_box = self.make_output_box(
            "Save the scaled file as",
            "The file to write: .xlsx for a workbook (with a sheet of the parameters, from "
            "which original units can be restored later), .csv or .tsv for plain text. "
            "It can never be the file being scaled.",
        )
        self.lay_out(
            intro, "Save scaled file", data_box, (pairing_box, 1), (report_box, 1), out_box
        )

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

    def mapping(self) -> dict[str, str]:
        """File column -> fitted column, as paired in the table (passed to apply_table)."""
        return self.pairing.mapping()

    def set_mapping(self, column: str, fitted: str | None) -> None:
        """Pair a column of the file with a fitted column, as its box does."""
        self.pairing.set_mapping(column, fitted)

    # ------------------------------------------------------------------ reading

    def _forget_file(self) -> None:
        self._preview_reports = {}
        self._missing = []
        self._problems = {}

    def _reader(self, path: Path, sheet: str | None):
        plan = self._project.plan
        reading = tasks.reading_for(self._project, swio.ReadOptions(sheet=sheet))

        project = self._project

        def read(progress, cancelled):
            table = swio.read_table(path, reading, progress=progress, cancelled=cancelled)
            return table, preview_apply(table, plan, name_pairs(table, project))

        return read

    def _take_read(self, result) -> None:
        self._table, (self._preview_reports, self._missing, self._problems) = result

    def _show_file(self) -> None:
        self.pairing.fill(self._table, self._project)
        self._show_report()
        self._update_state()

    def _pairing_changed(self, _column: str) -> None:
        """A pair changed: count again with the new pairs (on the table already read)."""
        self.result_label.hide()
        if self._table is not None:
            found = preview_apply(self._table, self._project.plan, self.mapping())
            self._preview_reports, self._missing, self._problems = found
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
            source = next((c for c, f in self.mapping().items() if f == column), column)
            shown = column if source == column else f"{column} (from {source})"
            cells: list[tuple[str, str]] = [(shown, shown), (method, _method_tip(fc))]
            if column in self._missing:
                absent = column not in self._table.data.columns
                cells += [("", "")] * 4 + [
                    (
                        "⚠ not in this file" if absent else "⚠ not paired",
                        "No column of the file is paired with it (see above).",
                    )
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
            pass  # said once, under the file (see _data_problem)
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
                f"This file has no column {names}, and no column is paired with it. Pair "
                "one in the table below: every column the project scales needs one."
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
        for w in (self.output_row, self.clip_check, self.data_row, self.pairing):
            w.setEnabled(not busy)
        self._update_state()

    # ------------------------------------------------------------------ writing

    def _writer(self, target: Path):
        # The table read for the preview is the one scaled: the file is not read again.
        project, table, clip, mapping = self._project, self._table, self.clip(), self.mapping()

        def write(progress, cancelled):
            return tasks.apply_table(
                project,
                table,
                target,
                clip=clip,
                mapping=mapping,
                progress=progress,
                cancelled=cancelled,
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


def name_pairs(table: swio.Table, project) -> dict[str, str]:
    """The pairs found by name (what the pairing table starts with)."""
    if project.plan is None or not project.plan.columns:
        return {}
    auto = tasks.auto_mapping([str(c) for c in table.data.columns], project)
    return {c: f for c, f in auto.items() if not tasks.not_numbers(table, c)}


def preview_apply(
    table: swio.Table, plan, mapping: dict[str, str]
) -> tuple[dict, list[str], dict[str, str]]:
    """(reports by fitted column, fitted columns with no column paired, problems by fitted
    column) for applying ``plan`` with ``mapping`` (file column -> fitted column).

    Every fitted column is looked at, so the dialog can list all problems at once; the
    counts come from ``engine.apply`` on the paired columns that can be scaled.
    """
    missing: list[str] = []
    problems: dict[str, str] = {}
    present, sources = {}, {}
    if plan is None:
        return {}, missing, problems
    source_of: dict[str, str] = {}
    for column, fitted in mapping.items():
        source_of.setdefault(fitted, column)
    for fitted, fc in plan.columns.items():
        column = source_of.get(fitted)
        if column is None and fitted in table.data.columns and tasks.not_numbers(table, fitted):
            problems[fitted] = tasks.not_numbers(table, fitted)  # same name, not numbers
        elif column is None:
            missing.append(fitted)
        elif why := tasks.not_numbers(table, column):
            problems[fitted] = why
        else:
            present[fitted], sources[fitted] = fc, column
    reports: dict[str, engine.ColumnReport] = {}
    if present:
        sub = engine.FittedPlan(present, plan.settings, plan.n_rows)
        data = tasks.blank_as_numbers(table, list(sources.values()))
        frame = data[list(sources.values())].set_axis(list(sources), axis=1)
        group = plan.settings.group_by
        if group is not None and group in data.columns and group not in frame.columns:
            frame[group] = data[group]  # each group's own parameters
        _, found = engine.apply(frame, sub, clip=False)
        reports = {r.column: r for r in found}
    return reports, missing, problems


def _method_tip(fc) -> str:
    m = engine.get_method(fc.method)
    params = saved_parameters(fc)
    return f"{m.name}: {m.summary}\nSaved parameters: {params}" if params else m.name
