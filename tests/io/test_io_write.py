"""Writing: round trips through every format, workbook cell types, atomic writes."""

from __future__ import annotations

import json
import os
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from test_io_read_text import values

from scalewright.errors import Cancelled, ReadError, WriteError
from scalewright.io import (
    ColumnKind,
    ensure_not_source,
    read_embedded_project,
    read_table,
    write_scaled_workbook,
    write_table,
)

ROUND_TRIP_FILES = [
    "semicolon_decimal_comma.csv",
    "thousands_comma.csv",
    "cp1252_headers.csv",
    "utf16_tab.tsv",
    "utf8_bom.csv",
    "title_lines.csv",
    "odd_headers.csv",
    "identifiers.csv",
    "formula_text.csv",
    "dates.csv",
    "pipe.txt",
    "quoted_newlines.csv",
]


def same_table(a, b) -> None:
    assert b.headers == a.headers
    assert list(b.data.columns) == list(a.data.columns)
    assert b.kinds == a.kinds
    for label in a.data.columns:
        assert values(b.data[label]) == values(a.data[label]), label
        assert b.data[label].dtype == a.data[label].dtype, label


@pytest.mark.parametrize("name", ROUND_TRIP_FILES)
@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".xlsx"])
def test_round_trip_keeps_headers_values_and_kinds(corpus, tmp_path, name, suffix):
    original = read_table(corpus / name)
    target = tmp_path / f"out{suffix}"
    write_table(target, original.data, original.headers)
    same_table(original, read_table(target))


def test_workbook_round_trip(awkward_xlsx, tmp_path):
    original = read_table(awkward_xlsx)
    target = tmp_path / "copy.xlsx"
    write_table(target, original.data, original.headers)
    back = read_table(target)
    assert back.headers == original.headers
    for label in original.data.columns:
        assert values(back.data[label]) == values(original.data[label])


def random_doubles(n: int) -> np.ndarray:
    rng = np.random.default_rng(12345)
    x = rng.standard_normal(n) * 10.0 ** rng.integers(-300, 300, n)
    special = [0.1 + 0.2, 1 / 3, 2.0**-1074, 1.7976931348623157e308, -0.0, 1e16, 123456.789]
    x[: len(special)] = special
    return x


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".xlsx"])
def test_floats_come_back_bitwise_equal(tmp_path, suffix):
    x = random_doubles(5000)
    frame = pd.DataFrame({"x": x, "y": np.where(np.arange(5000) % 7 == 0, np.nan, x[::-1])})
    target = tmp_path / f"f{suffix}"
    write_table(target, frame, ["x", "y"])
    back = read_table(target).data
    assert back["x"].to_numpy().view(np.uint64).tolist() == x.view(np.uint64).tolist()
    expected_y = frame["y"].to_numpy()
    got_y = back["y"].to_numpy(dtype="float64", na_value=np.nan)
    assert np.array_equal(np.isnan(got_y), np.isnan(expected_y))
    keep = ~np.isnan(expected_y)
    assert got_y[keep].view(np.uint64).tolist() == expected_y[keep].view(np.uint64).tolist()


def test_csv_output_format(tmp_path):
    frame = pd.DataFrame(
        {
            "n": pd.array([1, None, -3], dtype="Int64"),
            "f": [0.1, np.nan, 1e-7],
            "d": pd.to_datetime(["2019-04-03", None, "2020-01-31"]),
            "t": pd.Series(["a,b", None, 'say "hi"'], dtype="str"),
            "b": pd.array([True, False, None], dtype="boolean"),
        }
    )
    target = tmp_path / "o.csv"
    write_table(target, frame, ["n", "f", "", "t", "n"])
    assert target.read_bytes().decode("utf-8") == (
        'n,f,,t,n\r\n1,0.1,"2019-04-03","a,b",true\r\n,,,,false\r\n'
        '-3,1e-7,"2020-01-31","say ""hi""",\r\n'
    )


def xml_of(path: Path, sheet: int = 1) -> str:
    with zipfile.ZipFile(path) as zf:
        return zf.read(f"xl/worksheets/sheet{sheet}.xml").decode("utf-8")


