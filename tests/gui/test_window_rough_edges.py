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


# ---------------------------------------------------------------- column kinds the user corrects


@pytest.fixture
def cents_file(tmp_path):
    """Payments in cents: whole numbers of 8 digits each, which the reader takes for an
    identifier (io's rule: all-same-width digit strings of 8 or more digits)."""
    path = tmp_path / "payments.csv"
    cents = [10000001, 10250075, 11999950, 10730020, 12500000, 10000999]
    lines = ["grower,payment_cents,crates"] + [
        f"grower {i},{c},{10 + i}" for i, c in enumerate(cents)
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path, cents


def kind_action(menu, kind: str):
    return next(a for a in menu.actions() if a.data() == kind)


def test_a_column_of_numbers_taken_for_an_identifier_can_be_read_as_numbers(
    qtbot, window, cents_file, tmp_path, wait_job, monkeypatch
):
    from scalewright import io as swio
    from scalewright.gui import kind_correction
    from scalewright.gui.column_list import KIND
    from scalewright.project import load_project

    path, cents = cents_file
    w = window
    w.load_data(path)
    wait_job(w)
    s = w.session
    assert s.kind("payment_cents") == "identifier" and not s.scalable("payment_cents")
    model = w.columns.model_
    tip = model.data(model.index(model.row_of("payment_cents"), KIND), Qt.ItemDataRole.ToolTipRole)
    assert "every cell is a number" in tip and "Read as > number" in tip

    menu = w.columns.kind_menu("payment_cents")
    enabled = {a.data(): a.isEnabled() for a in menu.actions() if a.data()}
    # io.allowed_kinds: identifier and text always, number as every cell is one, no dates
    assert enabled == {"number": True, "identifier": True, "text": True, "date": False}
    assert kind_action(menu, "identifier").isChecked()

    kind_action(menu, "number").trigger()
    wait_job(w)
    assert s.kind("payment_cents") == "number" and s.scalable("payment_cents")
    assert list(s.data["payment_cents"]) == cents  # the cells as written, now numbers
    assert s.table.options.kinds == {"payment_cents": "number"}
    assert s.selection == ["payment_cents"] and s.dirty
    assert w.stack.count() == 1 and w.stack.undoText() == "Read payment_cents as number"

    # Undo and Redo show the tables kept in memory: the file is not read again.
    monkeypatch.setattr(kind_correction.swio, "read_table", lambda *a, **k: 1 / 0)
    w.act_undo.trigger()
    assert s.kind("payment_cents") == "identifier"
    assert not s.dirty  # back where it was opened
    w.act_redo.trigger()
    assert s.kind("payment_cents") == "number"
    monkeypatch.undo()

    # The saved project keeps the correction, so apply and restore read files with it.
    choose_method(w, "zscore")
    w.ask_save_path = lambda *a: str(tmp_path / "payments")
    w.act_save.trigger()
    wait_job(w)
    project = load_project(tmp_path / "payments.swproj")
    assert project.read_options.kinds == {"payment_cents": "number"}
    assert "payment_cents" in project.plan.columns
    from scalewright import tasks

    assert tasks.reading_for(project, swio.ReadOptions()).kinds == {"payment_cents": "number"}


def test_a_kind_the_cells_do_not_allow_is_refused_with_the_row(qtbot, window, wait_job):
    w = window
    w.load_data(REPO / "sample_data" / "harvest_2025.csv")
    wait_job(w)
    menu = w.columns.kind_menu("orchard")
    assert not kind_action(menu, "number").isEnabled()  # names are not numbers
    before = w.session.table
    w.correct_kind("orchard", "number")  # asked anyway (as from an old menu)
    wait_job(w)
    assert w.session.table is before and w.stack.count() == 0
    text = w.last_message.text()
    assert "orchard" in text and "row 1" in text and "Lower Meadow" in text


def test_a_number_column_read_as_text_drops_its_choice_and_undo_brings_it_back(
    qtbot, opened, wait_job
):
    w = opened
    click_row(qtbot, w, "fruit_count")
    choose_method(w, "zscore")
    w.correct_kind("fruit_count", "text")
    wait_job(w)
    s = w.session
    assert s.kind("fruit_count") == "text" and s.choice("fruit_count").method == "none"
    w.act_undo.trigger()
    assert s.kind("fruit_count") == "number"
    assert s.choice("fruit_count").method == "zscore"
