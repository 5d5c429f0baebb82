"""Reading workbooks: header offsets, merged headers, text-stored numbers, dates, ODS."""

from __future__ import annotations

import datetime as dt

import openpyxl
import pandas as pd
from test_io_read_text import check, values

from scalewright.io import ColumnKind, ReadOptions, detect, list_sheets, read_table

N, ID, D, T = ColumnKind.NUMBER, ColumnKind.IDENTIFIER, ColumnKind.DATE, ColumnKind.TEXT


def test_awkward_xlsx(awkward_xlsx):
    t = read_table(awkward_xlsx)
    check(
        t,
        ["site", "level", "level", "taken", "count", "as text", "code"],
        {"site": T, "level": N, "level (2)": N, "taken": D, "count": N, "as text": N, "code": ID},
        {
            "site": ["north", "south", "east"],
            "level": [1.5, 2.0, None],
            "level (2)": [2.25, -1.0, 0.5],
            "taken": ["2021-05-01", "2021-05-02", "2021-05-03"],
            "count": [3, 4, 5],
            "as text": [1.5, 2.0, -3.25],
            "code": ["007", "012", "100"],
        },
        {"count": "Int64", "level": "float64", "as text": "float64", "code": "str"},
    )
    assert t.options == ReadOptions(header_row=2, sheet="Readings")
    assert t.sheets == ["Readings", "notes"]
    assert t.notes == [
        "Read sheet 'Readings' (the workbook has 2 sheets).",
        "Header found on row 3; the rows above it were skipped.",
        "Header 'level' spans 2 merged cells; each column under it takes that name.",
        "Column 'as text': 3 numbers stored as text were converted to numbers.",
        "Column names repeated or blank, shown as: 'level' as 'level (2)'.",
    ]


def test_list_sheets_and_choose_one(awkward_xlsx):
    assert list_sheets(awkward_xlsx) == ["Readings", "notes"]
    book = openpyxl.load_workbook(awkward_xlsx)
    book["notes"]["B2"] = "remark"
    book["notes"]["C2"] = "value"
    book["notes"]["B3"] = "first"
    book["notes"]["C3"] = 1
    book.save(awkward_xlsx)
    t = read_table(awkward_xlsx, ReadOptions(sheet="notes"))
    assert t.headers == ["remark", "value"]
    assert values(t.data["remark"]) == ["first"]
    assert t.options.sheet == "notes" and t.options.header_row == 1


def test_header_row_given_for_a_sheet(awkward_xlsx):
    t = read_table(awkward_xlsx, ReadOptions(header_row=3))
    assert t.headers == ["north", "1.5", "2.25", "2021-05-01", "3", "1.5", "007"]
    assert len(t.data) == 2


def test_mixed_cells_fall_back_to_text(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["mixed", "numbers", "flag", "when", "clock"])
    sheet.append(["A12", 1, True, dt.datetime(2020, 1, 2, 3, 4, 5), dt.time(9, 30)])
    sheet.append([7, 2.5, False, dt.date(2020, 1, 3), dt.time(10, 0)])
    sheet.append([2.5, "3", None, None, None])
    path = tmp_path / "mixed.xlsx"
    book.save(path)
    t = read_table(path)
    assert t.kinds == {"mixed": T, "numbers": N, "flag": ColumnKind.BOOLEAN, "when": D, "clock": T}
    assert values(t.data["mixed"]) == ["A12", "7", "2.5"]
    assert values(t.data["numbers"]) == [1.0, 2.5, 3.0]
    assert values(t.data["flag"]) == [True, False, None]
    assert values(t.data["when"]) == ["2020-01-02 03:04:05", "2020-01-03", None]
    assert values(t.data["clock"]) == ["09:30:00", "10:00:00", None]
    assert "Column 'numbers': 1 numbers stored as text were converted to numbers." in t.notes


def test_ods(small_ods):
    t = read_table(small_ods)
    check(
        t,
        ["amount", "zip", "when"],
        {"amount": N, "zip": ID, "when": D},
        {
            "amount": [1.5, 2.0, -0.25],
            "zip": ["00412", "01234", "99501"],
            "when": ["2020-01-01", "2020-02-03", "2020-03-04"],
        },
    )
    assert t.sheets == ["first"]


def test_detect_previews_the_first_rows(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["n", "code"])
    for i in range(500):
        sheet.append([i * 0.5, f"{i:05d}"])
    path = tmp_path / "long.xlsx"
    book.save(path)
    d = detect(path, preview_rows=10)
    assert len(d.preview) == 10
    assert list(d.preview.columns) == ["n", "code"]
    assert d.options == ReadOptions(header_row=0, sheet="Sheet")
    assert d.sheets == ["Sheet"]
    assert values(d.preview["code"])[:3] == ["00000", "00001", "00002"]
    assert d.kinds == {"n": N, "code": ID}


def test_dates_from_calamine_and_openpyxl_agree(awkward_xlsx):
    """calamine is used for speed; openpyxl (the reference reader) must see the same dates."""
    ours = read_table(awkward_xlsx).data["taken"]
    sheet = openpyxl.load_workbook(awkward_xlsx, data_only=True)["Readings"]
    theirs = [sheet.cell(r, 4).value for r in range(4, 7)]
    assert list(ours) == [pd.Timestamp(v) for v in theirs]


def test_number_column_with_na_text_and_blank_text_cells(tmp_path):
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["v"])
    for v in (1.5, "NA", "  ", " 2.25 ", 3):
        sheet.append([v])
    path = tmp_path / "na.xlsx"
    book.save(path)
    t = read_table(path)
    assert t.kinds == {"v": N}
    assert values(t.data["v"]) == [1.5, None, None, 2.25, 3.0]
    assert t.notes == [
        "Column 'v': 1 numbers stored as text were converted to numbers.",
        "Column 'v': 1 cells marked NA read as missing.",
    ]
