"""The layers below the window never need Qt (../shared/DESIGN.md, "Layers").

``engine``, ``io``, ``project``, ``platform``, ``projects``, ``tasks``, ``cli``, the method
guide and the window's Qt-free state (``session``) must import on a machine with no display and without PySide6: checked
in a fresh interpreter where importing PySide6, shiboken6 or pyqtgraph raises ImportError,
and by reading every import statement of their source.
"""

from __future__ import annotations

import ast
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[1] / "src" / "scalewright"
# Packages and modules below the window (paths relative to SRC).
QT_FREE = ["engine", "io", "session", "project", "platform", "projects.py", "tasks.py", "cli.py"]
QT_FREE += ["guide.py", "errors.py"]
# The report's HTML face (its PDF face, report/pdf.py, imports Qt when a PDF is asked for).
QT_FREE += ["report/__init__.py", "report/content.py", "report/formulas.py", "report/html.py"]
QT_FREE += ["report/svg.py"]
QT_NAMES = ("PySide6", "shiboken6", "pyqtgraph", "PyQt5", "PyQt6", "PySide2", "qtpy")

BLOCKER = textwrap.dedent(
    """
    import importlib.abc, os, sys
    os.environ.pop("QT_QPA_PLATFORM", None)
    os.environ.pop("DISPLAY", None)
    BLOCKED = {names!r}

    class NoQt(importlib.abc.MetaPathFinder):
        def find_spec(self, name, path=None, target=None):
            if name.split(".")[0] in BLOCKED:
                raise ImportError(f"{{name}} is blocked for this test")
            return None

    sys.meta_path.insert(0, NoQt())
    import {module}
    leaked = sorted(m for m in sys.modules if m.split(".")[0] in BLOCKED)
    assert not leaked, leaked
    print("ok")
    """
)


def run_without_qt(module: str) -> subprocess.CompletedProcess:
    code = BLOCKER.format(names=set(QT_NAMES), module=module)
    return subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=False
    )


def test_blocker_really_blocks():
    # The check would prove nothing if the blocker let PySide6 through.
    result = run_without_qt("PySide6")
    assert result.returncode != 0 and "blocked" in result.stderr


def _module(part: str) -> str:
    return "scalewright." + part.removesuffix(".py").removesuffix("/__init__").replace("/", ".")


@pytest.mark.parametrize("module", [_module(part) for part in QT_FREE])
def test_imports_without_qt(module):
    result = run_without_qt(module)
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "ok"


def imported_names(path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    names = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.extend(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.append(node.module)
        elif (
            isinstance(node, ast.Call)
            and getattr(node.func, "attr", getattr(node.func, "id", ""))
            in ("import_module", "__import__")
            and node.args
            and isinstance(node.args[0], ast.Constant)
        ):
            names.append(str(node.args[0].value))
    return names


def _sources(part: str) -> list[Path]:
    where = SRC / part
    return [where] if where.suffix == ".py" else sorted(where.rglob("*.py"))


@pytest.mark.parametrize("package", QT_FREE)
def test_no_qt_import_statement_in_source(package):
    files = [path for path in _sources(package) if path.is_file()]
    assert files, f"no source found at {SRC / package}"
    offending = [
        f"{path.relative_to(SRC)}: {name}"
        for path in files
        for name in imported_names(path)
        if name.split(".")[0] in QT_NAMES
    ]
    assert offending == []


def test_engine_does_not_import_upper_layers():
    # engine knows nothing of files, the project format, the command line or the window
    upper = ("scalewright.io", "scalewright.project", "scalewright.cli", "scalewright.gui")
    for path in sorted((SRC / "engine").rglob("*.py")):
        for name in imported_names(path):
            assert not name.startswith(upper), f"{path.name} imports {name}"
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level >= 2:
                assert node.module in ("errors",), f"{path.name} imports ..{node.module}"


@pytest.mark.parametrize("package", [p for p in QT_FREE if p != "cli.py"])
def test_qt_free_parts_do_not_import_the_window(package):
    # the window sits on top of these: none of them may reach back up into gui
    for path in _sources(package):
        for name in imported_names(path):
            assert name.split(".")[:2] != ["scalewright", "gui"], f"{path.name} imports {name}"
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.level >= 1 and node.module:
                # "gui" or "gui.x", not "guide" (the method guide is below the window)
                first = node.module.split(".")[0]
                assert first != "gui", f"{path.name} imports .{node.module}"
