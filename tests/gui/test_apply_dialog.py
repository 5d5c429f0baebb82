"""The apply dialog, driven as a user would: choose next season's file, read the list of
values outside the fitted range, clip or not, choose where to save, save or cancel.

Every count shown is compared with ``engine.apply`` for the same project, and every file
written with the engine's result and with ``tasks.apply_to_file``'s own file.
"""

from __future__ import annotations

import filecmp
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from dialog_helpers import save_screenshot
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QDialog, QLabel

from scalewright import engine, tasks
from scalewright import io as swio
from scalewright.engine import ColumnChoice, FitSettings
from scalewright.errors import ScalewrightError
from scalewright.gui.apply_dialog import ApplyDialog

pytestmark = [pytest.mark.gui, pytest.mark.usefixtures("themed")]

SAMPLE = Path(__file__).resolve().parents[2] / "sample_data"
HARVEST_2025 = SAMPLE / "harvest_2025.csv"
HARVEST_2026 = SAMPLE / "harvest_2026.csv"
FITTED = ["trunk_girth_cm", "yield_kg", "sugar_brix", "irrigation_l_per_week", "soil_ph"]
CHOICES = {
    "trunk_girth_cm": ColumnChoice("robust"),
    "yield_kg": ColumnChoice("zscore"),
    "sugar_brix": ColumnChoice("zscore"),
    "irrigation_l_per_week": ColumnChoice("minmax"),
    "soil_ph": ColumnChoice("minmax"),
}


@pytest.fixture(scope="module")
def project():
    """yield_kg and friends fitted on the 2025 training rows, the way the window does it."""
    table = swio.read_table(HARVEST_2025)
    return tasks.fit_project(table, CHOICES, FitSettings(fit_where=("split", "train")))


@pytest.fixture(scope="module")
def table_2026():
    return swio.read_table(HARVEST_2026)


@pytest.fixture
def dialog(qtbot, project):
    d = ApplyDialog(project)
    qtbot.addWidget(d)
    d.show()
    yield d
    qtbot.waitUntil(lambda: not d.is_busy(), timeout=30000)


def pick_data(qtbot, dialog: ApplyDialog, path: Path) -> None:
    """Type the file name and press Enter, then wait for the background read."""
    edit = dialog.data_row.edit
    edit.setFocus()
    edit.clear()
    with qtbot.waitSignal(dialog.previewReady, timeout=30000):
        qtbot.keyClicks(edit, str(path))
        qtbot.keyClick(edit, Qt.Key.Key_Return)


def pick_output(qtbot, dialog: ApplyDialog, path: Path) -> None:
    edit = dialog.output_row.edit
    edit.clear()
    qtbot.keyClicks(edit, str(path))


def save_and_wait(qtbot, dialog: ApplyDialog) -> None:
    assert dialog.save_button.isEnabled(), dialog.save_button.toolTip()
    with qtbot.waitSignal(dialog.fileWritten, timeout=30000):
        qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)


