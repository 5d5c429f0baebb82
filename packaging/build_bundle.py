"""Build the self-contained application folder with PyInstaller.

    python packaging/build_bundle.py            # -> dist/scalewright/ (the program: dist/scalewright/scalewright)
    python packaging/build_bundle.py --check    # the same, then packaging/check_bundle.py

Needs the package's runtime dependencies and PyInstaller (``pip install -e '.[bundle]'``).
The recipe is packaging/scalewright.spec; see packaging/README.md for Windows and macOS.
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SPEC = ROOT / "packaging" / "scalewright.spec"


def folder_size(folder: Path) -> int:
    """Bytes in every file under ``folder`` (symbolic links not followed)."""
    return sum(p.lstat().st_size for p in folder.rglob("*") if p.is_file() and not p.is_symlink())


def build(dist: Path, work: Path) -> Path:
    """Run PyInstaller on the spec; return the application folder."""
    command = [
        sys.executable,
        "-m",
        "PyInstaller",
        "--noconfirm",
        "--clean",
        "--log-level",
        "WARN",
        "--distpath",
        str(dist),
        "--workpath",
        str(work),
        str(SPEC),
    ]
    print("building:", " ".join(command), flush=True)
    start = time.monotonic()
    subprocess.run(command, cwd=ROOT, check=True)
    seconds = time.monotonic() - start
    folder = dist / "scalewright"
    size = folder_size(folder)
    print(f"built {folder} in {seconds:.0f} s; {size / 1e6:.0f} MB", flush=True)
    return folder


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--dist", type=Path, default=ROOT / "dist", help="output folder")
    parser.add_argument(
        "--work", type=Path, default=ROOT / "build" / "pyinstaller", help="scratch folder"
    )
    parser.add_argument("--check", action="store_true", help="then run check_bundle.py")
    args = parser.parse_args(argv)
    folder = build(args.dist.resolve(), args.work.resolve())
    if args.check:
        sys.path.insert(0, str(ROOT / "packaging"))
        from check_bundle import check

        return check(folder)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
