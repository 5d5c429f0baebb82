"""Open and save dialogs that are large enough to read and remember their size.

Qt's static helpers (``QFileDialog.getOpenFileName``) open at a small default size on many
desktops and forget any resizing. Every file dialog of the window goes through here: it
opens at a readable size (at least 960 x 640, or what the user last left it at) and keeps
that size for next time in the application's settings.
"""

from __future__ import annotations

from PySide6.QtCore import QByteArray, QSettings
from PySide6.QtWidgets import QDialog, QFileDialog, QWidget

DEFAULT_SIZE = (960, 640)
SETTINGS_KEY = "file_dialog/state"


def make_dialog(parent: QWidget | None, caption: str, start: str, filter_: str, *, save: bool):
    """The dialog, sized, before it is shown (tests look at it here)."""
    dialog = QFileDialog(parent, caption, start, filter_)
    dialog.setAcceptMode(
        QFileDialog.AcceptMode.AcceptSave if save else QFileDialog.AcceptMode.AcceptOpen
    )
    dialog.setFileMode(QFileDialog.FileMode.AnyFile if save else QFileDialog.FileMode.ExistingFile)
    dialog.resize(*DEFAULT_SIZE)
    saved = QSettings().value(SETTINGS_KEY)
    if isinstance(saved, QByteArray | bytes) and saved:
        dialog.restoreGeometry(QByteArray(saved))
    dialog.setMinimumSize(640, 420)
    return dialog


def remember(dialog: QFileDialog) -> None:
    QSettings().setValue(SETTINGS_KEY, dialog.saveGeometry())


def _run(dialog: QFileDialog) -> tuple[str, str]:
    accepted = dialog.exec() == QDialog.DialogCode.Accepted
    remember(dialog)
    files = dialog.selectedFiles()
    if not accepted or not files:
        return "", ""
    return files[0], dialog.selectedNameFilter()


def open_file_name(parent: QWidget | None, caption: str, start: str, filter_: str):
    """(path or "", the chosen filter), as ``QFileDialog.getOpenFileName`` returns."""
    return _run(make_dialog(parent, caption, start, filter_, save=False))


def save_file_name(parent: QWidget | None, caption: str, start: str, filter_: str):
    """(path or "", the chosen filter), as ``QFileDialog.getSaveFileName`` returns."""
    return _run(make_dialog(parent, caption, start, filter_, save=True))
