"""Projects to report on: every method fitted on the sample data's training rows."""

from __future__ import annotations

import pytest
from report_helpers import EVERY_METHOD, fit_and_save

from scalewright.engine import ColumnChoice, FitSettings
from scalewright.project import load_project


@pytest.fixture
def every_method(tmp_path):
    """(project path, data path, loaded project): every method, fitted where split is train."""
    path, data = fit_and_save(tmp_path, EVERY_METHOD, FitSettings(("split", "train")))
    return path, data, load_project(path)


@pytest.fixture
def grouped(tmp_path):
    """(project path, data path, loaded project): z-score of yield_kg per orchard."""
    path, data = fit_and_save(
        tmp_path, {"yield_kg": ColumnChoice("zscore")}, FitSettings(None, "orchard")
    )
    return path, data, load_project(path)
