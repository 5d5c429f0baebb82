"""``fit --kind COLUMN=KIND``: correct a guessed kind on the command line; the project keeps
the correction and ``apply`` and ``restore`` read new files with it.

Data: NIST StRD NumAcc1 (/work/shared/reference/nist_strd/NumAcc1.json), three 8-digit
whole numbers that are guessed as an identifier; certified mean 10000002 and sd 1.
"""

from __future__ import annotations

import json

import pytest
from test_cli import assert_one_line_failure, run

from scalewright import cli
from scalewright.errors import OptionError
from support import SHARED_REFERENCE

NUMACC1 = json.loads((SHARED_REFERENCE / "nist_strd" / "NumAcc1.json").read_text("utf-8"))


def write_rows(path, rows) -> None:
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")


def test_fit_apply_restore_with_a_kind_correction(tmp_path):
    values = NUMACC1["values_text"]
    write_rows(tmp_path / "fit.csv", ["plot,y"] + [f"P{i},{v}" for i, v in enumerate(values)])

    refused = run("fit", "fit.csv", "-m", "y=zscore", "-p", "a.swproj", cwd=tmp_path)
    assert_one_line_failure(
        refused,
        "column 'y': was read as an identifier (all values have 8 digits), and identifiers "
        "are never scaled; add --kind 'y=number' to scale it",
    )
    assert not (tmp_path / "a.swproj").exists()

    done = run(
        "fit", "fit.csv", "--kind", "y=number", "-m", "y=zscore", "-p", "a.swproj",
        "-o", "fit_scaled.csv", cwd=tmp_path,
    )  # fmt: skip
    assert done.returncode == 0, done.stderr
    doc = json.loads((tmp_path / "a.swproj").read_text("utf-8"))
    assert doc["read_options"]["kinds"] == {"y": "number"}
    params = doc["columns"]["y"]["params"]
    # Certified values of NumAcc1 (NIST StRD): mean 10000002, sample sd 1.
    assert (params["mean"], params["sd"]) == (NUMACC1["certified_mean"], NUMACC1["certified_sd"])
    scaled = (tmp_path / "fit_scaled.csv").read_text("utf-8").splitlines()
    assert [line.split(",")[1] for line in scaled[1:]] == ["-1", "1", "0"]

    # A new file with the same kind of column: read as numbers through the project.
    write_rows(tmp_path / "new.csv", ["plot,y", "Q1,10000005", "Q2,09999999"])
    applied = run("apply", "a.swproj", "new.csv", "-o", "new_scaled.csv", cwd=tmp_path)
    assert applied.returncode == 0, applied.stderr
    new_scaled = (tmp_path / "new_scaled.csv").read_text("utf-8").splitlines()
    assert [line.split(",")[1] for line in new_scaled[1:]] == ["3", "-3"]
    restored = run("restore", "a.swproj", "new_scaled.csv", "-o", "back.csv", cwd=tmp_path)
    assert restored.returncode == 0, restored.stderr
    back = (tmp_path / "back.csv").read_text("utf-8").splitlines()
    assert [line.split(",")[1] for line in back[1:]] == ["10000005", "9999999"]

    # The correction holds for apply too: a cell that is not a number is named.
    write_rows(tmp_path / "odd.csv", ["plot,y", "Q1,10000005", "Q2,n.a."])
    odd = run("apply", "a.swproj", "odd.csv", "-o", "odd_scaled.csv", cwd=tmp_path)
    assert_one_line_failure(
        odd, "odd.csv: column 'y' cannot be read as numbers: data row 2 holds 'n.a.'"
    )
    assert not (tmp_path / "odd_scaled.csv").exists()


def test_kind_naming_a_missing_column_or_refused_by_the_cells(tmp_path):
    write_rows(tmp_path / "d.csv", ["plot,y", "P1,10000001", "P2,10000003"])
    missing = run(
        "fit", "d.csv", "--kind", "yy=number", "-m", "y=zscore", "-p", "a.swproj", cwd=tmp_path
    )
    assert_one_line_failure(missing, "column 'yy': (--kind) there is no such column in d.csv")
    refused = run(
        "fit", "d.csv", "--kind", "plot=number", "-m", "y=zscore", "-p", "a.swproj", cwd=tmp_path
    )
    assert_one_line_failure(
        refused, "column 'plot' cannot be read as numbers: data row 1 holds 'P1'"
    )


def test_parse_kinds():
    assert cli.parse_kinds(["a=number", "b = Text", "x=y=date"]) == {
        "a": "number",
        "b": "text",
        "x=y": "date",
    }
    with pytest.raises(OptionError, match="'numeric' is not a kind"):
        cli.parse_kinds(["a=numeric"])
    with pytest.raises(OptionError, match="must be written COLUMN=KIND"):
        cli.parse_kinds(["a"])
    with pytest.raises(OptionError, match="names the column 'a' twice"):
        cli.parse_kinds(["a=number", "a=text"])