def tick(qtbot, check) -> None:
    """Click the box of a check box (its middle may lie past the end of its text)."""
    qtbot.mouseClick(check, Qt.MouseButton.LeftButton, pos=QPoint(8, check.height() // 2))


def written(path: Path) -> pd.DataFrame:
    return pd.read_csv(path, dtype={"tree_code": str})


def cell(dialog: ApplyDialog, column: str, col: int) -> str:
    row = FITTED.index(column)
    assert dialog.table.item(row, 0).text() == column
    return dialog.table.item(row, col).text()


def test_preview_counts_equal_the_engine_report(qtbot, dialog, project, table_2026, tmp_path):
    assert not dialog.can_save()
    assert "Choose a file" in dialog.summary_label.text()
    pick_data(qtbot, dialog, HARVEST_2026)

    _, expected = engine.apply(table_2026.data, project.plan, clip=False)
    shown = dialog.preview_reports()
    assert set(shown) == set(FITTED)
    for rep in expected:
        got = shown[rep.column]
        assert (got.n_values, got.n_below, got.n_above) == (rep.n_values, rep.n_below, rep.n_above)
        # ...and the same numbers are what the user reads in the list
        assert cell(dialog, rep.column, 2) == f"{rep.n_values:,}"
        assert cell(dialog, rep.column, 3) == f"{rep.n_below:,}"
        assert cell(dialog, rep.column, 4) == f"{rep.n_above:,}"
    # The sample README: 2026 had record yields and a dry summer at Stone Terrace.
    assert shown["yield_kg"].n_above > 0
    assert shown["irrigation_l_per_week"].n_above > 100
    total = sum(r.n_outside for r in expected)
    assert f"{total:,} values lie outside the fitted range" in dialog.summary_label.text()

    # Clip changes what the list says will happen, without reading the file again.
    assert cell(dialog, "yield_kg", 5) == "scaled as they are"
    tick(qtbot, dialog.clip_check)
    assert dialog.clip()
    assert cell(dialog, "yield_kg", 5) == f"{shown['yield_kg'].n_outside:,} will be clipped"
    assert "will be clipped into it" in dialog.summary_label.text()
    pick_output(qtbot, dialog, Path("harvest_2026_scaled.xlsx"))  # typed, never written here
    assert dialog.can_save()
    save_screenshot(dialog, "apply_dialog", tmp_path)


def test_clip_checkbox_changes_the_written_file(
    qtbot, dialog, project, table_2026, tmp_path, monkeypatch
):
    pick_data(qtbot, dialog, HARVEST_2026)
    plain, clipped = tmp_path / "plain.csv", tmp_path / "clipped.csv"

    pick_output(qtbot, dialog, plain)

    def read_again(*args, **kwargs):
        raise AssertionError("the file was read a second time")

    monkeypatch.setattr(tasks, "read_table", read_again)  # the table read is the one scaled
    save_and_wait(qtbot, dialog)
    assert dialog.written_path() == plain
    assert "Saved plain.csv" in dialog.result_text()
    assert "lay outside the fitted range (not clipped)" in dialog.result_text()

    tick(qtbot, dialog.clip_check)
    pick_output(qtbot, dialog, clipped)
    save_and_wait(qtbot, dialog)
    assert "clipped into the fitted range" in dialog.result_text()
    assert sum(r.n_clipped for r in dialog.reports()) == sum(
        r.n_outside for r in dialog.preview_reports().values()
    )

    a, b = written(plain), written(clipped)
    for clip, frame in ((False, a), (True, b)):
        expected, _ = engine.apply(table_2026.data, project.plan, clip=clip)
        for column in FITTED:
            np.testing.assert_array_equal(
                frame[column].to_numpy(float), expected[column].to_numpy(float), err_msg=column
            )
        assert frame["tree_code"].tolist() == table_2026.data["tree_code"].tolist()
    assert not np.array_equal(a["irrigation_l_per_week"], b["irrigation_l_per_week"])
    # min-max with clipping stays inside the target range 0..1; without it, it does not
    assert 1.0 - 1e-12 <= b["irrigation_l_per_week"].max() <= 1.0
    assert b["irrigation_l_per_week"].min() >= 0.0
    assert a["irrigation_l_per_week"].max() > 1.05

    # The very same bytes as the task the command line runs.
    monkeypatch.undo()
    reference = tmp_path / "reference.csv"
    tasks.apply_to_file(project, HARVEST_2026, reference, clip=True)
    assert filecmp.cmp(clipped, reference, shallow=False)

    qtbot.mouseClick(dialog.close_button, Qt.MouseButton.LeftButton)
    assert dialog.result() == QDialog.DialogCode.Accepted  # a file was written


def test_the_source_file_can_never_be_the_output(qtbot, dialog, tmp_path):
    data = tmp_path / "harvest_2026.csv"
    data.write_bytes(HARVEST_2026.read_bytes())
    pick_data(qtbot, dialog, data)
    before = data.stat().st_mtime_ns, data.read_bytes()

    pick_output(qtbot, dialog, data)
    assert not dialog.can_save()
    assert "the file the data was read from" in dialog.output_problem()
    assert dialog.output_error.isVisibleTo(dialog)
    qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)  # disabled: nothing happens
    dialog.save()  # nor from code
    assert not dialog.is_busy()
    assert (data.stat().st_mtime_ns, data.read_bytes()) == before

    # The file the project was fitted on is refused too, with the words the tasks use.
    pick_output(qtbot, dialog, HARVEST_2025)
    with pytest.raises(ScalewrightError) as refused:
        tasks.check_target(HARVEST_2025, project=dialog._project)
    assert dialog.output_problem() == str(refused.value)
    assert not dialog.can_save()

    # Other names: the format must be one we write, and the folder must exist.
    pick_output(qtbot, dialog, tmp_path / "scaled.json")
    assert "cannot write '.json' files" in dialog.output_problem()
    pick_output(qtbot, dialog, tmp_path / "no_such_folder" / "scaled.csv")
    assert "does not exist" in dialog.output_problem()
    pick_output(qtbot, dialog, tmp_path / "scaled.tsv")
    assert dialog.output_problem() == ""
    assert dialog.can_save()


def test_cancel_leaves_no_file(qtbot, dialog, project, tmp_path, monkeypatch):
    real = tasks.apply_table
    started = []

    def held_until_cancelled(*args, cancelled, **kw):
        started.append(True)
        deadline = time.monotonic() + 20
        while not cancelled() and time.monotonic() < deadline:
            time.sleep(0.01)
        return real(*args, cancelled=cancelled, **kw)  # the real task sees the cancel

    monkeypatch.setattr(tasks, "apply_table", held_until_cancelled)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    target = out_dir / "harvest_2026_scaled.xlsx"
    pick_data(qtbot, dialog, HARVEST_2026)
    pick_output(qtbot, dialog, target)

    qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: bool(started), timeout=10000)
    assert dialog.is_busy()
    assert dialog.runner.isVisibleTo(dialog)  # the progress bar and its Cancel button
    assert not dialog.save_button.isEnabled()
    qtbot.mouseClick(dialog.runner.cancel_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: not dialog.is_busy(), timeout=20000)

    assert "No file was written" in dialog.result_text()
    assert dialog.written_path() is None
    assert list(out_dir.iterdir()) == []  # no file, no temporary leftovers
    assert dialog.can_save()  # the user can try again


