"""The command line's jobs on files larger than memory (the DuckDB engine), and the rule
that chooses between it and the in-memory path.

The same checks and the same project as ``scalewright.tasks``; only the reading, fitting
and writing go through DuckDB (``outofcore``).
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pandas as pd

from .. import __version__
from ..engine import ColumnReport, FitSettings
from ..errors import ColumnError, OptionError
from ..io import ColumnKind, fingerprint
from ..project import Project, now_iso

ENGINES = ("memory", "duckdb")
STREAMED = (".csv", ".tsv", ".txt", ".parquet")
#: Memory the in-memory path needs per byte of file, roughly: numbers take 8 bytes as
#: floats and about as many as text; text cells take far more as Python strings, and the
#: reading itself holds the file's bytes and the parsed columns at once. Parquet is
#: compressed, so its bytes expand more.
TEXT_FACTOR = 4
PARQUET_FACTOR = 10


def available_memory() -> int:
    """Bytes of memory free for a new job (MemAvailable on Linux; 4 GiB if unknown)."""
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    try:
        return os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (ValueError, OSError, AttributeError):
        return 4 << 30


def choose_engine(path: str | os.PathLike, requested: str | None) -> str:
    """'memory' or 'duckdb' for this file (see docs/command-line.md, "Engines").

    Asked for: that one (DuckDB only for CSV, TSV, TXT and Parquet). Otherwise DuckDB
    when the file would need more than half of the memory now free, by the factors above.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if requested is not None:
        if requested not in ENGINES:
            raise OptionError(f"--engine must be memory or duckdb, not '{requested}'")
        if requested == "duckdb" and suffix not in STREAMED:
            raise OptionError(
                f"--engine duckdb reads CSV, TSV, TXT and Parquet files, not '{suffix}'"
            )
        return requested
    if suffix not in STREAMED or not path.is_file():
        return "memory"
    factor = PARQUET_FACTOR if suffix == ".parquet" else TEXT_FACTOR
    return "duckdb" if path.stat().st_size * factor > available_memory() // 2 else "memory"


class _Columns:
    """What ``cli.build_choices`` and ``tasks.check_choices`` read of a table."""

    def __init__(self, source) -> None:
        self.data = pd.DataFrame(columns=source.labels)
        self.kinds = source.kinds
        self.source = source.path


def fit_file(
    data_path,
    specs,
    settings: FitSettings,
    *,
    project_path: Path,
    output: Path | None = None,
    sheet: str | None = None,
) -> tuple[Project, list[ColumnReport]]:
    """Fit on a file through DuckDB; with ``output``, also write the scaled file."""
    from ..cli import build_choices
    from ..tasks import check_choices
    from .outofcore import STAGED, apply_source, connection, fit_source, open_source

    if sheet is not None:
        raise OptionError("--sheet is for workbooks; the DuckDB engine reads CSV and Parquet")
    named = {column for column, _ in specs if column != "*"}
    with connection(Path(project_path).absolute().parent) as con:
        source = open_source(con, data_path, numbers=named)
        table = _Columns(source)
        for column, label in (
            (settings.group_by, "--group-by"),
            (settings.fit_where[0] if settings.fit_where else None, "--fit-where"),
        ):
            if column is not None and column not in source.names:
                raise ColumnError(
                    column, f"({label}) there is no such column in {source.path.name}"
                )
        choices = build_choices(table, specs, settings.group_by)
        for label in named & set(choices):
            if source.kinds.get(label) == ColumnKind.EMPTY:
                source.kinds[label] = ColumnKind.NUMBER  # blank at the start only
        if not any(c.method != "none" for c in choices.values()):
            raise OptionError(
                "no column to fit: every -m chose 'none' or '*' matched no numeric column"
            )
        check_choices(table, choices)
        normalized = {label: choice.normalized() for label, choice in choices.items()}
        # The file's fingerprint is computed beside DuckDB's work (both free the GIL).
        with ThreadPoolExecutor(max_workers=1) as pool:
            digest = pool.submit(fingerprint, source.path)
            plan = fit_source(con, source, normalized, settings, keep=output is not None)
            reports = []
            if output is not None:
                reports = apply_source(con, source, plan, output, counts_from=STAGED)
            size, sha = digest.result()
        stamp = now_iso()
        project = Project(
            source=Path(os.path.abspath(source.path)),
            source_size=size,
            source_sha256=sha,
            read_options=source.options,
            columns=list(source.labels),
            headers=list(source.headers),
            choices=normalized,
            settings=settings,
            plan=plan,
            created=stamp,
            modified=stamp,
            app_version=__version__,
        )
    return project, reports


def apply_file(
    project: Project,
    data_path,
    target: Path,
    *,
    clip: bool = False,
    mapping: Mapping[str, str] | None = None,
):
    """``apply`` through DuckDB; ``mapping`` pairs file columns with fitted columns."""
    from ..tasks import MissingFittedColumn
    from .outofcore import apply_source, connection, open_source

    plan = project.plan
    mapping = dict(mapping or {})
    pairs = dict(mapping)
    paired = set(mapping.values())
    for fitted in plan.columns:
        if fitted not in paired:
            pairs[fitted] = fitted
    with connection(Path(target).absolute().parent) as con:
        source = open_source(con, data_path, numbers=set(pairs))
        for column, fitted in pairs.items():
            if fitted not in plan.columns:
                raise ColumnError(
                    fitted,
                    f"has no fitted parameters in the project (fitted: {', '.join(plan.columns)})",
                )
            if column not in source.names:
                if column in mapping:
                    raise ColumnError(column, f"is not in {source.path.name}")
                raise MissingFittedColumn(
                    column, f"was fitted in the project but is not in {source.path.name}"
                )
        return apply_source(con, source, plan, target, clip=clip, pairs=pairs)


def restore_file(
    project: Project,
    data_path,
    target: Path,
    mapping: Mapping[str, str],
    names: Mapping[str, str] | None = None,
):
    from ..tasks import NothingToRestore, auto_mapping
    from .outofcore import connection, open_source, restore_source

    plan = project.plan
    with connection(Path(target).absolute().parent) as con:
        source = open_source(con, data_path, numbers=set(mapping))
        pairs = auto_mapping(list(source.labels), project)
        for column, fitted in mapping.items():
            if column not in source.names:
                raise ColumnError(column, f"is not in {source.path.name}")
            if fitted not in plan.columns:
                raise ColumnError(
                    fitted,
                    f"has no fitted parameters in the project (fitted: {', '.join(plan.columns)})",
                )
            pairs[column] = fitted
        if not pairs:
            raise NothingToRestore(
                f"{source.path.name}: no column matches a fitted column of the project "
                f"(fitted: {', '.join(plan.columns) or 'none'})"
            )
        for label in pairs:
            kind = source.kinds.get(label)
            if kind not in (ColumnKind.NUMBER, ColumnKind.EMPTY, None):
                raise ColumnError(
                    label,
                    f"holds {kind} values in {source.path.name}, not numbers, so it cannot be "
                    "scaled or restored",
                )
        for column in names or {}:
            if column not in pairs:
                raise ColumnError(column, "is not restored, so --name cannot rename it")
        return restore_source(con, source, plan, pairs, target, names=names)
