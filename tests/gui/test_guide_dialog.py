"""Help > Method guide, and the cautions the window shows where they matter.

The guide's text is ``scalewright.guide.guide_markdown()`` (also the README's section,
tests/test_guide.py); here the dialog must show that same Markdown, rendered.
"""

from __future__ import annotations

import pytest
from dialog_helpers import save_screenshot
from PySide6.QtWidgets import QTextBrowser

from scalewright.engine import METHODS
from scalewright.guide import (
    CAUTION_FIT_ON_TRAINING,
    CAUTION_SHAPE,
    HINT_FIT_ON_TRAINING,
    HINT_SHAPE,
    guide_markdown,
)

pytestmark = [pytest.mark.gui]


def test_help_menu_opens_the_method_guide_from_the_one_source(qtbot, window, tmp_path):
    help_menu = next(a.menu() for a in window.menuBar().actions() if a.text() == "&Help")
    entry = next(a for a in help_menu.actions() if a.text() == "Method guide")
    entry.trigger()
    dialog = window.guide_dialog
    qtbot.waitUntil(dialog.isVisible)
    assert not dialog.isModal()  # the guide can stay open beside the window
    assert dialog.markdown == "## Method guide\n\n" + guide_markdown()
    browser = dialog.findChild(QTextBrowser, "guide")
    shown = browser.toPlainText()
    for method in METHODS.values():
        assert f"{method.name} ({method.id})" in shown  # a heading per method, rendered
        for words in (method.summary, method.assumes, method.reverses):
            assert " ".join(words.split()) in " ".join(shown.split())
    assert "**" not in shown and "### " not in shown  # Markdown rendered, not shown raw
    save_screenshot(dialog, "method_guide", tmp_path)
    dialog.close()


def test_the_method_panel_says_when_a_method_changes_the_shape(qtbot, opened):
    panel = opened.method_panel
    opened.columns.select_labels(["yield_kg"])
    assert panel.fit_note.text() == HINT_FIT_ON_TRAINING
    assert panel.fit_note.toolTip() == CAUTION_FIT_ON_TRAINING  # the guide's whole words
    assert panel.shape_note.toolTip() == CAUTION_SHAPE
    assert panel.fit_note.isVisible()
    for method_id, shaped in (("zscore", False), ("boxcox", True), ("quantile", True)):
        panel.set_method(method_id)
        assert panel.shape_note.isVisible() == shaped, method_id
        assert panel.shape_note.text() == (HINT_SHAPE if shaped else "")