def test_a_failed_write_leaves_no_file_and_says_why(qtbot, dialog, tmp_path, monkeypatch):
    real = tasks.apply_table

    def disk_fills_up(*args, progress, **kw):
        def report(fraction):
            if fraction > 0.5:  # the writing half of the job
                raise OSError(28, "No space left on device")
            progress(fraction)

        return real(*args, progress=report, **kw)

    monkeypatch.setattr(tasks, "apply_table", disk_fills_up)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    pick_data(qtbot, dialog, HARVEST_2026)
    pick_output(qtbot, dialog, out_dir / "scaled.csv")
    qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: dialog.result_text() != "", timeout=20000)

    assert "Nothing was written" in dialog.result_text()
    assert "No space left on device" in dialog.result_text()
    assert list(out_dir.iterdir()) == []
    assert dialog.written_path() is None


def test_a_missing_column_is_named_and_blocks_saving(qtbot, dialog, tmp_path):
    frame = pd.read_csv(HARVEST_2026, dtype=str, keep_default_na=False)
    path = tmp_path / "harvest_2026_without_yield.csv"
    frame.drop(columns=["yield_kg"]).to_csv(path, index=False)
    pick_data(qtbot, dialog, path)
    pick_output(qtbot, dialog, tmp_path / "scaled.csv")

    assert dialog.missing_columns() == ["yield_kg"]
    assert "no column 'yield_kg'" in dialog.data_problem()
    assert dialog.data_error.isVisibleTo(dialog)
    assert cell(dialog, "yield_kg", 6) == "⚠ not in this file"
    assert cell(dialog, "soil_ph", 2) != ""  # the other columns are still listed with counts
    assert not dialog.can_save()
    assert "yield_kg" in dialog.save_button.toolTip()
    # the message is said once, under the file, not again in the summary (issue 8, item 9)
    assert "yield_kg" not in dialog.summary_label.text()
    shown = [
        w.text()
        for w in dialog.findChildren(QLabel)
        if w.isVisibleTo(dialog) and "no column 'yield_kg'" in w.text()
    ]
    assert len(shown) == 1, shown


