"""The README's walk-through, done in the real window (offscreen), step by step.

Every figure the README tells a newcomer to expect is computed here by driving the window
the way the README says, and must appear in the README's walk-through section: the
walk-through cannot drift from what the program does. The figures are also checked
against something outside the window: pandas on the raw CSV, and sample_data/README.md
(mean 75.54385054488843 kg and sample sd 36.650738430940336 kg of yield_kg on the 2025
training rows).

``SCALEWRIGHT_SCREENSHOTS=docs/screenshots python -m pytest tests/gui/test_walkthrough.py``
also writes the screenshots the README shows.
"""

from __future__ import annotations

import os
import re
import shutil
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from dialog_helpers import choose
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QApplication

from scalewright.engine.number_text import number_text
from scalewright.gui.column_list import NAME
from scalewright.guide import CAUTION_CLIPPING, CAUTION_FIT_ON_TRAINING, CAUTION_KEEP_PROJECT

pytestmark = [pytest.mark.gui]

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "sample_data"
README = ROOT / "README.md"
README_MEAN = 75.54385054488843  # sample_data/README.md
README_SD = 36.650738430940336  # sample_data/README.md
# Resolved now: the walk-through changes the working folder.
SHOTS = (
    Path(os.environ["SCALEWRIGHT_SCREENSHOTS"]).resolve()
    if os.environ.get("SCALEWRIGHT_SCREENSHOTS")
    else None
)
CHOICES = {"yield_kg": "zscore", "irrigation_l_per_week": "minmax", "soil_ph": "minmax"}


def walkthrough_section() -> str:
    text = README.read_text(encoding="utf-8")
    start = text.index("## Walk-through")
    return text[start : text.index("\n## ", start + 1)]


def grab(widget, name: str, tmp_path: Path) -> None:
    """A screenshot as drawn offscreen, kept in $SCALEWRIGHT_SCREENSHOTS when set."""
    QApplication.processEvents()
    pixmap = widget.grab()
    assert not pixmap.isNull()
    assert pixmap.save(str(tmp_path / f"{name}.png"))
    if SHOTS is not None:
        pixmap.save(str(SHOTS / f"{name}.png"))


def click_row(qtbot, window, label: str) -> None:
    view = window.columns
    index = view.model_.index(view.model_.row_of(label), NAME)
    view.scrollTo(index)
    qtbot.mouseClick(
        view.viewport(), Qt.MouseButton.LeftButton, pos=view.visualRect(index).center()
    )


def type_path(qtbot, dialog, path: Path) -> None:
    edit = dialog.data_row.edit
    edit.setFocus()
    edit.clear()
    with qtbot.waitSignal(dialog.previewReady, timeout=30000):
        qtbot.keyClicks(edit, str(path))
        qtbot.keyClick(edit, Qt.Key.Key_Return)


def save_dialog(qtbot, dialog, target: Path) -> None:
    dialog.output_row.edit.clear()
    qtbot.keyClicks(dialog.output_row.edit, str(target))
    assert dialog.save_button.isEnabled(), dialog.save_button.toolTip()
    with qtbot.waitSignal(dialog.fileWritten, timeout=30000):
        qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)


