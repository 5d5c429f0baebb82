"""Copy as SQL in the window: the query on the clipboard is the one `scalewright sql` writes,
it parses back in every dialect, and DuckDB running it gives the engine's scaled values."""

from __future__ import annotations

from pathlib import Path

import duckdb
import numpy as np
import pytest
import sqlglot
from PySide6.QtGui import QGuiApplication
from sqlglot import exp

from scalewright import io as swio
from scalewright.engine import apply
from scalewright.gui import commands
from scalewright.platform.names import DIALECTS
from scalewright.platform.select import select_sql
from scalewright.projects import project_builder

HARVEST_2025 = Path(__file__).resolve().parents[2] / "sample_data" / "harvest_2025.csv"
SCALED = ("yield_kg", "sugar_brix", "fruit_count")


@pytest.fixture
def chosen(opened):
    w = opened
    s = w.session
    commands.set_method(w.stack, s, ["yield_kg"], "zscore")
    commands.set_method(w.stack, s, ["sugar_brix"], "minmax")
    commands.set_method(w.stack, s, ["fruit_count"], "boxcox")
    return w


def test_copy_as_sql_is_in_the_file_menu_and_waits_for_a_table(window, chosen):
    file_menu = chosen.menuBar().actions()[0].menu()
    assert chosen.act_copy_sql in file_menu.actions()
    assert chosen.act_copy_sql.isEnabled()


def test_every_dialect_copies_a_select_that_parses_and_names_the_columns(qtbot, chosen):
    dialog = chosen.open_sql_dialog()
    qtbot.addWidget(dialog)
    assert [dialog.dialect.itemData(i) for i in range(dialog.dialect.count())] == list(DIALECTS)
    project = project_builder(chosen.session)()
    for dialect in DIALECTS:
        for restoring in (False, True):
            dialog.set_dialect(dialect)
            dialog.restoring.setChecked(restoring)
            copied = dialog.copy()
            assert QGuiApplication.clipboard().text() == copied
            # the same text as the command line's builder (scalewright sql)
            assert copied == select_sql(project, dialect=dialect, restoring=restoring) + ";"
            # sqlglot reads it back in its own dialect (the check for every dialect)
            tree = sqlglot.parse_one(copied.rstrip(";"), read=dialect)
            assert isinstance(tree, exp.Select)
            names = {c.name for c in tree.find_all(exp.Column)}
            assert set(SCALED) <= names
            assert {t.name for t in tree.find_all(exp.Table)} == {"harvest_2025"}


def test_the_copied_duckdb_query_scales_as_the_engine_does(qtbot, chosen):
    """DuckDB executing the copied SELECT against the engine's own apply (1e-12 relative
    for the straight lines, 1e-9 for Box-Cox: the issue's tolerances)."""
    dialog = chosen.open_sql_dialog()
    qtbot.addWidget(dialog)
    dialog.set_dialect("duckdb")
    sql = dialog.copy().rstrip(";")
    table = swio.read_table(HARVEST_2025)
    con = duckdb.connect()
    con.register("harvest_2025", table.data)
    got = con.execute(sql).df()
    expected, _ = apply(table.data, chosen.session.plan())
    for label, rtol in (("yield_kg", 1e-12), ("sugar_brix", 1e-12), ("fruit_count", 1e-9)):
        np.testing.assert_allclose(
            got[label].to_numpy(dtype=float), expected[label].to_numpy(dtype=float), rtol=rtol
        )
    # the other columns pass through unchanged
    assert list(got["tree_code"][:2]) == ["000076", "000081"]
