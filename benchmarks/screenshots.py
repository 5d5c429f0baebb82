"""Take screenshots of the main window on the sample data (offscreen).

    QT_QPA_PLATFORM=offscreen python benchmarks/screenshots.py [OUT_DIR]

Writes PNG files to docs/screenshots/ (or OUT_DIR):

- main_window.png: harvest_2025.csv, yield_kg scaled with Box-Cox (standardized) and fitted
  on the training rows, a bar hovered and a range selected on the histograms;
- several_columns.png: three columns given min-max at once, the data showing scaled values;
- column_warning.png: a method that cannot be fitted to a column, and why.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

REPO = Path(__file__).resolve().parents[1]


def main(out_dir: Path) -> list[Path]:
    from PySide6.QtCore import QSettings
    from PySide6.QtWidgets import QApplication

    from scalewright import io as swio
    from scalewright.gui import commands
    from scalewright.gui.app import make_app
    from scalewright.gui.main_window import MainWindow

    app = make_app()
    out_dir.mkdir(parents=True, exist_ok=True)
    settings = QSettings(str(out_dir / ".screenshots.ini"), QSettings.Format.IniFormat)
    settings.clear()
    window = MainWindow(settings=settings)
    window.resize(1440, 900)
    window.show()
    table = swio.read_table(REPO / "sample_data" / "harvest_2025.csv")
    window.session.load_table(table)
    window.add_recent(REPO / "sample_data" / "harvest_2025.csv")
    window.notify("Opened harvest_2025.csv: 2,412 rows", 0)
    s = window.session
    written = []

    def shot(name: str) -> None:
        for _ in range(3):
            app.processEvents()
        path = out_dir / name
        window.grab().save(str(path))
        written.append(path)

    commands.set_method(window.stack, s, ["trunk_girth_cm", "sugar_brix", "soil_ph"], "zscore")
    window.columns.select_labels(["yield_kg"])
    window.method_panel.set_method("boxcox")
    window.method_panel._option_widgets["standardize"].setChecked(True)
    window.method_panel.set_fit_where("split", "train")
    window.histograms.set_range(40.0, 90.0)
    window.histograms.hover_bar(12)
    shot("main_window.png")

    window.histograms.show_range(False)
    window.histograms.hover_bar(None)
    window.columns.select_labels(["fruit_count", "irrigation_l_per_week", "pest_trap_count"])
    window.method_panel.set_method("minmax")
    window.method_panel._option_widgets["low"].setValue(-1.0)
    window.preview.set_show_scaled(True)
    col = s.labels.index("fruit_count")
    window.preview.view.scrollTo(window.preview.model.index(0, col))
    shot("several_columns.png")

    window.preview.set_show_scaled(False)
    window.columns.select_labels(["pest_trap_count"])
    window.method_panel.set_method("boxcox")
    shot("column_warning.png")

    s.set_dirty(False)
    window.close()
    QApplication.processEvents()
    (out_dir / ".screenshots.ini").unlink(missing_ok=True)
    return written


if __name__ == "__main__":
    target = Path(sys.argv[1]) if len(sys.argv) > 1 else REPO / "docs" / "screenshots"
    for p in main(target):
        print(p)
