"""The table that pairs a file's columns with a project's fitted columns.

Shared by the Restore dialog (which parameters bring each column back to original units,
and what to call the restored column) and the Apply dialog (which parameters scale each
column of a new file). One row per column of the file: its name, a box choosing a fitted
column or "leave as is", whether the pair was found by name, and, where asked for, the
name the column gets in the written file.
"""

from __future__ import annotations

from collections.abc import Mapping

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QHeaderView,
    QLineEdit,
    QTableWidget,
    QTableWidgetItem,
    QWidget,
)

from .. import engine, tasks
from .widgets import kind_word
from .writing_dialog import saved_parameters

LEAVE = "leave as is"


class ColumnPairing(QTableWidget):
    """File column -> fitted column, chosen with a box on each row.

    ``verb`` says what the parameters do ("restore", "scale"); with ``rename`` a last
    column offers a new name for each paired column (the file's name by default).
    ``changed(column)`` is emitted when a pair or a name changes.
    """

    changed = Signal(str)

    def __init__(self, verb: str, *, rename: bool = False, parent: QWidget | None = None):
        super().__init__(0, 4 if rename else 3, parent)
        self.verb = verb
        self.rename = rename
        self._combos: dict[str, QComboBox] = {}
        self._names: dict[str, QLineEdit] = {}
        self._auto: dict[str, str] = {}
        self.setObjectName("mapping")
        self.setToolTip(
            f"For each column of the file: the fitted column whose parameters {verb} it, "
            "or 'leave as is'."
        )
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.verticalHeader().hide()
        titles = [
            ("Column in the file", "A column of the chosen file."),
            (
                f"{verb.capitalize()} with the parameters of",
                f"The fitted column whose parameters {verb} it.",
            ),
            ("Matched", "Whether the pair was found by name or chosen by you."),
        ]
        if rename:
            titles.append(
                (
                    "Name in the saved file",
                    "What to call the column in the file written (its own name by default), "
                    "for example predicted_yield_kg now that it holds kilograms.",
                )
            )
        for i, (title, tip) in enumerate(titles):
            item = QTableWidgetItem(title)
            item.setToolTip(tip)
            self.setHorizontalHeaderItem(i, item)
        header = self.horizontalHeader()
        header.setDefaultAlignment(Qt.AlignmentFlag.AlignLeft)
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(1, QHeaderView.ResizeMode.Stretch)
        if rename:
            header.setSectionResizeMode(3, QHeaderView.ResizeMode.Stretch)
        self.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)

    # ------------------------------------------------------------------ filling

    def fill(self, table, project) -> None:
        """One row per column of ``table`` (None: empty), boxes over ``project``'s fitted
        columns; columns named like a fitted column are paired with it."""
        self._combos, self._names, self._auto = {}, {}, {}
        self.setRowCount(0)
        plan = getattr(project, "plan", None)
        fitted = dict(plan.columns) if plan is not None else {}
        if table is None:
            return
        columns = [str(c) for c in table.data.columns]
        if fitted:
            auto = tasks.auto_mapping(columns, project)
            self._auto = {c: f for c, f in auto.items() if not tasks.not_numbers(table, c)}
        self.setRowCount(len(columns))
        for r, column in enumerate(columns):
            name = QTableWidgetItem(column)
            kind = table.kinds.get(column)
            word, explain = kind_word(kind) if kind is not None else ("", "")
            name.setToolTip(f"{column}: {word}. {explain}" if word else column)
            self.setItem(r, 0, name)
            box = QComboBox()
            box.addItem(LEAVE, "")
            box.setItemData(
                0, "Write this column as it is in the file.", Qt.ItemDataRole.ToolTipRole
            )
            for f, fc in fitted.items():
                box.addItem(f"{f}  ({engine.get_method(fc.method).name})", f)
                box.setItemData(box.count() - 1, params_tip(fc), Qt.ItemDataRole.ToolTipRole)
            why = tasks.not_numbers(table, column)
            if why or not fitted:
                box.setEnabled(False)
                box.setToolTip(
                    f"'{column}' {why}, so it is written as it is."
                    if why
                    else "The project has no fitted columns."
                )
            else:
                box.setToolTip(
                    f"Which fitted column's parameters {self.verb} '{column}'; "
                    "'leave as is' writes it unchanged."
                )
                if column in self._auto:
                    box.setCurrentIndex(box.findData(self._auto[column]))
            box.currentIndexChanged.connect(lambda _i, c=column: self._pair_changed(c))
            self._combos[column] = box
            self.setCellWidget(r, 1, box)
            self.setItem(r, 2, QTableWidgetItem())
            if self.rename:
                edit = QLineEdit(column)
                edit.setToolTip(
                    f"The name '{column}' gets in the saved file once restored; "
                    "its own name by default."
                )
                edit.textEdited.connect(lambda _t, c=column: self.changed.emit(c))
                self._names[column] = edit
                self.setCellWidget(r, 3, edit)
            self._show_match(column)

    # ------------------------------------------------------------------ reading it

    def automatic_mapping(self) -> dict[str, str]:
        """The pairs found by name."""
        return dict(self._auto)

    def mapping(self) -> dict[str, str]:
        """File column -> fitted column, as currently chosen ('leave as is' left out)."""
        return {c: box.currentData() for c, box in self._combos.items() if box.currentData()}

    def names(self) -> dict[str, str]:
        """File column -> new name, for paired columns whose name was changed."""
        out = {}
        for column in self.mapping():
            edit = self._names.get(column)
            new = edit.text().strip() if edit is not None else ""
            if new and new != column:
                out[column] = new
        return out

    def set_mapping(self, column: str, fitted: str | None) -> None:
        """Choose, as the box on the column's row does, which parameters go with it."""
        box = self._combos[column]
        i = box.findData(fitted or "")
        if i < 0:
            raise KeyError(fitted)
        box.setCurrentIndex(i)

    def set_name(self, column: str, name: str) -> None:
        """Type a new name for the column, as a user would."""
        edit = self._names[column]
        edit.setText(name)
        edit.textEdited.emit(name)

    def box(self, column: str) -> QComboBox:
        return self._combos[column]

    def name_edit(self, column: str) -> QLineEdit:
        return self._names[column]

    # ------------------------------------------------------------------ showing

    def _pair_changed(self, column: str) -> None:
        edit = self._names.get(column)
        if edit is not None:
            edit.setEnabled(bool(self._combos[column].currentData()))
        self._show_match(column)
        self.changed.emit(column)

    def _show_match(self, column: str) -> None:
        r = list(self._combos).index(column)
        chosen = self._combos[column].currentData() or ""
        auto = self._auto.get(column, "")
        if not chosen:
            text = ""
            tip = (
                "A column of the same name was fitted, but you chose to leave this one as it is."
                if auto
                else "Written as it is."
            )
        elif chosen == auto:
            text, tip = "by name", "Paired automatically: the names match."
        else:
            text, tip = "chosen by you", "Paired by you."
        item = self.item(r, 2)
        item.setText(text)
        item.setToolTip(tip)
        edit = self._names.get(column)
        if edit is not None:
            edit.setEnabled(bool(chosen))


def params_tip(fc) -> str:
    m = engine.get_method(fc.method)
    return f"{fc.column}, {m.name}. Saved parameters: {saved_parameters(fc)}"


def paired_fitted(mapping: Mapping[str, str]) -> set[str]:
    """The fitted columns some file column is paired with."""
    return set(mapping.values())
