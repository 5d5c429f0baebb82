"""The import dialog, driven as a user would: see what was detected, correct it, open.

Files are written in tmp_path in the formats analysts receive (semicolons and decimal
commas, a title above the header, Windows-1252 text); the expected values are worked out
by hand from the file's own text.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from dialog_helpers import choose, save_screenshot
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QDialog

from scalewright import io as swio
from scalewright.gui.import_dialog import ImportDialog

pytestmark = [pytest.mark.gui, pytest.mark.usefixtures("themed")]

SAMPLE = Path(__file__).resolve().parents[2] / "sample_data"

SEMICOLON_TEXT = (
    "Harvest check, autumn 2026\n"
    "\n"
    "orchard;yield_kg;sugar_brix\n"
    "North Slope;1.234,5;12,8\n"
    "Mill Brook;2.000,25;13,0\n"
    "Hilltop;987,5;11,25\n"
)


def type_row(qtbot, spin, row: int) -> None:
    spin.setFocus()
    spin.lineEdit().selectAll()
    qtbot.keyClicks(spin.lineEdit(), str(row))
    qtbot.keyClick(spin.lineEdit(), Qt.Key.Key_Return)


@pytest.fixture
def semicolon_file(tmp_path) -> Path:
    path = tmp_path / "autumn_check.csv"
    path.write_text(SEMICOLON_TEXT, encoding="utf-8")
    return path


@pytest.fixture
def make_dialog(qtbot):
    def make(path, **kw) -> ImportDialog:
        dialog = ImportDialog(path, **kw)
        qtbot.addWidget(dialog)
        dialog.show()
        return dialog

    return make


def header_tip(dialog: ImportDialog, column: int) -> str:
    return dialog.preview_model.headerData(
        column, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole
    )


def test_detects_semicolons_decimal_commas_and_the_header_below_a_title(
    make_dialog, semicolon_file, tmp_path
):
    dialog = make_dialog(semicolon_file)

    assert dialog.error_text() == ""
    assert dialog.ok_button.isEnabled()
    assert dialog.delimiter_box.currentData() == ";"
    assert dialog.decimal_box.currentData() == ","
    assert dialog.thousands_box.currentData() == "."
    assert dialog.encoding_box.currentData() == "utf-8"
    assert dialog.header_spin.value() == 3  # the title and the blank line are skipped
    assert not dialog.sheet_box.isVisibleTo(dialog)  # no sheets in a text file

    frame = dialog.preview_model.frame()
    assert list(frame.columns) == ["orchard", "yield_kg", "sugar_brix"]
    np.testing.assert_array_equal(frame["yield_kg"].to_numpy(float), [1234.5, 2000.25, 987.5])
    np.testing.assert_array_equal(frame["sugar_brix"].to_numpy(float), [12.8, 13.0, 11.25])
    # What the user reads in the cells and in the header tooltips.
    model = dialog.preview_model
    assert model.data(model.index(0, 1)) == "1234.5"
    assert "number" in header_tip(dialog, 1)
    assert "text" in header_tip(dialog, 0)
    assert model.headerData(1, Qt.Orientation.Horizontal) == "yield_kg\nnumber"
    notes = dialog.notes_label.text()
    assert "decimal comma" in notes and "semicolon" in notes and "row 3" in notes
    save_screenshot(dialog, "import_dialog", tmp_path)


def test_changing_the_delimiter_changes_the_preview_and_the_options(
    qtbot, make_dialog, semicolon_file
):
    dialog = make_dialog(semicolon_file)
    assert dialog.preview_model.columnCount() == 3

    with qtbot.waitSignal(dialog.optionsChanged, timeout=5000) as blocker:
        choose(qtbot, dialog.delimiter_box, ",")

    assert blocker.args[0].delimiter == ","
    assert dialog.options().delimiter == ","
    frame = dialog.preview_model.frame()
    # Split at the commas, "North Slope;1.234,5;12,8" falls into three different pieces.
    assert list(frame.columns) != ["orchard", "yield_kg", "sugar_brix"]
    assert "yield_kg" not in frame.columns
    assert dialog.delimiter_box.font().italic() is False  # chosen, not guessed

    # Back to semicolons: the original reading returns.
    with qtbot.waitSignal(dialog.optionsChanged, timeout=5000):
        choose(qtbot, dialog.delimiter_box, ";")
    assert list(dialog.preview_model.frame().columns) == ["orchard", "yield_kg", "sugar_brix"]


def test_same_mark_for_decimals_and_thousands_disables_open_with_a_message(
    qtbot, make_dialog, semicolon_file
):
    dialog = make_dialog(semicolon_file)
    choose(qtbot, dialog.thousands_box, ",")  # the decimal separator is a comma too

    qtbot.waitUntil(lambda: dialog.error_text() != "", timeout=5000)
    assert not dialog.ok_button.isEnabled()
    assert dialog.error_label.isVisibleTo(dialog)
    assert "Thousands separator" in dialog.error_label.text()
    assert "same mark as decimal" in dialog.error_label.text()
    assert dialog.preview_model.rowCount() == 0
    assert dialog.detection() is None

    # Putting it right brings the preview and the Open button back.
    with qtbot.waitSignal(dialog.optionsChanged, timeout=5000):
        choose(qtbot, dialog.thousands_box, ".")
    assert dialog.ok_button.isEnabled()
    assert not dialog.error_label.isVisibleTo(dialog)
    assert dialog.preview_model.rowCount() == 3


def test_header_row_beyond_the_end_of_the_file_is_explained(qtbot, make_dialog, semicolon_file):
    dialog = make_dialog(semicolon_file)
    type_row(qtbot, dialog.header_spin, 40)

    qtbot.waitUntil(lambda: dialog.error_text() != "", timeout=5000)
    assert "row 40 is beyond the end of the file" in dialog.error_label.text()
    assert str(semicolon_file) not in dialog.error_label.text()  # the title names the file
    assert not dialog.ok_button.isEnabled()

    dialog.redetect_button.click()  # Guess again
    assert dialog.error_text() == ""
    assert dialog.header_spin.value() == 3
    assert dialog.ok_button.isEnabled()


def test_wrong_encoding_is_reported_and_the_right_one_restores_the_names(
    qtbot, make_dialog, tmp_path
):
    path = tmp_path / "orchards_cp1252.csv"
    path.write_bytes("orchard,yield_kg\nMühlbach Höhe,12.5\nNorth Slope,7.25\n".encode("cp1252"))
    dialog = make_dialog(path)
    assert dialog.encoding_box.currentData() == "cp1252"
    assert dialog.preview_model.frame()["orchard"].tolist() == ["Mühlbach Höhe", "North Slope"]

    choose(qtbot, dialog.encoding_box, "utf-8")
    qtbot.waitUntil(lambda: dialog.error_text() != "", timeout=5000)
    assert "not valid utf-8" in dialog.error_text()
    assert not dialog.ok_button.isEnabled()

    with qtbot.waitSignal(dialog.optionsChanged, timeout=5000):
        choose(qtbot, dialog.encoding_box, "cp1252")
    assert dialog.ok_button.isEnabled()
    assert dialog.preview_model.frame()["orchard"].iloc[0] == "Mühlbach Höhe"


def test_open_returns_the_options_the_preview_was_made_with(qtbot, make_dialog, semicolon_file):
    dialog = make_dialog(semicolon_file)
    preview = dialog.preview_model.frame()
    qtbot.mouseClick(dialog.ok_button, Qt.MouseButton.LeftButton)

    assert dialog.result() == QDialog.DialogCode.Accepted
    options = dialog.options()
    assert options == swio.ReadOptions(
        encoding="utf-8", delimiter=";", decimal=",", thousands=".", header_row=2, sheet=None
    )
    table = swio.read_table(semicolon_file, options)
    pd.testing.assert_frame_equal(table.data, preview)


def test_workbook_shows_the_sheet_and_hides_the_text_settings(make_dialog, tmp_path):
    dialog = make_dialog(SAMPLE / "harvest_2026.xlsx")

    assert dialog.error_text() == ""
    assert dialog.sheet_box.isVisibleTo(dialog)
    assert dialog.sheet_box.currentData() == "harvest_2026"
    for box in (
        dialog.encoding_box,
        dialog.delimiter_box,
        dialog.decimal_box,
        dialog.thousands_box,
    ):
        assert not box.isVisibleTo(dialog)
    frame = dialog.preview_model.frame()
    assert len(frame) == 50  # the first rows only
    assert frame["tree_code"].iloc[0] == "000076"  # leading zeros kept
    assert "identifier" in header_tip(dialog, 0)
    assert dialog.options().sheet == "harvest_2026"
    save_screenshot(dialog, "import_dialog_workbook", tmp_path)


@pytest.mark.parametrize(
    ("name", "content", "words"),
    [
        ("garbage.csv", bytes(range(256)) * 8, "binary data"),
        ("empty.csv", b"", "empty"),
        ("missing.csv", None, "does not exist"),
        ("notes.docx", b"PK\x03\x04", "not supported"),
    ],
)
def test_unreadable_files_show_a_message_and_cannot_be_opened(
    make_dialog, tmp_path, name, content, words
):
    path = tmp_path / name
    if content is not None:
        path.write_bytes(content)
    dialog = make_dialog(path)

    assert words in dialog.error_text()
    assert dialog.error_label.isVisibleTo(dialog)
    assert not dialog.ok_button.isEnabled()
    assert dialog.preview_model.rowCount() == 0


def test_every_control_explains_itself(make_dialog, semicolon_file):
    dialog = make_dialog(semicolon_file)
    controls = [
        dialog.encoding_box,
        dialog.delimiter_box,
        dialog.decimal_box,
        dialog.thousands_box,
        dialog.sheet_box,
        dialog.header_spin,
        dialog.redetect_button,
        dialog.ok_button,
        dialog.preview_view,
        dialog.notes_label,
    ]
    for widget in controls:
        assert widget.toolTip().strip(), widget.objectName() or type(widget).__name__


def test_choosing_another_sheet_reads_that_sheet(qtbot, make_dialog, tmp_path):
    from openpyxl import Workbook

    book = Workbook()
    notes = book.active
    notes.title = "read me"
    notes.append(["Invented data for the cooperative's autumn check"])
    data = book.create_sheet("trees")
    data.append(["Tree list, autumn 2026"])  # a title above the header
    data.append([])
    data.append(["tree_code", "yield_kg"])
    data.append(["000076", 64.6])
    data.append(["000081", 58.9])
    path = tmp_path / "autumn_check.xlsx"
    book.save(path)

    dialog = make_dialog(path)
    assert [dialog.sheet_box.itemData(i) for i in range(dialog.sheet_box.count())] == [
        "read me",
        "trees",
    ]
    assert dialog.sheet_box.currentData() == "read me"

    with qtbot.waitSignal(dialog.optionsChanged, timeout=5000):
        choose(qtbot, dialog.sheet_box, "trees")
    assert dialog.options().sheet == "trees"
    assert dialog.header_spin.value() == 3  # the header found again on the new sheet
    frame = dialog.preview_model.frame()
    assert list(frame.columns) == ["tree_code", "yield_kg"]
    assert frame["tree_code"].tolist() == ["000076", "000081"]
    np.testing.assert_array_equal(frame["yield_kg"].to_numpy(float), [64.6, 58.9])


@pytest.mark.parametrize(
    ("name", "content", "words"),
    [
        ("README.md", b"# Orchard notes\n\nPicked on Tuesday.\n", "a Markdown text"),
        ("report.pdf", b"%PDF-1.7 invented", "a PDF document"),
        (
            "notes.txt",
            b"The north slope was pruned on the third day of March.\n"
            b"Rain held off until the evening, so the pickers kept going.\n"
            b"Next year we plan to net the young trees against the birds.\n",
            "does not look like a table",
        ),
    ],
)
def test_a_file_that_is_not_a_table_says_so_and_lists_the_types(
    make_dialog, tmp_path, name, content, words
):
    """Issue 8, item 5: not "cannot be read with these settings" and an empty box."""
    path = tmp_path / name
    path.write_bytes(content)
    dialog = make_dialog(path)

    shown = dialog.error_label.text()
    assert dialog.error_label.isVisibleTo(dialog)
    assert "This file cannot be opened" in shown and "with these settings" not in shown
    assert words in shown
    assert "CSV (.csv)" in shown and "Workbook (.xlsx, .xlsm)" in shown and "(.ods)" in shown
    assert "not a table" in dialog.preview_caption.text()
    assert not dialog.ok_button.isEnabled()
    save_screenshot(dialog, f"import_dialog_not_a_table_{path.suffix[1:]}", tmp_path)