def test_a_renamed_column_is_paired_by_hand_and_scaled(qtbot, dialog, project, tmp_path):
    """Issue 8, item 9: Apply pairs columns as Restore does; the file written equals the
    command line's job with the same mapping (tasks.apply_to_file)."""
    frame = pd.read_csv(HARVEST_2026, dtype=str, keep_default_na=False)
    path = tmp_path / "harvest_2026_renamed.csv"
    frame.rename(columns={"yield_kg": "yield_2026"}).to_csv(path, index=False)
    pick_data(qtbot, dialog, path)
    target = tmp_path / "scaled.csv"
    pick_output(qtbot, dialog, target)
    assert dialog.missing_columns() == ["yield_kg"]
    assert not dialog.can_save()
    box = dialog.pairing.box("yield_2026")
    box.setCurrentIndex(box.findData("yield_kg"))  # as a user picking it in the box
    assert dialog.mapping()["yield_2026"] == "yield_kg"
    assert dialog.missing_columns() == []
    assert dialog.data_problem() == ""
    assert dialog.table.item(FITTED.index("yield_kg"), 0).text() == "yield_kg (from yield_2026)"
    # the counts are the engine's for the renamed column
    table = swio.read_table(path)
    _, reports = engine.apply(
        table.data.rename(columns={"yield_2026": "yield_kg"}), project.plan, clip=False
    )
    expected = {r.column: r for r in reports}["yield_kg"]
    got = dialog.preview_reports()["yield_kg"]
    assert (got.n_below, got.n_above) == (expected.n_below, expected.n_above)
    save_screenshot(dialog, "apply_dialog_pairing", tmp_path)
    save_and_wait(qtbot, dialog)
    reference = tmp_path / "reference.csv"
    tasks.apply_to_file(project, path, reference, mapping=dialog.mapping())
    assert filecmp.cmp(target, reference, shallow=False)
    assert "yield_2026" in written(target).columns


def test_a_text_column_where_numbers_were_fitted_is_refused(qtbot, dialog, tmp_path):
    frame = pd.read_csv(HARVEST_2026, dtype=str, keep_default_na=False)
    frame.loc[3, "soil_ph"] = "not measured"
    path = tmp_path / "harvest_2026_typo.csv"
    frame.to_csv(path, index=False)
    pick_data(qtbot, dialog, path)

    assert "'soil_ph' holds text values" in dialog.data_problem()
    assert cell(dialog, "soil_ph", 6).startswith("⚠")
    assert not dialog.can_save()


def test_an_unreadable_file_shows_a_message(qtbot, dialog, tmp_path):
    path = tmp_path / "broken.csv"
    path.write_bytes(bytes(range(256)) * 16)
    pick_data(qtbot, dialog, path)

    assert "binary data" in dialog.data_problem()
    assert dialog.data_error.isVisibleTo(dialog)
    assert dialog.table.rowCount() == 0
    assert not dialog.can_save()

    pick_data(qtbot, dialog, tmp_path / "nowhere.csv")
    assert "does not exist" in dialog.data_problem()


def test_groups_not_seen_when_fitting_are_listed(qtbot, tmp_path):
    table = swio.read_table(HARVEST_2025)
    project = tasks.fit_project(
        table, {"yield_kg": ColumnChoice("zscore")}, FitSettings(group_by="orchard")
    )
    frame = pd.read_csv(HARVEST_2026, dtype=str, keep_default_na=False)
    frame.loc[frame["orchard"] == "Hilltop", "orchard"] = "Cedar Hollow"
    path = tmp_path / "harvest_2026_new_orchard.csv"
    frame.to_csv(path, index=False)

    dialog = ApplyDialog(project)
    qtbot.addWidget(dialog)
    dialog.show()
    pick_data(qtbot, dialog, path)

    assert dialog.preview_reports()["yield_kg"].unseen_groups == ["Cedar Hollow"]
    note = dialog.table.item(0, 6).text()
    assert "groups not seen when fitting: Cedar Hollow" in note


