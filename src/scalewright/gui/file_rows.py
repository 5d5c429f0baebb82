"""The rows where a dialog asks for a file: one to read (with its sheet) and one to write."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import Signal
from PySide6.QtWidgets import (
    QComboBox,
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QWidget,
)

from .. import io as swio
from ..io.options import WORKBOOK_SUFFIXES
from . import theme

READ_FILTER = "Data files (*.csv *.tsv *.txt *.xlsx *.xlsm *.xls *.ods);;All files (*)"
WRITE_FILTER = "Excel workbook (*.xlsx);;Comma-separated text (*.csv);;Tab-separated text (*.tsv)"


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
            path = path.with_suffix(
                ".tsv" if "*.tsv" in chosen else ".csv" if "*.csv" in chosen else ".xlsx"
            )
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
