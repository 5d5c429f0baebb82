"""Ctrl-C (SIGINT) or SIGTERM in the middle of a long write leaves nothing behind
(issue 8, "Nothing left behind, even when stopped").

A real ``scalewright`` process writes a large file; the test waits until the unfinished
``.part`` file appears beside the target, sends the signal, and checks the exit status
(128 + the signal's number, the shells' convention), the one-line message, that no
``.part`` file or temporary file is left (the process's TMPDIR points at a folder of the
test's own), and that the earlier output file is as it was.
"""

from __future__ import annotations

import os
import shutil
import signal
import subprocess
import time
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.csv as pacsv
import pytest

COMMAND = shutil.which("scalewright")
EARLIER = b"the earlier output, which must survive\r\n"


def _big_table(path: Path, rows: int) -> None:
    """An invented harvest log, large enough that writing it takes a while."""
    rng = np.random.default_rng(2025)
    table = pa.table(
        {
            "yield_kg": rng.normal(80.0, 10.0, rows).round(1),
            "sugar_brix": rng.normal(13.0, 1.0, rows).round(2),
            "soil_ph": rng.normal(6.5, 0.3, rows).round(2),
            "orchard": np.array(["Lower Meadow", "Stone Terrace"])[rng.integers(0, 2, rows)],
        }
    )
    pacsv.write_csv(table, path)


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    folder = tmp_path_factory.mktemp("signal-inputs")
    _big_table(folder / "harvest_csv_rows.csv", 3_000_000)
    _big_table(folder / "harvest_xlsx_rows.csv", 300_000)
    small = folder / "harvest_small.csv"
    _big_table(small, 500)
    project = folder / "harvest.swproj"
    fitted = subprocess.run(
        [COMMAND, "fit", small, "-m", "*=zscore", "-p", project],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert fitted.returncode == 0, fitted.stderr
    return folder


def _stop_mid_write(inputs: Path, work: Path, data: str, output: str, signum: int):
    out_dir = work / "out"
    temp = work / "temp"
    out_dir.mkdir()
    temp.mkdir()
    target = out_dir / output
    target.write_bytes(EARLIER)
    env = dict(os.environ, TMPDIR=str(temp))
    process = subprocess.Popen(
        [COMMAND, "apply", inputs / "harvest.swproj", inputs / data, "-o", target],
        env=env,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        # Wait (without a time limit of our own) until the unfinished file exists.
        while not any(p.name.endswith(".part") for p in out_dir.iterdir()):
            assert process.poll() is None, "the command ended before it began writing"
            time.sleep(0.005)
        process.send_signal(signum)
        out, err = process.communicate(timeout=120)
    finally:
        if process.poll() is None:
            process.kill()
    return process.returncode, out, err, out_dir, temp, target


@pytest.mark.parametrize(
    ("signum", "status", "words"),
    [(signal.SIGINT, 130, "by Ctrl-C"), (signal.SIGTERM, 143, "by a request to end (SIGTERM)")],
)
@pytest.mark.parametrize(
    ("data", "output"),
    [("harvest_csv_rows.csv", "scaled.csv"), ("harvest_xlsx_rows.csv", "scaled.xlsx")],
)
def test_a_signal_mid_write_leaves_nothing_and_keeps_the_earlier_file(
    inputs, tmp_path, data, output, signum, status, words
):
    assert COMMAND is not None, "the scalewright command is not installed (pip install -e .)"
    code, out, err, out_dir, temp, target = _stop_mid_write(inputs, tmp_path, data, output, signum)
    # 128 + signal number: the exit status shells give a program ended by a signal
    # (common practice; bash manual, "Exit Status").
    assert code == status, err
    assert err.splitlines() == [f"scalewright: stopped {words}; no unfinished file was left"]
    assert "Traceback" not in err + out
    assert sorted(p.name for p in out_dir.iterdir()) == [output]
    assert target.read_bytes() == EARLIER
    assert list(temp.iterdir()) == []
