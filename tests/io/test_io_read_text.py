"""Reading the delimited-text corpus: each file with its exact expected result."""

from __future__ import annotations

import importlib.util
import math
from pathlib import Path

import pandas as pd
import pytest

from scalewright.errors import Cancelled, ReadError
from scalewright.io import ColumnKind, ReadOptions, read_table

N, ID, D, B, T = (
    ColumnKind.NUMBER,
    ColumnKind.IDENTIFIER,
    ColumnKind.DATE,
    ColumnKind.BOOLEAN,
    ColumnKind.TEXT,
)


def values(series: pd.Series) -> list:
    """Cells as plain Python values, None for missing, so expectations read naturally."""
    out = []
    for v in series.tolist():
        if v is None or v is pd.NA or v is pd.NaT or (isinstance(v, float) and math.isnan(v)):
            out.append(None)
        elif isinstance(v, pd.Timestamp):
            out.append(v.isoformat(sep=" ").removesuffix(" 00:00:00"))
        else:
            out.append(v)
    return out


def check(table, headers, kinds, columns, dtypes=None):
    assert table.headers == headers
    assert list(table.data.columns) == list(kinds)
    assert table.kinds == kinds
    for label, expected in columns.items():
        assert values(table.data[label]) == expected, label
    for label, dtype in (dtypes or {}).items():
        assert str(table.data[label].dtype) == dtype, label


