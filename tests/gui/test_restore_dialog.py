"""The restore dialog, driven as a user would: pick the predictions file, pair its column
with the fitted column, check the preview, save.

The outside reference is sample_data/README.md: predicted_yield is in z-score units of
yield_kg fitted on the 2025 training rows (sample sd), with mean 75.54385054488843 kg and
sd 36.650738430940336 kg, so predicted_kg = predicted_yield * sd + mean.
"""

from __future__ import annotations

import filecmp
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from dialog_helpers import choose, save_screenshot
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QDialog

from scalewright import io as swio
from scalewright import tasks
from scalewright.engine import ColumnChoice, FitSettings
from scalewright.gui.restore_dialog import LEAVE, RestoreDialog

pytestmark = [pytest.mark.gui, pytest.mark.usefixtures("themed")]

SAMPLE = Path(__file__).resolve().parents[2] / "sample_data"
HARVEST_2025 = SAMPLE / "harvest_2025.csv"
HARVEST_2026 = SAMPLE / "harvest_2026.csv"
PREDICTIONS = SAMPLE / "predicted_yield_scaled.csv"
README_MEAN = 75.54385054488843
README_SD = 36.650738430940336


@pytest.fixture(scope="module")
def project():
    """The fit the README describes (z-score of yield_kg on the training rows), plus one
    more column so that the pairing has a choice to make."""
    table = swio.read_table(HARVEST_2025)
    return tasks.fit_project(
        table,
        {"yield_kg": ColumnChoice("zscore"), "soil_ph": ColumnChoice("minmax")},
        FitSettings(fit_where=("split", "train")),
    )


@pytest.fixture
def make_dialog(qtbot):
    made = []

    def make(project) -> RestoreDialog:
        d = RestoreDialog(project)
        qtbot.addWidget(d)
        d.show()
        made.append(d)
        return d

    yield make
    for d in made:
        qtbot.waitUntil(lambda d=d: not d.is_busy(), timeout=30000)


def pick_data(qtbot, dialog: RestoreDialog, path: Path) -> None:
    edit = dialog.data_row.edit
    edit.setFocus()
    edit.clear()
    with qtbot.waitSignal(dialog.previewReady, timeout=30000):
        qtbot.keyClicks(edit, str(path))
        qtbot.keyClick(edit, Qt.Key.Key_Return)


def pick_output(qtbot, dialog: RestoreDialog, path: Path) -> None:
    dialog.output_row.edit.clear()
    qtbot.keyClicks(dialog.output_row.edit, str(path))


def save_and_wait(qtbot, dialog: RestoreDialog) -> None:
    assert dialog.save_button.isEnabled(), dialog.save_button.toolTip()
    with qtbot.waitSignal(dialog.fileWritten, timeout=30000):
        qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)


def matched(dialog: RestoreDialog, column: str) -> str:
    table = dialog.mapping_table
    rows = [r for r in range(table.rowCount()) if table.item(r, 0).text() == column]
    assert len(rows) == 1, column
    return table.item(rows[0], 2).text()


def test_predictions_are_restored_after_pairing_them_by_hand(
    qtbot, make_dialog, project, tmp_path, monkeypatch
):
    from scalewright.gui import restore_dialog

    # the preview prepares only the rows it shows, not the whole file
    prepared = []
    real = restore_dialog.tasks.blank_as_numbers
    monkeypatch.setattr(
        restore_dialog.tasks,
        "blank_as_numbers",
        lambda table, columns: prepared.append(len(table.data)) or real(table, columns),
    )
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, PREDICTIONS)
    pick_output(qtbot, dialog, tmp_path / "predicted_yield_kg.csv")

    # The names differ, so nothing is paired automatically and nothing can be saved yet.
    assert dialog.automatic_mapping() == {}
    assert dialog.mapping() == {}
    assert dialog.mapping_box("predicted_yield").currentText() == LEAVE
    assert "No column of this file has the name of a fitted column" in (dialog.mapping_hint.text())
    assert not dialog.can_save()
    assert not dialog.mapping_box("tree_code").isEnabled()  # an identifier is never restored

    choose(qtbot, dialog.mapping_box("predicted_yield"), "yield_kg")
    assert dialog.mapping() == {"predicted_yield": "yield_kg"}
    assert matched(dialog, "predicted_yield") == "chosen by you"
    assert dialog.can_save()

    scaled = pd.read_csv(PREDICTIONS, dtype={"tree_code": str})
    expected = scaled["predicted_yield"].to_numpy() * README_SD + README_MEAN
    preview = dialog.preview_frame()
    assert list(preview.columns) == [
        "predicted_yield (as in the file)",
        "predicted_yield (in yield_kg units)",
    ]
    np.testing.assert_array_equal(preview.iloc[:, 0], scaled["predicted_yield"].iloc[:20])
    np.testing.assert_allclose(preview.iloc[:, 1], expected[:20], rtol=1e-12)
    assert prepared and max(prepared) == 20
    monkeypatch.undo()
    save_screenshot(dialog, "restore_dialog", tmp_path)

    def read_again(*args, **kwargs):
        raise AssertionError("the file was read a second time")

    monkeypatch.setattr(tasks, "read_table", read_again)  # the table read is the one written
    save_and_wait(qtbot, dialog)
    monkeypatch.undo()
    out = pd.read_csv(dialog.written_path(), dtype={"tree_code": str})
    np.testing.assert_allclose(out["predicted_yield"], expected, rtol=1e-12)
    assert out["tree_code"].tolist() == scaled["tree_code"].tolist()  # leading zeros kept
    assert "1 column restored to original units (2,438 values)" in dialog.result_text()

    # Byte for byte what the task behind `scalewright restore --as` writes.
    reference = tmp_path / "reference.csv"
    tasks.restore_file(project, PREDICTIONS, reference, mapping={"predicted_yield": "yield_kg"})
    assert filecmp.cmp(dialog.written_path(), reference, shallow=False)

    qtbot.mouseClick(dialog.close_button, Qt.MouseButton.LeftButton)
    assert dialog.result() == QDialog.DialogCode.Accepted


