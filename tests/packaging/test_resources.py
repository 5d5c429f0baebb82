"""The files in resources/: the icon in every size, the desktop entry, the AppStream
metadata; checked with the freedesktop validators (Debian's desktop-file-utils and
appstream packages, installed by .ci/run) and installed as package data."""

from __future__ import annotations

import configparser
import fnmatch
import shutil
import subprocess
import sys
import tomllib
import xml.etree.ElementTree as ET

import pytest

from scalewright.cli import build_parser
from support import REPO_ROOT

RESOURCES = REPO_ROOT / "resources"
APP_ID = "io.github.scalewright.Scalewright"
DESKTOP = RESOURCES / f"{APP_ID}.desktop"
METAINFO = RESOURCES / f"{APP_ID}.metainfo.xml"

sys.path.insert(0, str(REPO_ROOT / "packaging"))
import make_icons  # noqa: E402

sys.path.remove(str(REPO_ROOT / "packaging"))


def validator(name: str, package: str) -> str:
    path = shutil.which(name)
    assert path is not None, f"{name} is missing: apt-get install {package} (see .ci/run)"
    return path


def test_desktop_entry_passes_desktop_file_validate():
    result = subprocess.run(
        [validator("desktop-file-validate", "desktop-file-utils"), str(DESKTOP)],
        capture_output=True,
        text=True,
    )
    assert result.returncode == 0, result.stdout + result.stderr
    # Hints are not failures for the tool; we keep none either.
    assert result.stdout.strip() == "", result.stdout


def test_appstream_metadata_passes_appstreamcli_validate():
    result = subprocess.run(
        [validator("appstreamcli", "appstream"), "validate", "--no-net", str(METAINFO)],
        capture_output=True,
        text=True,
    )
    assert result.returncode == 0, result.stdout + result.stderr


def test_desktop_entry_and_metadata_name_the_same_application():
    entry = configparser.ConfigParser(interpolation=None)
    entry.optionxform = str
    entry.read(DESKTOP, encoding="utf-8")
    desktop = entry["Desktop Entry"]
    root = ET.parse(METAINFO).getroot()
    assert root.findtext("id") == APP_ID
    assert root.find("launchable").text == DESKTOP.name
    assert desktop["Icon"] == root.findtext("icon") == APP_ID
    assert desktop["Name"] == root.findtext("name") == "Scalewright"
    assert root.findtext("project_license") == "MIT"
    assert root.findtext("metadata_license") == "CC0-1.0"
    # The command the menu runs exists: `scalewright open FILE`.
    command, subcommand, placeholder = desktop["Exec"].split()
    assert (command, placeholder) == ("scalewright", "%f")
    assert build_parser().parse_args([subcommand, "x.csv"]).file == "x.csv"
    assert root.find("provides").findtext("binary") == command


def test_icon_pngs_have_their_sizes_and_are_what_the_script_renders_from_the_svg(qapp):
    from PySide6.QtGui import QImage

    for size in make_icons.PNG_SIZES:
        committed = QImage(str(RESOURCES / f"scalewright-{size}.png"))
        assert (committed.width(), committed.height()) == (size, size)
        fresh = make_icons.render(size)
        fresh = fresh.convertToFormat(committed.format())
        # Pixel by pixel, allowing a step of rounding per channel between Qt builds.
        worst = max(
            abs(a - b)
            for y in range(size)
            for x in range(size)
            for a, b in zip(
                committed.pixelColor(x, y).getRgb(), fresh.pixelColor(x, y).getRgb(), strict=True
            )
        )
        assert worst <= 2, f"scalewright-{size}.png differs from the SVG: run make_icons.py"
        # Not blank: the corners are transparent, the middle is drawn.
        assert committed.pixelColor(0, 0).alpha() == 0
        assert committed.pixelColor(size // 2, size // 2).alpha() == 255


@pytest.mark.parametrize(
    ("name", "sizes"),
    [
        ("scalewright.ico", [16, 32, 48, 64, 128, 256]),
        ("scalewright.icns", [16, 32, 64, 128, 256, 512, 1024]),
    ],
)
def test_windows_and_macos_icons_hold_every_size(qapp, name, sizes):
    """Read back with Qt's own .ico and .icns readers (independent of make_icons.py)."""
    from PySide6.QtGui import QImageReader

    reader = QImageReader(str(RESOURCES / name))
    found = []
    for i in range(reader.imageCount()):
        reader.jumpToImage(i)
        image = reader.read()
        assert not image.isNull(), reader.errorString()
        found.append((image.width(), image.height()))
    assert sorted(found) == [(s, s) for s in sizes]


def test_every_resource_file_is_installed_as_package_data():
    pyproject = tomllib.loads((REPO_ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    patterns = pyproject["tool"]["setuptools"]["package-data"]["scalewright.resources"]
    files = {p.name for p in RESOURCES.iterdir() if p.is_file() and p.suffix != ".py"}
    icons = {f"scalewright-{size}.png" for size in make_icons.PNG_SIZES}
    others = {"scalewright.svg", "scalewright.ico", "scalewright.icns", DESKTOP.name}
    assert files == icons | others | {METAINFO.name}
    for name in files:
        assert any(fnmatch.fnmatch(name, pattern) for pattern in patterns), name
