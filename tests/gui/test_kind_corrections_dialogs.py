"""The window's apply dialog reads a new file with the project's kind corrections, as
``scalewright apply`` does (``tasks.reading_for``).

Data: NIST StRD NumAcc1 (/work/shared/reference/nist_strd/NumAcc1.json), 8-digit values
guessed as an identifier; certified mean 10000002 and sd 1.
"""

from __future__ import annotations

import json

import pandas as pd
import pytest
from PySide6.QtCore import Qt

from scalewright import io as swio
from scalewright import tasks
from scalewright.engine import ColumnChoice
from scalewright.gui.apply_dialog import ApplyDialog
from support import SHARED_REFERENCE

pytestmark = [pytest.mark.gui, pytest.mark.usefixtures("themed")]

NUMACC1 = json.loads((SHARED_REFERENCE / "nist_strd" / "NumAcc1.json").read_text("utf-8"))


def test_apply_dialog_reads_the_new_file_with_the_corrections(qtbot, tmp_path):
    fit_path = tmp_path / "fit.csv"
    fit_path.write_text(
        "plot,y\n" + "".join(f"P{i},{v}\n" for i, v in enumerate(NUMACC1["values_text"])),
        encoding="utf-8",
    )
    table = swio.read_table(fit_path, swio.ReadOptions(kinds={"y": "number"}))
    project = tasks.fit_project(table, {"y": ColumnChoice("zscore")})
    new_path = tmp_path / "new.csv"
    new_path.write_text("plot,y\nQ1,10000005\nQ2,10000000\n", encoding="utf-8")
    assert swio.read_table(new_path).kinds["y"] is swio.ColumnKind.IDENTIFIER  # as guessed

    dialog = ApplyDialog(project)
    qtbot.addWidget(dialog)
    dialog.show()
    edit = dialog.data_row.edit
    edit.setFocus()
    with qtbot.waitSignal(dialog.previewReady, timeout=30000):
        qtbot.keyClicks(edit, str(new_path))
        qtbot.keyClick(edit, Qt.Key.Key_Return)
    assert dialog.data_problem() == ""
    qtbot.keyClicks(dialog.output_row.edit, str(tmp_path / "new_scaled.csv"))
    assert dialog.can_save(), dialog.save_button.toolTip()
    with qtbot.waitSignal(dialog.fileWritten, timeout=30000):
        qtbot.mouseClick(dialog.save_button, Qt.MouseButton.LeftButton)
    out = pd.read_csv(tmp_path / "new_scaled.csv")
    # z = (y - 10000002) / 1 with NumAcc1's certified mean and sd.
    assert out["y"].tolist() == [3.0, -2.0]
    qtbot.waitUntil(lambda: not dialog.is_busy(), timeout=30000)
