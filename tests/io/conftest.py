"""Fixtures for the io tests: the committed corpus and workbooks built on the fly."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

CORPUS = Path(__file__).resolve().parent / "corpus"


@pytest.fixture
def corpus() -> Path:
    return CORPUS


@pytest.fixture
def awkward_xlsx(tmp_path: Path) -> Path:
    """Title on row 1, header on row 3 with a merged cell over two columns, a date column,
    numbers stored as text, identifiers as text, and formatting-only rows far below."""
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Readings"
    sheet["A1"] = "Widget readings (invented)"
    sheet.merge_cells("A1:F1")
    headers = ["site", "level", None, "taken", "count", "as text", "code"]
    for j, text in enumerate(headers, start=1):
        sheet.cell(3, j, text)
    sheet.merge_cells("B3:C3")
    rows = [
        ("north", 1.5, 2.25, dt.date(2021, 5, 1), 3, "1.5", "007"),
        ("south", 2.0, -1.0, dt.date(2021, 5, 2), 4, "2", "012"),
        ("east", None, 0.5, dt.datetime(2021, 5, 3), 5, "-3.25", "100"),
    ]
    for i, row in enumerate(rows, start=4):
        for j, value in enumerate(row, start=1):
            cell = sheet.cell(i, j, value)
            if isinstance(value, dt.date):
                cell.number_format = "dd.mm.yyyy"
    # Empty trailing rows and columns that still carry formatting.
    for r in range(8, 30):
        sheet.cell(r, 10).number_format = "0.00"
    sheet.cell(40, 2, "")
    book.create_sheet("notes")
    path = tmp_path / "awkward.xlsx"
    book.save(path)
    return path


@pytest.fixture
def small_ods(tmp_path: Path) -> Path:
    path = tmp_path / "small.ods"
    frame = pd.DataFrame(
        {
            "amount": [1.5, 2.0, -0.25],
            "zip": ["00412", "01234", "99501"],
            "when": pd.to_datetime(["2020-01-01", "2020-02-03", "2020-03-04"]),
        }
    )
    with pd.ExcelWriter(path, engine="odf") as writer:
        frame.to_excel(writer, index=False, sheet_name="first")
    return path
