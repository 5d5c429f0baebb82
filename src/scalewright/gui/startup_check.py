"""``scalewright open FILE --check-and-quit``: prove an installed copy starts, then quit.

Used by the bundle's smoke test (packaging/check_bundle.py) and useful after any install:
it builds the real window, opens FILE as a user would (a data file is read with the
settings the import dialog detects, as if its OK button were pressed), prints one line
saying what was read, and quits with status 0; if the file cannot be opened it prints the
message the window would show and quits with status 1. The user's settings (recent files,
window geometry) are not touched: the window gets settings in a temporary folder.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

from PySide6.QtCore import QSettings, QTimer, qVersion
from PySide6.QtGui import QGuiApplication

from .. import __version__

# A safety net, so that a build that hangs fails the check instead of blocking CI.
GIVE_UP_AFTER_MS = 180_000


def describe_table(table) -> str:
    """``harvest_2025.csv (1,200 rows, 11 columns, 8 numeric)``."""
    from ..io import ColumnKind

    numeric = sum(1 for kind in table.kinds.values() if kind == ColumnKind.NUMBER)
    columns = len(table.data.columns)
    return (
        f"{Path(table.source).name} ({len(table.data):,} rows, {columns} columns, "
        f"{numeric} numeric)"
    )


def how_running() -> str:
    frozen = getattr(sys, "frozen", False)
    return "from the bundle" if frozen else f"from Python {sys.version.split()[0]}"


def run_check(app, path: str | None, out=None) -> int:
    """Open ``path`` in a real window, report on ``out`` (stdout), and return the status."""
    from .main_window import MainWindow

    out = out or sys.stdout
    if path is None:
        out.write("scalewright: --check-and-quit needs a file to open\n")
        return 1
    with tempfile.TemporaryDirectory(prefix="scalewright-check-") as folder:
        settings = QSettings(str(Path(folder) / "settings.ini"), QSettings.Format.IniFormat)
        window = MainWindow(settings=settings)
        window.ask_unsaved_changes = lambda: "discard"  # nothing of the user's is open
        window.show()
        outcome: dict[str, int] = {}

        def finish() -> None:
            if outcome or window.jobs.busy:
                return
            table = window.session.table
            if table is not None:
                status = 0
                line = (
                    f"scalewright {__version__}: opened {describe_table(table)} with Qt "
                    f"{qVersion()} on the {QGuiApplication.platformName()} platform, "
                    f"running {how_running()}"
                )
            else:
                status = 1
                box = window.last_message
                reason = box.text() if box is not None else "nothing was opened"
                line = f"scalewright {__version__}: could not open {path}: {reason}"
            outcome["status"] = status
            out.write(line + "\n")
            out.flush()
            window.close()
            app.exit(status)

        def give_up() -> None:
            if not outcome:
                outcome["status"] = 1
                out.write(
                    f"scalewright {__version__}: {path} was not open after "
                    f"{GIVE_UP_AFTER_MS // 1000} s\n"
                )
                out.flush()
                app.exit(1)

        # busy_changed(False) comes before the job's result is shown; finish on the next turn.
        window.jobs.busy_changed.connect(
            lambda busy: None if busy else QTimer.singleShot(0, finish)
        )
        window.open_path(path)
        dialog = window.import_dialog
        if dialog is not None and dialog.isVisible():
            dialog.accept()  # the detected settings, as if OK were pressed
        QTimer.singleShot(0, finish)  # when nothing started (a file refused at once)
        QTimer.singleShot(GIVE_UP_AFTER_MS, give_up)
        app.exec()
        window.deleteLater()
        return outcome.get("status", 1)
