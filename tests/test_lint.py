"""The linter is part of the suite, so a style regression fails CI like any other test."""

import shutil
import subprocess
import sys

from support import REPO_ROOT


def test_ruff_finds_nothing():
    ruff = shutil.which("ruff")
    cmd = [ruff] if ruff else [sys.executable, "-m", "ruff"]
    result = subprocess.run(
        [*cmd, "check", "src", "tests", "benchmarks", "sample_data"],
        cwd=REPO_ROOT,
        capture_output=True,
        text=True,
    )
    assert result.returncode == 0, result.stdout + result.stderr


def test_ruff_format_leaves_everything_as_it_is():
    ruff = shutil.which("ruff")
    cmd = [ruff] if ruff else [sys.executable, "-m", "ruff"]
    result = subprocess.run(
        [*cmd, "format", "--check", "src", "tests", "benchmarks", "sample_data"],
        cwd=REPO_ROOT,
        capture_output=True,
        text=True,
    )
    assert result.returncode == 0, result.stdout + result.stderr
