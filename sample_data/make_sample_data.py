"""Make the invented sample data for Scalewright.

Everything here is made up: a fictional fruit-growers' cooperative with invented orchards,
trees and harvests. No real people, places or organisations are described.

Run ``python sample_data/make_sample_data.py [OUTPUT_DIR]``. Without an argument the files
are written next to this script. The output is the same on every run (fixed seed), so the
committed files can be checked against this script.
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import xlsxwriter

SEED = 20250917
N_TREES_2025 = 2412
N_REMOVED = 38  # trees cleared after the 2025 harvest: no 2026 row
N_NEW = 64  # young trees (planted 2022-2023) that gave their first harvest in 2026

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
# Columns with a few blank cells, and the share of blanks in each.
MISSING_SHARE = {
    "trunk_girth_cm": 0.007,
    "yield_kg": 0.008,
    "fruit_count": 0.006,
    "sugar_brix": 0.009,
    "soil_ph": 0.006,
}
DECIMALS = {"trunk_girth_cm": 1, "yield_kg": 1, "sugar_brix": 1, "soil_ph": 2}

# name: (share of trees, yield factor, irrigation base in l/week, soil pH mean)
ORCHARDS = {
    "North Slope": (0.19, 0.95, 5200, 6.45),
    "Mill Brook": (0.17, 1.05, 3800, 6.70),
    "Stone Terrace": (0.15, 0.90, 6400, 6.95),
    "Lower Meadow": (0.18, 1.10, 3100, 6.15),
    "Hilltop": (0.13, 0.85, 7300, 6.60),
    "River Bend": (0.18, 1.15, 4300, 6.85),
}
DROUGHT_ORCHARD = "Stone Terrace"  # dry summer in 2026: much more irrigation, less fruit
LOW_PH_ORCHARD = "Lower Meadow"

# name: (share of trees, yield factor, mean fruit weight in kg, mean sugar in degrees Brix)
VARIETIES = {
    "Early Red": (0.26, 1.00, 0.160, 12.6),
    "Golden Late": (0.22, 1.10, 0.190, 13.7),
    "Russet": (0.16, 0.85, 0.150, 14.0),
    "Green Keeper": (0.20, 0.95, 0.180, 12.3),
    "Winter Pear": (0.16, 0.90, 0.220, 13.1),
}

SEASONS = (2025, 2026)
FIXED_TIMESTAMP = dt.datetime(2026, 1, 15, 12, 0, 0)  # workbook "created" property

ZSCORE_NOTE = (
    "predicted_yield is in z-score units of yield_kg fitted on the 2025 training rows (sample sd)"
)


@dataclass
class Season:
    """One season's table: column name -> list of Python values (None for a blank cell)."""

    year: int
    columns: dict[str, list]

    @property
    def n_rows(self) -> int:
        return len(self.columns["tree_code"])


@dataclass
class SampleData:
    harvest_2025: Season
    harvest_2026: Season
    train_mean: float  # mean of 2025 yield_kg, train rows, blanks ignored
    train_sd: float  # sample sd (ddof=1) of the same values
    prediction_codes: list[str]
    predicted_kg: np.ndarray  # the prediction in kg, before scaling
    predicted_scaled: np.ndarray  # (predicted_kg - train_mean) / train_sd


def _rounded(values: np.ndarray, decimals: int) -> list[float]:
    """Round through the printed text, so the lists hold exactly what the CSV holds."""
    return [float(f"{v:.{decimals}f}") for v in values]