def test_choose_buttons_use_the_file_dialogs(qtbot, dialog, tmp_path, monkeypatch):
    target = tmp_path / "scaled_by_button"
    from scalewright.gui import file_dialogs

    monkeypatch.setattr(
        file_dialogs, "open_file_name", lambda *a, **k: (str(SAMPLE / "harvest_2026.xlsx"), "")
    )
    monkeypatch.setattr(
        file_dialogs,
        "save_file_name",
        lambda *a, **k: (str(target), "Comma-separated text (*.csv)"),
    )
    with qtbot.waitSignal(dialog.previewReady, timeout=30000):
        qtbot.mouseClick(dialog.data_row.button, Qt.MouseButton.LeftButton)
    assert dialog.data_row.sheet() == "harvest_2026"  # a workbook: its sheet is offered
    assert dialog.data_row.sheet_box.isVisibleTo(dialog)
    assert dialog.data_problem() == ""
    qtbot.mouseClick(dialog.output_row.button, Qt.MouseButton.LeftButton)
    assert dialog.output_row.path() == target.with_suffix(".csv")  # the chosen format's ending
    assert dialog.can_save()


def test_every_control_explains_itself(dialog):
    controls = [
        dialog.data_row.edit,
        dialog.data_row.button,
        dialog.data_row.sheet_box,
        dialog.table,
        dialog.clip_check,
        dialog.output_row.edit,
        dialog.output_row.button,
        dialog.save_button,
        dialog.close_button,
        dialog.runner.cancel_button,
    ]
    for widget in controls:
        assert widget.toolTip().strip(), type(widget).__name__


def test_closing_while_writing_stops_the_write_and_leaves_no_file(
    qtbot, dialog, tmp_path, monkeypatch
):
    real = tasks.apply_table
    started = []

    def held_until_cancelled(*args, cancelled, **kw):
        started.append(True)
        deadline = time.monotonic() + 20
        while not cancelled() and time.monotonic() < deadline:
            time.sleep(0.01)
        return real(*args, cancelled=cancelled, **kw)

    monkeypatch.setattr(tasks, "apply_table", held_until_cancelled)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    pick_data(qtbot, dialog, HARVEST_2026)
    pick_output(qtbot, dialog, out_dir / "scaled.csv")
    qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: bool(started), timeout=10000)

    with qtbot.waitSignal(dialog.rejected, timeout=20000):
        qtbot.mouseClick(dialog.close_button, Qt.MouseButton.LeftButton)
    assert not dialog.is_busy()
    assert not dialog.isVisible()
    assert list(out_dir.iterdir()) == []
    assert dialog.written_path() is None


def test_saved_parameters_are_shown_in_plain_words(harvest_table):
    from scalewright.engine import ColumnChoice, column_values, fit_column
    from scalewright.gui.writing_dialog import saved_parameters

    x = column_values(harvest_table.data, "yield_kg")
    fc = fit_column(x, ColumnChoice("zscore").normalized(), column="yield_kg")
    z = saved_parameters(fc)
    assert f"mean {fc.pooled.params['mean']:.10g}" in z
    assert "sample sd (divides by n-1)" in z
    assert "ddof" not in z and "=" not in z
    choice = ColumnChoice("boxcox", {"standardize": True}).normalized()
    b = saved_parameters(fit_column(x, choice, column="yield_kg"))
    assert "standardized afterwards (mean 0, sd 1)" in b
    assert "True" not in b and "standardize " not in b


def test_choosing_files_during_a_read_reads_the_last_one_once(qtbot, dialog, monkeypatch):
    import threading

    release = threading.Event()
    started: list[Path] = []
    real = dialog._reader

    def reader(path, sheet):
        started.append(path)
        read = real(path, sheet)

        def slow(progress, cancelled):
            while not (release.is_set() or cancelled()):
                release.wait(0.01)
            return read(progress, cancelled)

        return slow

    monkeypatch.setattr(dialog, "_reader", reader)
    dialog.data_row.set_path(HARVEST_2025)
    qtbot.waitUntil(lambda: dialog.is_busy(), timeout=30000)
    dialog.data_row.set_path(SAMPLE / "harvest_2026.xlsx")  # both while the first read runs
    dialog.data_row.set_path(HARVEST_2026)
    release.set()
    qtbot.waitUntil(lambda: not dialog.is_busy() and dialog._table is not None, timeout=30000)
    assert started == [HARVEST_2025, HARVEST_2026]
    assert dialog._table.source == HARVEST_2026
