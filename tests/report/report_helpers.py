"""What the report tests share (import as ``from report_helpers import ...``; pytest puts
this folder on the path): fitting a project on a copy of the sample data."""

from __future__ import annotations

import shutil

from scalewright import tasks
from scalewright.engine import ColumnChoice
from scalewright.io import read_table
from scalewright.project import save_project
from support import SAMPLE_DATA

# One column per method, so that every formula to reverse appears in one report.
EVERY_METHOD = {
    "tree_age_years": ColumnChoice("decimal"),
    "trunk_girth_cm": ColumnChoice("robust"),
    "yield_kg": ColumnChoice("boxcox", {"standardize": True}),
    "fruit_count": ColumnChoice("zscore"),
    "sugar_brix": ColumnChoice("minmax", {"low": -1, "high": 1}),
    "irrigation_l_per_week": ColumnChoice("log", {"base": "10"}),
    "pest_trap_count": ColumnChoice("yeojohnson"),
    "soil_ph": ColumnChoice("maxabs"),
    "orchard": ColumnChoice("none"),
}


def fit_and_save(folder, choices, settings):
    data = folder / "harvest_2025.csv"
    shutil.copyfile(SAMPLE_DATA / "harvest_2025.csv", data)
    table = read_table(data)
    project = tasks.fit_project(table, choices, settings)
    path = folder / "harvest.swproj"
    save_project(project, path)
    return path, data
