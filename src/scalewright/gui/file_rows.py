"""The rows where a dialog asks for a file: one to read (with its sheet) and one to write."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import Signal
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QWidget,
)

from .. import io as swio
from ..io.options import WORKBOOK_SUFFIXES
from . import file_dialogs, theme

_TYPE_NAMES = {
    ".xlsx": "Workbook",
    ".csv": "Comma-separated text",
    ".tsv": "Tab-separated text",
}


def patterns(suffixes) -> str:
    """``*.csv *.tsv`` for a file dialog's filter."""
    return " ".join(f"*{s}" for s in suffixes)


READ_FILTER = f"Data files ({patterns(swio.SUPPORTED_READ)});;All files (*)"
# The first type is the one offered first (a workbook keeps the parameters beside the data).
WRITE_TYPES = sorted(swio.SUPPORTED_WRITE, key=lambda s: (s != ".xlsx", s))
WRITE_FILTER = ";;".join(
    f"{_TYPE_NAMES.get(s, s.lstrip('.').upper() + ' file')} (*{s})" for s in WRITE_TYPES
)


def with_chosen_type(name: str | Path, chosen_filter: str) -> Path:
    """The name a save dialog returned, ending as the file type chosen in it when the
    name itself has no ending we can write (``scaled`` with "(*.csv)" -> ``scaled.csv``)."""
    path = Path(name)
    if path.suffix.lower() in swio.SUPPORTED_WRITE:
        return path
    wanted = next((s for s in WRITE_TYPES if f"*{s}" in chosen_filter), WRITE_TYPES[0])
    return path.with_name(path.name + wanted)


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

    def browse(self) -> None:
        start = str(self.path().parent) if self.path() else ""
        name, _ = file_dialogs.open_file_name(self, self._caption, start, READ_FILTER)
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
    """Where to save: a path field with a Choose button (the dialog checks the name with
    ``tasks.check_target``)."""

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
        name, chosen = file_dialogs.save_file_name(self, "Save as", start, WRITE_FILTER)
        if not name:
            return
        self.set_path(with_chosen_type(name, chosen))
