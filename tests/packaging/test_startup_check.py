"""``scalewright open FILE --check-and-quit``: the window opens FILE, says what it read and
quits (the bundle's smoke test runs the same command on the built program)."""

from __future__ import annotations

import csv
import os
import subprocess
import sys

import scalewright
from support import SAMPLE_DATA


def run_check(path, tmp_path) -> subprocess.CompletedProcess:
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen", HOME=str(tmp_path))
    env["XDG_CONFIG_HOME"] = str(tmp_path / "config")
    return subprocess.run(
        [sys.executable, "-m", "scalewright", "open", str(path), "--check-and-quit"],
        capture_output=True,
        text=True,
        timeout=300,
        env=env,
        cwd=tmp_path,
    )


def test_opens_the_sample_prints_what_it_read_and_quits(tmp_path):
    sample = SAMPLE_DATA / "harvest_2025.csv"
    with sample.open(newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))  # counted by the csv module, not by Scalewright
    result = run_check(sample, tmp_path)
    assert result.returncode == 0, result.stdout + result.stderr
    line = result.stdout.strip()
    assert line.startswith(
        f"scalewright {scalewright.__version__}: opened harvest_2025.csv "
        f"({len(rows) - 1:,} rows, {len(rows[0])} columns"
    )
    assert "on the offscreen platform" in line
    # The user's settings are left alone: nothing was written under the home folder.
    assert not (tmp_path / "config").exists()


def test_a_file_that_cannot_be_opened_is_reported_with_status_1(tmp_path):
    bad = tmp_path / "broken.xlsx"
    bad.write_bytes(b"this is not a workbook")
    result = run_check(bad, tmp_path)
    assert result.returncode == 1
    assert "could not open" in result.stdout
    assert "broken.xlsx" in result.stdout
    assert "Traceback" not in result.stdout + result.stderr


def test_a_missing_file_is_refused_before_the_window_opens(tmp_path):
    result = run_check(tmp_path / "nowhere.csv", tmp_path)
    assert result.returncode == 1
    assert result.stderr.startswith("scalewright: ")
    assert "no such file" in result.stderr
