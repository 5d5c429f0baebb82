"""Check that a built application folder runs on its own, then report its size.

    python packaging/check_bundle.py [dist/scalewright]

1. ``scalewright --version`` names the version of the source tree (src/scalewright/__init__.py)
   and lists the libraries' licences, read from the metadata copied into the bundle.
2. ``scalewright open sample_data/harvest_2025.csv --check-and-quit`` builds the real window
   on Qt's offscreen platform, reads the sample table and quits with status 0.
3. ``scalewright fit`` (numpy, pandas, scipy) writes a project file whose ``app_version`` is
   that same version.
4. The icon, desktop entry and AppStream file are in the bundle.

Both runs get a bare environment (no PYTHONPATH, PATH of the system only). When this runs as
root and ``unshare`` is available (CI's container), they also run in a private mount
namespace where every Python installation on the machine is hidden under an empty folder,
so the bundle cannot lean on one. Exit status 0 when every check passes.
"""

from __future__ import annotations

import csv
import json
import os
import re
import shutil
import subprocess
import sys
import sysconfig
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_data" / "harvest_2025.csv"
RESOURCE_FILES = (
    "scalewright.svg",
    "scalewright-16.png",
    "scalewright-256.png",
    "io.github.scalewright.Scalewright.desktop",
    "io.github.scalewright.Scalewright.metainfo.xml",
)


def sample_shape() -> tuple[int, int]:
    """Rows and columns of the sample CSV, counted with the csv module (not Scalewright)."""
    with SAMPLE.open(newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    return len(rows) - 1, len(rows[0])


def source_version() -> str:
    text = (ROOT / "src" / "scalewright" / "__init__.py").read_text(encoding="utf-8")
    return re.search(r'^__version__ = "([^"]+)"', text, re.M).group(1)


def python_folders() -> list[str]:
    """Folders holding a Python installation, to hide from the bundle."""
    found = {sys.base_prefix, sys.prefix, sysconfig.get_paths()["stdlib"]}
    for pattern in ("/usr/lib/python3*", "/usr/local/lib/python3*"):
        found.update(str(p) for p in Path("/").glob(pattern.lstrip("/")))
    pyenv = Path.home() / ".pyenv"
    if pyenv.is_dir():
        found.add(str(pyenv))
    # Hiding /usr itself would hide the system's shared libraries as well.
    folders = sorted(p for p in found if Path(p).is_dir() and p not in ("/usr", "/usr/local", "/"))
    # Only the outermost: once a folder is hidden, the ones inside it are gone too.
    return [p for p in folders if not any(p.startswith(q + "/") for q in folders if q != p)]


def can_hide_python() -> bool:
    if os.geteuid() != 0 or shutil.which("unshare") is None:
        return False
    probe = subprocess.run(
        ["unshare", "--mount", "--propagation", "private", "true"], capture_output=True
    )
    return probe.returncode == 0


def bare_environment(home: str) -> dict[str, str]:
    env = {
        "PATH": "/usr/bin:/bin",
        "HOME": home,
        "LANG": "C.UTF-8",
        "QT_QPA_PLATFORM": "offscreen",
        "XDG_RUNTIME_DIR": home,
    }
    return env


def run(command: list[str], env: dict[str, str], hide: list[str]) -> subprocess.CompletedProcess:
    """Run the bundled program, with the Python folders hidden when ``hide`` is not empty."""
    if hide:
        mounts = " && ".join(f"mount -t tmpfs none '{folder}'" for folder in hide)
        quoted = " ".join(f"'{part}'" for part in command)
        unshare = shutil.which("unshare") or "unshare"
        script = f"{mounts} && exec {quoted}"
        command = [unshare, "--mount", "--propagation", "private", "sh", "-c", script]
    return subprocess.run(
        command, env=env, capture_output=True, text=True, timeout=600, cwd=env["HOME"]
    )


def check(folder: Path) -> int:
    folder = Path(folder).resolve()
    program = folder / ("scalewright.exe" if os.name == "nt" else "scalewright")
    problems: list[str] = []
    if not program.is_file():
        print(f"check: {program} does not exist; build first (python packaging/build_bundle.py)")
        return 1
    version = source_version()
    hide = python_folders() if can_hide_python() else []
    if hide:
        print("check: Python installations hidden during the runs: " + ", ".join(hide))
    else:
        print(
            "check: cannot hide the Python installations here (needs root and unshare); "
            "running with a bare environment only"
        )
    with tempfile.TemporaryDirectory(prefix="scalewright-bundle-check-") as home:
        env = bare_environment(home)

        shown = run([str(program), "--version"], env, hide)
        first = shown.stdout.splitlines()[0] if shown.stdout else ""
        print(f"check: scalewright --version -> {first!r} (status {shown.returncode})")
        if shown.returncode != 0 or first != f"scalewright {version}":
            problems.append(
                f"--version printed {first!r} (status {shown.returncode}), expected "
                f"'scalewright {version}'\n{shown.stderr}"
            )
        for name in ("PySide6_Essentials", "pandas", "numpy", "pyarrow", "Python"):
            line = next((ln for ln in shown.stdout.splitlines() if ln.split()[:1] == [name]), "")
            if not line or " unknown " in line:
                problems.append(f"--version does not give the version and licence of {name}")
        if "LGPL" not in shown.stdout:
            problems.append("--version does not mention the LGPL of Qt")

        opened = run([str(program), "open", str(SAMPLE), "--check-and-quit"], env, hide)
        print(
            f"check: scalewright open {SAMPLE.name} --check-and-quit (status {opened.returncode}):"
        )
        for line in opened.stdout.splitlines():
            print(f"    {line}")
        n_rows, n_columns = sample_shape()
        expected = (
            f"scalewright {version}: opened {SAMPLE.name} ({n_rows:,} rows, {n_columns} columns"
        )
        if opened.returncode != 0 or expected not in opened.stdout:
            problems.append(
                f"the headless start did not open the sample (status {opened.returncode})\n"
                f"{opened.stdout}{opened.stderr}"
            )
        if "running from the bundle" not in opened.stdout:
            problems.append("the headless start did not run from the bundle")

        # A batch fit (the power transforms use scipy) writes a project whose app_version
        # must be the same version.
        project = Path(home) / "check.swproj"
        fitted = run(
            [str(program), "fit", str(SAMPLE), "-m", "yield_kg=yeojohnson", "-p", str(project)],
            env,
            hide,
        )
        saved = json.loads(project.read_text(encoding="utf-8")) if project.is_file() else {}
        print(
            f"check: scalewright fit ... -m yield_kg=yeojohnson (status {fitted.returncode}); "
            f"the project says app_version {saved.get('app_version')!r}"
        )
        if fitted.returncode != 0 or saved.get("app_version") != version:
            problems.append(
                f"the batch fit failed or wrote another version (status {fitted.returncode})"
                f"\n{fitted.stdout}{fitted.stderr}"
            )

    resources = folder / "_internal" / "scalewright" / "resources"
    missing = [name for name in RESOURCE_FILES if not (resources / name).is_file()]
    if missing:
        problems.append(f"missing from {resources}: {', '.join(missing)}")

    size = sum(p.lstat().st_size for p in folder.rglob("*") if p.is_file() and not p.is_symlink())
    print(f"check: {folder} holds {size / 1e6:.0f} MB")
    for problem in problems:
        print(f"check FAILED: {problem}")
    if not problems:
        print("check: the bundle starts, opens the sample data and quits cleanly")
    return 1 if problems else 0


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    folder = Path(args[0]) if args else ROOT / "dist" / "scalewright"
    return check(folder)


if __name__ == "__main__":
    raise SystemExit(main())
