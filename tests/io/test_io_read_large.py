"""Big delimited files: the number plan made on the sample and the read from the disk.

A file longer than the detection sample has the columns whose sample holds decimal
numbers read by pyarrow as float64 directly, and a file of 1 MiB or more with quotes is
parsed straight from the disk. Both must give exactly what reading every cell as text in
memory and classifying it gives (the reference here, ``read_as_text``); the spy
``parses`` shows that the fast way was really taken, so the comparisons can fail.
Expected values are computed with Python's ``float``, which, like Arrow's parser, rounds
correctly (IEEE 754 round-to-nearest; Python docs, "Floating-Point Arithmetic").
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from test_io_read_text import values

import scalewright.io.csv_reader as csv_reader
from scalewright.errors import ReadError
from scalewright.io import ColumnKind, ReadOptions, read_table

N, ID, T = ColumnKind.NUMBER, ColumnKind.IDENTIFIER, ColumnKind.TEXT
ROWS = 40_000  # with a quoted text column, over the 1 MiB from which files are streamed


def decimals(n: int, comma: bool = False, shift: int = 0) -> list[str]:
    """Invented readings that are never whole numbers: (37 j + 12.5) / 100 has a
    fractional part of at least 0.005."""
    out = [f"{((i + shift) % 2000 - 1000) * 0.37 + 0.125:.4f}" for i in range(n)]
    return [v.replace(".", ",") for v in out] if comma else out


def write(path, header, columns, sep=",", encoding="utf-8", prefix=b"", tail=""):
    lines = [sep.join(header)] + [sep.join(row) for row in zip(*columns, strict=True)]
    path.write_bytes(prefix + ("\n".join(lines) + "\n" + tail).encode(encoding))
    return path


def put(column: list[str], row: int, text: str) -> list[str]:
    column = list(column)
    column[row] = text
    return column


def notes_column(n: int) -> list[str]:
    return [f'"field note {i:05d}"' for i in range(n)]


@pytest.fixture
def parses(monkeypatch):
    """Every bulk parse as (from the disk, columns read as numbers, columns re-read)."""
    seen: list[tuple[bool, list[int], list[int] | None]] = []
    real = csv_reader._parse_body

    def spy(rest, *args, **kwargs):
        streamed = isinstance(rest, csv_reader._FileTail)
        seen.append((streamed, sorted(kwargs.get("floats", ())), kwargs.get("only")))
        return real(rest, *args, **kwargs)

    monkeypatch.setattr(csv_reader, "_parse_body", spy)
    return seen


@pytest.fixture
def read_as_text(monkeypatch):
    """The reference: the whole file in memory, every cell parsed as text, then ``kinds``."""

    def read(path, options=None):
        with monkeypatch.context() as m:
            m.setattr(csv_reader, "_float_columns", lambda *args: set())
            raw = path.read_bytes()
            return csv_reader._read_whole(path, options or ReadOptions(), raw)

    return read


def same_read(fast, slow) -> None:
    assert fast.headers == slow.headers
    assert fast.kinds == slow.kinds
    assert fast.notes == slow.notes
    assert fast.options == slow.options
    pd.testing.assert_frame_equal(fast.data, slow.data, check_exact=True)
    for label in fast.data.columns:
        if fast.data[label].dtype == np.float64:
            a, b = fast.data[label].to_numpy(), slow.data[label].to_numpy()
            assert a.view(np.uint64).tolist() == b.view(np.uint64).tolist(), label


# Cells that the sample of a decimal column does not show, put far down the column. Each
# one changes what the column is (text, a code, markers, a note) or how it is read.
POINT_CELLS = [
    "abc",  # text: the whole column stays text
    "nan",  # missing marker, with a note
    "NA",
    "inf",
    "12",  # a whole number: a number still
    "12.0",
    "00",
    "-007",
    "1e15",
    "0000000000000012",  # a 16-digit code hidden in a number: the column is text
    " 0000000000000012",
    "+0000000000000012",  # signed, so not a code
    "0000000000000012.5",
    "1234567890123456",
    "1e5",
    "1.5e-3",
    " 1.5",  # spaces around a number
    '" 2.5"',
    "",
    " ",
    "-0.0",
    "01.5",
    "+1.5",
    "1.5\u00a0",
    "\u0661.\u0665",  # Arabic-Indic digits: not read as a number
    "007",
    '"1,234.5"',
]
COMMA_CELLS = ["abc", "12", "1.234,5", " 1,5", "1.5", " 1.5", "1,5e3", "0000000000000012", "NA"]


@pytest.mark.parametrize("cell", POINT_CELLS)
def test_point_decimals_with_a_late_surprise_read_as_if_all_text(
    tmp_path, parses, read_as_text, cell
):
    x = put(decimals(ROWS), 25_000, cell)
    path = write(
        tmp_path / "late.csv",
        ["x", "y", "note"],
        [x, decimals(ROWS, shift=7), notes_column(ROWS)],
    )
    fast = read_table(path)
    assert (True, [0, 1], None) in parses  # streamed, both columns planned as numbers
    same_read(fast, read_as_text(path))
    assert fast.kinds["y"] is N


@pytest.mark.parametrize("cell", COMMA_CELLS)
def test_comma_decimals_with_a_late_surprise_read_as_if_all_text(
    tmp_path, parses, read_as_text, cell
):
    x = put(decimals(ROWS, comma=True), 25_000, cell)
    path = write(
        tmp_path / "late.csv",
        ["x", "y", "note"],
        [x, decimals(ROWS, comma=True, shift=3), notes_column(ROWS)],
        sep=";",
    )
    fast = read_table(path)
    assert fast.options.decimal == ","
    assert (True, [0, 1], None) in parses
    same_read(fast, read_as_text(path))


def test_number_column_with_text_far_down_stays_text(tmp_path, parses):
    x = put(decimals(ROWS), 30_000, "see note")
    path = write(tmp_path / "t.csv", ["x", "note"], [x, notes_column(ROWS)])
    t = read_table(path)
    assert t.kinds == {"x": T, "note": T}
    assert values(t.data["x"])[:2] == ["-369.8750", "-369.5050"]
    assert values(t.data["x"])[30_000] == "see note"
    # The number read stopped at the word and the column was read again as text.
    assert [p[1] for p in parses if p[0]] == [[0], []]


def test_number_column_without_quotes_in_memory(tmp_path, parses, read_as_text):
    # 20,000 rows: longer than the sample, shorter than a streamed file.
    x = put(decimals(20_000), 15_000, "oops")
    path = write(tmp_path / "m.csv", ["x", "y"], [x, decimals(20_000, shift=1)])
    fast = read_table(path)
    assert (False, [0, 1], None) in parses
    assert fast.kinds == {"x": T, "y": N}
    same_read(fast, read_as_text(path))


def test_leading_zero_code_only_after_row_10000(tmp_path, parses):
    codes = put([str(1000 + i) for i in range(ROWS)], 12_345, "0042")
    path = write(
        tmp_path / "c.csv", ["code", "x", "note"], [codes, decimals(ROWS), notes_column(ROWS)]
    )
    t = read_table(path)
    assert t.kinds == {"code": ID, "x": N, "note": T}
    assert values(t.data["code"])[12_344:12_347] == ["13344", "0042", "13346"]
    assert str(t.data["code"].dtype) == "str"
    assert parses[-1][:2] == (True, [1])  # the codes were never read as numbers


def test_whole_numbers_after_the_sample_stay_whole_numbers(tmp_path):
    counts = put([str(i % 5000) for i in range(ROWS)], 31_000, "12345")
    path = write(tmp_path / "n.csv", ["n", "note"], [counts, notes_column(ROWS)])
    t = read_table(path)
    assert t.kinds["n"] is N
    assert str(t.data["n"].dtype) == "Int64"
    assert values(t.data["n"])[31_000] == 12345


@pytest.mark.parametrize("cell", ["12", "007", "-0", "12.0"])
def test_whole_number_far_down_a_decimal_column_needs_no_second_read(tmp_path, parses, cell):
    """In a column of decimals a whole number stays a number, leading zeros and all (the
    text rules, ``kinds``); the file holds no run of 16 digits, so no cell is read again.
    Once this cost a second, text read of the column and 0.4 s of 2.2 s in the speed
    benchmark (``benchmarks/bench_scale.py``)."""
    x = put(decimals(ROWS), 31_000, cell)
    path = write(tmp_path / "w.csv", ["x", "note"], [x, notes_column(ROWS)])
    t = read_table(path)
    assert str(t.data["x"].dtype) == "float64"
    assert values(t.data["x"])[31_000] == float(cell)
    assert parses == [(False, [], None), (True, [0], None)]  # the sample, then one read


@pytest.mark.parametrize(("cell", "kind"), [("12", N), ("0000000000000012", T)])
def test_long_run_of_digits_elsewhere_has_the_whole_numbers_looked_at(
    tmp_path, parses, read_as_text, cell, kind
):
    """A 17-digit run in another column could be a long code hidden behind a whole number,
    so that column's text is read again, and only its whole-number cells decide."""
    x = put(decimals(ROWS), 31_000, cell)
    notes = put(notes_column(ROWS), 5, '"ticket 12345678901234567"')
    path = write(tmp_path / "w.csv", ["x", "note"], [x, notes])
    t = read_table(path)
    assert t.kinds["x"] is kind
    assert (True, [], [0]) in parses  # only that column was read again
    same_read(t, read_as_text(path))


