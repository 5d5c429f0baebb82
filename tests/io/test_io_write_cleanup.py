"""A failed, cancelled or stopped workbook write leaves nothing behind: not beside the
target, and not in the system's temporary folder, where xlsxwriter keeps the rows of each
sheet in constant-memory mode (issue 8, "Nothing left behind, even when stopped")."""

from __future__ import annotations

import os
import tempfile

import numpy as np
import pandas as pd
import pytest

from scalewright.errors import Cancelled, WriteError
from scalewright.io import write_scaled_workbook, write_table


@pytest.fixture
def system_temp(tmp_path, monkeypatch):
    """The system's temporary folder, pointed at an empty folder of the test's own."""
    folder = tmp_path / "system-temp"
    folder.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(folder))
    return folder


@pytest.fixture
def out_dir(tmp_path):
    folder = tmp_path / "out"
    folder.mkdir()
    return folder


def test_a_cell_too_long_names_column_and_row_and_leaves_no_temporary_files(out_dir, system_temp):
    # The limit of 32,767 characters per cell: Microsoft, "Excel specifications and limits".
    frame = pd.DataFrame(
        {
            "tree_code": pd.Series(["000076", "000081", "000090"], dtype="str"),
            "notes": pd.Series(["pruned", "ok", "x" * 32_768], dtype="str"),
        }
    )
    target = out_dir / "notes.xlsx"
    with pytest.raises(WriteError) as caught:
        write_table(target, frame, ["tree_code", "notes"])
    message = str(caught.value)
    assert "column 'notes', row 3 of the data" in message
    assert "32,768 characters" in message and ".csv" in message
    assert os.listdir(out_dir) == []
    assert os.listdir(system_temp) == []


def test_a_header_too_long_is_refused_and_leaves_no_temporary_files(out_dir, system_temp):
    frame = pd.DataFrame({"a": [1.0, 2.0], "b": [3.0, 4.0]})
    target = out_dir / "wide.xlsx"
    with pytest.raises(WriteError, match=r"the header of column 2 holds 40,000 characters"):
        write_table(target, frame, ["a", "h" * 40_000])
    assert os.listdir(out_dir) == []
    assert os.listdir(system_temp) == []


def test_a_cancelled_scaled_workbook_keeps_the_old_file_and_leaves_no_temporary_files(
    out_dir, system_temp
):
    target = out_dir / "scaled.xlsx"
    target.write_bytes(b"the earlier workbook")
    frame = pd.DataFrame({"yield_kg": np.linspace(0.0, 1.0, 30_000)})
    polls = {"n": 0}

    def cancel_on_third_poll() -> bool:
        polls["n"] += 1
        return polls["n"] >= 3

    with pytest.raises(Cancelled):
        write_scaled_workbook(
            target,
            frame,
            ["yield_kg"],
            pd.DataFrame({"column": ["yield_kg"], "method": ["z-score"]}),
            "{}",
            cancelled=cancel_on_third_poll,
        )
    assert polls["n"] == 3  # stopped in the middle of the rows
    assert os.listdir(out_dir) == ["scaled.xlsx"]
    assert target.read_bytes() == b"the earlier workbook"
    assert os.listdir(system_temp) == []


def test_a_finished_workbook_leaves_no_temporary_files(out_dir, system_temp):
    frame = pd.DataFrame({"yield_kg": [96.2, 69.5]})
    write_table(out_dir / "fine.xlsx", frame, ["yield_kg"])
    assert os.listdir(out_dir) == ["fine.xlsx"]
    assert os.listdir(system_temp) == []
