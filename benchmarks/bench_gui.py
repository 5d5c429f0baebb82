"""How quick the window feels at 1,000,000 rows (a benchmark, not a test).

    QT_QPA_PLATFORM=offscreen python benchmarks/bench_gui.py [ROWS]

Measures, on an invented table of ROWS rows (default 1,000,000) shown in the real window:

- the session's peak memory over the loaded numeric data (tracemalloc; goal: at most 3x);
- switching a column's method and redrawing both histograms (goals: under 20 ms for the
  straight lines; Box-Cox and Yeo-Johnson bars drawn under 80 ms after the switch), the first
  time a method is chosen (its fit included) and when going back to one already fitted
  (undo, or trying methods back and forth). Fits that sort or search, or whose scaled
  figures need every value (robust, logarithm, Box-Cox, Yeo-Johnson) run in the background at this size: for those the figure is the time the
  interface thread is busy (the original side drawn, the scaled side saying "fitting…"),
  and "until the fit lands" is the time until the scaled bars are drawn;
- selecting another column (first visit and later visits; the histogram and summary of
  every number column are made in the loading job, timed separately);
- scrolling the data preview showing scaled values (one page jump, repainted).

Each figure is also printed as a ratio to a reference measured in the same process: binning
the column's million values once with numpy, which is what switching a method must not do.
"""

from __future__ import annotations

import os
import statistics
import sys
import time
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import numpy as np
import pandas as pd

from scalewright import io as swio


def make_table(n: int) -> swio.Table:
    rng = np.random.default_rng(2025)
    yield_kg = rng.lognormal(4.2, 0.45, n).round(1)
    yield_kg[rng.random(n) < 0.006] = np.nan
    data = pd.DataFrame(
        {
            "tree_code": pd.Series([f"{i:07d}" for i in range(n)], dtype="str"),
            "orchard": rng.choice(["North Slope", "Mill Brook", "Hilltop", "River Bend"], n),
            "yield_kg": yield_kg,
            "sugar_brix": rng.normal(13.0, 0.8, n).round(1),
            "soil_ph": rng.normal(6.5, 0.35, n).round(2),
            "irrigation_l_per_week": rng.normal(5200, 1400, n).round(0),
            "pest_trap_count": rng.poisson(0.6, n) * rng.integers(0, 4, n),
            "split": np.where(rng.random(n) < 0.8, "train", "test"),
        }
    )
    K = swio.ColumnKind
    kinds = {c: K.NUMBER for c in data.columns}
    kinds.update(tree_code=K.IDENTIFIER, orchard=K.TEXT, split=K.TEXT)
    return swio.Table(
        data, list(data.columns), kinds, Path("bench_harvest.csv"), swio.ReadOptions()
    )


def timed(func, repeat: int = 1) -> list[float]:
    out = []
    for _ in range(repeat):
        t = time.perf_counter()
        func()
        out.append((time.perf_counter() - t) * 1000)
    return out


def measure_memory(app, window, table: swio.Table) -> None:
    """Peak memory of the session over the loaded table's numeric data (tracemalloc, which
    numpy reports its arrays to): loading, every method of yield_kg fitted and drawn, every
    number column visited, a range selected. Run before the timings, on its own; scipy is
    imported first, so that its code (about 30 MB, once per process) is not counted."""
    import importlib
    import tracemalloc

    for module in ("scipy.optimize", "scipy.special"):  # code, not data: loaded beforehand
        importlib.import_module(module)

    from scalewright.session import column_facts

    s = window.session
    numeric = [c for c in table.data.columns if str(table.kinds[c]) == "number"]
    data_bytes = sum(table.data[c].to_numpy().nbytes for c in numeric)
    tracemalloc.start()
    s.load_table(table, facts=column_facts(table, s.bins))
    app.processEvents()
    for label in numeric:
        window.columns.select_labels([label])
        app.processEvents()
    window.columns.select_labels(["yield_kg"])
    for method in ["minmax", "zscore", "decimal", "robust", "maxabs", "log", "yeojohnson"]:
        window.method_panel.set_method(method)
        while s.fitting("yield_kg") or s.scaled_figures_waiting("yield_kg"):
            app.processEvents()
            time.sleep(0.001)
        app.processEvents()
    window.histograms.set_range(40.0, 80.0)
    app.processEvents()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    mb = 1024 * 1024
    print(
        f"memory (tracemalloc peak while loading, fitting 7 methods, visiting every column, "
        f"selecting a range):\n  numeric data {data_bytes / mb:.0f} MB; the session's own "
        f"peak {peak / mb:.0f} MB on top = x{peak / data_bytes:.2f}; with the data itself "
        f"x{(peak + data_bytes) / data_bytes:.2f} (goal: at most x3)"
    )
    window.histograms.show_range(False)
    s.set_dirty(False)


