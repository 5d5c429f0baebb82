"""Every bad input ends in one ReadError naming the file and the problem, never a traceback."""

from __future__ import annotations

import zipfile
from pathlib import Path

import pytest

from scalewright.errors import ReadError
from scalewright.io import detect, list_sheets, read_table


def expect(path: Path, message: str) -> ReadError:
    with pytest.raises(ReadError) as info:
        read_table(path)
    assert str(info.value) == f"{path}: {message}"
    assert info.value.path == str(path)
    return info.value


def test_missing_file(tmp_path):
    expect(tmp_path / "nowhere.csv", "the file does not exist")


def test_folder_instead_of_file(tmp_path):
    folder = tmp_path / "table.csv"
    folder.mkdir()
    expect(folder, "this is a folder, not a file")


def test_empty_file(corpus):
    expect(corpus / "empty.csv", "the file is empty")


def test_only_blank_lines(corpus):
    expect(corpus / "blank_lines.csv", "the file has no data (only blank lines)")


def test_binary_garbage(corpus):
    expect(corpus / "garbage.csv", "this is not a text table (it contains binary data)")


def test_workbook_saved_under_a_csv_name(tmp_path, awkward_xlsx):
    path = tmp_path / "really_a_workbook.csv"
    path.write_bytes(awkward_xlsx.read_bytes())
    expect(
        path,
        "this is a workbook saved under a '.csv' name; Scalewright opens tables: CSV (.csv), "
        "TSV (.tsv), delimited text (.txt), Workbook (.xlsx, .xlsm), older workbook (.xls), "
        "OpenDocument spreadsheet (.ods) and Parquet (.parquet). Rename it to end in .xlsx "
        "to open it",
    )


def test_wrong_extension(tmp_path):
    path = tmp_path / "report.pdf"
    path.write_bytes(b"%PDF-1.4 invented")
    expect(
        path,
        "this type of file ('.pdf', a PDF document) is not supported; Scalewright opens "
        "tables: CSV (.csv), TSV (.tsv), delimited text (.txt), Workbook (.xlsx, .xlsm), "
        "older workbook (.xls), OpenDocument spreadsheet (.ods) and Parquet (.parquet)",
    )


def test_ragged_row_with_too_many_fields(corpus):
    expect(corpus / "ragged_long.csv", "row 3 has 4 fields but the header (row 1) has 3")


def test_ragged_row_with_too_few_fields_counts_file_lines(corpus):
    expect(corpus / "ragged_short.csv", "row 5 has 2 fields but the header (row 2) has 3")


def test_ragged_row_after_a_quoted_newline_is_numbered_by_file_line(tmp_path):
    path = tmp_path / "q.csv"
    path.write_text('a,b\n"one\ntwo",1\n3,4,5\n', encoding="utf-8")
    expect(path, "row 4 has 3 fields but the header (row 1) has 2")


def test_invalid_utf8_when_utf8_is_asked_for(corpus):
    from scalewright.io import ReadOptions

    with pytest.raises(ReadError, match=r"not valid utf-8 \(at byte 1\); choose another encoding"):
        read_table(corpus / "cp1252_headers.csv", ReadOptions(encoding="utf-8"))


def test_text_file_with_xlsx_extension(tmp_path):
    path = tmp_path / "fake.xlsx"
    path.write_text("a,b\n1,2\n", encoding="utf-8")
    expect(path, "this is not a valid .xlsx workbook (damaged or another kind of file)")


def test_truncated_workbook(tmp_path, awkward_xlsx):
    path = tmp_path / "cut.xlsx"
    path.write_bytes(awkward_xlsx.read_bytes()[:2000])
    err = expect_prefix(path, "the workbook is damaged and cannot be read (")
    assert "Traceback" not in str(err)


def test_zip_that_is_not_a_workbook(tmp_path):
    path = tmp_path / "archive.xlsx"
    with zipfile.ZipFile(path, "w") as zf:
        zf.writestr("hello.txt", "not a workbook")
    expect_prefix(path, "the workbook is damaged and cannot be read (")


def test_password_protected_workbook(tmp_path):
    # A password-protected .xlsx is an OLE compound file holding an "EncryptedPackage"
    # stream ([MS-OFFCRYPTO] 2.3.4.4). This stand-in has the OLE signature and the stream
    # name, which is what the check looks at; no encryption library is installed here.
    path = tmp_path / "locked.xlsx"
    header = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(504)
    path.write_bytes(header + "EncryptedPackage".encode("utf-16-le") + bytes(1000))
    expect(
        path, "the workbook is protected with a password; save an unprotected copy and open that"
    )


def test_empty_workbook_file(tmp_path):
    path = tmp_path / "nothing.xlsx"
    path.write_bytes(b"")
    expect(path, "the file is empty")


def test_workbook_with_only_empty_sheets(tmp_path):
    import openpyxl

    path = tmp_path / "blank.xlsx"
    openpyxl.Workbook().save(path)
    expect(path, "every sheet in the workbook is empty")


def test_unknown_sheet_is_named(awkward_xlsx):
    from scalewright.io import ReadOptions

    with pytest.raises(
        ReadError, match=r"there is no sheet named 'Sales' \(sheets: Readings, notes\)"
    ):
        read_table(awkward_xlsx, ReadOptions(sheet="Sales"))


def test_detect_and_list_sheets_report_the_same_errors(corpus, tmp_path):
    with pytest.raises(ReadError, match="the file is empty"):
        detect(corpus / "empty.csv")
    with pytest.raises(ReadError, match="does not exist"):
        list_sheets(tmp_path / "gone.xlsx")


def expect_prefix(path: Path, start: str) -> ReadError:
    with pytest.raises(ReadError) as info:
        read_table(path)
    assert str(info.value).startswith(f"{path}: {start}")
    return info.value