def test_workbook_cell_types_and_layout(tmp_path):
    frame = pd.DataFrame(
        {
            "label": pd.Series(["=SUM(A1)", "+44", "-x", "@me"], dtype="str"),
            "zip": pd.Series(["00412", "01234", None, "99501"], dtype="str"),
            "when": pd.to_datetime(["2019-04-03", "2019-04-04", None, "2019-04-06"]),
            "stamp": pd.to_datetime(["2019-04-03 10:00:00", None, None, "2019-04-06 23:59:59"]),
            "n": pd.array([1, 2, None, 4], dtype="Int64"),
            "x": [0.5, np.inf, np.nan, -2.25],
            "ok": pd.array([True, False, None, True], dtype="boolean"),
        }
    )
    target = tmp_path / "types.xlsx"
    write_table(target, frame, list(frame.columns))
    xml = xml_of(target)
    assert "<f>" not in xml  # no formula anywhere
    sheet = openpyxl.load_workbook(target)["data"]
    assert [sheet.cell(1, j).value for j in range(1, 8)] == list(frame.columns)
    assert all(sheet.cell(1, j).font.b for j in range(1, 8))
    assert sheet.freeze_panes == "A2"
    assert [sheet.cell(r, 1).value for r in range(2, 6)] == ["=SUM(A1)", "+44", "-x", "@me"]
    assert {sheet.cell(r, 1).data_type for r in range(2, 6)} == {"s"}
    assert [sheet.cell(r, 2).data_type for r in (2, 3, 5)] == ["s", "s", "s"]
    assert sheet.cell(4, 2).value is None
    assert sheet.cell(2, 3).is_date and sheet.cell(2, 3).number_format == "yyyy-mm-dd"
    assert sheet.cell(2, 4).number_format == "yyyy-mm-dd hh:mm:ss"
    assert sheet.cell(5, 4).value == pd.Timestamp("2019-04-06 23:59:59").to_pydatetime()
    assert sheet.cell(2, 5).data_type == "n" and sheet.cell(2, 5).value == 1
    assert sheet.cell(3, 6).value == "inf"
    assert sheet.cell(2, 7).value is True
    assert 8 <= sheet.column_dimensions["A"].width <= 62
    back = read_table(target)
    assert values(back.data["x"]) == [0.5, float("inf"), None, -2.25]
    assert values(back.data["zip"]) == ["00412", "01234", None, "99501"]


def test_text_longer_than_a_cell_is_refused_and_nothing_left(tmp_path):
    frame = pd.DataFrame({"t": pd.Series(["ok", "y" * 40_000], dtype="str")})
    target = tmp_path / "long.xlsx"
    with pytest.raises(
        WriteError,
        match=r"column 't', row 2 of the data, holds 40,000 characters; "
        r"a workbook cell holds at most 32,767, so write a \.csv or \.tsv file instead",
    ):
        write_table(target, frame, ["t"])
    assert os.listdir(tmp_path) == []


def test_unsupported_extension(tmp_path):
    with pytest.raises(WriteError, match=r"cannot write '\.ods' files"):
        write_table(tmp_path / "o.ods", pd.DataFrame({"a": [1]}), ["a"])


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
def test_cancel_leaves_nothing_and_keeps_the_old_file(tmp_path, suffix):
    target = tmp_path / f"keep{suffix}"
    target.write_bytes(b"old content")
    frame = pd.DataFrame({"a": np.arange(120_000, dtype="float64")})
    calls = {"n": 0}

    def cancel_later() -> bool:
        calls["n"] += 1
        return calls["n"] > 2

    with pytest.raises(Cancelled):
        write_table(target, frame, ["a"], cancelled=cancel_later)
    assert sorted(os.listdir(tmp_path)) == [target.name]
    assert target.read_bytes() == b"old content"


def test_failure_in_the_middle_leaves_nothing(tmp_path):
    frame = pd.DataFrame({"a": [1.0, 2.0]})
    target = tmp_path / "x.csv"

    def explode(_fraction: float) -> None:
        raise RuntimeError("disk full (simulated)")

    with pytest.raises(RuntimeError):
        write_table(target, frame, ["a"], progress=explode)
    assert os.listdir(tmp_path) == []


def test_missing_folder_is_a_write_error(tmp_path):
    with pytest.raises(WriteError, match="the folder does not exist"):
        write_table(tmp_path / "no" / "x.csv", pd.DataFrame({"a": [1]}), ["a"])


def test_progress_is_reported(tmp_path):
    seen: list[float] = []
    frame = pd.DataFrame({"a": np.arange(20_000, dtype="float64")})
    write_table(tmp_path / "p.xlsx", frame, ["a"], progress=seen.append)
    assert len(seen) >= 4 and seen[-1] == 1.0 and seen == sorted(seen)


def test_ensure_not_source(tmp_path, corpus):
    source = tmp_path / "in.csv"
    source.write_bytes((corpus / "pipe.txt").read_bytes())
    with pytest.raises(WriteError, match="this is the file the data was read from"):
        ensure_not_source(source, source)
    with pytest.raises(WriteError):
        ensure_not_source(tmp_path / "." / "in.csv", source)
    link = tmp_path / "link.csv"
    link.symlink_to(source)
    with pytest.raises(WriteError):
        ensure_not_source(link, source)
    ensure_not_source(tmp_path / "out.csv", source)  # a different name is fine


def awkward_project_json() -> str:
    """JSON that would be damaged if stored naively in workbook XML: CR LF, control-char
    escapes, Excel's own _xHHHH_ escape syntax, non-ASCII, and more than one cell's worth."""
    doc = {
        "format": "scalewright-project",
        "note": "line one\r\nline two\ttab _x0041_ \u00e9\u4e2d\U0001f600",
        "values": [repr(v) for v in random_doubles(4000)],
    }
    return json.dumps(doc, indent=2, ensure_ascii=False).replace("\n", "\r\n")