@pytest.fixture
def scaled_2026(project, tmp_path) -> Path:
    """Next season's file scaled with the project (as the apply dialog writes it)."""
    path = tmp_path / "harvest_2026_scaled.csv"
    tasks.apply_to_file(project, HARVEST_2026, path)
    return path


def test_columns_named_like_fitted_columns_are_paired_automatically(
    qtbot, make_dialog, project, scaled_2026, tmp_path
):
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, scaled_2026)

    assert dialog.automatic_mapping() == {"yield_kg": "yield_kg", "soil_ph": "soil_ph"}
    assert dialog.mapping() == {"yield_kg": "yield_kg", "soil_ph": "soil_ph"}
    assert matched(dialog, "yield_kg") == "by name"
    assert matched(dialog, "trunk_girth_cm") == ""
    assert "2 columns will be restored" in dialog.mapping_hint.text()

    pick_output(qtbot, dialog, tmp_path / "restored.csv")
    save_and_wait(qtbot, dialog)
    original = pd.read_csv(HARVEST_2026, dtype={"tree_code": str})
    out = pd.read_csv(dialog.written_path(), dtype={"tree_code": str})
    for column in ("yield_kg", "soil_ph"):
        np.testing.assert_allclose(out[column], original[column], rtol=1e-12, err_msg=column)
    pd.testing.assert_frame_equal(
        out.drop(columns=["yield_kg", "soil_ph"]), original.drop(columns=["yield_kg", "soil_ph"])
    )


def test_a_pair_found_by_name_can_be_left_as_it_is(
    qtbot, make_dialog, project, scaled_2026, tmp_path
):
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, scaled_2026)
    choose(qtbot, dialog.mapping_box("soil_ph"), "")  # "leave as is"

    assert dialog.mapping() == {"yield_kg": "yield_kg"}
    assert dialog.mapping_box("soil_ph").currentText() == LEAVE
    pick_output(qtbot, dialog, tmp_path / "restored.csv")
    save_and_wait(qtbot, dialog)

    scaled = pd.read_csv(scaled_2026, dtype={"tree_code": str})
    original = pd.read_csv(HARVEST_2026, dtype={"tree_code": str})
    out = pd.read_csv(dialog.written_path(), dtype={"tree_code": str})
    np.testing.assert_array_equal(out["soil_ph"], scaled["soil_ph"])  # untouched
    np.testing.assert_allclose(out["yield_kg"], original["yield_kg"], rtol=1e-12)
    assert [r.column for r in dialog.reports()] == ["yield_kg"]


def test_parameters_from_a_scaled_workbook(qtbot, make_dialog, project, tmp_path, monkeypatch):
    workbook = tmp_path / "harvest_2025_scaled.xlsx"
    tasks.export_scaled(swio.read_table(HARVEST_2025), project, workbook)
    dialog = make_dialog(None)
    assert dialog.project() is None
    assert "choose a project file or a scaled workbook" in dialog.project_label.text()
    assert not dialog.can_save()

    from scalewright.gui import file_dialogs

    monkeypatch.setattr(file_dialogs, "open_file_name", lambda *a, **k: (str(workbook), ""))
    with qtbot.waitSignal(dialog.projectChanged, timeout=10000):
        qtbot.mouseClick(dialog.project_button, Qt.MouseButton.LeftButton)
    assert "yield_kg (z-score)" in dialog.project_label.text()
    assert set(dialog.project().plan.columns) == {"yield_kg", "soil_ph"}

    pick_data(qtbot, dialog, PREDICTIONS)
    choose(qtbot, dialog.mapping_box("predicted_yield"), "yield_kg")
    pick_output(qtbot, dialog, workbook)  # the parameters' own file is never written over
    assert "the file the parameters come from" in dialog.output_problem()
    assert not dialog.can_save()
    pick_output(qtbot, dialog, tmp_path / "predicted_yield_kg.tsv")
    save_and_wait(qtbot, dialog)
    out = pd.read_csv(dialog.written_path(), sep="\t", dtype={"tree_code": str})
    scaled = pd.read_csv(PREDICTIONS)
    np.testing.assert_allclose(
        out["predicted_yield"], scaled["predicted_yield"] * README_SD + README_MEAN, rtol=1e-12
    )


