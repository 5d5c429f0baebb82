"""The About box: what Scalewright is, its version, and the libraries it ships with.

The list is the same as ``scalewright --version`` prints (``scalewright.about``), read from
the installed packages at the moment the box opens, plus the version of the Qt libraries
actually loaded.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, qVersion
from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QHeaderView,
    QLabel,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from .. import __version__
from ..about import OTHERS_NOTE, QT_NOTE, Library, bundled_libraries

SUMMARY = (
    "Scale the numeric columns of a table, keep every fitted parameter in a project file, "
    "re-apply them to new files and turn scaled values back into original units."
)


def shown_libraries() -> list[Library]:
    """The shipped libraries, with the Qt runtime itself after Qt for Python."""
    libraries = bundled_libraries()
    qt = Library("Qt", qVersion(), "LGPL-3.0-only (as shipped with PySide6)")
    return [*libraries, qt]


class AboutDialog(QDialog):
    """Version, a one-line summary, and a table of library, version and licence."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("About Scalewright")
        self.setObjectName("about_dialog")
        lay = QVBoxLayout(self)

        self.title = QLabel(f"<b>Scalewright {__version__}</b>")
        self.title.setProperty("role", "heading")
        lay.addWidget(self.title)
        summary = QLabel(SUMMARY)
        summary.setWordWrap(True)
        lay.addWidget(summary)
        lay.addWidget(QLabel("Scalewright is free software under the MIT licence. It uses:"))

        self.libraries = shown_libraries()
        self.table = QTableWidget(len(self.libraries), 3)
        self.table.setHorizontalHeaderLabels(["Library", "Version", "Licence"])
        self.table.verticalHeader().hide()
        self.table.verticalHeader().setDefaultSectionSize(self.fontMetrics().height() + 8)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setWordWrap(False)
        for row, lib in enumerate(self.libraries):
            for col, text in enumerate((lib.name, lib.version, lib.licence)):
                item = QTableWidgetItem(text)
                item.setToolTip(text)
                self.table.setItem(row, col, item)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(0, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(1, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(2, QHeaderView.ResizeMode.Stretch)
        lay.addWidget(self.table, 1)

        self.qt_note = QLabel(f"{QT_NOTE}<br><br>{OTHERS_NOTE}")
        self.qt_note.setWordWrap(True)
        self.qt_note.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.qt_note.setProperty("role", "hint")
        lay.addWidget(self.qt_note)

        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)
        self.resize(640, 560)
