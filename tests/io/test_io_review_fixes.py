"""Review fixes in the io layer: one-column round trips, kept permissions, fingerprints."""

from __future__ import annotations

import hashlib
import os
import stat
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright.errors import WriteError
from scalewright.io import Table, atomic_path, read_table, write_table


def _values(table: Table, label: str) -> list:
    return table.data[label].to_numpy(dtype=object, na_value=None).tolist()


def test_one_column_keeps_trailing_missing_values(tmp_path):
    path = tmp_path / "one.csv"
    write_table(path, pd.DataFrame({"x": [1.5, np.nan, 2.5, np.nan]}), ["x"])
    back = read_table(path)
    assert len(back.data) == 4
    assert _values(back, "x") == [1.5, None, 2.5, None]


def test_one_column_text_is_quoted_and_kept(tmp_path):
    path = tmp_path / "codes.csv"
    data = pd.DataFrame({"code": pd.Series(["007", None, "012", None], dtype="str")})
    write_table(path, data, ["code"])
    lines = path.read_bytes().decode("utf-8").split("\r\n")
    assert lines[1] == '"007"'  # every text cell quoted, as for several columns
    back = read_table(path)
    assert _values(back, "code") == ["007", None, "012", None]


def test_all_missing_last_rows_survive_with_several_columns(tmp_path):
    path = tmp_path / "two.csv"
    data = pd.DataFrame({"a": [1.5, 2.5, np.nan], "b": [0.25, np.nan, np.nan]})
    write_table(path, data, ["a", "b"])
    back = read_table(path)
    assert len(back.data) == 3
    assert _values(back, "b") == [0.25, None, None]


def test_bare_empty_trailing_lines_are_still_left_out(tmp_path):
    # Spreadsheet exports leave rows of bare separators at the end: not data.
    path = tmp_path / "export.csv"
    path.write_bytes(b"a,b\r\n1.5,2.5\r\n3.5,4.5\r\n,\r\n,\r\n")
    assert len(read_table(path).data) == 2


def test_replacing_a_file_keeps_its_permissions(tmp_path):
    target = tmp_path / "shared.csv"
    target.write_text("old\n")
    os.chmod(target, 0o640)
    with atomic_path(target) as tmp:
        tmp.write_text("new\n")
    assert target.read_text() == "new\n"
    assert stat.S_IMODE(target.stat().st_mode) == 0o640


def test_a_new_file_gets_the_usual_permissions(tmp_path):
    target = tmp_path / "new.csv"
    with atomic_path(target) as tmp:
        tmp.write_text("x\n")
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(target.stat().st_mode) == 0o666 & ~umask


def test_failed_replace_leaves_old_file_and_mode(tmp_path):
    target = tmp_path / "keep.csv"
    target.write_text("old\n")
    os.chmod(target, 0o600)
    with pytest.raises(RuntimeError), atomic_path(target) as tmp:
        tmp.write_text("new\n")
        raise RuntimeError("stop")
    assert target.read_text() == "old\n"
    assert stat.S_IMODE(target.stat().st_mode) == 0o600
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.csv"]


@pytest.mark.parametrize("name", ["t.csv", "t.xlsx"])
def test_read_table_records_the_fingerprint_of_what_it_read(tmp_path, name):
    path = tmp_path / name
    write_table(path, pd.DataFrame({"a": [1.5, 2.5], "b": ["x", "y"]}), ["a", "b"])
    raw = path.read_bytes()
    table = read_table(path)
    assert table.size == len(raw)
    assert table.sha256 == hashlib.sha256(raw).hexdigest()


def test_table_built_by_hand_has_no_fingerprint():
    table = Table(pd.DataFrame({"a": [1.0]}), ["a"], {}, Path("a.csv"), None)
    assert table.size is None and table.sha256 is None


def test_write_error_type_unchanged_for_missing_folder(tmp_path):
    with (
        pytest.raises(WriteError, match="the folder does not exist"),
        atomic_path(tmp_path / "no" / "x.csv"),
    ):
        pass


@pytest.mark.parametrize("columns", [1, 2])
def test_large_file_keeps_trailing_missing_rows(tmp_path, monkeypatch, columns):
    from scalewright.io import csv_reader

    seen = []
    original = csv_reader._bare_tail

    def spy(rest, limit, width):
        seen.append(type(rest).__name__)
        return original(rest, limit, width)

    monkeypatch.setattr(csv_reader, "_bare_tail", spy)
    # Large enough to be parsed straight from the disk (csv_reader.STREAM_HEAD_BYTES); the
    # quoted header makes the streamed read keep going.
    n = 200_000
    x = np.linspace(0.5, 99.5, n)
    x[-3:] = np.nan
    frame = pd.DataFrame({f"c,{j}": x for j in range(columns)})
    path = tmp_path / "big.csv"
    write_table(path, frame, list(frame.columns))
    assert path.stat().st_size > csv_reader.STREAM_HEAD_BYTES
    back = read_table(path)
    assert seen == ["_FileTail"]
    assert len(back.data) == n
    assert back.data["c,0"].isna().sum() == 3
    np.testing.assert_array_equal(back.data["c,0"].to_numpy(float)[: n - 3], x[: n - 3])


def test_a_comma_in_the_header_of_a_one_column_tsv_is_not_a_delimiter(tmp_path):
    # Found by the round-trip property test: header ',' over the value 0.0 was read as two
    # columns split by the comma, then refused as a ragged row.
    import numpy as np
    import pandas as pd

    from scalewright.io import read_table, write_table

    path = tmp_path / "one.tsv"
    write_table(path, pd.DataFrame({"f0": [0.0, 2.5]}), [","])
    table = read_table(path)
    assert table.headers == [","]
    np.testing.assert_array_equal(table.data.iloc[:, 0].to_numpy(float), [0.0, 2.5])
