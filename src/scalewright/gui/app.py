"""Starting the window: ``main(path)`` is what ``scalewright`` and ``scalewright open FILE`` call."""

from __future__ import annotations

import sys
from pathlib import Path

ORGANIZATION = "Scalewright"
APPLICATION = "Scalewright"


def app_icon():
    """The application's icon (resources/scalewright.svg, installed as scalewright.resources)."""
    from importlib.resources import files

    from PySide6.QtGui import QIcon

    return QIcon(str(files("scalewright.resources").joinpath("scalewright.svg")))


def make_app(argv: list[str] | None = None):
    """The QApplication (created once), with the calm theme and our names for QSettings."""
    from PySide6.QtWidgets import QApplication

    from . import theme

    app = QApplication.instance()
    if app is None:
        app = QApplication(argv if argv is not None else [sys.argv[0]])
    app.setOrganizationName(ORGANIZATION)
    app.setApplicationName(APPLICATION)
    app.setApplicationDisplayName(APPLICATION)
    app.setWindowIcon(app_icon())
    # Once per application: setting a style sheet again re-polishes every widget alive,
    # which crashed (SIGSEGV) when widgets of an earlier window were half torn down (seen
    # in the test suite, where each window fixture calls make_app).
    if not app.property("scalewright_themed"):
        theme.apply_theme(app)
        theme.configure_plots()
        app.setProperty("scalewright_themed", True)
    return app


def main(path: str | None = None, *, check_and_quit: bool = False) -> int:
    """Open the window (on a data file or a .swproj if given) and run until it is closed.

    With ``check_and_quit``, open the file, print what was read and quit (startup_check.py).
    """
    app = make_app()
    if check_and_quit:
        from .startup_check import run_check

        return run_check(app, path)
    from .main_window import MainWindow

    window = MainWindow()
    window.show()
    if path:
        target = Path(path)
        if not target.exists():
            window.show_message(f"{target}: there is no such file")
        else:
            window.open_path(target)
    return int(app.exec())


if __name__ == "__main__":  # python -m scalewright.gui.app [FILE]
    raise SystemExit(main(sys.argv[1] if len(sys.argv) > 1 else None))