def _make_trees(rng: np.random.Generator) -> dict[str, np.ndarray]:
    """Attributes that belong to a tree and stay the same from season to season."""
    n = N_TREES_2025 + N_NEW
    codes = rng.choice(np.arange(1, 100_000), size=n, replace=False)
    orchard = rng.choice(len(ORCHARDS), size=n, p=[v[0] for v in ORCHARDS.values()])
    variety = rng.choice(len(VARIETIES), size=n, p=[v[0] for v in VARIETIES.values()])
    year = rng.integers(1995, 2021, size=n)
    year[N_TREES_2025:] = rng.integers(2022, 2024, size=N_NEW)
    day_of_year = rng.integers(60, 152, size=n)  # planted in spring
    ph_means = np.array([v[3] for v in ORCHARDS.values()])
    return {
        "code": codes,
        "orchard": orchard,
        "variety": variety,
        "year": year,
        "day": day_of_year,
        "vigour": rng.lognormal(0.0, 0.25, size=n),  # persistent yield effect
        "girth_factor": rng.lognormal(0.0, 0.10, size=n),
        "water_factor": rng.lognormal(0.0, 0.11, size=n),
        "ph": ph_means[orchard] + rng.normal(0.0, 0.15, size=n),
        "train": rng.random(n) < 0.8,
    }


def _measure(rng: np.random.Generator, trees: dict, rows: np.ndarray, year: int) -> dict:
    """Draw one season's unrounded measurements for the trees at index ``rows``."""
    n = len(rows)
    orchard = trees["orchard"][rows]
    variety = trees["variety"][rows]
    orchard_names = np.array(list(ORCHARDS))[orchard]
    age = year - trees["year"][rows]

    girth = (4.0 + 2.7 * age) * trees["girth_factor"][rows] + rng.normal(0.0, 0.5, size=n)

    orchard_yield = np.array([v[1] for v in ORCHARDS.values()])[orchard]
    variety_yield = np.array([v[1] for v in VARIETIES.values()])[variety]
    season_yield = np.ones(n)
    if year == 2026:
        season_yield = np.where(orchard_names == DROUGHT_ORCHARD, 0.85, 1.05)
    expected = (
        85.0
        * (1.0 - np.exp(-(age - 2.0) / 6.0))
        * orchard_yield
        * variety_yield
        * trees["vigour"][rows]
        * season_yield
    )
    yield_kg = expected * rng.lognormal(0.0, 0.30, size=n)

    brix = np.array([v[3] for v in VARIETIES.values()])[variety] + rng.normal(0.0, 0.8, size=n)

    water_base = np.array([v[2] for v in ORCHARDS.values()])[orchard]
    season_water = np.ones(n)
    if year == 2026:
        season_water = np.where(orchard_names == DROUGHT_ORCHARD, 1.6, 0.96)
    water = water_base * trees["water_factor"][rows] * season_water
    water = water * rng.lognormal(0.0, 0.05, size=n)

    # Zero-inflated negative binomial: most traps stay empty, a few catch a lot.
    pests = rng.negative_binomial(1.5, 0.2, size=n)
    pests[rng.random(n) < 0.6] = 0

    ph = trees["ph"][rows] + rng.normal(0.0, 0.04, size=n)
    return {
        "age": age,
        "girth": girth,
        "yield": yield_kg,
        "brix": brix,
        "water": water,
        "pests": pests,
        "ph": ph,
        "orchard_names": orchard_names,
    }


def _fruit_count(rng: np.random.Generator, trees: dict, rows: np.ndarray, yield_kg) -> np.ndarray:
    fruit_kg = np.array([v[2] for v in VARIETIES.values()])[trees["variety"][rows]]
    fruit_kg = fruit_kg * rng.lognormal(0.0, 0.08, size=len(rows))
    return np.rint(yield_kg / fruit_kg).astype(int)


