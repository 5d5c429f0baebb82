"""Speed and memory at scale, in one run (a script, not a test).

    python benchmarks/bench_scale.py [--rows 300000] [--cols 20] [--repeat 5]
                                     [--big-rows 20000000] [--big-cols 10] [--skip-big]

(a) The command line fitting z-score on a ROWS x COLS CSV and writing the scaled CSV,
    against a bare script doing the same work (pandas read, numpy z-score, pyarrow
    write). Both run in this process, best of --repeat; goal: at most 1.2x.
(b) Out of core: a generated CSV of BIG_ROWS x BIG_COLS, fitted (z-score) and applied
    through ``scalewright fit ... -o ... --engine duckdb`` in a subprocess; its peak
    memory (the child's maximum resident set) and its throughput against the same work
    written directly in DuckDB SQL (aggregates, then COPY of the scaled SELECT), run the
    same way. Goals: peak under 1 GiB, throughput at least 70% of the direct SQL.

Data is invented. Ratios are measured in one run, so the machine's load affects both sides.
"""

from __future__ import annotations

import argparse
import io
import resource
import subprocess
import sys
import tempfile
import textwrap
import time
from contextlib import redirect_stdout
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv


def make_csv(path: Path, rows: int, cols: int, seed: int = 11) -> None:
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame(
        {f"m{j}": rng.normal(10.0 ** (j % 5), 3.0, rows).round(4) for j in range(cols)}
    )
    frame.to_csv(path, index=False)


def bare_script(source: Path, target: Path) -> None:
    """What an analyst would write by hand: read, z-score each column, write."""
    frame = pd.read_csv(source)
    x = frame.to_numpy(dtype=np.float64)
    mean = x.mean(axis=0)
    sd = x.std(axis=0, ddof=1)
    scaled = (x - mean) / sd
    table = pa.table({name: scaled[:, j] for j, name in enumerate(frame.columns)})
    pacsv.write_csv(table, target)


def command_line(source: Path, target: Path, project: Path) -> None:
    from scalewright import cli

    with redirect_stdout(io.StringIO()):
        status = cli.main(
            [
                "fit",
                str(source),
                "-m",
                "*=zscore",
                "-p",
                str(project),
                "-o",
                str(target),
                "--engine",
                "memory",
            ]
        )
    assert status == 0


def best_of(repeat: int, fn) -> float:
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - start)
    return best


def part_a(folder: Path, rows: int, cols: int, repeat: int) -> float:
    source = folder / "wide.csv"
    make_csv(source, rows, cols)
    print(f"(a) {rows:,} x {cols} CSV, z-score, fit and write (best of {repeat})")
    # Alternate the two so that both see the same machine load.
    times = {"bare": float("inf"), "cli": float("inf")}
    for _ in range(repeat):
        times["bare"] = min(
            times["bare"], best_of(1, lambda: bare_script(source, folder / "bare.csv"))
        )
        times["cli"] = min(
            times["cli"],
            best_of(1, lambda: command_line(source, folder / "cli.csv", folder / "p.swproj")),
        )
    ratio = times["cli"] / times["bare"]
    print(f"    bare script (pandas, numpy, pyarrow)  {times['bare']:7.2f} s")
    print(f"    scalewright fit -o                    {times['cli']:7.2f} s")
    print(f"    ratio                                 {ratio:7.2f}x   (goal <= 1.2x)")
    return ratio


def make_big_csv(path: Path, rows: int, cols: int) -> None:
    import duckdb

    columns = ", ".join(f"round(random() * {10 ** (j % 4)} + {j}, 6) AS m{j}" for j in range(cols))
    con = duckdb.connect()
    con.execute("SELECT setseed(0.5)")
    con.execute(f"COPY (SELECT {columns} FROM range({rows})) TO '{path}' (FORMAT csv, HEADER true)")
    con.close()


DIRECT_SQL = textwrap.dedent(
    """
    import sys, duckdb
    source, target, cols = sys.argv[1], sys.argv[2], int(sys.argv[3])
    con = duckdb.connect()
    con.execute("SET memory_limit = '512MB'")
    read = f"read_csv('{source}', header = true)"
    stats = ", ".join(f"avg(m{j}), stddev_samp(m{j})" for j in range(cols))
    row = con.execute(f"SELECT {stats} FROM {read}").fetchone()
    scaled = ", ".join(
        f"(m{j} - {row[2 * j]!r}) / {row[2 * j + 1]!r} AS m{j}" for j in range(cols)
    )
    con.execute(f"COPY (SELECT {scaled} FROM {read}) TO '{target}' (FORMAT csv, HEADER true)")
    """
)


def run_child(args: list[str]) -> tuple[float, int]:
    """Wall time and the child's peak resident set (bytes) of one subprocess."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    start = time.perf_counter()
    peak = 0
    with subprocess.Popen(args, stdout=subprocess.DEVNULL) as proc:
        while proc.poll() is None:
            peak = max(peak, _rss(proc.pid))
            time.sleep(0.05)
    elapsed = time.perf_counter() - start
    if proc.returncode != 0:
        raise SystemExit(f"failed: {' '.join(args)}")
    after = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return elapsed, max(peak, after * 1024 if after > before else 0)


def _rss(pid: int) -> int:
    try:
        with open(f"/proc/{pid}/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("VmRSS:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return 0


def part_b(folder: Path, rows: int, cols: int) -> tuple[float, float]:
    source = folder / "big.csv"
    print(f"(b) out of core: {rows:,} x {cols} CSV, z-score fitted and applied")
    start = time.perf_counter()
    make_big_csv(source, rows, cols)
    size = source.stat().st_size
    print(f"    generated {size / 2**30:.2f} GiB in {time.perf_counter() - start:.1f} s")
    ours_time, ours_peak = run_child(
        [
            sys.executable,
            "-m",
            "scalewright",
            "fit",
            str(source),
            "-m",
            "*=zscore",
            "-p",
            str(folder / "big.swproj"),
            "-o",
            str(folder / "big_scaled.csv"),
            "--engine",
            "duckdb",
        ]
    )
    direct_time, direct_peak = run_child(
        [sys.executable, "-c", DIRECT_SQL, str(source), str(folder / "direct.csv"), str(cols)]
    )
    throughput = direct_time / ours_time
    print(f"    scalewright --engine duckdb  {ours_time:7.1f} s, peak {ours_peak / 2**20:6.0f} MiB")
    print(
        f"    direct DuckDB SQL            {direct_time:7.1f} s, peak {direct_peak / 2**20:6.0f} MiB"
    )
    print(f"    peak memory                  {ours_peak / 2**30:7.2f} GiB   (goal < 1 GiB)")
    print(f"    throughput vs direct SQL     {throughput:7.0%}   (goal >= 70%)")
    return ours_peak, throughput


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rows", type=int, default=300_000)
    parser.add_argument("--cols", type=int, default=20)
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--big-rows", type=int, default=20_000_000)
    parser.add_argument("--big-cols", type=int, default=10)
    parser.add_argument("--skip-big", action="store_true")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="bench-scale-") as tmp:
        folder = Path(tmp)
        part_a(folder, args.rows, args.cols, args.repeat)
        if not args.skip_big:
            part_b(folder, args.big_rows, args.big_cols)


if __name__ == "__main__":
    main()
