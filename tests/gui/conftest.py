"""Fixtures for the window tests: the sample table, a loaded session, a window."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright import io as swio

SAMPLE = Path(__file__).resolve().parents[2] / "sample_data"
HARVEST_2025 = SAMPLE / "harvest_2025.csv"


@pytest.fixture(scope="session")
def harvest_table():
    """harvest_2025.csv as the io layer reads it (shared; tests must not change it)."""
    return swio.read_table(HARVEST_2025)


@pytest.fixture
def session(harvest_table):
    from scalewright.session import Session

    s = Session()
    s.load_table(harvest_table)
    return s


@pytest.fixture
def stack(qapp):
    from PySide6.QtGui import QUndoStack

    return QUndoStack()


def make_table(data: pd.DataFrame, source: Path, kinds: dict | None = None):
    """A Table built from a DataFrame (for tables larger than the sample)."""
    kinds = kinds or {
        c: swio.ColumnKind.NUMBER
        if pd.api.types.is_numeric_dtype(data[c])
        else swio.ColumnKind.TEXT
        for c in data.columns
    }
    return swio.Table(data, [str(c) for c in data.columns], kinds, Path(source), swio.ReadOptions())


@pytest.fixture
def big_table(tmp_path):
    rng = np.random.default_rng(7)
    n = 300_000
    data = pd.DataFrame(
        {
            "yield_kg": rng.lognormal(4.2, 0.45, n),
            "soil_ph": rng.normal(6.5, 0.35, n),
            "split": np.where(rng.random(n) < 0.8, "train", "test"),
        }
    )
    return make_table(data, tmp_path / "big.csv")


@pytest.fixture
def window(qtbot, tmp_path, qapp):
    from PySide6.QtCore import QSettings

    from scalewright.gui.app import make_app
    from scalewright.gui.main_window import MainWindow

    make_app()
    settings = QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat)
    w = MainWindow(settings=settings)
    w.ask_unsaved_changes = lambda: "discard"  # tests that care replace it again
    qtbot.addWidget(w)
    w.show()
    return w


@pytest.fixture
def wait_job(qtbot):
    """Wait until the window's background job (if any) has ended."""

    def wait(window, timeout: int = 30000) -> None:
        qtbot.waitUntil(lambda: not window.jobs.busy, timeout=timeout)

    return wait


@pytest.fixture
def opened(window, wait_job):
    """The window with harvest_2025.csv open, as after File > Open data."""
    window.load_data(HARVEST_2025)
    wait_job(window)
    assert window.session.table is not None
    return window


@pytest.fixture
def themed(qapp):
    """The application's own look (font, palette, colours), as the window sets it up."""
    from scalewright.gui.app import make_app

    make_app()
