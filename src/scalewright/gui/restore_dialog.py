"""The dialog that turns scaled values back into original units.

The user picks a file of scaled values (for example a model's predictions), and says for
each of its columns which fitted column's parameters restore it. Columns named like a
fitted column are matched automatically; any match can be changed or removed with the
box on its row. A preview shows the first rows before and after, and the result is
written in the background with a progress bar and a Cancel button.

The parameters come from the project open in the window, or from a project file or a
scaled workbook chosen here (a workbook written by Scalewright carries its project).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pandas as pd
from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QSizePolicy,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from .. import engine, tasks
from .. import io as swio
from ..errors import ScalewrightError
from . import file_dialogs, theme
from .errors import plain_message
from .frame_view import FrameModel, make_preview_view
from .widgets import MUTED_STYLE, escape_html, kind_word, message_label, plural, set_message
from .writing_dialog import WritingDialog, saved_parameters

PREVIEW_ROWS = 20
LEAVE = "leave as is"
PROJECT_FILTER = "Project or scaled workbook (*.swproj *.xlsx *.xlsm);;All files (*)"


class RestoreDialog(WritingDialog):
    """Restore original units in a file of scaled values.

    ``project`` may be None: the user then chooses a project file or a scaled workbook in
    the dialog. ``exec()`` returns Accepted when a file was written (``written_path()`` and
    ``reports()`` tell what); ``fileWritten(path, reports)`` is emitted on success.
    ``set_data_file``, ``set_mapping``, ``set_output`` and ``save`` drive it from code the
    way the controls do.
    """

    projectChanged = Signal(object)  # Project, after one was loaded in the dialog

    def __init__(self, project=None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._project_error = ""
        self._auto: dict[str, str] = {}
        self._combos: dict[str, QComboBox] = {}
        self._preview_frame = pd.DataFrame()
        self._preview_notes: list[str] = []
        self.setWindowTitle("Restore original units")
        self.setObjectName("restoreDialog")
        self.resize(980, 760)
        self._build()
        self.set_project(project)

    # ------------------------------------------------------------------ building

    def _build(self) -> None:
        intro = (
            "Turn scaled values, for example a model's predictions, back into the units of "
            "the original data, with the parameters saved in a project."
        )

        self.project_label = QLabel()
        self.project_label.setObjectName("projectLabel")
        self.project_label.setWordWrap(True)
        self.project_button = QPushButton("Choose…")
        self.project_button.setToolTip(
            "Use the parameters of a project file (.swproj) or of a scaled workbook written "
            "by Scalewright (.xlsx), which carries its project inside."
        )
        self.project_button.setAutoDefault(False)
        self.project_button.clicked.connect(self._browse_project)
        self.project_error = message_label()
        self.project_error.setObjectName("projectError")
        project_box = QGroupBox("Parameters from")
        project_row = QHBoxLayout()
        project_row.addWidget(self.project_label, 1)
        project_row.addWidget(self.project_button, 0, Qt.AlignmentFlag.AlignTop)
        project_layout = QVBoxLayout(project_box)
        project_layout.addLayout(project_row)
        project_layout.addWidget(self.project_error)

        data_box = self.make_file_box(
            "File of scaled values",
            "Choose the file of scaled values",
            "The file holding scaled values to bring back to original units, for example "
            "a model's predictions.",
        )

        self.mapping_table = QTableWidget(0, 3)
        self.mapping_table.setObjectName("mapping")
        self.mapping_table.setToolTip(
            "For each column of the file: the fitted column whose parameters bring it back "
            "to original units, or 'leave as is'."
        )
        self.mapping_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.mapping_table.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.mapping_table.verticalHeader().hide()
        for i, (title, tip) in enumerate(
            (
                ("Column in the file", "A column of the chosen file."),
                (
                    "Restore with the parameters of",
                    "The fitted column whose parameters restore it.",
                ),
                ("Matched", "Whether the pair was found by name or chosen by you."),
            )
        ):
            item = QTableWidgetItem(title)
            item.setToolTip(tip)
            self.mapping_table.setHorizontalHeaderItem(i, item)
        header = self.mapping_table.horizontalHeader()
        header.setDefaultAlignment(Qt.AlignmentFlag.AlignLeft)
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(1, QHeaderView.ResizeMode.Stretch)
        self.mapping_table.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.mapping_hint = QLabel()
        self.mapping_hint.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Minimum)
        self.mapping_hint.setObjectName("mappingHint")
        self.mapping_hint.setWordWrap(True)
        self.reading_label = self.mapping_hint
        mapping_box = QGroupBox("Which parameters restore each column")
        mapping_layout = QVBoxLayout(mapping_box)
        mapping_layout.addWidget(self.mapping_hint)
        mapping_layout.addWidget(self.mapping_table, 1)

        self.preview_model = FrameModel(parent=self)
        self.preview_view = make_preview_view(
            self.preview_model,
            f"The first {PREVIEW_ROWS} rows of each restored column, as they are in the file "
            "and in original units.",
        )
        self.preview_notes = QLabel()
        self.preview_notes.setObjectName("previewNotes")
        self.preview_notes.setWordWrap(True)
        self.preview_notes.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Minimum)
        preview_box = QGroupBox("Preview: first rows before and after")
        preview_layout = QVBoxLayout(preview_box)
        preview_layout.addWidget(self.preview_view, 1)
        preview_layout.addWidget(self.preview_notes)

        middle = QHBoxLayout()
        middle.setSpacing(12)
        middle.addWidget(mapping_box, 5)
        middle.addWidget(preview_box, 4)

        out_box = self.make_output_box(
            "Save the restored file as",
            "The file to write: .xlsx, .csv or .tsv. Columns that are not restored are "
            "written as they are. It can never be the file of scaled values itself.",
        )
        self.output_row.edit.setPlaceholderText("Where to save, for example predicted_yield_kg.csv")
        self.lay_out(intro, "Save restored file", project_box, data_box, (middle, 1), out_box)

    # ------------------------------------------------------------------ public API

    def project(self):
        return self._project

    def set_project(self, project) -> None:
        """Use this project's parameters (None: the user must choose a project first)."""
        self._project = project
        self._project_error = ""
        self._show_project()
        self._fill_mapping()

    def load_project_file(self, path: str | Path) -> bool:
        """Take the parameters from a .swproj file or a scaled workbook; False on failure
        (the reason is shown in the dialog)."""
        try:
            project = tasks.load_project_or_workbook(path)
        except Exception as err:  # shown inline, never a crash
            self._project_error = plain_message(err)
            set_message(self.project_error, self._project_error)
            self._update_state()
            return False
        self.set_project(project)
        self.project_label.setToolTip(str(path))
        self.projectChanged.emit(project)
        return True

    def automatic_mapping(self) -> dict[str, str]:
        """The pairs found by name for the chosen file."""
        return dict(self._auto)

    def mapping(self) -> dict[str, str]:
        """File column -> fitted column, as currently chosen ('leave as is' left out)."""
        out = {}
        for column, box in self._combos.items():
            fitted = box.currentData()
            if fitted:
                out[column] = fitted
        return out

    def set_mapping(self, column: str, fitted: str | None) -> None:
        """Choose, as the box on the column's row does, which parameters restore it."""
        box = self._combos[column]
        i = box.findData(fitted or "")
        if i < 0:
            raise KeyError(fitted)
        box.setCurrentIndex(i)

    def mapping_box(self, column: str) -> QComboBox:
        return self._combos[column]

    def preview_frame(self) -> pd.DataFrame:
        return self._preview_frame.copy()

    # ------------------------------------------------------------------ project

    def _fitted(self) -> dict:
        plan = getattr(self._project, "plan", None)
        return dict(plan.columns) if plan is not None else {}

    def _show_project(self) -> None:
        set_message(self.project_error, self._project_error)
        if self._project is None:
            self.project_label.setText(
                "No project yet: choose a project file or a scaled workbook."
            )
            self.project_label.setStyleSheet(MUTED_STYLE)
            return
        self.project_label.setStyleSheet("")
        fitted = self._fitted()
        source = Path(self._project.source).name if self._project.source else "an unnamed file"
        if not fitted:
            self.project_label.setText(
                f"The project for <b>{escape_html(source)}</b> has no fitted "
                "columns yet, so there is nothing to restore with."
            )
            return
        names = ", ".join(
            f"{escape_html(c)} ({engine.get_method(fc.method).name})" for c, fc in fitted.items()
        )
        self.project_label.setText(
            f"Fitted on <b>{escape_html(source)}</b>: {plural(len(fitted), 'column')}: {names}"
        )

    def _browse_project(self) -> None:
        name, _ = file_dialogs.open_file_name(
            self, "Choose a project or a scaled workbook", "", PROJECT_FILTER
        )
        if name:
            self.load_project_file(name)

    # ------------------------------------------------------------------ reading

    def _reader(self, path: Path, sheet: str | None):
        reading = swio.ReadOptions(sheet=sheet)
        if self._project is not None:  # read with the project's kind corrections
            reading = tasks.reading_for(self._project, reading)

        def read(progress, cancelled):
            return swio.read_table(path, reading, progress=progress, cancelled=cancelled)

        return read

    def _take_read(self, table: swio.Table) -> None:
        self._table = table

    def _show_file(self) -> None:
        self._fill_mapping()

    # ------------------------------------------------------------------ mapping

    def _fill_mapping(self) -> None:
        self._combos = {}
        self.mapping_table.setRowCount(0)
        fitted = self._fitted()
        self._auto = {}
        if self._table is None:
            self.mapping_hint.setText(
                "Choose a file to pair its columns with the project's fitted columns."
                if self._project is not None
                else "Choose a project first, then a file."
            )
            self.mapping_hint.setStyleSheet(MUTED_STYLE)
            self._refresh_preview()
            return
        columns = [str(c) for c in self._table.data.columns]
        if fitted:
            auto = tasks.auto_mapping(columns, self._project)
            self._auto = {c: f for c, f in auto.items() if not tasks.not_numbers(self._table, c)}
        self.mapping_table.setRowCount(len(columns))
        for r, column in enumerate(columns):
            name = QTableWidgetItem(column)
            kind = self._table.kinds.get(column)
            word, explain = kind_word(kind) if kind is not None else ("", "")
            name.setToolTip(f"{column}: {word}. {explain}" if word else column)
            self.mapping_table.setItem(r, 0, name)
            box = QComboBox()
            box.addItem(LEAVE, "")
            box.setItemData(
                0, "Write this column as it is in the file.", Qt.ItemDataRole.ToolTipRole
            )
            for f, fc in fitted.items():
                box.addItem(f"{f}  ({engine.get_method(fc.method).name})", f)
                box.setItemData(box.count() - 1, _params_tip(fc), Qt.ItemDataRole.ToolTipRole)
            why = tasks.not_numbers(self._table, column)
            if why or not fitted:
                box.setEnabled(False)
                box.setToolTip(
                    f"'{column}' {why}, so it is written as it is."
                    if why
                    else "The project has no fitted columns."
                )
            else:
                box.setToolTip(
                    f"Which fitted column's parameters bring '{column}' back to "
                    "original units; 'leave as is' writes it unchanged."
                )
                if column in self._auto:
                    box.setCurrentIndex(box.findData(self._auto[column]))
            box.currentIndexChanged.connect(lambda _i, c=column: self._mapping_changed(c))
            self._combos[column] = box
            self.mapping_table.setCellWidget(r, 1, box)
            self.mapping_table.setItem(r, 2, QTableWidgetItem())
            self._show_match(column)
        self._show_hint()
        self._refresh_preview()

    def _mapping_changed(self, column: str) -> None:
        self.result_label.hide()
        self._show_match(column)
        self._show_hint()
        self._refresh_preview()

    def _show_match(self, column: str) -> None:
        r = list(self._combos).index(column)
        chosen = self._combos[column].currentData() or ""
        auto = self._auto.get(column, "")
        if not chosen:
            text, tip = (
                "",
                (
                    "A column of the same name was fitted, but you chose to leave "
                    "this one as it is."
                    if auto
                    else "Written as it is."
                ),
            )
        elif chosen == auto:
            text, tip = "by name", "Paired automatically: the names match."
        else:
            text, tip = "chosen by you", "Paired by you."
        item = self.mapping_table.item(r, 2)
        item.setText(text)
        item.setToolTip(tip)

    def _show_hint(self) -> None:
        n = len(self.mapping())
        if not self._fitted():
            self.mapping_hint.setText(
                "The project has no fitted columns, so nothing can be restored with it."
            )
            self.mapping_hint.setStyleSheet(f"color: {theme.WARNING};")
        elif n:
            self.mapping_hint.setText(
                f"{plural(n, 'column')} will be restored; the others are written as they "
                "are. Change a pair with the box on its row."
            )
            self.mapping_hint.setStyleSheet("")
        else:
            self.mapping_hint.setText(
                "No column of this file has the name of a fitted column. Choose, with the "
                "box on its row, which fitted column's parameters restore it."
            )
            self.mapping_hint.setStyleSheet(f"color: {theme.WARNING};")

    # ------------------------------------------------------------------ preview

    def _refresh_preview(self) -> None:
        mapping = self.mapping()
        notes: list[str] = []
        frame = pd.DataFrame()
        if self._table is not None and mapping and self._project is not None:
            first = dataclasses.replace(self._table, data=self._table.data.iloc[:PREVIEW_ROWS])
            head = tasks.blank_as_numbers(first, mapping)  # only the rows shown
            try:
                restored, reports = engine.restore(head, self._project.plan, mapping)
            except ScalewrightError as err:
                notes.append(str(err))
            else:
                parts = {}
                for column, fitted in mapping.items():
                    parts[f"{column} (as in the file)"] = head[column].reset_index(drop=True)
                    parts[f"{column} (in {fitted} units)"] = restored[column].reset_index(drop=True)
                frame = pd.DataFrame(parts)
                # Columns with something to say, in the words of the saved report.
                notes += [
                    line.strip()
                    for r in reports
                    if r.warnings
                    for line in tasks.describe_report(r, restoring=True)
                ]
        self._preview_frame = frame
        self._preview_notes = notes
        tips, texts = {}, {}
        for column, fitted in mapping.items() if not frame.empty else ():
            before, after = f"{column} (as in the file)", f"{column} (in {fitted} units)"
            tips[before] = f"'{column}': scaled values as they are in the file."
            tips[after] = f"'{column}': the same values in original units of '{fitted}'."
            texts[before] = f"{column}\nas in the file"
            texts[after] = f"{column}\nin {fitted} units"
        self.preview_model.set_frame(frame, header_tips=tips, header_texts=texts)
        self.preview_view.resizeColumnsToContents()
        if notes:
            self.preview_notes.setText("⚠  " + "\n".join(notes))
            self.preview_notes.setStyleSheet(f"color: {theme.WARNING};")
        elif frame.empty:
            self.preview_notes.setText("The preview appears once a column is paired.")
            self.preview_notes.setStyleSheet(MUTED_STYLE)
        else:
            self.preview_notes.setText(f"The first {len(frame)} rows.")
            self.preview_notes.setStyleSheet(MUTED_STYLE)
        self._update_state()

    # ------------------------------------------------------------------ state

    def _update_state(self) -> None:
        data_problem = self._data_problem()
        set_message(self.data_error, data_problem)
        out_problem = self.output_check()
        set_message(self.output_error, out_problem)
        mapping = self.mapping()
        ready = (
            self._project is not None
            and self._table is not None
            and not data_problem
            and bool(mapping)
            and not self._preview_notes_block()
            and self.output_row.path() is not None
            and not out_problem
            and not self.runner.busy
        )
        self.save_button.setEnabled(ready)
        if self._project is None:
            tip = "Choose a project or a scaled workbook first."
        elif self._table is None:
            tip = data_problem or "Choose the file of scaled values first."
        elif not mapping:
            tip = "Pair at least one column with a fitted column first."
        elif self.output_row.path() is None:
            tip = "Choose where to save the restored file first."
        else:
            tip = out_problem or "Restore the paired columns and save the result."
        self.save_button.setToolTip(tip)

    def _preview_notes_block(self) -> bool:
        """True when the preview could not be made at all (the mapping is not usable)."""
        return bool(self.mapping()) and self._preview_frame.empty and bool(self._preview_notes)

    def _set_busy(self, busy: bool) -> None:
        for w in (self.data_row, self.output_row, self.mapping_table, self.project_button):
            w.setEnabled(not busy)
        self._update_state()

    # ------------------------------------------------------------------ writing

    def _writer(self, target: Path):
        # The table read for the mapping and preview is the one restored (no second read).
        project, table, mapping = self._project, self._table, self.mapping()

        def write(progress, cancelled):
            return tasks.restore_table(
                project,
                table,
                target,
                mapping=mapping,
                exact=True,
                progress=progress,
                cancelled=cancelled,
            )

        return write

    def _write_done(self, reports) -> None:
        n = sum(r.n_values for r in reports)
        text = (
            f"✓  Saved {self._written.name}: {plural(len(reports), 'column')} restored "
            f"to original units ({plural(n, 'value')})."
        )
        undefined = sum(r.n_undefined for r in reports)
        if undefined:
            text += (
                f" {plural(undefined, 'value')} had no value in original units and were left blank."
            )
        self.show_written(text, tasks.describe_reports(reports, restoring=True))


def _params_tip(fc) -> str:
    m = engine.get_method(fc.method)
    return f"{fc.column}, {m.name}. Saved parameters: {saved_parameters(fc)}"
