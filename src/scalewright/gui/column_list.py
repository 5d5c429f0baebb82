"""The column list: name, kind, chosen method and a warning mark, with multi-selection."""

from __future__ import annotations

from PySide6.QtCore import (
    QAbstractTableModel,
    QItemSelection,
    QItemSelectionModel,
    QModelIndex,
    Qt,
    QTimer,
    Signal,
)
from PySide6.QtGui import QActionGroup, QBrush, QColor
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QMenu, QTableView, QWidget

from .. import io as swio
from ..engine import get_method
from ..io.corrections import described
from ..session import Session
from . import theme

NAME, KIND, METHOD, WARN = range(4)
HEADERS = ("Column", "Kind", "Scale with", "")
HEADER_TIPS = (
    "The column's name as written in the file",
    "What the column holds, as detected when the file was read; right-click a row (or "
    "double-click its kind) to read it as another kind",
    "The scaling method chosen for the column",
    "A mark here means something about this column needs your attention; hover it to read why",
)
WARNING_MARK = "\u26a0"  # ⚠


class ColumnModel(QAbstractTableModel):
    """A small model over the session's columns; it reads everything from the session."""

    def __init__(self, session: Session, parent=None) -> None:
        super().__init__(parent)
        self.session = session
        self._labels: list[str] = []
        self._allowed: dict[str, tuple[swio.ColumnKind, ...]] = {}
        self._code_reason: dict[str, str | None] = {}
        session.table_loaded.connect(self._reset)
        # A method switch says both "choices changed" and "fitted": the rows are marked
        # once, when control returns to the event loop (each mark re-measures the
        # columns sized to their contents).
        self._pending: dict[str, None] = {}
        self._flush = QTimer(self)
        self._flush.setSingleShot(True)
        self._flush.timeout.connect(self._mark_pending)
        session.choices_changed.connect(self._rows_changed)
        session.fitted.connect(lambda label: self._rows_changed([label]))
        session.settings_changed.connect(self._all_changed)

    def _reset(self) -> None:
        self.beginResetModel()
        self._labels = self.session.labels
        self._allowed, self._code_reason = {}, {}
        self.endResetModel()

    def _rows_changed(self, labels: list[str]) -> None:
        self._pending.update(dict.fromkeys(labels))
        self._flush.start(0)

    def _mark_pending(self) -> None:
        labels, self._pending = self._pending, {}
        for label in labels:
            if label in self._labels:
                row = self._labels.index(label)
                self.dataChanged.emit(self.index(row, METHOD), self.index(row, WARN))

    def _all_changed(self) -> None:
        if self._labels:
            self.dataChanged.emit(self.index(0, 0), self.index(len(self._labels) - 1, WARN))

    def allowed_kinds(self, label: str) -> tuple[swio.ColumnKind, ...]:
        """The kinds the column's cells allow (``io.allowed_kinds``), worked out once."""
        if label not in self._allowed:
            self._allowed[label] = swio.allowed_kinds(self.session.table, label)
        return self._allowed[label]

    def numbers_read_as_codes(self, label: str) -> str | None:
        """Why a column of numbers was taken as an identifier (None: it was not)."""
        if label not in self._code_reason:
            self._code_reason[label] = swio.identifier_of_numbers(self.session.table, label)
        return self._code_reason[label]

    def label(self, row: int) -> str:
        return self._labels[row]

    def row_of(self, label: str) -> int:
        return self._labels.index(label)

    def rowCount(self, parent=QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self._labels)

    def columnCount(self, parent=QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else 4

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if orientation == Qt.Orientation.Horizontal:
            if role == Qt.ItemDataRole.DisplayRole:
                return HEADERS[section]
            if role == Qt.ItemDataRole.ToolTipRole:
                return HEADER_TIPS[section]
        return None

    def flags(self, index):
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        if self.session.scalable(self._labels[index.row()]):
            return Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        return Qt.ItemFlag.ItemIsEnabled  # listed, readable, but not selectable

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        s = self.session
        label = self._labels[index.row()]
        col = index.column()
        why_not = s.why_not_scalable(label)
        if role == Qt.ItemDataRole.DisplayRole:
            if col == NAME:
                return s.header(label)
            if col == KIND:
                return s.kind(label)
            if col == METHOD:
                if why_not:
                    return "not scaled"
                return get_method(s.choice(label).method).name
            if col == WARN:
                return WARNING_MARK if (not why_not and s.warnings(label)) else ""
        elif role == Qt.ItemDataRole.ToolTipRole:
            reason = self.numbers_read_as_codes(label)
            if reason:
                return (
                    f"{s.header(label)} cannot be scaled: it was read as an identifier "
                    f"({reason}), though every cell is a number. If these are amounts rather "
                    "than codes, right-click it and choose Read as > number."
                )
            if why_not:
                return f"{s.header(label)} cannot be scaled: it is {why_not}."
            if col == WARN:
                warnings = s.warnings(label)
                return "\n".join(f"• {w}" for w in warnings) if warnings else None
            if col == METHOD:
                return get_method(s.choice(label).method).summary
            return f"{s.header(label)}: click to choose how to scale it; Ctrl+click to pick several"
        elif role == Qt.ItemDataRole.ForegroundRole:
            if why_not:
                return QBrush(QColor("#9a9a9a"))
            if col == WARN:
                return QBrush(QColor(theme.WARNING))
        elif role == Qt.ItemDataRole.TextAlignmentRole and col == WARN:
            return int(Qt.AlignmentFlag.AlignCenter)
        elif role == Qt.ItemDataRole.UserRole:
            return label
        return None


class ColumnList(QTableView):
    """The list of columns; selecting rows selects columns in the session.

    Right-clicking a row (or double-clicking its kind) offers the kinds its cells allow;
    choosing one emits ``kind_chosen(label, kind)`` for the window to re-read the column.
    """

    kind_chosen = Signal(str, str)

    def __init__(self, session: Session, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.session = session
        self.model_ = ColumnModel(session, self)
        self.setModel(self.model_)
        self.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setAlternatingRowColors(True)
        self.setShowGrid(False)
        self.setCornerButtonEnabled(False)
        self.setWordWrap(False)
        self.verticalHeader().setVisible(False)
        self.verticalHeader().setDefaultSectionSize(24)
        header = self.horizontalHeader()
        header.setSectionResizeMode(NAME, QHeaderView.ResizeMode.Stretch)
        header.setSectionResizeMode(KIND, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(METHOD, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(WARN, QHeaderView.ResizeMode.Fixed)
        header.resizeSection(WARN, 28)
        header.setHighlightSections(False)
        self.setToolTip("The columns of the table. Select one or several (Ctrl+click, Shift+click)")
        self.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        self.customContextMenuRequested.connect(self._show_kind_menu)
        self.doubleClicked.connect(self._on_double_click)
        self.selectionModel().selectionChanged.connect(self._on_selection)
        session.selection_changed.connect(self._show_selection)
        session.table_loaded.connect(lambda: self._show_selection(session.selection))

    def _on_selection(self, *_args) -> None:
        rows = sorted({i.row() for i in self.selectionModel().selectedRows()})
        labels = [self.model_.label(r) for r in rows]
        self.session.set_selection(labels)

    def _show_selection(self, labels: list[str]) -> None:
        current = [self.model_.label(i.row()) for i in self.selectionModel().selectedRows()]
        if sorted(current) == sorted(labels):
            return
        sel = QItemSelection()
        for label in labels:
            row = self.model_.row_of(label)
            sel.select(self.model_.index(row, 0), self.model_.index(row, WARN))
        sm = self.selectionModel()
        sm.blockSignals(True)
        try:
            sm.select(sel, QItemSelectionModel.SelectionFlag.ClearAndSelect)
            if labels:
                idx = self.model_.index(self.model_.row_of(labels[0]), 0)
                sm.setCurrentIndex(idx, QItemSelectionModel.SelectionFlag.NoUpdate)
                self.scrollTo(idx)
        finally:
            sm.blockSignals(False)
        self.viewport().update()

    def select_labels(self, labels: list[str]) -> None:
        """Select these columns as a user would (the session follows)."""
        sel = QItemSelection()
        for label in labels:
            row = self.model_.row_of(label)
            sel.select(self.model_.index(row, 0), self.model_.index(row, WARN))
        sm = self.selectionModel()
        sm.select(sel, QItemSelectionModel.SelectionFlag.ClearAndSelect)
        if labels:
            idx = self.model_.index(self.model_.row_of(labels[0]), 0)
            sm.setCurrentIndex(idx, QItemSelectionModel.SelectionFlag.NoUpdate)

    # ------------------------------------------------------------------ kind corrections

    def kind_menu(self, label: str) -> QMenu:
        """'Read as': number, identifier, text and date, those the cells allow enabled,
        the column's kind ticked."""
        menu = QMenu(self)
        menu.setToolTipsVisible(True)
        header = menu.addAction(f"Read '{self.session.header(label)}' as")
        header.setEnabled(False)
        allowed = self.model_.allowed_kinds(label)
        current = self.session.kind(label)
        group = QActionGroup(menu)
        for kind in swio.CORRECTABLE_KINDS:
            action = menu.addAction(str(kind.value))
            action.setCheckable(True)
            action.setChecked(kind.value == current)
            action.setEnabled(kind in allowed)
            action.setToolTip(
                f"Read the column as {described(kind)}"
                if kind in allowed
                else f"Not every cell of the column can be read as {described(kind)}"
            )
            action.setData(kind.value)
            group.addAction(action)
            action.triggered.connect(
                lambda _c=False, k=kind.value: k != current and self.kind_chosen.emit(label, k)
            )
        return menu

    def _show_kind_menu(self, pos) -> None:
        index = self.indexAt(pos)
        if index.isValid() and self.session.table is not None:
            self.kind_menu(self.model_.label(index.row())).popup(self.viewport().mapToGlobal(pos))

    def _on_double_click(self, index) -> None:
        if index.isValid() and index.column() == KIND:
            rect = self.visualRect(index)
            self._show_kind_menu(rect.bottomLeft())
