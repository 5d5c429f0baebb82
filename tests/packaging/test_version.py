"""One version number, and the licences shown with it.

The version lives in ``scalewright.__version__``; pyproject.toml reads it from there, the
project file records it, the bundle recipe and its check read it from the same line, the
CHANGELOG and the AppStream metadata name it as the newest release.
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
import tomllib
import xml.etree.ElementTree as ET
from importlib import metadata

import pytest

import scalewright
from scalewright import about
from support import REPO_ROOT, SAMPLE_DATA

VERSION = scalewright.__version__
PYPROJECT = tomllib.loads((REPO_ROOT / "pyproject.toml").read_text(encoding="utf-8"))


def run(*args, cwd=None) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "scalewright", *map(str, args)],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=120,
    )


def _distribution_name(requirement: str) -> str:
    return re.match(r"[A-Za-z0-9][A-Za-z0-9._-]*", requirement).group(0)


# --------------------------------------------------------------------------- one number


def test_pyproject_takes_the_version_from_the_package():
    assert "version" not in PYPROJECT["project"]
    assert "version" in PYPROJECT["project"]["dynamic"]
    attr = PYPROJECT["tool"]["setuptools"]["dynamic"]["version"]["attr"]
    assert attr == "scalewright.__version__"


def test_version_is_a_release_number():
    # PEP 440 release segment, with an optional pre-release, post or dev part.
    assert re.fullmatch(r"\d+\.\d+\.\d+((a|b|rc)\d+)?(\.post\d+)?(\.dev\d+)?", VERSION)


def test_the_bundle_recipe_and_its_check_read_the_same_version():
    sys.path.insert(0, str(REPO_ROOT / "packaging"))
    try:
        import check_bundle
    finally:
        sys.path.remove(str(REPO_ROOT / "packaging"))
    assert check_bundle.source_version() == VERSION
    spec = (REPO_ROOT / "packaging" / "scalewright.spec").read_text(encoding="utf-8")
    pattern = re.search(r"re\.search\(\s*r'([^']+)'", spec).group(1)
    init = (REPO_ROOT / "src" / "scalewright" / "__init__.py").read_text(encoding="utf-8")
    assert re.search(pattern, init, re.M).group(1) == VERSION


def test_changelog_names_this_version_as_the_newest_release():
    text = (REPO_ROOT / "CHANGELOG.md").read_text(encoding="utf-8")
    releases = re.findall(r"^## \[?(\d[^\]\s]*)\]?", text, re.M)
    assert releases, "CHANGELOG.md has no release heading (## x.y.z)"
    assert releases[0] == VERSION


def test_appstream_metadata_names_this_version_as_the_newest_release():
    path = REPO_ROOT / "resources" / "io.github.scalewright.Scalewright.metainfo.xml"
    releases = ET.parse(path).getroot().find("releases")
    assert releases[0].get("version") == VERSION


def test_version_option_and_a_saved_project_agree(tmp_path):
    shown = run("--version")
    assert shown.returncode == 0, shown.stderr
    assert shown.stdout.splitlines()[0] == f"scalewright {VERSION}"
    project = tmp_path / "yield.swproj"
    fitted = run("fit", SAMPLE_DATA / "harvest_2025.csv", "-m", "yield_kg=zscore", "-p", project)
    assert fitted.returncode == 0, fitted.stderr
    assert json.loads(project.read_text(encoding="utf-8"))["app_version"] == VERSION


# --------------------------------------------------------------------------- licences


def test_version_option_lists_each_library_with_its_installed_version_and_licence():
    out = run("--version").stdout
    rows = {line.split()[0]: line for line in out.splitlines() if line.startswith("  ")}
    for name in ("numpy", "pandas", "PySide6_Essentials", "pyqtgraph", "pyarrow"):
        dist = metadata.distribution(name)
        assert name in rows or dist.metadata["Name"] in rows, out
        line = rows.get(name) or rows[dist.metadata["Name"]]
        assert f" {dist.version} " in line
    # Licences as the packages declare them (their own metadata, read here independently).
    assert "BSD-3-Clause" in rows["pandas"]
    assert "LGPL-3.0-only" in rows["PySide6_Essentials"]
    assert "MIT" in rows["pyqtgraph"]
    assert "GNU Lesser General Public License version 3" in " ".join(out.split())


def test_version_option_ends_quietly_when_its_reader_stops():
    result = subprocess.run(
        f"'{sys.executable}' -m scalewright --version | head -1",
        shell=True,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert result.stdout == f"scalewright {VERSION}\n"
    assert "Traceback" not in result.stderr


def test_the_library_list_covers_the_runtime_dependencies_of_pyproject():
    declared = {_distribution_name(r) for r in PYPROJECT["project"]["dependencies"]}
    assert set(about.RUNTIME_DISTRIBUTIONS) == declared
    assert set(about.RUNTIME_DISTRIBUTIONS) <= set(about.FALLBACK_LICENCES)
    names = {about._key(lib.name) for lib in about.bundled_libraries()}
    # What the dependencies require comes along (pandas needs python-dateutil, openpyxl
    # needs et_xmlfile, PySide6-Essentials needs shiboken6: their own Requires-Dist).
    assert {"python-dateutil", "et-xmlfile", "shiboken6"} <= names
    # Test-only references are not shipped, so not listed.
    assert "scikit-learn" not in names and "pytest" not in names


class FakeMeta(dict):
    def get_all(self, key):
        value = self.get(key)
        return value if isinstance(value, list) else None


@pytest.mark.parametrize(
    ("meta", "expected"),
    [
        (FakeMeta({"License-Expression": "BSD-3-Clause", "License": "MIT"}), "BSD-3-Clause"),
        (FakeMeta({"License": "MIT"}), "MIT"),
        # A licence field holding the whole licence text: the classifiers say it shorter.
        (
            FakeMeta(
                {
                    "License": "Copyright (c) 2001 someone\nAll rights reserved.\n" * 3,
                    "Classifier": ["License :: OSI Approved :: BSD License"],
                }
            ),
            "BSD License",
        ),
        # A field that names no licence ("Dual License"): the classifiers again.
        (
            FakeMeta(
                {
                    "License": "Dual License",
                    "Classifier": [
                        "License :: OSI Approved :: BSD License",
                        "License :: OSI Approved :: Apache Software License",
                    ],
                }
            ),
            "BSD License / Apache Software License",
        ),
        (FakeMeta({}), "MIT"),  # nothing at all: the fallback table (pyqtgraph's entry: MIT)
    ],
)
def test_licence_is_read_from_the_clearest_metadata_field(meta, expected):
    assert about._licence_of("pyqtgraph", meta) == expected


def test_a_library_without_metadata_is_listed_from_the_fallback_table(monkeypatch):
    real = metadata.distribution

    def without_pandas(name):
        if about._key(name) == "pandas":
            raise metadata.PackageNotFoundError(name)
        return real(name)

    monkeypatch.setattr(about.metadata, "distribution", without_pandas)
    pandas = next(lib for lib in about.bundled_libraries() if lib.name == "pandas")
    assert pandas == about.Library("pandas", "unknown", "BSD-3-Clause")


def test_every_package_folder_is_declared_for_installing():
    """pyproject.toml lists the packages by hand (resources/ is mapped in from outside
    src/), so a new package folder must be added there, or an ordinary ``pip install .``
    leaves it out while the editable install used in development still finds it. The
    report and session packages were missing until this test."""
    declared = set(PYPROJECT["tool"]["setuptools"]["packages"])
    source = REPO_ROOT / "src"
    folders = {
        ".".join(init.parent.relative_to(source).parts)
        for init in source.rglob("__init__.py")
        if "__pycache__" not in init.parts
    }
    assert folders - declared == set(), "package folders missing from pyproject.toml"
    assert declared - folders == {"scalewright.resources"}
