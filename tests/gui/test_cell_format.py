"""How a cell reads in every table of the window: the data preview, its scaled columns and
the dialogs' previews all use one formatter, so a value looks the same everywhere."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from scalewright.gui.frame_view import FrameModel, format_cell
from scalewright.gui.preview import format_scaled

pytestmark = pytest.mark.gui


@pytest.mark.parametrize(
    ("value", "shown"),
    [
        (None, ""),
        (pd.NA, ""),
        (pd.NaT, ""),
        (float("nan"), ""),
        (np.float32("nan"), ""),
        (np.datetime64("NaT"), ""),
        # infinities as the written files hold them
        (float("inf"), "inf"),
        (-np.inf, "-inf"),
        # whole numbers in full, others without float noise
        (3.0, "3"),
        (1234567890123.0, "1234567890123"),
        (1e16, "1e+16"),
        (0.1 + 0.2, "0.3"),
        (np.float64(-2.5), "-2.5"),
        (True, "true"),
        (np.bool_(False), "false"),
        (pd.Timestamp("2025-04-01"), "2025-04-01"),
        (np.datetime64("2025-04-01T06:30"), "2025-04-01 06:30:00"),
        (dt.date(2025, 4, 1), "2025-04-01"),
        ("000076", "000076"),
    ],
)
def test_a_cell_reads_the_same_in_every_table(value, shown):
    assert format_cell(value) == shown


def test_scaled_values_differ_only_in_their_digits():
    assert format_scaled(float("nan")) == ""
    assert format_scaled(float("inf")) == "inf" and format_scaled(-np.inf) == "-inf"
    assert format_scaled(2.0) == "2"
    assert format_scaled(1 / 3) == "0.333333"
    assert format_cell(1 / 3) == "0.3333333333"


def test_the_dialog_preview_shows_infinities_as_the_data_preview_does(qtbot):
    model = FrameModel()
    model.set_frame(pd.DataFrame({"x": [np.inf, -np.inf, np.nan, 1.5]}))
    shown = [model.data(model.index(row, 0)) for row in range(4)]
    assert shown == ["inf", "-inf", "", "1.5"]
