"""Help > About Scalewright: the version and the libraries' versions and licences."""

from __future__ import annotations

from importlib import metadata

import pytest

import scalewright

pytestmark = pytest.mark.gui


def test_about_opens_from_the_help_menu_with_version_and_licences(window, qtbot):
    from PySide6.QtCore import qVersion

    from scalewright.gui.about_dialog import AboutDialog

    help_menu = next(
        a.menu() for a in window.menuBar().actions() if a.text().replace("&", "") == "Help"
    )
    about = next(a for a in help_menu.actions() if a.text() == "About Scalewright")
    about.trigger()
    dialog = window.findChild(AboutDialog)
    assert dialog is not None and dialog.isVisible()
    assert scalewright.__version__ in dialog.title.text()

    table = dialog.table
    rows = {
        table.item(r, 0).text(): (table.item(r, 1).text(), table.item(r, 2).text())
        for r in range(table.rowCount())
    }
    # Versions as the installed packages report them, licences as their metadata declares.
    assert rows["pandas"] == (metadata.version("pandas"), "BSD-3-Clause")
    assert rows["PySide6_Essentials"][0] == metadata.version("PySide6-Essentials")
    assert rows["PySide6_Essentials"][1].startswith("LGPL-3.0-only")
    assert rows["Qt"][0] == qVersion()
    assert "LGPL" in rows["Qt"][1]
    assert "Lesser General Public License" in dialog.qt_note.text()
    # Nothing is missing: every row has a version and a licence.
    assert all(version and licence for version, licence in rows.values())

    dialog.reject()
    assert not dialog.isVisible()
