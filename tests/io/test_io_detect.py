"""The import dialog's quick look (detect), sheet lists, fingerprints, and rarer layouts."""

from __future__ import annotations

import hashlib

import pytest
from test_io_read_text import values

from scalewright.errors import ReadError
from scalewright.io import ColumnKind, ReadOptions, detect, fingerprint, list_sheets, read_table


def test_detect_csv_fills_every_option_and_previews(corpus):
    d = detect(corpus / "cp1252_headers.csv", preview_rows=1)
    assert d.options == ReadOptions("cp1252", ";", ",", "", 0, None)
    assert d.sheets == []
    assert list(d.preview.columns) == ["Réf", "Qté", "Désignation", "Température"]
    assert len(d.preview) == 1
    assert values(d.preview["Température"]) == [-3.5]
    assert "Numbers use a decimal comma." in d.notes


def test_detect_reads_only_the_start_of_a_big_file(tmp_path):
    path = tmp_path / "big.csv"
    rows = "".join(f"{i:06d};{i},5\n" for i in range(200_000))
    path.write_text("code;value\n" + rows, encoding="utf-8")
    d = detect(path, preview_rows=50)
    assert len(d.preview) == 50
    assert d.kinds == {"code": ColumnKind.IDENTIFIER, "value": ColumnKind.NUMBER}
    assert values(d.preview["value"])[:2] == [0.5, 1.5]
    full = read_table(path)
    assert len(full.data) == 200_000
    assert values(full.data["code"])[-1] == "199999"


def test_ragged_row_far_into_the_file_is_named(tmp_path):
    path = tmp_path / "deep.csv"
    lines = ["a,b"] + [f"{i},{i}" for i in range(40_000)]
    lines[30_001] = "1,2,3"  # line 30,002 of the file
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(ReadError, match=r"row 30002 has 3 fields but the header \(row 1\) has 2"):
        read_table(path)


def test_lines_of_spaces_far_into_the_file_are_blank(tmp_path):
    path = tmp_path / "spaces.csv"
    lines = ["a,b"] + [f"{i},x{i}" for i in range(40_000)]
    lines[35_000] = "   "
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    t = read_table(path)
    assert len(t.data) == 39_999
    assert t.kinds == {"a": ColumnKind.NUMBER, "b": ColumnKind.IDENTIFIER}


def test_trailing_empty_columns_are_left_out(tmp_path):
    path = tmp_path / "trailing.csv"
    path.write_text("a;b;;\n1;x;;\n2;y;;\n;;;\n;;;\n", encoding="utf-8")
    t = read_table(path)
    assert t.headers == ["a", "b"]
    assert len(t.data) == 2
    assert "2 empty column(s) at the right edge were left out." in t.notes


def test_points_between_thousands_and_decimal_comma(tmp_path):
    path = tmp_path / "eu.csv"
    path.write_text("k;v\na;1.234,5\nb;-12.345.678,25\nc;7\n", encoding="utf-8")
    t = read_table(path)
    assert (t.options.decimal, t.options.thousands) == (",", ".")
    assert values(t.data["v"]) == [1234.5, -12345678.25, 7.0]
    assert t.notes[-1] == (
        "Column 'v': numbers written with a decimal comma and points between thousands "
        "were converted."
    )


def test_header_only_file_gives_empty_columns(tmp_path):
    path = tmp_path / "head.csv"
    path.write_text("a,b\n", encoding="utf-8")
    t = read_table(path)
    assert t.headers == ["a", "b"]
    assert len(t.data) == 0
    assert t.kinds == {"a": ColumnKind.EMPTY, "b": ColumnKind.EMPTY}


def test_list_sheets_of_text_file_is_empty(corpus):
    assert list_sheets(corpus / "pipe.txt") == []


def test_fingerprint(corpus, tmp_path):
    path = corpus / "dates.csv"
    data = path.read_bytes()
    assert fingerprint(path) == (len(data), hashlib.sha256(data).hexdigest())
    with pytest.raises(ReadError, match="does not exist"):
        fingerprint(tmp_path / "gone.csv")


def test_single_column_and_old_mac_line_ends(tmp_path):
    one = tmp_path / "one.csv"
    one.write_text("value\n1.5\n\n2\n", encoding="utf-8")
    t = read_table(one)
    assert t.headers == ["value"]
    assert values(t.data["value"]) == [1.5, 2.0]
    mac = tmp_path / "mac.csv"
    mac.write_bytes(b"a;b\r1;2\r3;4\r")
    t = read_table(mac)
    assert t.options.delimiter == ";"
    assert values(t.data["b"]) == [2, 4]


def test_single_byte_text_far_into_a_file_that_starts_as_ascii(tmp_path):
    path = tmp_path / "late.csv"
    body = "".join(f"row {i};{i}\n" for i in range(40_000))
    path.write_bytes(("name;n\n" + body + "Crème;1\n").encode("cp1252"))
    t = read_table(path)
    assert t.options.encoding == "cp1252"
    assert values(t.data["name"])[-1] == "Crème"


def test_cyrillic_single_byte_file(tmp_path):
    path = tmp_path / "cyr.csv"
    text = "Город;Население;Примечание\n" + "Северск;12,5;новый\nЗаречный;1,25;старый\n" * 3
    path.write_bytes(text.encode("cp1251"))
    t = read_table(path)
    assert t.options.encoding == "cp1251"
    assert t.headers == ["Город", "Население", "Примечание"]
    assert values(t.data["Население"])[:2] == [12.5, 1.25]
