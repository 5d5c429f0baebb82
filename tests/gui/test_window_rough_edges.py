"""Issue 8's window items: checks before file dialogs, the folder offered after writing,
toolbar icons, kind corrections in the column list, restored names, apply pairing."""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import Qt, QUrl
from test_gui_window import choose_method, click_row

REPO = Path(__file__).resolve().parents[2]


def _unfittable(qtbot, w) -> None:
    """Box-Cox on a column with zeros: it cannot be fitted (the sample's pest counts)."""
    click_row(qtbot, w, "pest_trap_count")
    choose_method(w, "boxcox")
    assert w.session.problems()


# ---------------------------------------------------------------- item 3: check first


@pytest.mark.parametrize("action", ["act_export", "act_save", "act_save_as"])
def test_a_write_that_cannot_succeed_says_why_before_any_file_dialog(qtbot, opened, action):
    w = opened
    _unfittable(qtbot, w)
    asked = []
    w.ask_save_path = lambda *a: asked.append(a)
    getattr(w, action).trigger()
    assert asked == []  # no file dialog was shown
    assert "pest_trap_count" in w.last_message.text()
    assert not w.jobs.busy


def test_apply_with_an_unfittable_column_says_why_before_any_dialog(qtbot, opened):
    w = opened
    _unfittable(qtbot, w)
    asked = []
    w.ask_open_path = lambda *a: asked.append(a)
    w.act_apply.trigger()
    assert asked == [] and w.apply_dialog is None
    assert "pest_trap_count" in w.last_message.text()


# ---------------------------------------------------------------- item 10: folder, icons


def test_after_an_export_the_window_offers_the_containing_folder(qtbot, opened, tmp_path, wait_job):
    w = opened
    click_row(qtbot, w, "yield_kg")
    choose_method(w, "zscore")
    target = tmp_path / "out" / "scaled.csv"
    target.parent.mkdir()
    w.ask_save_path = lambda *a: str(target)
    opened_urls = []
    w.open_url = opened_urls.append
    assert not w.open_folder_button.isVisible()
    w.act_export.trigger()
    wait_job(w)
    assert target.is_file()
    assert w.open_folder_button.isVisible()
    qtbot.mouseClick(w.open_folder_button, Qt.MouseButton.LeftButton)
    assert opened_urls == [QUrl.fromLocalFile(str(target.parent))]


def test_after_a_save_the_window_offers_the_project_folder(qtbot, opened, tmp_path, wait_job):
    w = opened
    w.ask_save_path = lambda *a: str(tmp_path / "harvest")
    opened_urls = []
    w.open_url = opened_urls.append
    w.act_save.trigger()
    wait_job(w)
    assert (tmp_path / "harvest.swproj").is_file()
    w.open_folder_button.click()
    assert opened_urls == [QUrl.fromLocalFile(str(tmp_path))]


def test_every_toolbar_action_has_its_own_icon(qtbot, window, monkeypatch):
    from PySide6.QtWidgets import QToolBar

    from scalewright.gui import main_window

    # The icons of this checkout (the installed package may point at another one).
    monkeypatch.setattr(main_window, "icon_folder", lambda: REPO / "resources" / "icons")
    w = main_window.MainWindow(settings=window.settings)
    qtbot.addWidget(w)
    actions = [a for a in w.findChild(QToolBar).actions() if not a.isSeparator()]
    assert len(actions) == 8
    keys = set()
    for a in actions:
        pixmap = a.icon().pixmap(24)
        assert not pixmap.isNull(), a.text()
        image = pixmap.toImage()
        keys.add(bytes(image.constBits()))
    assert len(keys) == len(actions)  # no two look the same
    # and the drawn ones are installed with the package
    pyproject = (REPO / "pyproject.toml").read_text()
    assert '"icons/*.svg"' in pyproject
    for name in ("open-data", "open-project", "export", "apply", "restore"):
        assert (REPO / "resources" / "icons" / f"{name}.svg").is_file()
