"""The invented sample data: reproducible from its script and as described in its README."""

from __future__ import annotations

import csv
import datetime as dt
import importlib.util
import re
import sys
from pathlib import Path

import numpy as np
import openpyxl
import pytest

COLUMNS = [
    "tree_code",
    "orchard",
    "variety",
    "planted_on",
    "tree_age_years",
    "trunk_girth_cm",
    "yield_kg",
    "fruit_count",
    "sugar_brix",
    "irrigation_l_per_week",
    "pest_trap_count",
    "soil_ph",
    "split",
]
SAMPLE_DATA = Path(__file__).resolve().parents[1] / "sample_data"
CSV_FILES = ["harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"]
ALL_FILES = {*CSV_FILES, "harvest_2025.xlsx", "harvest_2026.xlsx"}
INTEGER_COLUMNS = ["tree_age_years", "fruit_count", "irrigation_l_per_week", "pest_trap_count"]
DECIMAL_COLUMNS = {"trunk_girth_cm": 1, "yield_kg": 1, "sugar_brix": 1, "soil_ph": 2}


def _load_script(sample_data_dir: Path):
    name = "_scalewright_make_sample_data"
    spec = importlib.util.spec_from_file_location(name, sample_data_dir / "make_sample_data.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module  # dataclasses look the module up while the file runs
    spec.loader.exec_module(module)
    return module


def _read_csv(path: Path) -> tuple[list[str], list[dict[str, str]]]:
    with path.open(encoding="utf-8", newline="") as fh:
        reader = csv.DictReader(fh)
        return list(reader.fieldnames), list(reader)


def _numbers(rows: list[dict[str, str]], column: str) -> np.ndarray:
    return np.array([float(r[column]) if r[column] != "" else np.nan for r in rows])


@pytest.fixture(scope="module")
def regenerated(tmp_path_factory) -> tuple[Path, object]:
    out = tmp_path_factory.mktemp("regenerated")
    data = _load_script(SAMPLE_DATA).main(out)
    return out, data


@pytest.fixture(scope="module")
def season_2025() -> list[dict[str, str]]:
    return _read_csv(SAMPLE_DATA / "harvest_2025.csv")[1]


@pytest.fixture(scope="module")
def season_2026() -> list[dict[str, str]]:
    return _read_csv(SAMPLE_DATA / "harvest_2026.csv")[1]


def _train_mean_sd(rows_2025: list[dict[str, str]]) -> tuple[float, float]:
    yields = np.array(
        [float(r["yield_kg"]) for r in rows_2025 if r["split"] == "train" and r["yield_kg"]]
    )
    return float(np.mean(yields)), float(np.std(yields, ddof=1))


def test_script_writes_only_the_sample_files(regenerated):
    out, _ = regenerated
    assert {p.name for p in out.iterdir()} == ALL_FILES


@pytest.mark.parametrize("name", CSV_FILES)
def test_committed_csv_matches_the_script(regenerated, sample_data_dir, name):
    out, _ = regenerated
    assert (out / name).read_bytes() == (sample_data_dir / name).read_bytes()


@pytest.mark.parametrize("year", [2025, 2026])
def test_harvest_columns_and_values(sample_data_dir, year):
    header, rows = _read_csv(sample_data_dir / f"harvest_{year}.csv")
    assert header == COLUMNS
    assert 2300 <= len(rows) <= 2500
    codes = [r["tree_code"] for r in rows]
    assert all(len(c) == 6 and c.isdigit() for c in codes)
    assert any(c.startswith("0") for c in codes)
    assert len(set(codes)) == len(codes)
    for r in rows:
        planted = dt.date.fromisoformat(r["planted_on"])
        assert int(r["tree_age_years"]) == year - planted.year
        assert r["split"] in {"train", "test"}
        for name in INTEGER_COLUMNS:
            assert r[name] == "" or re.fullmatch(r"\d+", r[name]), (name, r[name])
        for name, decimals in DECIMAL_COLUMNS.items():
            assert r[name] == "" or re.fullmatch(rf"\d+\.\d{{{decimals}}}", r[name]), (name, r)
    share_train = np.mean([r["split"] == "train" for r in rows])
    assert 0.75 < share_train < 0.85
    for name in ["trunk_girth_cm", "yield_kg", "fruit_count", "sugar_brix", "soil_ph"]:
        blanks = sum(r[name] == "" for r in rows)
        assert 0.003 * len(rows) <= blanks <= 0.012 * len(rows), (name, blanks)
    for name in ["tree_code", "orchard", "variety", "planted_on", "irrigation_l_per_week"]:
        assert all(r[name] != "" for r in rows)


def test_2026_goes_beyond_the_2025_range(season_2025, season_2026):
    for name in ["yield_kg", "irrigation_l_per_week"]:
        assert np.nanmax(_numbers(season_2026, name)) > np.nanmax(_numbers(season_2025, name))
    assert np.nanmin(_numbers(season_2026, "soil_ph")) < np.nanmin(_numbers(season_2025, "soil_ph"))


def test_predictions_restore_to_kilograms(sample_data_dir, season_2025, season_2026, regenerated):
    _, data = regenerated
    header, rows = _read_csv(sample_data_dir / "predicted_yield_scaled.csv")
    assert header == ["tree_code", "predicted_yield"]
    assert [r["tree_code"] for r in rows] == [r["tree_code"] for r in season_2026]

    mean, sd = _train_mean_sd(season_2025)
    restored = _numbers(rows, "predicted_yield") * sd + mean
    # The documented convention reproduces the model's predictions in kg.
    np.testing.assert_allclose(restored, data.predicted_kg, rtol=1e-12)
    assert np.all((restored > 1.0) & (restored < 600.0))
    actual = _numbers(season_2026, "yield_kg")
    known = ~np.isnan(actual)
    assert np.corrcoef(restored[known], actual[known])[0, 1] > 0.9
    assert 0.9 < np.median(restored[known] / actual[known]) < 1.1


def test_readme_documents_the_scaling(sample_data_dir, season_2025):
    text = (sample_data_dir / "README.md").read_text(encoding="utf-8")
    assert "INVENTED" in text
    assert (
        "predicted_yield is in z-score units of yield_kg fitted on the 2025 training rows "
        "(sample sd)" in text
    )
    mean, sd = _train_mean_sd(season_2025)
    documented_mean = float(re.search(r"mean = ([\d.]+) kg", text).group(1))
    documented_sd = float(re.search(r"sample sd = ([\d.]+) kg", text).group(1))
    assert documented_mean == pytest.approx(mean, rel=1e-12)
    assert documented_sd == pytest.approx(sd, rel=1e-12)
    for name in COLUMNS:
        assert f"`{name}`" in text


@pytest.mark.parametrize("year", [2025, 2026])
def test_workbook_holds_the_csv_values(sample_data_dir, year):
    _, rows = _read_csv(sample_data_dir / f"harvest_{year}.csv")
    workbook = openpyxl.load_workbook(sample_data_dir / f"harvest_{year}.xlsx", read_only=True)
    sheet = workbook.worksheets[0]
    cells = list(sheet.iter_rows(values_only=True))
    workbook.close()
    assert list(cells[0]) == COLUMNS
    assert len(cells) == len(rows) + 1
    for r, values in zip(rows, cells[1:], strict=True):
        got = dict(zip(COLUMNS, values, strict=True))
        assert isinstance(got["tree_code"], str) and got["tree_code"] == r["tree_code"]
        assert isinstance(got["planted_on"], dt.datetime)
        assert got["planted_on"].date() == dt.date.fromisoformat(r["planted_on"])
        for name in ["orchard", "variety", "split"]:
            assert got[name] == r[name]
        for name in INTEGER_COLUMNS + list(DECIMAL_COLUMNS):
            if r[name] == "":
                assert got[name] is None, (name, got[name])
            else:
                assert isinstance(got[name], int | float)
                assert got[name] == float(r[name]), (name, got[name], r[name])


def test_workbook_header_is_bold(sample_data_dir):
    workbook = openpyxl.load_workbook(sample_data_dir / "harvest_2025.xlsx")
    sheet = workbook.worksheets[0]
    assert all(cell.font.bold for cell in sheet[1])
    assert not sheet["A2"].font.bold
    assert sheet["D2"].number_format == "yyyy-mm-dd"
    workbook.close()