def _season_table(
    rng: np.random.Generator,
    trees: dict,
    rows: np.ndarray,
    year: int,
    m: dict,
    fruit: np.ndarray,
    keep: set[int],
) -> Season:
    """Round, add blank cells (never at positions in ``keep``) and collect the columns."""
    planted = [
        dt.date(int(y), 1, 1) + dt.timedelta(days=int(d) - 1)
        for y, d in zip(trees["year"][rows], trees["day"][rows], strict=True)
    ]
    columns: dict[str, list] = {
        "tree_code": [f"{c:06d}" for c in trees["code"][rows]],
        "orchard": [str(o) for o in m["orchard_names"]],
        "variety": [list(VARIETIES)[v] for v in trees["variety"][rows]],
        "planted_on": planted,
        "tree_age_years": [int(a) for a in m["age"]],
        "trunk_girth_cm": _rounded(m["girth"], 1),
        "yield_kg": _rounded(m["yield"], 1),
        "fruit_count": [int(f) for f in fruit],
        "sugar_brix": _rounded(m["brix"], 1),
        "irrigation_l_per_week": [int(w) for w in np.rint(m["water"])],
        "pest_trap_count": [int(p) for p in m["pests"]],
        "soil_ph": _rounded(m["ph"], 2),
        "split": ["train" if t else "test" for t in trees["train"][rows]],
    }
    n = len(rows)
    for name, share in MISSING_SHARE.items():
        for i in np.flatnonzero(rng.random(n) < share):
            if int(i) not in keep:
                columns[name][i] = None
    return Season(year, columns)


def _sorted_by_code(trees: dict, rows: np.ndarray) -> np.ndarray:
    return rows[np.argsort(trees["code"][rows], kind="stable")]


def build(seed: int = SEED) -> SampleData:
    """Make both seasons and the scaled predictions in memory."""
    rng = np.random.default_rng(seed)
    trees = _make_trees(rng)

    # Season 2025.
    rows25 = _sorted_by_code(trees, np.arange(N_TREES_2025))
    m25 = _measure(rng, trees, rows25, 2025)
    fruit25 = _fruit_count(rng, trees, rows25, m25["yield"])
    s25 = _season_table(rng, trees, rows25, 2025, m25, fruit25, keep=set())
    y25 = [v for v in s25.columns["yield_kg"] if v is not None]
    ph25 = [v for v in s25.columns["soil_ph"] if v is not None]
    max_yield, max_water, min_ph = max(y25), max(s25.columns["irrigation_l_per_week"]), min(ph25)

    # Season 2026: the same trees one year older, minus removed ones, plus new plantings.
    removed = rng.choice(N_TREES_2025, size=N_REMOVED, replace=False)
    kept = np.setdiff1d(np.arange(N_TREES_2025), removed)
    rows26 = _sorted_by_code(
        trees, np.concatenate([kept, np.arange(N_TREES_2025, len(trees["code"]))])
    )
    m26 = _measure(rng, trees, rows26, 2026)

    # A few record yields above anything seen in 2025, on mature trees outside the drought.
    mature = np.flatnonzero((m26["age"] >= 15) & (m26["orchard_names"] != DROUGHT_ORCHARD))
    records = rng.choice(mature, size=5, replace=False)
    m26["yield"][records] = max_yield * rng.uniform(1.03, 1.18, size=5)
    # Two trees in a low-pH orchard read below the 2025 minimum.
    low_ph_rows = np.flatnonzero(m26["orchard_names"] == LOW_PH_ORCHARD)
    low_ph = rng.choice(low_ph_rows, size=2, replace=False)
    m26["ph"][low_ph] = min_ph - rng.uniform(0.12, 0.30, size=2)

    fruit26 = _fruit_count(rng, trees, rows26, m26["yield"])
    keep = {int(i) for i in np.concatenate([records, low_ph])}
    s26 = _season_table(rng, trees, rows26, 2026, m26, fruit26, keep=keep)

    # Predictions for every 2026 tree: the true yield with some model error.
    predicted_kg = m26["yield"] * rng.lognormal(0.0, 0.12, size=len(rows26))
    train_yield = np.array(
        [
            y
            for y, s in zip(s25.columns["yield_kg"], s25.columns["split"], strict=True)
            if s == "train" and y is not None
        ]
    )
    mean = float(np.mean(train_yield))
    sd = float(np.std(train_yield, ddof=1))
    scaled = (predicted_kg - mean) / sd

    data = SampleData(s25, s26, mean, sd, list(s26.columns["tree_code"]), predicted_kg, scaled)
    _check(data, max_yield, max_water, min_ph)
    return data


