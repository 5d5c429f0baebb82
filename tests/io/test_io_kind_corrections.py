"""Kind corrections (``ReadOptions.kinds``): every guessed kind can be corrected where the
cells allow it, from the cells as the file writes them.

The motivating case is NIST StRD NumAcc1 (/work/shared/reference/nist_strd/NumAcc1.json):
three 8-digit whole numbers near 10,000,001, which the guessing rules take for an
identifier (all one width of 8 digits; our rule, ``kinds.FIXED_WIDTH_CODE_DIGITS``).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from scalewright.io import (
    ColumnKind,
    KindRefused,
    ReadOptions,
    allowed_kinds,
    csv_reader,
    detect,
    identifier_of_numbers,
    read_table,
    write_table,
)
from support import SHARED_REFERENCE

NUMACC1 = json.loads((SHARED_REFERENCE / "nist_strd" / "NumAcc1.json").read_text("utf-8"))
K = ColumnKind


def numacc_csv(tmp_path, name="numacc1.csv"):
    path = tmp_path / name
    lines = ["plot,y"] + [f"P{i},{v}" for i, v in enumerate(NUMACC1["values_text"], 1)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_eight_digit_numbers_are_guessed_as_identifiers_and_can_be_corrected(tmp_path):
    path = numacc_csv(tmp_path)
    guessed = read_table(path)
    assert guessed.kinds["y"] is K.IDENTIFIER
    assert identifier_of_numbers(guessed, "y") == "all values have 8 digits"
    assert allowed_kinds(guessed, "y") == (K.NUMBER, K.IDENTIFIER, K.TEXT)

    table = read_table(path, ReadOptions(kinds={"y": "number"}))
    assert table.kinds["y"] is K.NUMBER
    assert str(table.data["y"].dtype) == "Int64"
    # Exactly the published values (NumAcc1.dat), and their certified mean and sd.
    assert table.data["y"].tolist() == [int(v) for v in NUMACC1["values_text"]]
    y = table.data["y"].to_numpy(float)
    assert y.mean() == NUMACC1["certified_mean"]
    assert y.std(ddof=1) == NUMACC1["certified_sd"]
    assert table.options.kinds == {"y": "number"}  # recorded, so a project keeps it
    assert "Column 'y': read as numbers, as asked (it looked like identifiers)." in table.notes
    assert table.kinds["plot"] is K.IDENTIFIER  # other columns keep their guess


def test_amounts_in_cents_with_decimal_comma_file_marks(tmp_path):
    # Semicolon file with a decimal comma and points between thousands: the correction
    # reads the cells under the detected marks ("common practice" in continental exports).
    path = tmp_path / "cents.csv"
    rows = ["grower;amount_cents;price"]
    rows += [f"G{i};{12345600 + i};1.234,5" for i in range(5)]
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    table = read_table(path, ReadOptions(kinds={"amount_cents": "number"}))
    assert (table.options.decimal, table.options.thousands) == (",", ".")
    assert table.data["amount_cents"].tolist() == [12345600 + i for i in range(5)]
    assert table.data["price"].tolist() == [1234.5] * 5


def test_number_column_read_as_text_keeps_the_text_as_written(tmp_path):
    path = tmp_path / "t.csv"
    path.write_text('a,b\n1.50,x\n007,y\n"1,5",z\n,w\n2e3,v\n', encoding="utf-8")
    assert read_table(path).kinds["a"] is K.TEXT  # "1,5" with a point file is no number
    path.write_text("a,b\n1.50,x\n007.0,y\n,w\n2e3,v\n", encoding="utf-8")
    assert read_table(path).kinds["a"] is K.NUMBER
    for kind in ("text", "identifier"):
        table = read_table(path, ReadOptions(kinds={"a": kind}))
        assert table.kinds["a"] is ColumnKind(kind)
        assert table.data["a"].tolist()[:2] + table.data["a"].tolist()[3:] == [
            "1.50",
            "007.0",
            "2e3",
        ]
        assert pd.isna(table.data["a"][2])


def test_leading_zero_codes_can_become_numbers_and_back(tmp_path):
    path = tmp_path / "z.csv"
    path.write_text("code\n0012\n0150\n2000\n", encoding="utf-8")
    assert read_table(path).kinds["code"] is K.IDENTIFIER
    table = read_table(path, ReadOptions(kinds={"code": "number"}))
    assert table.data["code"].tolist() == [12, 150, 2000]


def test_a_cell_that_is_not_a_number_is_named(tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text("plot,y\nP1,10000001\nP2,1000000x\nP3,10000002\n", encoding="utf-8")
    with pytest.raises(KindRefused) as caught:
        read_table(path, ReadOptions(kinds={"y": "number"}))
    message = str(caught.value)
    assert message.startswith(str(path))
    assert "column 'y' cannot be read as numbers" in message
    assert "data row 2 holds '1000000x'" in message
    assert caught.value.row == 2


def test_missing_markers_are_blank_in_a_corrected_number_column(tmp_path):
    path = tmp_path / "m.csv"
    path.write_text("y\n10000001\nNA\n10000003\n", encoding="utf-8")
    table = read_table(path, ReadOptions(kinds={"y": "number"}))
    assert table.data["y"].tolist()[0::2] == [10000001, 10000003]
    assert pd.isna(table.data["y"][1])
    assert any("1 cells marked NA read as missing" in n for n in table.notes)


def test_too_many_digits_for_a_number_is_refused(tmp_path):
    # Beyond 15 digits a double cannot hold every whole number (IEEE 754 binary64).
    path = tmp_path / "long.csv"
    path.write_text("card\n1234567890123456789\n1234567890123456780\n", encoding="utf-8")
    with pytest.raises(KindRefused, match="data row 1 holds '1234567890123456789'.*15 digits"):
        read_table(path, ReadOptions(kinds={"card": "number"}))
    assert allowed_kinds(read_table(path), "card") == (K.IDENTIFIER, K.TEXT)


def test_dates_where_the_cells_allow_it(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text("when,code\n2025-04-03,A1\n2025-04-05,B2\n", encoding="utf-8")
    table = read_table(path)
    assert table.kinds["when"] is K.DATE
    assert allowed_kinds(table, "when") == (K.IDENTIFIER, K.TEXT, K.DATE)
    assert allowed_kinds(table, "code") == (K.IDENTIFIER, K.TEXT)
    as_text = read_table(path, ReadOptions(kinds={"when": "text"}))
    assert as_text.data["when"].tolist() == ["2025-04-03", "2025-04-05"]
    with pytest.raises(KindRefused, match="column 'code' cannot be read as dates: data row 1"):
        read_table(path, ReadOptions(kinds={"code": "date"}))
    path.write_text("when\n2025-04-03\n2025-02-30\n", encoding="utf-8")
    assert read_table(path).kinds["when"] is K.TEXT
    with pytest.raises(KindRefused, match="data row 2 holds '2025-02-30'.*calendar"):
        read_table(path, ReadOptions(kinds={"when": "date"}))


def test_text_that_is_dates_can_be_read_as_dates(tmp_path):
    # Day-first dates with one value that does not tell: guessed as dates already; a
    # column of 8-digit codes never is (not a date form we read).
    path = tmp_path / "dd.csv"
    path.write_text("when\n03/04/2025\n05/04/2025\n", encoding="utf-8")
    table = read_table(path, ReadOptions(kinds={"when": "text"}))
    assert table.kinds["when"] is K.TEXT
    assert allowed_kinds(table, "when") == (K.IDENTIFIER, K.TEXT, K.DATE)
    back = read_table(path, ReadOptions(kinds={"when": "date"}))
    assert back.data["when"].tolist() == [pd.Timestamp("2025-04-03"), pd.Timestamp("2025-04-05")]


def test_a_correction_for_a_column_not_in_the_file_is_ignored_here(tmp_path):
    # The command line and the project check the names; a new file without the column is
    # reported by the missing-column checks of apply and restore.
    path = numacc_csv(tmp_path)
    table = read_table(path, ReadOptions(kinds={"elsewhere": "number"}))
    assert table.kinds["y"] is K.IDENTIFIER


def test_preview_applies_the_correction(tmp_path):
    detection = detect(numacc_csv(tmp_path), ReadOptions(kinds={"y": "number"}))
    assert detection.kinds["y"] is K.NUMBER
    assert detection.preview["y"].tolist() == [int(v) for v in NUMACC1["values_text"]]


def test_large_streamed_file_reads_a_corrected_number_column_from_its_text(tmp_path, monkeypatch):
    # A decimal column of a file big enough to be parsed from the disk is normally read
    # as numbers directly; read as text it must keep every cell as written ("1.50").
    n = 120_000
    path = tmp_path / "big.csv"
    with open(path, "w", encoding="utf-8") as fh:
        fh.write('"x","code"\n')
        for i in range(n):
            fh.write(f'{i % 97}.{i % 7}0,"{10000001 + i}"\n')
    assert path.stat().st_size > csv_reader.STREAM_HEAD_BYTES
    streamed = []
    real = csv_reader._read_streamed

    def spy(*args):
        table = real(*args)
        streamed.append(table is not None)
        return table

    monkeypatch.setattr(csv_reader, "_read_streamed", spy)
    plain = read_table(path)
    assert plain.kinds == {"x": K.NUMBER, "code": K.IDENTIFIER}
    table = read_table(path, ReadOptions(kinds={"x": "text", "code": "number"}))
    assert streamed == [True, True]
    assert table.data["x"][:3].tolist() == ["0.00", "1.10", "2.20"]
    assert table.data["code"].to_numpy(np.int64).tolist() == list(range(10000001, 10000001 + n))


def test_workbook_columns_can_be_corrected(tmp_path):
    path = tmp_path / "w.xlsx"
    frame = pd.DataFrame({"y": [10000001, 10000003, 10000002], "g": ["a", "b", "c"]})
    # Written as text cells, as some exports do with codes.
    frame["y"] = frame["y"].astype("str")
    write_table(path, frame, ["y", "g"])
    table = read_table(path)
    assert table.kinds["y"] is K.IDENTIFIER
    fixed = read_table(path, ReadOptions(kinds={"y": "number"}))
    assert fixed.data["y"].tolist() == [10000001, 10000003, 10000002]
    assert fixed.options.kinds == {"y": "number"}
    numbers = pd.DataFrame({"v": [1.5, 2.0, 12.25]})
    write_table(tmp_path / "n.xlsx", numbers, ["v"])
    as_text = read_table(tmp_path / "n.xlsx", ReadOptions(kinds={"v": "text"}))
    assert as_text.data["v"].tolist() == ["1.5", "2", "12.25"]


def test_read_options_check_and_store_the_corrections():
    assert ReadOptions(kinds={"y": "number"}).to_dict()["kinds"] == {"y": "number"}
    assert "kinds" not in ReadOptions().to_dict()  # files without corrections unchanged
    assert ReadOptions.from_dict({}).kinds == {}
    with pytest.raises(ValueError, match="kinds: column 'y': 'numeric' is not one of number"):
        ReadOptions(kinds={"y": "numeric"})
    with pytest.raises(ValueError, match="kinds: column 'y': 'boolean' is not one of"):
        ReadOptions(kinds={"y": "boolean"})
    with pytest.raises(ValueError, match="kinds: expected an object"):
        ReadOptions(kinds=["y"])
