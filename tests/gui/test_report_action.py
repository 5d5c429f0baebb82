"""File > Report…: the window writes the same report as the command line, from its own
choices (with the open table for the histograms) or from a project the user picks."""

from __future__ import annotations

import shutil

from scalewright.gui import commands
from scalewright.project import load_project
from support import SAMPLE_DATA

HARVEST_2025 = SAMPLE_DATA / "harvest_2025.csv"


def _menu_texts(window, title: str) -> list[str]:
    menu = next(a.menu() for a in window.menuBar().actions() if a.text() == title)
    return [a.text() for a in menu.actions()]


def _wait_written(qtbot, window, target) -> None:
    qtbot.waitUntil(lambda: target.is_file() and not window.jobs.busy, timeout=60000)


def test_report_of_the_windows_choices(qtbot, opened, tmp_path):
    w = opened
    assert "Report…" in _menu_texts(w, "&File")
    commands.set_method(w.stack, w.session, ["yield_kg", "soil_ph"], "zscore")
    qtbot.waitUntil(lambda: not w.session.fits_pending, timeout=30000)
    target = tmp_path / "window_report"  # no ending: a web page
    w.ask_save_path = lambda *a: str(target)
    written = []
    w.file_written.connect(written.append)
    w.act_report.trigger()
    page = target.with_name("window_report.html")
    _wait_written(qtbot, w, page)
    assert written == [page]
    html = page.read_text(encoding="utf-8")
    assert html.count("<svg") == 4  # before and after, for both columns
    assert "open in the window" in html
    for label in ("yield_kg", "soil_ph"):
        fc = w.session.fitted_column(label)
        assert repr(fc.pooled.params["mean"]) in html


def test_pdf_report_of_a_picked_project_with_no_data_open(qtbot, window, tmp_path):
    from scalewright.cli import main

    data = tmp_path / "harvest_2025.csv"
    shutil.copyfile(HARVEST_2025, data)
    project = tmp_path / "harvest.swproj"
    assert main(["fit", str(data), "-m", "yield_kg=log", "-p", str(project)]) == 0
    window.ask_open_path = lambda *a: str(project)
    target = tmp_path / "picked.pdf"
    window.ask_save_path = lambda *a: str(target)
    window.act_report.trigger()
    _wait_written(qtbot, window, target)
    assert target.read_bytes().startswith(b"%PDF-")
    assert load_project(project).plan is not None  # the project file is left as it was


def test_choosing_the_data_file_name_writes_beside_it(qtbot, window, tmp_path):
    data = tmp_path / "harvest_2025.csv"
    shutil.copyfile(HARVEST_2025, data)
    window.load_data(data)
    qtbot.waitUntil(lambda: window.session.table is not None and not window.jobs.busy)
    commands.set_method(window.stack, window.session, ["yield_kg"], "zscore")
    qtbot.waitUntil(lambda: not window.session.fits_pending, timeout=30000)
    before = data.read_bytes()
    window.ask_save_path = lambda *a: str(data)  # the data file's own name
    window.act_report.trigger()
    page = tmp_path / "harvest_2025.csv.html"
    _wait_written(qtbot, window, page)
    assert data.read_bytes() == before