@pytest.mark.parametrize("where", ["memory", "disk"])
def test_run_of_digits_across_a_scan_block_is_found(tmp_path, monkeypatch, where):
    monkeypatch.setattr(csv_reader, "_DIGIT_SCAN_BLOCK", 64)
    for start in range(40, 90):  # every offset of a 16-digit run around the first border
        data = b"1.5," * 40
        data = data[:start] + b"0000000000000012" + data[start + 16 :]
        # A "may hold" answer: runs of 8 to 15 digits may answer yes, 7 never do.
        short = data.replace(b"0000000000000012", b"1.5,1234567,1.5,")
        for text, expected in ((data, True), (short, False)):
            if where == "memory":
                rest = memoryview(text)
            else:
                (tmp_path / "f.csv").write_bytes(b"head\n" + text)
                rest = csv_reader._FileTail(tmp_path / "f.csv", 5)
            assert csv_reader._may_hold_long_digit_string(rest) is expected, (start, text)


def test_decimal_comma_at_scale(tmp_path, parses):
    rows = 100_000
    x, y = decimals(rows, comma=True), decimals(rows, comma=True, shift=11)
    path = write(
        tmp_path / "eu.csv", ["Gewicht", "Preis", "Notiz"], [x, y, notes_column(rows)], sep=";"
    )
    t = read_table(path)
    assert (t.options.delimiter, t.options.decimal, t.options.thousands) == (";", ",", "")
    assert t.kinds == {"Gewicht": N, "Preis": N, "Notiz": T}
    for label, texts in (("Gewicht", x), ("Preis", y)):
        expected = np.array([float(v.replace(",", ".")) for v in texts])
        got = t.data[label].to_numpy()
        assert got.dtype == np.float64
        assert got.view(np.uint64).tolist() == expected.view(np.uint64).tolist()
    assert t.notes == [
        "Encoding: UTF-8.",
        "Columns separated by semicolon.",
        "Numbers use a decimal comma.",
        "Column 'Gewicht': numbers written with a decimal comma were converted.",
        "Column 'Preis': numbers written with a decimal comma were converted.",
    ]
    assert parses[-1] == (True, [0, 1], None)