def walk(qtbot, window, wait_job, tmp_path: Path, monkeypatch) -> dict[str, str]:
    """Do the walk-through; return what the window showed at each step, by name.

    It works in a folder holding copies of the sample files, with file names typed as
    the user sees them, so that the screenshots show plain names and not test paths.
    """
    for name in ("harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"):
        shutil.copy(SAMPLE / name, tmp_path / name)
    monkeypatch.chdir(tmp_path)
    w = window
    w.resize(1280, 800)
    shown: dict[str, str] = {}

    # 1. File > Open data..., harvest_2025.csv; the read dialog shows how it will be read.
    w.ask_open_path = lambda *a: str(tmp_path / "harvest_2025.csv")
    w.act_open.trigger()
    dialog = w.import_dialog
    opts = dialog.options()
    shown["delimiter"] = opts.delimiter
    grab(dialog, "walkthrough_1_open", tmp_path)
    dialog.accept()
    wait_job(w)
    shown["opened"] = w.statusBar().currentMessage()

    # 2. Choose methods, 3. fit on the training rows.
    for label, method in CHOICES.items():
        click_row(qtbot, w, label)
        choose(qtbot, w.method_panel.method_box, method)
    w.method_panel.set_fit_where("split", "train")
    click_row(qtbot, w, "yield_kg")
    qtbot.waitUntil(lambda: not w.session.fits_pending, timeout=30000)
    shown["fit_note"] = w.method_panel.fit_note.toolTip()
    shown["yield_fitted"] = w.method_panel.fitted.text()
    shown["yield_params"] = w.session.fitted_column("yield_kg").pooled.params
    shown["histogram_note"] = w.histograms.note.text()
    # As a user would drag it: the method panel wide enough for its options at 1280 wide.
    w.main_split.setSizes([300, 600, 380])
    grab(w, "walkthrough_2_fit", tmp_path)
    for label in ("irrigation_l_per_week", "soil_ph"):
        click_row(qtbot, w, label)
        shown[f"{label}_fitted"] = w.method_panel.fitted.text()

    # 4. File > Export scaled data... 5. File > Save project.
    w.ask_save_path = lambda *a: str(tmp_path / "harvest_2025_scaled.xlsx")
    w.act_export.trigger()
    wait_job(w)
    shown["exported"] = w.statusBar().currentMessage()
    w.ask_save_path = lambda *a: str(tmp_path / "harvest_2025")
    w.act_save.trigger()
    wait_job(w)
    shown["saved"] = w.statusBar().currentMessage()

    # 6. File > Apply to another file..., harvest_2026.csv, clip.
    w.act_apply.trigger()
    qtbot.waitUntil(lambda: w.apply_dialog is not None, timeout=30000)
    apply = w.apply_dialog
    type_path(qtbot, apply, Path("harvest_2026.csv"))
    shown["apply_reports"] = apply.preview_reports()
    shown["apply_summary"] = apply.summary_label.text()
    check = apply.clip_check
    qtbot.mouseClick(check, Qt.MouseButton.LeftButton, pos=QPoint(8, check.height() // 2))
    assert apply.clip()
    shown["clip_note"] = apply.clip_note.text()
    apply.output_row.edit.clear()
    qtbot.keyClicks(apply.output_row.edit, "harvest_2026_scaled.csv")
    grab(apply, "walkthrough_3_apply", tmp_path)
    save_dialog(qtbot, apply, Path("harvest_2026_scaled.csv"))
    shown["applied"] = apply.result_text()
    apply.close()

    # 7. File > Restore original units..., predicted_yield_scaled.csv, pair with yield_kg.
    w.act_restore.trigger()
    qtbot.waitUntil(lambda: w.restore_dialog is not None, timeout=30000)
    restore = w.restore_dialog
    type_path(qtbot, restore, Path("predicted_yield_scaled.csv"))
    choose(qtbot, restore.mapping_box("predicted_yield"), "yield_kg")
    restore.output_row.edit.clear()
    qtbot.keyClicks(restore.output_row.edit, "predicted_yield_kg.csv")
    shown["restore_preview"] = restore.preview_frame()
    grab(restore, "walkthrough_4_restore", tmp_path)
    save_dialog(qtbot, restore, Path("predicted_yield_kg.csv"))
    shown["restored"] = restore.result_text()
    restore.close()
    return shown


def test_the_readme_walkthrough_shows_what_the_window_shows(
    qtbot, window, wait_job, tmp_path, monkeypatch
):
    shown = walk(qtbot, window, wait_job, tmp_path, monkeypatch)
    print(shown)  # seen with -s when the README needs new figures
    readme = walkthrough_section()
    raw_2025 = pd.read_csv(SAMPLE / "harvest_2025.csv", dtype={"tree_code": str})
    raw_2026 = pd.read_csv(SAMPLE / "harvest_2026.csv", dtype={"tree_code": str})

    # Step 1: the file as pandas reads it (outside reference for the count).
    assert shown["delimiter"] == ","
    assert f"Opened harvest_2025.csv: {len(raw_2025):,} rows" in shown["opened"]
    assert f"{len(raw_2025):,} rows" in readme

    # Steps 2-3: yield_kg fitted on the training rows (sample_data/README.md's figures).
    train = raw_2025[raw_2025["split"] == "train"]
    params = shown["yield_params"]
    assert params["mean"] == pytest.approx(README_MEAN, rel=1e-12)
    assert params["sd"] == pytest.approx(README_SD, rel=1e-12)
    assert params["mean"] == pytest.approx(train["yield_kg"].mean(), rel=1e-12)  # pandas
    for word in ("mean", "sd"):
        text = number_text(params[word], ".6g")  # as the method panel shows it
        assert text in shown["yield_fitted"], shown["yield_fitted"]
        assert text in readme, f"README lacks the {word} of yield_kg, {text}"
    n_train, n_yield = len(train), int(train["yield_kg"].notna().sum())
    assert f"Fitted on {n_yield:,} values" in shown["yield_fitted"]
    n_all = int(raw_2025["yield_kg"].notna().sum())  # the histograms' figures: every row
    assert f"{n_all:,} yields, mean {raw_2025['yield_kg'].mean():.2f}" in " ".join(readme.split())
    assert "split is train" in shown["histogram_note"]
    assert f"{n_train:,} training rows" in readme
    assert f"{n_yield:,}" in readme
    for label in ("irrigation_l_per_week", "soil_ph"):
        lo, hi = train[label].min(), train[label].max()
        for value in (lo, hi):
            text = number_text(float(value), ".6g")
            assert text in shown[f"{label}_fitted"], shown[f"{label}_fitted"]
            assert text in readme, f"README lacks {label}'s fitted {text}"
    assert shown["fit_note"] == CAUTION_FIT_ON_TRAINING

    # Steps 4-5: exported and saved, with the reminder to keep the project.
    assert "Exported harvest_2025_scaled.xlsx" in shown["exported"]
    book = openpyxl.load_workbook(tmp_path / "harvest_2025_scaled.xlsx", read_only=True)
    sheets = {ws.title: ws.sheet_state for ws in book.worksheets}
    assert sheets == {"data": "visible", "parameters": "visible", "scalewright project": "hidden"}
    assert book["data"].max_row == len(raw_2025) + 1  # a header, then every row
    book.close()
    for name in (
        "`data` sheet",
        f"all {len(raw_2025):,} rows",
        "`parameters` sheet",
        "hidden sheet",
    ):
        assert name in " ".join(readme.split()), name
    assert shown["saved"] == f"Saved harvest_2025.swproj. {CAUTION_KEEP_PROJECT}"
    assert "harvest_2025.swproj" in readme

    # Step 6: values of 2026 outside the fitted range, counted again with pandas.
    reports = shown["apply_reports"]
    total = 0
    for label in CHOICES:
        lo, hi = train[label].min(), train[label].max()
        below, above = int((raw_2026[label] < lo).sum()), int((raw_2026[label] > hi).sum())
        assert (reports[label].n_below, reports[label].n_above) == (below, above)
        total += below + above
        row = f"| `{label}` | {below:,} | {above:,} |"
        assert row in readme, f"README lacks the row {row}"
    assert f"{total:,} values lie outside the fitted range" in shown["apply_summary"]
    assert f"{total:,} values" in readme
    assert shown["clip_note"] == CAUTION_CLIPPING
    assert f"{len(raw_2026):,} rows" in readme

    # Step 7: the first tree's prediction in kilograms, by sample_data/README.md's formula.
    scaled = pd.read_csv(SAMPLE / "predicted_yield_scaled.csv", dtype={"tree_code": str})
    first_kg = scaled["predicted_yield"].iloc[0] * README_SD + README_MEAN
    preview = shown["restore_preview"]
    assert preview.iloc[0, 1] == pytest.approx(first_kg, rel=1e-12)
    restored = pd.read_csv(tmp_path / "predicted_yield_kg.csv", dtype={"tree_code": str})
    np.testing.assert_allclose(
        restored["predicted_yield"], scaled["predicted_yield"] * README_SD + README_MEAN, rtol=1e-12
    )
    code = scaled["tree_code"].iloc[0]
    assert re.search(rf"`{code}`.*{first_kg:.2f} kg", readme), f"README lacks {code} {first_kg:.2f}"
    assert f"{number_text(scaled['predicted_yield'].iloc[0], '.4f')}" in readme
