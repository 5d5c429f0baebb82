"""Files too large to hold whole: the window shows a sample and fits on the whole file.

Whether a file is too large follows the command line's rule (``platform.files.
choose_engine``: the file would need more than half of the free memory). The sample and
the fits go through DuckDB (``platform.outofcore``), the very path ``scalewright fit``
takes for such a file, so the parameters the window shows are those of the whole file;
only the histograms, the figures and the preview come from the sample.

``SCALEWRIGHT_SAMPLE_ABOVE`` (a size in bytes) makes every CSV, TSV, TXT or Parquet file
larger than that count as too large: for trying the sampled window on a small file.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from ..engine import ColumnChoice, FitSettings, FittedColumn

#: Rows shown (histograms, figures, preview) when the whole file is not loaded.
SAMPLE_ROWS = 200_000
SAMPLE_SEED = 2025
FORCE_ENV = "SCALEWRIGHT_SAMPLE_ABOVE"


def too_large(path: str | os.PathLike) -> bool:
    """Whether the window should show a sample of ``path`` instead of loading it."""
    from ..platform.files import STREAMED, choose_engine

    path = Path(path)
    forced = os.environ.get(FORCE_ENV, "").strip()
    if forced and path.suffix.lower() in STREAMED and path.is_file():
        return path.stat().st_size > int(forced)
    return choose_engine(path, None) == "duckdb"


@dataclass(frozen=True)
class SampleInfo:
    """How a sampled table relates to its file, and how to fit on the whole file."""

    path: Path
    rows: int  # rows in the sample
    total_rows: int  # rows in the file

    def describe(self) -> str:
        return (
            f"Histograms, figures and preview show a sample of {self.rows:,} rows of "
            f"{self.total_rows:,}; the parameters are fitted on the whole file"
        )

    def fit_with_rows(
        self, label: str, choice: ColumnChoice, settings: FitSettings
    ) -> tuple[FittedColumn, int]:
        """``choice`` of ``label`` fitted on every row of the file (one DuckDB pass), and
        how many rows the fit settings chose."""
        return fit_whole_file(self.path, label, choice, settings)


def fit_whole_file(
    path: Path, label: str, choice: ColumnChoice, settings: FitSettings
) -> tuple[FittedColumn, int]:
    """(the fitted column, how many rows the fit settings chose) on the whole file."""
    from ..platform.outofcore import connection, fit_source, open_source

    with connection() as con:
        source = open_source(con, path, numbers={label})
        plan = fit_source(con, source, {label: choice.normalized()}, settings)
    return plan.columns[label], plan.n_rows


def read_sample(path: str | os.PathLike, rows: int | None = None):
    """(a Table of at most ``rows`` rows drawn from the file, SampleInfo).

    The rows are a reservoir sample with a fixed seed (the same rows every time), in the
    file's order. Both passes over the file stream through DuckDB in bounded memory.
    """
    from ..io import ColumnKind, Table
    from ..platform.outofcore import VIEW, connection, open_source

    path = Path(path)
    rows = SAMPLE_ROWS if rows is None else rows
    with connection() as con:
        source = open_source(con, path)
        total = int(con.execute(f"SELECT count(*) FROM {VIEW}").fetchone()[0])
        names = ", ".join('"' + source.names[lab].replace('"', '""') + '"' for lab in source.labels)
        frame = con.execute(
            f"SELECT {names} FROM (SELECT *, row_number() OVER () AS sw_row FROM {VIEW}) "
            f"USING SAMPLE reservoir({int(rows)} ROWS) REPEATABLE ({SAMPLE_SEED}) "
            "ORDER BY sw_row"
        ).df()
    frame.columns = list(source.labels)
    for label in source.labels:
        if source.kinds.get(label) == ColumnKind.NUMBER:
            frame[label] = pd.to_numeric(frame[label]).astype("float64")
        elif frame[label].dtype == object:
            frame[label] = frame[label].astype("str")
    table = Table(
        frame.reset_index(drop=True),
        list(source.headers),
        dict(source.kinds),
        path,
        source.options,
        [],
    )
    return table, SampleInfo(path, len(frame), total)