def test_code_page_text_far_down_a_streamed_file(tmp_path, parses):
    names = put([f'"name of row {i:05d}"' for i in range(ROWS)], 39_500, '"Crème brûlée"')
    path = write(tmp_path / "cp.csv", ["name", "x"], [names, decimals(ROWS)], encoding="cp1252")
    t = read_table(path)
    assert t.options.encoding == "cp1252"
    assert t.notes[0] == "Encoding: Windows-1252 (Western European)."
    assert values(t.data["name"])[39_500] == "Crème brûlée"
    assert any(p[0] for p in parses)  # the disk read was tried, and given up for memory


def test_ragged_row_far_down_a_streamed_file_is_named(tmp_path):
    x = put(decimals(ROWS), 38_000, "1.5,2.5")
    path = write(tmp_path / "r.csv", ["x", "note"], [x, notes_column(ROWS)])
    with pytest.raises(ReadError, match=r"row 38002 has 3 fields but the header \(row 1\) has 2"):
        read_table(path)


def test_streamed_file_with_bom_titles_blank_rows_and_spaces(tmp_path, parses, read_as_text):
    x = decimals(ROWS)
    path = write(
        tmp_path / "b.csv",
        ["x", "note"],
        [x, notes_column(ROWS)],
        prefix=b"\xef\xbb\xbfReadings (invented)\nsecond title\n\n",
        tail='\n   \n1.5,"after a line of spaces"\n,\n,\n',
    )
    fast = read_table(path)
    assert fast.options.encoding == "utf-8-sig"
    assert fast.options.header_row == 3
    assert fast.headers == ["x", "note"]
    assert len(fast.data) == ROWS + 1
    assert any(p[0] for p in parses)
    same_read(fast, read_as_text(path))


def test_user_options_on_a_streamed_file(tmp_path, read_as_text):
    x = decimals(ROWS, comma=True)
    path = write(tmp_path / "o.csv", ["x", "note"], [x, notes_column(ROWS)], sep=";")
    options = ReadOptions(encoding="utf-8", delimiter=";", decimal=".", thousands=",")
    fast = read_table(path, options)
    assert fast.kinds["x"] is T  # "1,5" is not a grouped number
    same_read(fast, read_as_text(path, options))