def test_scaled_workbook_with_parameters_and_project(tmp_path):
    data = pd.DataFrame(
        {"x": [0.0, 0.5, 1.0], "code": pd.Series(["007", "008", "009"], dtype="str")}
    )
    parameters = pd.DataFrame(
        {
            "column": ["x"],
            "method": ["min-max"],
            "min": [2.5],
            "max": [7.5],
            "to reverse": ["x = scaled * (max - min) + min"],
        }
    )
    project = awkward_project_json()
    assert len(project) > 100_000
    target = tmp_path / "scaled.xlsx"
    write_scaled_workbook(target, data, ["x", "code"], parameters, project)
    assert read_embedded_project(target) == project
    book = openpyxl.load_workbook(target)
    assert book.sheetnames[:2] == ["data", "parameters"]
    assert book.worksheets[2].sheet_state == "hidden"
    params = book["parameters"]
    assert [c.value for c in params[1]] == list(parameters.columns)
    assert [c.value for c in params[2]] == [
        "x",
        "min-max",
        2.5,
        7.5,
        "x = scaled * (max - min) + min",
    ]
    assert params["A1"].font.b
    # Opening the scaled workbook shows the data sheet, not the machinery.
    t = read_table(target)
    assert t.sheets == ["data", "parameters"]
    assert values(t.data["code"]) == ["007", "008", "009"]


def test_embedded_project_absent_or_tampered(tmp_path, corpus):
    plain = tmp_path / "plain.xlsx"
    write_table(plain, pd.DataFrame({"a": [1]}), ["a"])
    assert read_embedded_project(plain) is None
    assert read_embedded_project(corpus / "pipe.txt") is None
    target = tmp_path / "scaled.xlsx"
    write_scaled_workbook(
        target, pd.DataFrame({"a": [1]}), ["a"], pd.DataFrame({"p": [1]}), '{"a": 1}'
    )
    book = openpyxl.load_workbook(target)
    sheet = book.worksheets[2]
    sheet["A2"] = sheet["A2"].value.replace("eyJh", "eyJi")  # change one byte of the JSON
    book.save(target)
    with pytest.raises(ReadError, match="was changed or is damaged"):
        read_embedded_project(target)


def test_scaled_workbook_must_be_xlsx(tmp_path):
    with pytest.raises(WriteError, match=r"must be an \.xlsx file"):
        write_scaled_workbook(
            tmp_path / "s.csv", pd.DataFrame({"a": [1]}), ["a"], pd.DataFrame(), "{}"
        )


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".xlsx"])
def test_awkward_header_text_survives_every_format(tmp_path, suffix):
    headers = ["a,b", 'say "x"', "two\nlines", "=total", "  padded ", "", "a,b", "Ünïcødé €"]
    frame = pd.DataFrame({f"c{i}": [float(i), 0.5] for i in range(len(headers))})
    target = tmp_path / f"h{suffix}"
    write_table(target, frame, headers)
    back = read_table(target)
    assert back.headers == headers
    assert list(back.data.columns) == [
        "a,b",
        'say "x"',
        "two\nlines",
        "=total",
        "  padded ",
        "column 6",
        "a,b (2)",
        "Ünïcødé €",
    ]


def test_object_columns_are_written_cell_by_cell(tmp_path):
    frame = pd.DataFrame({"mixed": pd.Series([1.5, "text", None, True], dtype=object)})
    write_table(tmp_path / "o.csv", frame, ["mixed"])
    lines = (tmp_path / "o.csv").read_text(encoding="utf-8").splitlines()
    # Cell by cell as text, and quoted as every text cell is (as with several columns).
    assert lines == ["mixed", '"1.5"', '"text"', '""', '"True"']
    write_table(tmp_path / "o.xlsx", frame, ["mixed"])
    sheet = openpyxl.load_workbook(tmp_path / "o.xlsx")["data"]
    assert [sheet.cell(r, 1).value for r in range(2, 6)] == [1.5, "text", None, True]


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".xlsx"])
def test_dates_with_times_and_before_1900_round_trip(tmp_path, suffix):
    stamps = [
        "2019-04-03 10:00:01",
        "1999-12-31 23:59:59",
        "2024-02-29 00:00:00.5",
        None,
        "1850-01-01",
    ]
    frame = pd.DataFrame({"d": pd.to_datetime(pd.Series(stamps), format="ISO8601")})
    target = tmp_path / f"d{suffix}"
    write_table(target, frame, ["d"])
    back = read_table(target)
    assert back.kinds == {"d": ColumnKind.DATE}
    assert back.data["d"].tolist()[:3] + back.data["d"].tolist()[4:] == [
        pd.Timestamp(s) for s in stamps if s is not None
    ]
    assert back.data["d"].isna().tolist() == [False, False, False, True, False]
