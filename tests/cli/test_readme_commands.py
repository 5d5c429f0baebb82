"""The README's command-line walk-through, run as printed: each ``$ scalewright ...`` line
of its console block is run in a folder holding the sample files, and must print exactly
the lines the README shows below it. The figures themselves are checked against pandas
and sample_data/README.md in tests/gui/test_walkthrough.py (the same steps in the window).
"""

from __future__ import annotations

import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest

from support import SAMPLE_DATA

README = Path(__file__).resolve().parents[2] / "README.md"
SECTION = "### The same steps from the command line"


def console_steps() -> list[tuple[list[str], list[str]]]:
    """(arguments, expected output lines) for each command of the README's console block."""
    text = README.read_text(encoding="utf-8")
    block = text[text.index("```console", text.index(SECTION)) :]
    lines = block[: block.index("\n```", 1)].splitlines()[1:]
    steps: list[tuple[list[str], list[str]]] = []
    command = ""
    for line in lines:
        if line.startswith("$ ") or command.endswith("\\"):
            if line.startswith("$ "):
                command = ""
            command = (command.rstrip("\\") + " " + line.removeprefix("$ ")).strip()
            if not command.endswith("\\"):
                args = shlex.split(command)
                assert args[0] == "scalewright", command
                steps.append((args[1:], []))
        else:
            steps[-1][1].append(line)
    return steps


def test_the_readme_commands_print_what_the_readme_shows(tmp_path):
    for name in ("harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"):
        shutil.copy(SAMPLE_DATA / name, tmp_path / name)
    steps = console_steps()
    assert [args[0] for args, _ in steps] == ["fit", "apply", "restore"]
    for args, expected in steps:
        result = subprocess.run(
            [sys.executable, "-m", "scalewright", *args],
            cwd=tmp_path,
            capture_output=True,
            text=True,
            timeout=120,
        )
        assert result.returncode == 0, result.stderr
        assert result.stdout.splitlines() == expected, args
    # The last step's file: predicted kilograms by sample_data/README.md's formula
    # (predicted_kg = predicted_yield * sd + mean, with its mean and sd).
    scaled = pd.read_csv(tmp_path / "predicted_yield_scaled.csv", dtype={"tree_code": str})
    restored = pd.read_csv(tmp_path / "predicted_yield_kg.csv", dtype={"tree_code": str})
    assert list(restored["tree_code"]) == list(scaled["tree_code"])
    assert restored["predicted_yield"].to_numpy() == pytest.approx(
        scaled["predicted_yield"].to_numpy() * 36.650738430940336 + 75.54385054488843, rel=1e-12
    )
