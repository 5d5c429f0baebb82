"""The data preview: a virtual table over the DataFrame, original or scaled values.

Only the cells the view asks for are formatted. Scaled values are computed per block of
rows (``BLOCK`` rows at a time) through the fitted column, and only for blocks the view
has shown, so scrolling a million-row table never scales the whole column on the
interface thread.
"""

from __future__ import annotations

from collections import OrderedDict

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import QComboBox, QHBoxLayout, QLabel, QTableView, QVBoxLayout, QWidget

from ..session import Session
from . import theme
from .frame_view import format_cell

BLOCK = 2048
MAX_BLOCKS = 256  # cached scaled blocks (about 4 MB at most)


def format_scaled(v: float) -> str:
    """A scaled value: as any other cell, to six significant digits."""
    return format_cell(v, digits=6)


class PreviewModel(QAbstractTableModel):
    def __init__(self, session: Session, parent=None) -> None:
        super().__init__(parent)
        self.session = session
        self.show_scaled = False
        self._columns: list[np.ndarray | None] = []  # None: read by blocks (_cells)
        self._cell_blocks: OrderedDict[tuple[int, int], np.ndarray] = OrderedDict()
        self._labels: list[str] = []
        self._numeric: list[bool] = []
        self._blocks: OrderedDict[tuple[str, int], np.ndarray] = OrderedDict()
        self.blocks_computed = 0
        session.table_loaded.connect(self._reset)
        session.fitted.connect(self._on_fitted)
        session.settings_changed.connect(self._on_settings)

    def _reset(self) -> None:
        self.beginResetModel()
        data = self.session.data
        self._labels = self.session.labels
        # Plain numpy arrays per column: reading a cell is then one index, no pandas call.
        # Columns held by numpy are read in place; the others (text in Arrow, nullable
        # numbers) are turned into numpy a block of rows at a time, as the view shows them:
        # a million texts made into Python strings at once took five times the memory of
        # every number column together.
        self._columns = []
        for i in range(data.shape[1]):
            series = data.iloc[:, i]
            in_place = isinstance(series.dtype, np.dtype)
            self._columns.append(series.to_numpy() if in_place else None)
        self._cell_blocks.clear()
        self._numeric = [self.session.kind(lab) == "number" for lab in self._labels]
        self._blocks.clear()
        self.endResetModel()

    def _on_fitted(self, label: str) -> None:
        for key in [k for k in self._blocks if k[0] == label]:
            del self._blocks[key]
        if self.show_scaled and label in self._labels:
            col = self._labels.index(label)
            self.dataChanged.emit(self.index(0, col), self.index(self.rowCount() - 1, col))
            self.headerDataChanged.emit(Qt.Orientation.Horizontal, col, col)

    def _on_settings(self) -> None:
        self._blocks.clear()
        if self.show_scaled and self._labels:
            self.dataChanged.emit(
                self.index(0, 0), self.index(self.rowCount() - 1, len(self._labels) - 1)
            )

    def set_show_scaled(self, on: bool) -> None:
        if on != self.show_scaled:
            self.beginResetModel()
            self.show_scaled = on
            self.endResetModel()

    def is_scaled_column(self, col: int) -> bool:
        return self.show_scaled and self.session.choice(self._labels[col]).method != "none"

    def scaled_block(self, label: str, block: int) -> np.ndarray:
        key = (label, block)
        arr = self._blocks.get(key)
        if arr is None:
            start = block * BLOCK
            rows = slice(start, min(start + BLOCK, self.session.n_rows))
            arr = self.session.scaled_values(label, rows)
            self._blocks[key] = arr
            self.blocks_computed += 1
            if len(self._blocks) > MAX_BLOCKS:
                self._blocks.popitem(last=False)
        else:
            self._blocks.move_to_end(key)
        return arr

    def _cell(self, row: int, col: int):
        column = self._columns[col]
        if column is not None:
            return column[row]
        key = (col, row // BLOCK)
        block = self._cell_blocks.get(key)
        if block is None:
            start = key[1] * BLOCK
            block = self.session.data.iloc[start : start + BLOCK, col].to_numpy()
            self._cell_blocks[key] = block
            if len(self._cell_blocks) > MAX_BLOCKS:
                self._cell_blocks.popitem(last=False)
        else:
            self._cell_blocks.move_to_end(key)
        return block[row % BLOCK]

    def rowCount(self, parent=QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else self.session.n_rows

    def columnCount(self, parent=QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self._labels)

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        row, col = index.row(), index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            if self.is_scaled_column(col):
                label = self._labels[col]
                if self.session.fitting(label):
                    return "…"
                if self.session.fit_error(label):
                    return ""
                return format_scaled(float(self.scaled_block(label, row // BLOCK)[row % BLOCK]))
            return format_cell(self._cell(row, col))
        if role == Qt.ItemDataRole.TextAlignmentRole:
            if self._numeric[col]:
                return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
            return int(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
        if role == Qt.ItemDataRole.ForegroundRole and self.is_scaled_column(col):
            return QBrush(QColor("#7a4f00"))
        return None

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if orientation == Qt.Orientation.Horizontal:
            if section >= len(self._labels):
                return None
            label = self._labels[section]
            if role == Qt.ItemDataRole.DisplayRole:
                name = self.session.header(label)
                # Two lines, so the name is never cut short by the added word.
                return f"{name}\n(scaled)" if self.is_scaled_column(section) else name
            if role == Qt.ItemDataRole.ToolTipRole:
                kind = self.session.kind(label)
                if self.is_scaled_column(section):
                    return f"{self.session.header(label)}: scaled values ({kind})"
                return f"{self.session.header(label)}: values as read ({kind})"
            if role == Qt.ItemDataRole.FontRole and self.is_scaled_column(section):
                f = QFont()
                f.setItalic(True)
                return f
        elif role == Qt.ItemDataRole.DisplayRole:
            return str(section + 1)
        return None


class PreviewPanel(QWidget):
    def __init__(self, session: Session, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.session = session
        self.model = PreviewModel(session, self)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(theme.MARGIN, theme.MARGIN // 2, theme.MARGIN, theme.MARGIN)
        layout.setSpacing(theme.SPACING // 2)
        top = QHBoxLayout()
        title = QLabel("Data")
        title.setProperty("role", "heading")
        top.addWidget(title)
        self.count = QLabel("")
        self.count.setProperty("role", "hint")
        top.addWidget(self.count)
        top.addStretch(1)
        top.addWidget(QLabel("Show"))
        self.mode = QComboBox()
        self.mode.addItem("original values", False)
        self.mode.addItem("scaled values", True)
        self.mode.setToolTip(
            "Show the values as read from the file, or as they will be written after scaling"
        )
        self.mode.currentIndexChanged.connect(
            lambda i: self._show_scaled(bool(self.mode.itemData(i)))
        )
        top.addWidget(self.mode)
        layout.addLayout(top)
        self.view = QTableView()
        self.view.setModel(self.model)
        self.view.setToolTip("The table as read; scaled columns are shown in italics when scaled")
        self.view.setAlternatingRowColors(True)
        self.view.setCornerButtonEnabled(False)
        self.view.setWordWrap(False)
        self.view.verticalHeader().setDefaultSectionSize(22)
        self.view.verticalHeader().setMinimumWidth(48)
        self.view.verticalHeader().setDefaultAlignment(
            Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        )
        self.view.horizontalHeader().setDefaultSectionSize(110)
        layout.addWidget(self.view, 1)
        session.table_loaded.connect(self._on_table)
        session.selection_changed.connect(self._on_selection)

    def _on_table(self) -> None:
        n = self.session.n_rows
        cols = len(self.session.labels)
        sample = self.session.sample
        rows = f"a sample of {n:,} rows of {sample.total_rows:,}" if sample else f"{n:,} rows"
        self.count.setText(f"{rows}, {cols} columns" if self.session.table is not None else "")

    def _on_selection(self, labels: list[str]) -> None:
        if labels and labels[0] in self.session.labels:
            col = self.session.labels.index(labels[0])
            self.view.scrollTo(
                self.model.index(self.view.rowAt(0) if self.view.rowAt(0) >= 0 else 0, col)
            )

    def set_show_scaled(self, on: bool) -> None:
        self.mode.setCurrentIndex(1 if on else 0)

    def _show_scaled(self, on: bool) -> None:
        self.model.set_show_scaled(on)
        # Scaled columns have a two-line heading ("name" over "(scaled)"): make room for it.
        header = self.view.horizontalHeader()
        header.setMinimumHeight(2 * header.fontMetrics().lineSpacing() + 10 if on else 0)
