"""Helpers the dialog tests share (import as ``from dialog_helpers import ...``; pytest puts
this folder on the path for the test modules in it)."""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication


def save_screenshot(dialog, name: str, tmp_path: Path) -> Path:
    """Grab the dialog as drawn offscreen; also into $SCALEWRIGHT_SCREENSHOTS when set
    (``SCALEWRIGHT_SCREENSHOTS=docs/screenshots python -m pytest tests/gui``)."""
    QApplication.processEvents()  # let pending layout requests settle first
    pixmap = dialog.grab()
    assert not pixmap.isNull()
    assert (pixmap.width(), pixmap.height()) == (dialog.width(), dialog.height())
    out = tmp_path / f"{name}.png"
    assert pixmap.save(str(out))
    folder = os.environ.get("SCALEWRIGHT_SCREENSHOTS")
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        pixmap.save(str(Path(folder) / f"{name}.png"))
    return out


def choose(qtbot, box, value) -> None:
    """Pick the item whose data is ``value`` with the keyboard, as a user would."""
    box.setFocus()
    qtbot.keyClick(box, Qt.Key.Key_Home)
    for _ in range(box.count()):
        if box.currentData() == value:
            return
        qtbot.keyClick(box, Qt.Key.Key_Down)
    assert box.currentData() == value, f"{value!r} is not in the list"
