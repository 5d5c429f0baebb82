"""Errors shown as a short plain message, with the details one click away."""

from __future__ import annotations

import traceback

from PySide6.QtWidgets import QMessageBox, QWidget

from ..errors import ScalewrightError


def plain_message(err: BaseException) -> str:
    """One sentence for the user: our own errors as they are, anything else in general words."""
    if isinstance(err, ScalewrightError):
        return str(err)
    if isinstance(err, OSError):
        where = f" ({err.filename})" if getattr(err, "filename", None) else ""
        return f"The file could not be used{where}: {err.strerror or err}"
    return f"Something unexpected went wrong: {err}"


def details_of(err: BaseException) -> str:
    return "".join(traceback.format_exception(type(err), err, err.__traceback__))


def show_error(
    parent: QWidget | None,
    err: BaseException | str,
    *,
    title: str = "Scalewright",
    details: str | None = None,
) -> QMessageBox:
    """Show the message without blocking (window-modal) and return the box."""
    box = QMessageBox(parent)
    box.setIcon(QMessageBox.Icon.Warning)
    box.setWindowTitle(title)
    if isinstance(err, BaseException):
        box.setText(plain_message(err))
        if details is None and not isinstance(err, ScalewrightError):
            details = details_of(err)
    else:
        box.setText(err)
    if details:
        box.setDetailedText(details)
    box.setStandardButtons(QMessageBox.StandardButton.Ok)
    box.open()
    return box
