"""A read-only table of a small DataFrame, as the dialogs show their previews."""

from __future__ import annotations

import datetime as dt
import math
from typing import Any

import numpy as np
import pandas as pd
from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QTableView


def format_cell(value: Any, *, digits: int = 10) -> str:
    """A cell as the user should see it, in every table of the window: blanks empty,
    infinities as the files write them (``inf``, ``-inf``), whole numbers in full and other
    numbers to ``digits`` significant digits, without float noise."""
    if value is None or value is pd.NA or value is pd.NaT:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (float, np.floating)):
        v = float(value)
        if math.isnan(v):
            return ""
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        if v.is_integer() and abs(v) < 1e15:
            return str(int(v))
        return f"{v:.{digits}g}"
    if isinstance(value, np.datetime64):
        if np.isnat(value):
            return ""
        value = pd.Timestamp(value)
    if isinstance(value, pd.Timestamp):
        if value == value.normalize():
            return value.strftime("%Y-%m-%d")
        return value.isoformat(sep=" ")
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    return str(value)


class FrameModel(QAbstractTableModel):
    """A read-only view of a small DataFrame; cells are formatted only when drawn."""

    def __init__(
        self,
        frame: pd.DataFrame | None = None,
        *,
        header_tips: dict[str, str] | None = None,
        header_texts: dict[str, str] | None = None,
        parent=None,
    ) -> None:
        super().__init__(parent)
        self._frame = pd.DataFrame()
        self._tips: dict[str, str] = {}
        self._texts: dict[str, str] = {}
        self.set_frame(frame, header_tips=header_tips, header_texts=header_texts)

    def set_frame(
        self,
        frame: pd.DataFrame | None,
        *,
        header_tips: dict[str, str] | None = None,
        header_texts: dict[str, str] | None = None,
    ) -> None:
        self.beginResetModel()
        self._frame = frame if frame is not None else pd.DataFrame()
        self._tips = dict(header_tips or {})
        self._texts = dict(header_texts or {})
        self.endResetModel()

    def frame(self) -> pd.DataFrame:
        return self._frame

    def rowCount(self, parent=QModelIndex()) -> int:  # noqa: B008 - Qt's own signature
        return 0 if parent.isValid() else len(self._frame)

    def columnCount(self, parent=QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else self._frame.shape[1]

    def data(self, index: QModelIndex, role: int = Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        if role == Qt.ItemDataRole.DisplayRole:
            return format_cell(self._frame.iat[index.row(), index.column()])
        if role == Qt.ItemDataRole.TextAlignmentRole:
            dtype = self._frame.dtypes.iloc[index.column()]
            if pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_bool_dtype(dtype):
                return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None

    def headerData(self, section: int, orientation, role: int = Qt.ItemDataRole.DisplayRole):
        if orientation == Qt.Orientation.Vertical:
            if role == Qt.ItemDataRole.DisplayRole:
                return str(section + 1)
            return None
        if section >= self._frame.shape[1]:
            return None
        label = str(self._frame.columns[section])
        if role == Qt.ItemDataRole.DisplayRole:
            return self._texts.get(label, label)
        if role == Qt.ItemDataRole.ToolTipRole:
            return self._tips.get(label, label)
        return None


def make_preview_view(model: QAbstractTableModel, tooltip: str) -> QTableView:
    """A table view set up the same way in every dialog."""
    view = QTableView()
    view.setModel(model)
    view.setToolTip(tooltip)
    view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
    view.setAlternatingRowColors(True)
    view.setWordWrap(False)
    view.horizontalHeader().setDefaultAlignment(Qt.AlignmentFlag.AlignLeft)
    view.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
    view.verticalHeader().setDefaultSectionSize(view.fontMetrics().height() + 8)
    return view
