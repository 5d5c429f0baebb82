"""Apply pairs columns as restore does, and restore can rename what it restored
(issue 8, items 4 and 9, the parts the window and the command line share)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.engine import ColumnChoice, FitSettings
from scalewright.errors import ColumnError
from scalewright.io import read_table
from scalewright.tasks import MissingFittedColumn, apply_to_file, fit_project, restore_file
from support import SAMPLE_DATA

HARVEST = SAMPLE_DATA / "harvest_2025.csv"
HARVEST_2026 = SAMPLE_DATA / "harvest_2026.csv"
PREDICTIONS = SAMPLE_DATA / "predicted_yield_scaled.csv"


@pytest.fixture(scope="module")
def harvest():
    return read_table(HARVEST)


@pytest.fixture(scope="module")
def project(harvest):
    return fit_project(
        harvest,
        {"yield_kg": ColumnChoice("zscore"), "soil_ph": ColumnChoice("minmax")},
        FitSettings(("split", "train")),
    )


def _train(harvest, column):
    rows = harvest.data["split"] == "train"
    values = harvest.data.loc[rows, column].to_numpy(float, na_value=np.nan)
    return values[~np.isnan(values)]


def _renamed_2026(tmp_path):
    """Next season's file, where the yield column is called yield_2026."""
    frame = pd.read_csv(HARVEST_2026, dtype=str, keep_default_na=False)
    frame = frame.rename(columns={"yield_kg": "yield_2026"})
    path = tmp_path / "yields_2026.csv"
    frame.to_csv(path, index=False)
    return path


def test_apply_pairs_a_renamed_column_with_its_fitted_column(harvest, project, tmp_path):
    data = _renamed_2026(tmp_path)
    with pytest.raises(MissingFittedColumn, match="'yield_kg': was fitted in the project"):
        apply_to_file(project, data, tmp_path / "unpaired.csv")
    reports = apply_to_file(
        project, data, tmp_path / "paired.csv", mapping={"yield_2026": "yield_kg"}
    )
    by_column = {r.column: r for r in reports}
    assert by_column["yield_2026"].fitted_as == "yield_kg"
    assert by_column["soil_ph"].fitted_as == "soil_ph"  # the others still pair by name
    out = read_table(tmp_path / "paired.csv").data
    train = _train(harvest, "yield_kg")
    x = read_table(HARVEST_2026).data["yield_kg"].to_numpy(float, na_value=np.nan)
    # z-score with the sample sd of the training rows (the project's default, ddof=1).
    expected = (x - np.mean(train)) / np.std(train, ddof=1)
    np.testing.assert_allclose(out["yield_2026"].to_numpy(float), expected, rtol=1e-12)
    assert "yield_kg" not in out.columns


def test_apply_pairing_refuses_unknown_names_and_double_scaling(project, tmp_path):
    data = _renamed_2026(tmp_path)
    out = tmp_path / "out.csv"
    with pytest.raises(ColumnError, match="'yield_26': is not in yields_2026.csv"):
        apply_to_file(project, data, out, mapping={"yield_26": "yield_kg"})
    with pytest.raises(ColumnError, match="'sugar_brix': has no fitted parameters"):
        apply_to_file(project, data, out, mapping={"yield_2026": "sugar_brix"})
    # soil_ph is fitted itself, so pairing it with yield_kg would scale it twice.
    with pytest.raises(ColumnError, match="'soil_ph': would be scaled twice"):
        apply_to_file(project, HARVEST_2026, out, mapping={"soil_ph": "yield_kg"})
    assert not out.exists()


def test_restore_gives_a_restored_column_a_new_name(harvest, project, tmp_path):
    out = tmp_path / "predicted_kg.csv"
    (report,) = restore_file(
        project,
        PREDICTIONS,
        out,
        mapping={"predicted_yield": "yield_kg"},
        names={"predicted_yield": "predicted_yield_kg"},
    )
    assert report.column == "predicted_yield"
    restored = read_table(out)
    assert restored.headers == ["tree_code", "predicted_yield_kg"]
    train = _train(harvest, "yield_kg")
    # sample_data/README.md: predicted_kg = predicted_yield * sd + mean, with the sample sd.
    expected = read_table(PREDICTIONS).data["predicted_yield"] * np.std(train, ddof=1) + np.mean(
        train
    )
    np.testing.assert_allclose(restored.data["predicted_yield_kg"], expected, rtol=1e-12)


def test_restore_keeps_the_name_by_default(project, tmp_path):
    out = tmp_path / "kept.csv"
    restore_file(project, PREDICTIONS, out, mapping={"predicted_yield": "yield_kg"})
    assert read_table(out).headers == ["tree_code", "predicted_yield"]


def test_restore_refuses_bad_new_names(project, tmp_path):
    out = tmp_path / "out.csv"
    pair = {"predicted_yield": "yield_kg"}
    with pytest.raises(ColumnError, match="'tree_code': is not restored, so it keeps its name"):
        restore_file(project, PREDICTIONS, out, mapping=pair, names={"tree_code": "tree"})
    with pytest.raises(ColumnError, match="the output already has a column of that name"):
        restore_file(
            project, PREDICTIONS, out, mapping=pair, names={"predicted_yield": "tree_code"}
        )
    with pytest.raises(ColumnError, match="the new name is empty"):
        restore_file(project, PREDICTIONS, out, mapping=pair, names={"predicted_yield": " "})
    with pytest.raises(ColumnError, match="'yield': is not in predicted_yield_scaled.csv"):
        restore_file(project, PREDICTIONS, out, mapping=pair, names={"yield": "kg"})
    assert not out.exists()
