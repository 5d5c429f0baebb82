"""``apply --as`` and ``restore --name`` on the command line (issue 8, items 4 and 9)."""

from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright import cli
from scalewright.io import read_table
from support import SAMPLE_DATA


@pytest.fixture
def season(tmp_path: Path) -> Path:
    for name in ("harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"):
        shutil.copy(SAMPLE_DATA / name, tmp_path / name)
    frame = pd.read_csv(tmp_path / "harvest_2026.csv", dtype=str, keep_default_na=False)
    frame.rename(columns={"yield_kg": "yield_2026"}).to_csv(
        tmp_path / "yields_2026.csv", index=False
    )
    return tmp_path


def _main(capsys, *args) -> tuple[int, str, str]:
    status = cli.main([str(a) for a in args])
    out = capsys.readouterr()
    return status, out.out, out.err


def _fit(capsys, season: Path) -> Path:
    project = season / "harvest.swproj"
    status, _, err = _main(
        capsys, "fit", season / "harvest_2025.csv", "-m", "yield_kg=zscore", "-p", project
    )
    assert status == 0, err
    return project


def test_apply_pairs_a_column_with_another_name(season, capsys):
    project = _fit(capsys, season)
    out = season / "scaled.csv"
    status, _, err = _main(capsys, "apply", project, season / "yields_2026.csv", "-o", out)
    assert status == 1
    assert err.strip() == (
        "scalewright: column 'yield_kg': was fitted in the project but is not in "
        "yields_2026.csv; if it has another name there, pair them with --as COLUMN=yield_kg"
    )
    assert not out.exists()
    status, stdout, err = _main(
        capsys,
        "apply", project, season / "yields_2026.csv", "-o", out, "--as", "yield_2026=yield_kg",
    )  # fmt: skip
    assert status == 0, err
    assert "yield_2026 (as yield_kg):" in stdout
    # The same values as applying to the file where the column keeps its name.
    same = season / "same.csv"
    assert _main(capsys, "apply", project, season / "harvest_2026.csv", "-o", same)[0] == 0
    paired = read_table(out).data["yield_2026"].to_numpy(float)
    by_name = read_table(same).data["yield_kg"].to_numpy(float)
    np.testing.assert_array_equal(paired, by_name)  # NaN where the yield is missing


def test_restore_renames_the_restored_column(season, capsys):
    project = _fit(capsys, season)
    out = season / "predicted_yield_kg.csv"
    status, _, err = _main(
        capsys,
        "restore", project, season / "predicted_yield_scaled.csv", "-o", out,
        "--as", "predicted_yield=yield_kg", "--name", "predicted_yield=predicted_yield_kg",
    )  # fmt: skip
    assert status == 0, err
    assert read_table(out).headers == ["tree_code", "predicted_yield_kg"]
    status, _, err = _main(
        capsys,
        "restore", project, season / "predicted_yield_scaled.csv", "-o", out,
        "--as", "predicted_yield=yield_kg", "--name", "predicted_yield",
    )  # fmt: skip
    assert status == 1
    assert "--name 'predicted_yield' must be written COLUMN=NEW_NAME" in err