def main(n: int = 1_000_000) -> None:
    from PySide6.QtCore import QSettings
    from PySide6.QtWidgets import QApplication

    from scalewright.gui import commands
    from scalewright.gui.app import make_app
    from scalewright.gui.main_window import MainWindow
    from scalewright.session import column_facts

    app = make_app()
    settings = QSettings(str(Path("/tmp") / "scalewright_bench.ini"), QSettings.Format.IniFormat)
    settings.clear()
    window = MainWindow(settings=settings)
    window.resize(1360, 860)
    window.show()
    print(f"building a table of {n:,} rows …")
    table = make_table(n)
    measure_memory(app, window, table)
    t = time.perf_counter()
    facts = column_facts(table, window.session.bins)
    print(
        f"summarising the number columns in the loading job: "
        f"{(time.perf_counter() - t) * 1000:.0f} ms (once per file, off the interface thread)"
    )
    t = time.perf_counter()
    window.session.load_table(table, facts=facts)
    app.processEvents()
    print(f"showing it in the window: {(time.perf_counter() - t) * 1000:.0f} ms (once per file)")

    s = window.session
    panel = window.histograms

    def redraw() -> None:
        panel.original.widget.repaint()  # both histograms painted now, synchronously
        panel.scaled.widget.repaint()
        app.processEvents()  # then the rest: deferred figures, list, panel, preview

    values = s.values("yield_kg")
    reference = statistics.median(timed(lambda: np.histogram(values[np.isfinite(values)], 30), 5))
    print(f"reference: binning {n:,} values once with numpy = {reference:.1f} ms\n")

    window.columns.select_labels(["yield_kg"])
    redraw()

    def report(name: str, times: list[float]) -> None:
        med = statistics.median(times)
        print(f"{name:<58} {med:8.1f} ms  (x{med / reference:5.2f} ref, worst {max(times):.1f})")

    methods = ["minmax", "zscore", "decimal", "robust", "maxabs", "log", "yeojohnson", "boxcox"]

    def landed() -> None:
        while s.fitting("yield_kg"):
            app.processEvents()
            time.sleep(0.0005)
        redraw()

    def figures_shown() -> None:
        while s.scaled_figures_waiting("yield_kg"):
            app.processEvents()
            time.sleep(0.0005)
        app.processEvents()

    print("switch the method of yield_kg and redraw both histograms")
    for method in methods:
        t0 = time.perf_counter()
        first = timed(lambda m=method: (window.method_panel.set_method(m), redraw()))
        background = s.fitting("yield_kg")
        report(f"  {method:<11} first time", first)
        if background:
            landed()
            report(
                "      until the fit lands and the scaled bars are drawn",
                [(time.perf_counter() - t0) * 1000],
            )
            figures_shown()
            report(
                "      until the scaled figures under them are shown",
                [(time.perf_counter() - t0) * 1000],
            )
    again = []
    for _ in range(3):
        for method in methods:
            again += timed(lambda m=method: (window.method_panel.set_method(m), redraw()))
    report("  back to a method already fitted (any method)", again)
    undo = timed(lambda: (window.stack.undo(), redraw()), 8)
    report("  undo a method switch", undo)
    # an option edit refits (min-max low/high typed in the range boxes)
    window.method_panel.set_method("minmax")
    redraw()
    opt = []
    for k in range(8):
        opt += timed(
            lambda k=k: (
                commands.set_option(window.stack, s, ["yield_kg"], "high", 2.0 + k),
                redraw(),
            )
        )
    report("  change the min-max range (refit + redraw)", opt)

    print("\nselect another column")
    others = ["sugar_brix", "soil_ph", "irrigation_l_per_week", "pest_trap_count"]
    first = []
    for label in others:
        first += timed(lambda lab=label: (window.columns.select_labels([lab]), redraw()))
        landed()
    report("  first visit", first)
    later = []
    for _ in range(3):
        for label in ["yield_kg", *others]:
            later += timed(lambda lab=label: (window.columns.select_labels([lab]), redraw()))
    report("  later visits", later)

    print("\nscroll the data preview (scaled values shown)")
    commands.set_method(
        window.stack, s, ["sugar_brix", "soil_ph", "irrigation_l_per_week"], "zscore"
    )
    window.preview.set_show_scaled(True)
    view = window.preview.view
    bar = view.verticalScrollBar()
    app.processEvents()
    rng = np.random.default_rng(1)
    jumps = []
    for row in rng.integers(0, n - 50, 30):
        jumps += timed(lambda r=int(row): (bar.setValue(r), view.viewport().repaint()))
    report("  jump to a random place and repaint", jumps)
    pages = []
    for _ in range(30):
        pages += timed(
            lambda: (bar.setValue(bar.value() + bar.pageStep()), view.viewport().repaint())
        )
    report("  page down and repaint", pages)
    print(f"  scaled blocks computed: {window.preview.model.blocks_computed} (2,048 rows each)")

    window.session.set_dirty(False)
    window.close()
    QApplication.processEvents()


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000)