def _check(data: SampleData, max_yield: float, max_water: int, min_ph: float) -> None:
    """Refuse to write data that would not show what the examples need."""
    c26 = data.harvest_2026.columns
    if not any(v is not None and v > max_yield for v in c26["yield_kg"]):
        raise RuntimeError("2026 has no yield above the 2025 maximum")
    if not any(v > max_water for v in c26["irrigation_l_per_week"]):
        raise RuntimeError("2026 has no irrigation above the 2025 maximum")
    if not any(v is not None and v < min_ph for v in c26["soil_ph"]):
        raise RuntimeError("2026 has no soil pH below the 2025 minimum")
    for season in (data.harvest_2025, data.harvest_2026):
        for name in MISSING_SHARE:
            if None not in season.columns[name]:
                raise RuntimeError(f"{season.year}: no blank cells in {name}")


def _csv_text(value, name: str) -> str:
    if value is None:
        return ""
    if name in DECIMALS:
        return f"{value:.{DECIMALS[name]}f}"
    if isinstance(value, dt.date):
        return value.isoformat()
    return str(value)


def write_csv(season: Season, path: Path) -> None:
    with path.open("w", encoding="utf-8", newline="") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(COLUMNS)
        for i in range(season.n_rows):
            writer.writerow([_csv_text(season.columns[c][i], c) for c in COLUMNS])


def write_xlsx(season: Season, path: Path) -> None:
    workbook = xlsxwriter.Workbook(str(path))
    workbook.set_properties(
        {"title": f"Invented harvest records, season {season.year}", "created": FIXED_TIMESTAMP}
    )
    sheet = workbook.add_worksheet(f"harvest_{season.year}")
    bold = workbook.add_format({"bold": True})
    text = workbook.add_format({"num_format": "@"})
    date = workbook.add_format({"num_format": "yyyy-mm-dd"})
    sheet.write_row(0, 0, COLUMNS, bold)
    sheet.freeze_panes(1, 0)
    sheet.set_column(0, 0, 10, text)
    sheet.set_column(1, 2, 14)
    sheet.set_column(3, 3, 12, date)
    sheet.set_column(4, len(COLUMNS) - 1, 12)
    sheet.ignore_errors({"number_stored_as_text": f"A2:A{season.n_rows + 1}"})
    for i in range(season.n_rows):
        for j, name in enumerate(COLUMNS):
            value = season.columns[name][i]
            if value is None:
                continue  # blank cell
            if name == "tree_code":
                sheet.write_string(i + 1, j, value, text)
            elif name == "planted_on":
                sheet.write_datetime(i + 1, j, dt.datetime.combine(value, dt.time()), date)
            elif isinstance(value, str):
                sheet.write_string(i + 1, j, value)
            else:
                sheet.write_number(i + 1, j, value)
    workbook.close()


def write_predictions(data: SampleData, path: Path) -> None:
    with path.open("w", encoding="utf-8", newline="") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(["tree_code", "predicted_yield"])
        for code, z in zip(data.prediction_codes, data.predicted_scaled, strict=True):
            writer.writerow([code, repr(float(z))])


def main(out_dir: Path | str | None = None) -> SampleData:
    """Write every sample file into ``out_dir`` (default: the folder of this script)."""
    out = Path(out_dir) if out_dir is not None else Path(__file__).resolve().parent
    out.mkdir(parents=True, exist_ok=True)
    data = build()
    for season in (data.harvest_2025, data.harvest_2026):
        write_csv(season, out / f"harvest_{season.year}.csv")
        write_xlsx(season, out / f"harvest_{season.year}.xlsx")
    write_predictions(data, out / "predicted_yield_scaled.csv")
    return data


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out_dir", nargs="?", default=None, help="folder to write into")
    args = parser.parse_args()
    result = main(args.out_dir)
    print(
        f"2025 rows: {result.harvest_2025.n_rows}, 2026 rows: {result.harvest_2026.n_rows}, "
        f"yield_kg train mean {result.train_mean!r}, sample sd {result.train_sd!r}"
    )