def test_a_broken_project_file_is_explained(qtbot, make_dialog, tmp_path):
    broken = tmp_path / "broken.swproj"
    broken.write_text('{"format": "scalewright-project", "version": 1, "columns": 7}')
    plain = tmp_path / "plain.xlsx"
    tasks.write_output(plain, swio.read_table(HARVEST_2025), None, None)
    dialog = make_dialog(None)

    assert dialog.load_project_file(broken) is False
    assert dialog.project() is None
    assert dialog.project_error.isVisibleTo(dialog)
    assert "broken.swproj" in dialog.project_error.text()
    assert dialog.load_project_file(plain) is False
    assert "holds no Scalewright project" in dialog.project_error.text()
    assert not dialog.can_save()


def test_an_unreadable_file_shows_a_message(qtbot, make_dialog, project, tmp_path):
    dialog = make_dialog(project)
    garbage = tmp_path / "predictions.csv"
    garbage.write_bytes(bytes(range(256)) * 16)
    pick_data(qtbot, dialog, garbage)

    assert "binary data" in dialog.data_problem()
    assert dialog.data_error.isVisibleTo(dialog)
    assert dialog.mapping_table.rowCount() == 0
    assert not dialog.can_save()


def test_text_columns_cannot_be_paired(qtbot, make_dialog, project, tmp_path):
    path = tmp_path / "notes.csv"
    path.write_text("tree_code,yield_kg\n000076,high\n000081,low\n")
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, path)

    # Same name as a fitted column, but text: not paired, and the box says why.
    assert dialog.automatic_mapping() == {}
    box = dialog.mapping_box("yield_kg")
    assert not box.isEnabled()
    assert "text" in box.toolTip()
    assert not dialog.can_save()


def test_the_preview_says_each_count_once_as_the_saved_report_does(
    qtbot, make_dialog, project, tmp_path
):
    # The engine repeats its counts among a report's warnings; the dialog shows a column's
    # report the way the command line does, so a count appears once (regression test).
    path = tmp_path / "predictions.csv"
    path.write_text("tree_code,yield_kg\n000076,inf\n000081,0.5\n000082,-inf\n")
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, path)
    assert dialog.mapping() == {"yield_kg": "yield_kg"}

    notes = dialog.preview_notes.text()
    assert notes.count("infinite value") == 1, notes
    assert "yield_kg: 3 values restored; 2 infinite values passed through" in notes
    pick_output(qtbot, dialog, tmp_path / "restored.csv")
    save_and_wait(qtbot, dialog)
    assert dialog.result_label.toolTip().count("infinite value") == 1


def test_the_file_of_scaled_values_can_never_be_the_output(qtbot, make_dialog, project, tmp_path):
    data = tmp_path / "predictions.csv"
    data.write_bytes(PREDICTIONS.read_bytes())
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, data)
    choose(qtbot, dialog.mapping_box("predicted_yield"), "yield_kg")

    pick_output(qtbot, dialog, data)
    assert "the file the data was read from" in dialog.output_problem()
    assert not dialog.can_save()
    dialog.save()
    assert not dialog.is_busy()
    assert data.read_bytes() == PREDICTIONS.read_bytes()
    pick_output(qtbot, dialog, HARVEST_2025)  # the file the project was fitted on
    assert str(HARVEST_2025) in dialog.output_problem()
    assert not dialog.can_save()
    pick_output(qtbot, dialog, tmp_path / "fine.csv")
    assert dialog.output_problem() == ""
    assert dialog.can_save()


def test_every_control_explains_itself(qtbot, make_dialog, project):
    dialog = make_dialog(project)
    pick_data(qtbot, dialog, PREDICTIONS)
    controls = [
        dialog.project_button,
        dialog.data_row.edit,
        dialog.data_row.button,
        dialog.mapping_table,
        dialog.preview_view,
        dialog.output_row.edit,
        dialog.output_row.button,
        dialog.save_button,
        dialog.close_button,
        dialog.runner.cancel_button,
        dialog.mapping_box("predicted_yield"),
        dialog.mapping_box("tree_code"),
    ]
    for widget in controls:
        assert widget.toolTip().strip(), type(widget).__name__
