"""Help > Method guide: the same Markdown as the README's method guide, in a window.

The text comes from ``scalewright.guide`` (written from the methods' own descriptions), so
the in-app help and the README cannot say different things.
"""

from __future__ import annotations

from PySide6.QtWidgets import QDialog, QDialogButtonBox, QTextBrowser, QVBoxLayout, QWidget

from ..guide import guide_markdown


class GuideDialog(QDialog):
    """A read-only, scrollable method guide; it does not block the window."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Method guide")
        self.setObjectName("guide_dialog")
        self.resize(760, 640)
        lay = QVBoxLayout(self)
        self.browser = QTextBrowser()
        self.browser.setObjectName("guide")
        self.browser.setOpenExternalLinks(True)
        self.browser.setToolTip("What each scaling method does, assumes and how it reverses")
        self.markdown = "## Method guide\n\n" + guide_markdown()
        self.browser.setMarkdown(self.markdown)
        lay.addWidget(self.browser, 1)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        buttons.button(QDialogButtonBox.StandardButton.Close).setToolTip("Close the guide")
        lay.addWidget(buttons)