def test_corpus_is_current(corpus: Path):
    spec = importlib.util.spec_from_file_location("make_corpus", corpus / "make_corpus.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    files = module.files()
    assert len(files) >= 18
    for name, data in files.items():
        assert (corpus / name).read_bytes() == data, name


def test_semicolon_and_decimal_comma(corpus):
    t = read_table(corpus / "semicolon_decimal_comma.csv")
    check(
        t,
        ["part", "weight kg", "price"],
        {"part": T, "weight kg": N, "price": N},
        {
            "part": ["bolt", "nut", "washer"],
            "weight kg": [1.5, 0.75, 12.0],
            "price": [2.25, 10.5, -0.125],
        },
        {"part": "str", "weight kg": "float64", "price": "float64"},
    )
    assert t.options == ReadOptions("utf-8", ";", ",", "", 0, None)
    assert t.notes == [
        "Encoding: UTF-8.",
        "Columns separated by semicolon.",
        "Numbers use a decimal comma.",
        "Column 'weight kg': numbers written with a decimal comma were converted.",
        "Column 'price': numbers written with a decimal comma were converted.",
    ]
    assert t.sheets == []


def test_thousands_commas_in_quoted_fields(corpus):
    t = read_table(corpus / "thousands_comma.csv")
    check(
        t,
        ["item", "amount", "units"],
        {"item": ID, "amount": N, "units": N},
        {"item": ["A-1", "B-2", "C-3"], "amount": [1234.5, 12345678.25, 999.5], "units": [3, 4, 5]},
        {"units": "Int64", "amount": "float64"},
    )
    assert t.options.thousands == "," and t.options.decimal == "."
    assert "Column 'amount': numbers written with commas between thousands were converted." in (
        t.notes
    )


def test_thousands_spaces_with_decimal_comma(corpus):
    t = read_table(corpus / "thousands_space.csv")
    check(
        t,
        ["qty", "total"],
        {"qty": N, "total": N},
        {"qty": [1, 2, 3], "total": [1234.5, 12345.75, 7.5]},
    )
    assert (t.options.decimal, t.options.thousands) == (",", " ")
    assert "Thousands are separated by spaces." in t.notes


def test_cp1252_accents_in_headers(corpus):
    t = read_table(corpus / "cp1252_headers.csv")
    check(
        t,
        ["Réf", "Qté", "Désignation", "Température"],
        {"Réf": N, "Qté": N, "Désignation": T, "Température": N},
        {"Désignation": ["Crème brûlée", "Pâte à choux"], "Température": [-3.5, 21.25]},
    )
    assert t.options.encoding == "cp1252"
    assert t.notes[0] == "Encoding: Windows-1252 (Western European)."


def test_utf16_with_bom_and_tabs(corpus):
    t = read_table(corpus / "utf16_tab.tsv")
    check(
        t,
        ["name", "score", "note"],
        {"name": T, "score": N, "note": T},
        {"name": ["Åsa", "Žan"], "score": [1.25, -2.0], "note": ["ok", "€ paid"]},
    )
    assert (t.options.encoding, t.options.delimiter) == ("utf-16", "\t")


def test_utf8_bom_is_not_part_of_the_first_header(corpus):
    t = read_table(corpus / "utf8_bom.csv")
    check(
        t,
        ["città", "valore"],
        {"città": T, "valore": N},
        {"città": ["Roma Nord", "Évry"], "valore": [10, 20]},
    )
    assert t.options.encoding == "utf-8-sig"


def test_title_lines_above_header(corpus):
    t = read_table(corpus / "title_lines.csv")
    check(
        t,
        ["region", "count", "share"],
        {"region": T, "count": N, "share": N},
        {"region": ["north", "south"], "count": [12, 7], "share": [0.25, 0.5]},
    )
    assert t.options.header_row == 3
    assert "Header found on row 4; the lines above it were skipped." in t.notes


def test_header_row_given_by_the_user_wins(corpus, tmp_path):
    # Row 2 has one field, so the data rows (three fields) do not fit under it.
    with pytest.raises(ReadError, match=r"row 4 has 3 fields but the header \(row 2\) has 1"):
        read_table(corpus / "title_lines.csv", ReadOptions(header_row=1))
    path = tmp_path / "two_headers.csv"
    path.write_text("code,name\nunit,label\n1,a\n", encoding="utf-8")
    t = read_table(path, ReadOptions(header_row=1))
    assert t.headers == ["unit", "label"]
    assert values(t.data["unit"]) == [1]


def test_odd_headers_keep_their_text(corpus):
    t = read_table(corpus / "odd_headers.csv")
    check(
        t,
        ["x", "x", "", "Größe (m²)", "x", "x (2)"],
        {"x": N, "x (3)": N, "column 3": N, "Größe (m²)": N, "x (4)": N, "x (2)": N},
        {"x": [1, 7], "x (3)": [2, 8], "column 3": [3, 9], "x (2)": [6, 12]},
    )
    assert t.notes[-1] == (
        "Column names repeated or blank, shown as: 'x' as 'x (3)', '' as 'column 3', "
        "'x' as 'x (4)'."
    )


def test_identifiers_stay_text(corpus):
    t = read_table(corpus / "identifiers.csv")
    check(
        t,
        ["zip", "account", "order", "sku", "amount"],
        {"zip": ID, "account": ID, "order": ID, "sku": ID, "amount": N},
        {
            "zip": ["00412", "01234", "99501"],
            "account": ["12345678901234567890", "98765432109876543210", "11111111111111111111"],
            "order": ["20190403", "20200101", "20211231"],
            "sku": ["AB-1042", "XY-0007", "QQ-9"],
            "amount": [10.0, 20.5, -3.0],
        },
        {"zip": "str", "account": "str", "amount": "float64"},
    )


def test_formula_like_text_is_plain_text(corpus):
    t = read_table(corpus / "formula_text.csv")
    check(
        t,
        ["label", "value"],
        {"label": T, "value": N},
        {"label": ["=SUM(A1)", "+44", "-x", "@me", "=1+2"], "value": [1, 2, 3, 4, 5]},
    )


def test_dates_iso_day_first_month_first_and_times(corpus):
    t = read_table(corpus / "dates.csv")
    check(
        t,
        ["iso", "dmy", "mdy", "stamp"],
        {"iso": D, "dmy": D, "mdy": D, "stamp": D},
        {
            "iso": ["2019-04-03", "2020-12-31", None, "2021-01-15"],
            "dmy": ["2019-04-03", "2020-12-25", None, "2021-01-15"],
            "mdy": ["2019-04-30", "2020-12-25", None, "2021-01-15"],
            "stamp": ["2019-04-03 13:45:00", "2020-12-31", None, "2021-01-15 08:00:30"],
        },
    )
    assert all(str(t.data[c].dtype).startswith("datetime64") for c in t.data)
    assert "Column 'dmy': dates read as day/month/year." in t.notes
    assert "Column 'mdy': dates read as month/day/year." in t.notes


def test_pipe_delimited_txt_with_booleans(corpus):
    t = read_table(corpus / "pipe.txt")
    check(
        t,
        ["a", "b", "c"],
        {"a": N, "b": T, "c": B},
        {"a": [1, 2, 3], "b": ["x", "y", None], "c": [True, False, True]},
        {"c": "boolean", "a": "Int64"},
    )
    assert t.options.delimiter == "|"


def test_quoted_newlines_and_quotes(corpus):
    t = read_table(corpus / "quoted_newlines.csv")
    check(
        t,
        ["id", "comment", "value"],
        {"id": N, "comment": T, "value": N},
        {"comment": ["line one\nline two", 'has "quotes", and comma'], "value": [1.5, 2.5]},
    )


def test_missing_markers_in_a_number_column(corpus):
    t = read_table(corpus / "missing_markers.csv")
    check(t, ["k", "v"], {"k": T, "v": N}, {"v": [1.5, None, None, 2.0]})
    assert "Column 'v': 1 cells marked NA read as missing." in t.notes


def test_user_options_override_detection(corpus):
    # Read the decimal-comma file as if commas were thousands marks: "1,5" is not a valid
    # grouped number, so the column stays text rather than being silently misread.
    t = read_table(corpus / "semicolon_decimal_comma.csv", ReadOptions(decimal=".", thousands=","))
    assert t.kinds["weight kg"] is T
    assert values(t.data["weight kg"]) == ["1,5", "0,75", "12"]
    assert t.options.decimal == "." and t.options.thousands == ","


def test_numbers_convert_only_when_every_cell_parses(tmp_path):
    path = tmp_path / "mixed.csv"
    path.write_text("a,b\n1.5,1\n2.5,two\n,3\n", encoding="utf-8")
    t = read_table(path)
    assert t.kinds == {"a": N, "b": T}
    assert values(t.data["b"]) == ["1", "two", "3"]
    assert values(t.data["a"]) == [1.5, 2.5, None]


def test_integer_column_is_int64_and_float_column_float64(tmp_path):
    path = tmp_path / "ints.csv"
    path.write_text("i,f,big\n1,1.0,123456789012345\n-2,2,1\n", encoding="utf-8")
    t = read_table(path)
    assert str(t.data["i"].dtype) == "Int64"
    assert str(t.data["f"].dtype) == "float64"
    assert str(t.data["big"].dtype) == "Int64"
    assert values(t.data["big"]) == [123456789012345, 1]


def test_progress_reaches_one_and_cancel_stops(tmp_path):
    path = tmp_path / "p.csv"
    path.write_text("a,b\n" + "".join(f"{i},{i / 3}\n" for i in range(1000)), encoding="utf-8")
    seen: list[float] = []
    read_table(path, progress=seen.append)
    assert seen[-1] == 1.0 and seen == sorted(seen)
    with pytest.raises(Cancelled):
        read_table(path, cancelled=lambda: True)
