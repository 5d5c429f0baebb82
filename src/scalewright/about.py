"""The version and the licences of the libraries Scalewright ships with (no Qt import).

``scalewright --version`` and the window's About box both show this. The licences are read
at run time from the installed packages' metadata (``importlib.metadata``), so they are the
ones of the copies actually in use; a package whose metadata is missing falls back to the
licence written in ``FALLBACK_LICENCES``.
"""

from __future__ import annotations

import platform
import re
import textwrap
from dataclasses import dataclass
from importlib import metadata

from . import __version__

# The runtime dependencies of pyproject.toml, by distribution name (a test keeps the two
# lists equal). What they in turn require is found from their metadata.
RUNTIME_DISTRIBUTIONS = (
    "numpy",
    "pandas",
    "scipy",
    "openpyxl",
    "xlsxwriter",
    "python-calamine",
    "odfpy",
    "xlrd",
    "charset-normalizer",
    "pyarrow",
    "duckdb",
    "sqlglot",
    "psygnal",
    "PySide6-Essentials",
    "pyqtgraph",
)

# Used only when a package's metadata cannot be read: what the rule in _licence_of read
# from the metadata of the versions installed when this was written (December 2026).
FALLBACK_LICENCES = {
    "numpy": "BSD-3-Clause AND 0BSD AND MIT AND Zlib AND CC0-1.0",
    "pandas": "BSD-3-Clause",
    "scipy": "BSD License",
    "openpyxl": "MIT",
    "et_xmlfile": "MIT",
    "xlsxwriter": "BSD-2-Clause",
    "python-calamine": "MIT",
    "odfpy": "Apache Software License / GNU General Public License (GPL) / "
    "GNU Library or Lesser General Public License (LGPL)",
    "defusedxml": "PSFL",
    "xlrd": "BSD",
    "charset-normalizer": "MIT",
    "pyarrow": "Apache-2.0",
    "duckdb": "MIT License",
    "sqlglot": "MIT",
    "psygnal": "BSD 3-Clause License",
    "PySide6-Essentials": "LGPL-3.0-only OR GPL-2.0-only OR GPL-3.0-only",
    "shiboken6": "LGPL-3.0-only OR GPL-2.0-only OR GPL-3.0-only",
    "pyqtgraph": "MIT",
    "colorama": "BSD License",
    "python-dateutil": "BSD License / Apache Software License",
    "six": "MIT",
}

QT_NOTE = (
    "Qt and Qt for Python (PySide6, shiboken6) are used under the GNU Lesser General Public "
    "License version 3 (LGPL-3.0). They are kept as separate shared libraries beside the "
    "program, so they may be replaced by another build of the same version; their source "
    "code is available from the Qt Project at https://download.qt.io/."
)

OTHERS_NOTE = (
    "These packages carry shared libraries of their own (OpenBLAS and the GNU Fortran "
    "runtime in numpy and scipy, ICU in Qt), and the application folder adds system "
    "libraries of the machine it was built on; each keeps its own licence. The packages' "
    "licence texts are in their .dist-info folders."
)

# Words in a short licence field that show it names a licence (else the classifiers do).
_LICENCE_WORDS = re.compile(
    r"MIT|BSD|Apache|GPL|PSF|Python|MPL|Mozilla|ISC|Zlib|CC0|Unlicense|Public Domain", re.I
)


@dataclass(frozen=True)
class Library:
    """One shipped library: its name, installed version and licence."""

    name: str
    version: str
    licence: str


def _licence_of(name: str, meta) -> str:
    """The licence from metadata: the SPDX expression, else a short licence field that
    names a licence, else the trove classifiers, else the fallback table."""
    expression = (meta.get("License-Expression") or "").strip()
    if expression:
        return expression
    field = (meta.get("License") or "").strip()
    if field and "\n" not in field and len(field) <= 60 and _LICENCE_WORDS.search(field):
        return field
    classifiers = [
        c.split("::")[-1].strip()
        for c in meta.get_all("Classifier") or []
        if c.startswith("License ::")
    ]
    if classifiers:
        return " / ".join(classifiers)
    return FALLBACK_LICENCES.get(name, "see the package's licence file")


def _required_names(dist) -> list[str]:
    """Names a distribution requires unconditionally or for this platform (not extras)."""
    names = []
    for requirement in dist.requires or []:
        text, _, marker = requirement.partition(";")
        if "extra" in marker:
            continue
        if marker.strip() and not _marker_holds(marker):
            continue
        match = re.match(r"\s*([A-Za-z0-9][A-Za-z0-9._-]*)", text)
        if match:
            names.append(match.group(1))
    return names


def _marker_holds(marker: str) -> bool:
    """Evaluate an environment marker when ``packaging`` is present; otherwise keep the
    requirement (it is listed only if it is installed anyway)."""
    try:
        from packaging.markers import Marker
    except ImportError:
        return True
    try:
        return bool(Marker(marker.strip()).evaluate())
    except Exception:
        return True


def _key(name: str) -> str:
    return re.sub(r"[-_.]+", "-", name).lower()


def bundled_libraries() -> list[Library]:
    """Python and every runtime library with what it requires, sorted by name."""
    found: dict[str, Library] = {}
    todo = list(RUNTIME_DISTRIBUTIONS)
    while todo:
        name = todo.pop()
        if _key(name) in found:
            continue
        try:
            dist = metadata.distribution(name)
        except metadata.PackageNotFoundError:
            if name in RUNTIME_DISTRIBUTIONS:
                found[_key(name)] = Library(name, "unknown", FALLBACK_LICENCES[name])
            continue
        shown = dist.metadata.get("Name") or name
        found[_key(name)] = Library(shown, dist.version, _licence_of(name, dist.metadata))
        todo += _required_names(dist)
    libraries = sorted(found.values(), key=lambda lib: lib.name.lower())
    python = Library("Python", platform.python_version(), "PSF-2.0")
    return [python, *libraries]


def version_line() -> str:
    return f"scalewright {__version__}"


def version_text() -> str:
    """What ``scalewright --version`` prints: the version, then the shipped libraries."""
    libraries = bundled_libraries()
    width = max(len(lib.name) for lib in libraries)
    vwidth = max(len(lib.version) for lib in libraries)
    lines = [version_line(), "", "Libraries (name, version, licence):"]
    lines += [
        f"  {lib.name.ljust(width)}  {lib.version.ljust(vwidth)}  {lib.licence}"
        for lib in libraries
    ]
    lines += ["", *textwrap.wrap(QT_NOTE, 88), "", *textwrap.wrap(OTHERS_NOTE, 88)]
    return "\n".join(lines)
