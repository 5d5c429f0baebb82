"""Fitting, applying and restoring files larger than memory, through DuckDB (embedded).

The file is never loaded whole: DuckDB reads it in a stream, the fit is the aggregate
query of ``fit_query`` (in rounds for the power methods), and the output is written by
DuckDB's COPY from the same SELECT that ``scalewright sql`` prints, into a temporary file
that replaces the target only when complete. DuckDB is told how much memory it may use
and where to spill (a temporary folder), so memory stays bounded whatever the file size.

How a delimited text file is read follows the in-memory reader's detection on the start
of the file (encoding, delimiter, header row, decimal and thousands marks, which columns
hold numbers). Every column is read as text, so the columns that pass through are written
back exactly as they were; the number columns are converted with the same missing-value
words as in memory (``NA``, ``N/A``, ``NaN``, ``null``, ``#N/A``, ``none`` and blank).
Parquet files keep their own column types.
"""

from __future__ import annotations

import contextlib
import os
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path

from sqlglot import exp

from ..engine import ColumnReport, FitSettings, FittedPlan, get_method
from ..engine import sql_terms as S
from ..engine.plan import report_warnings
from ..errors import ColumnError, ReadError, ScalewrightError, WriteError
from ..io import ColumnKind, ReadOptions, atomic_path, detect
from ..io.kinds import MISSING_MARKERS
from .dialects import for_dialect
from .duck_fit import fetch_rows, fit_in_duckdb
from .fit_query import FitColumn, FitSpec
from .fitting import canonical_key, check_needs
from .names import platform_names
from .select import key_condition, mapped_body, select_columns

VIEW = "scalewright_source"
STAGED = "scalewright_fit"
#: Rows of the start of a text file read to detect its layout and its number columns.
DETECT_ROWS = 5_000
#: DuckDB's memory limit: with the interpreter and the libraries this keeps a run well
#: under 1 GiB; DuckDB spills what does not fit to its temporary folder.
MEMORY_LIMIT = "512MB"


@dataclass
class DuckSource:
    """A data file opened as the DuckDB view ``VIEW``."""

    path: Path
    labels: list[str]
    headers: list[str]
    kinds: dict[str, ColumnKind]
    names: dict[str, str]  # label -> the column's name in the view
    options: ReadOptions


@contextlib.contextmanager
def connection(folder: Path | None = None):
    """A DuckDB connection with bounded memory, spilling into a temporary folder."""
    import duckdb

    with tempfile.TemporaryDirectory(prefix="scalewright-", dir=folder) as tmp:
        con = duckdb.connect(str(Path(tmp) / "work.duckdb"))
        try:
            con.execute(f"SET memory_limit = '{MEMORY_LIMIT}'")
            con.execute(f"SET temp_directory = '{_sql_text(str(Path(tmp) / 'spill'))}'")
            con.execute("SET preserve_insertion_order = true")
            yield con
        finally:
            con.close()


def _sql_text(text: str) -> str:
    return text.replace("'", "''")


def _q(name: str) -> str:
    return '"' + name.replace('"', '""') + '"'


def open_source(
    con,
    path: str | os.PathLike,
    options: ReadOptions | None = None,
    numbers: set[str] = frozenset(),
) -> DuckSource:
    """Open ``path`` (CSV/TSV/TXT or Parquet) as the view ``VIEW``.

    ``numbers`` names columns to treat as numbers even if their start was blank.
    """
    path = Path(path)
    if not path.is_file():
        raise ReadError(path, "the file does not exist")
    suffix = path.suffix.lower()
    if suffix == ".parquet":
        return _open_parquet(con, path, options or ReadOptions())
    if suffix not in (".csv", ".tsv", ".txt"):
        raise ReadError(
            path,
            "files larger than memory are read from CSV, TSV, TXT or Parquet files; "
            "use --engine memory for workbooks",
        )
    found = detect(path, options, preview_rows=DETECT_ROWS)
    opts = found.options
    if (opts.encoding or "utf-8").lower().replace("_", "-") not in ("utf-8", "utf-8-sig", "ascii"):
        raise ReadError(
            path,
            f"the larger-than-memory path reads UTF-8 text, and this file is {opts.encoding}; "
            "use --engine memory, or save the file as UTF-8",
        )
    labels = list(found.preview.columns)
    headers = list(found.headers)
    names = platform_names(labels, headers)
    kinds = dict(found.kinds)
    columns = ", ".join(f"{_q('raw' + str(i))}: 'VARCHAR'" for i in range(len(labels)))
    read = (
        f"read_csv('{_sql_text(str(path))}', delim = '{_sql_text(opts.delimiter or ',')}', "
        f"quote = '\"', escape = '\"', header = false, skip = {int(opts.header_row or 0) + 1}, "
        f"columns = {{{columns}}}, auto_detect = false, null_padding = true, "
        f"strict_mode = false, encoding = 'utf-8')"
    )
    items = []
    for i, label in enumerate(labels):
        raw = _q("raw" + str(i))
        if kinds.get(label) == ColumnKind.NUMBER or label in numbers:
            items.append(f"{_number_expr(raw, opts)} AS {_q(names[label])}")
        else:
            items.append(f"{raw} AS {_q(names[label])}")
    con.execute(f"CREATE OR REPLACE TEMP VIEW {VIEW} AS SELECT {', '.join(items)} FROM {read}")
    con.execute(f"CREATE OR REPLACE TEMP VIEW scalewright_raw AS SELECT * FROM {read}")
    return DuckSource(path, labels, headers, kinds, names, opts)


def _number_expr(raw: str, opts: ReadOptions) -> str:
    """The text cell as a DOUBLE: missing-value words and blanks as NULL."""
    words = ", ".join(f"'{w}'" for w in sorted(MISSING_MARKERS | {""}))
    text = f"trim({raw})"
    if opts.thousands:
        text = f"replace({text}, '{_sql_text(opts.thousands)}', '')"
    if (opts.decimal or ".") == ",":
        text = f"replace({text}, ',', '.')"
    slow = f"CASE WHEN lower(trim({raw})) IN ({words}) THEN NULL ELSE CAST({text} AS DOUBLE) END"
    if opts.thousands or (opts.decimal or ".") == ",":
        return f"CASE WHEN {raw} IS NULL THEN NULL ELSE {slow} END"
    # Most cells are plain numbers: DuckDB's own conversion first, the words only when it
    # fails (COALESCE evaluates its second argument only for those cells). 'NaN' reads as
    # a missing value, as in memory.
    fast = f"NULLIF(TRY_CAST({raw} AS DOUBLE), CAST('nan' AS DOUBLE))"
    return f"CASE WHEN {raw} IS NULL THEN NULL ELSE COALESCE({fast}, {slow}) END"


def _open_parquet(con, path: Path, options: ReadOptions) -> DuckSource:
    read = f"read_parquet('{_sql_text(str(path))}')"
    described = con.execute(f"DESCRIBE SELECT * FROM {read}").fetchall()
    headers = [str(r[0]) for r in described]
    from ..io import unique_labels

    labels = unique_labels(headers)
    names = dict(zip(labels, headers, strict=True))
    kinds = {}
    for label, (_, dtype, *_rest) in zip(labels, described, strict=True):
        t = str(dtype).upper()
        if t == "BOOLEAN":
            kinds[label] = ColumnKind.BOOLEAN
        elif re.match(
            r"(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|FLOAT|DOUBLE|DECIMAL)",
            t,
        ):
            kinds[label] = ColumnKind.NUMBER
        elif t.startswith(("DATE", "TIMESTAMP")):
            kinds[label] = ColumnKind.DATE
        else:
            kinds[label] = ColumnKind.TEXT
    items = []
    for label in labels:
        col = _q(names[label])
        if kinds[label] == ColumnKind.NUMBER:
            items.append(f"CAST({col} AS DOUBLE) AS {col}")
        else:
            items.append(col)
    con.execute(f"CREATE OR REPLACE TEMP VIEW {VIEW} AS SELECT {', '.join(items)} FROM {read}")
    return DuckSource(path, labels, headers, kinds, names, options)


def explain_conversion(con, source: DuckSource, err: Exception) -> ScalewrightError:
    """A clear message for a cell that does not read as a number (DuckDB's own says only
    which text failed): which column, which row, and what it holds."""
    opts = source.options
    for i, label in enumerate(source.labels):
        if source.kinds.get(label) != ColumnKind.NUMBER:
            continue
        raw = _q("raw" + str(i))
        words = ", ".join(f"'{w}'" for w in sorted(MISSING_MARKERS | {""}))
        text = f"trim({raw})"
        if opts.thousands:
            text = f"replace({text}, '{_sql_text(opts.thousands)}', '')"
        if (opts.decimal or ".") == ",":
            text = f"replace({text}, ',', '.')"
        row = con.execute(
            f"SELECT n, {raw} FROM (SELECT row_number() OVER () AS n, * FROM scalewright_raw) "
            f"WHERE {raw} IS NOT NULL AND lower(trim({raw})) NOT IN ({words}) "
            f"AND TRY_CAST({text} AS DOUBLE) IS NULL LIMIT 1"
        ).fetchone()
        if row is not None:
            line = int(row[0]) + int(opts.header_row or 0) + 1
            return ReadError(
                source.path,
                f"row {line}, column '{source.headers[i]}': '{row[1]}' is not a number, but the "
                f"start of the column holds numbers; correct the cell or use --engine memory",
            )
    return ReadError(source.path, f"the file cannot be read ({err})")


def _run(con, source: DuckSource, sql: str, fetch: bool = True):
    import duckdb

    try:
        return fetch_rows(con, sql) if fetch else con.execute(sql)
    except duckdb.ConversionException as err:
        raise explain_conversion(con, source, err) from None
    except duckdb.InvalidInputException as err:
        raise ReadError(
            source.path, f"the file cannot be read as a table ({_first_line(err)})"
        ) from None


def _first_line(err: Exception) -> str:
    return str(err).strip().splitlines()[0] if str(err).strip() else type(err).__name__


# --------------------------------------------------------------------------- fit


def fit_source(
    con, source: DuckSource, choices: dict, settings: FitSettings, *, keep: bool = False
) -> FittedPlan:
    """Fit the (normalized) choices on the opened file. With ``keep``, the table of the
    columns read (``STAGED``, every row) is left for the apply that follows."""
    columns = []
    for label, choice in choices.items():
        if choice.method == "none":
            continue
        check_needs(label, get_method(choice.method))
        columns.append(
            FitColumn(
                len(columns) + 1,
                label,
                source.names[label],
                get_method(choice.method),
                dict(choice.options),
            )
        )
    group = source.names.get(settings.group_by) if settings.group_by else None
    fit_where = None
    if settings.fit_where is not None:
        column, value = settings.fit_where
        fit_where = (source.names[column], _typed_key(source, column, value))
    spec = FitSpec(tuple(columns), group, fit_where)
    # Stage the columns the fit reads into a DuckDB table (one pass over the file); the
    # rounds then scan that instead of parsing the file again.
    wanted = [c.name for c in columns] + [n for n in (group, fit_where and fit_where[0]) if n]
    wanted = list(dict.fromkeys(wanted))
    _run(
        con,
        source,
        f"CREATE OR REPLACE TABLE {STAGED} AS SELECT {', '.join(_q(n) for n in wanted)} FROM {VIEW}",
        fetch=False,
    )
    try:
        return fit_in_duckdb(con, spec, exp.to_table(STAGED), settings)
    finally:
        if not keep:
            con.execute(f"DROP TABLE IF EXISTS {STAGED}")


def _typed_key(source: DuckSource, column: str, value: str) -> str:
    """The key a typed value has, as in memory: for a number column, ``3.0`` is ``3``."""
    from ..engine import value_key

    if source.kinds.get(column) == ColumnKind.NUMBER:
        try:
            return value_key(float(value))
        except ValueError:
            return value
    return value_key(value)


# --------------------------------------------------------------------------- apply / restore


def write_select(con, source: DuckSource, select: exp.Expression, target: Path) -> None:
    """COPY the SELECT's rows to ``target`` (CSV, TSV or Parquet), atomically."""
    suffix = target.suffix.lower()
    if suffix == ".parquet":
        fmt = "FORMAT parquet"
    elif suffix in (".csv", ".tsv"):
        delim = "," if suffix == ".csv" else "\\t"
        fmt = f"FORMAT csv, HEADER true, DELIMITER '{delim}'"
    else:
        raise WriteError(
            target,
            "files larger than memory are written as CSV, TSV or Parquet; choose one of those",
        )
    sql = for_dialect(select, "duckdb").sql(dialect="duckdb")
    with atomic_path(target, keep_suffix=True) as tmp:
        _run(con, source, f"COPY ({sql}) TO '{_sql_text(str(tmp))}' ({fmt})", fetch=False)


def count_reports(
    con,
    source: DuckSource,
    pairs: dict[str, tuple[str, object]],
    group: str | None,
    *,
    restoring: bool,
    clip: bool,
    table: str = VIEW,
) -> list[ColumnReport]:
    """The per-column counts the in-memory apply and restore report, in one pass over
    ``table`` (the file's view, or a table holding its number columns already)."""
    items = []
    mapped = []
    for j, (name, (_, fc)) in enumerate(pairs.items()):
        x = S.column(name)
        body = mapped_body(
            fc,
            x,
            restoring=restoring,
            clip=clip,
            group=S.column(group) if group and fc.groups else None,
        )
        mapped.append(exp.alias_(S.case((S.is_finite(x.copy()), body)), f"m{j}", quoted=True))
        finite = S.is_finite(x.copy())
        items.append(exp.alias_(exp.Count(this=x.copy()), f"n{j}", quoted=True))
        items.append(
            _sum_if(
                exp.and_(
                    exp.Not(this=finite.copy()),
                    exp.Not(this=exp.Is(this=x.copy(), expression=exp.Null())),
                ),
                f"inf{j}",
            )
        )
        m = S.column(f"m{j}")
        items.append(
            _sum_if(
                exp.and_(
                    finite.copy(),
                    exp.Not(this=exp.Coalesce(this=S.is_finite(m), expressions=[exp.false()])),
                ),
                f"undef{j}",
            )
        )
        if not restoring:
            lo, hi = _range_expr(fc, group)
            items.append(_sum_if(exp.and_(finite.copy(), S.lt(x.copy(), lo)), f"below{j}"))
            items.append(_sum_if(exp.and_(finite.copy(), S.gt(x.copy(), hi)), f"above{j}"))
    keys_sql = None
    if group:
        keys_sql = exp.alias_(
            exp.Anonymous(
                this="LIST",
                expressions=[
                    exp.Distinct(
                        expressions=[
                            exp.Trim(this=exp.cast(S.column(group), exp.DataType.build("varchar")))
                        ]
                    )
                ],
            ),
            "keys",
            quoted=True,
        )
        items.append(keys_sql)
    inner = exp.select(
        *[S.column(n) for n in dict.fromkeys([*pairs, *([group] if group else [])])], *mapped
    ).from_(table)
    query = exp.select(*items).from_(inner.subquery("mapped"))
    row = _run(con, source, for_dialect(query, "duckdb").sql(dialect="duckdb"))[0]
    reports = []
    seen_keys = [canonical_key(str(k)) for k in (row.get("keys") or []) if k is not None]
    for j, (name, (fitted_as, fc)) in enumerate(pairs.items()):
        report = ColumnReport(name, fitted_as, n_values=int(row[f"n{j}"] or 0))
        report.n_infinite = int(row[f"inf{j}"] or 0)
        report.n_undefined = int(row[f"undef{j}"] or 0)
        if not restoring:
            report.n_below = int(row[f"below{j}"] or 0)
            report.n_above = int(row[f"above{j}"] or 0)
            if clip:
                report.n_clipped = report.n_below + report.n_above
        if group and fc.groups:
            report.unseen_groups = [k for k in dict.fromkeys(seen_keys) if k and k not in fc.groups]
        report_warnings(report, fc, restoring=restoring, clip=clip)
        reports.append(report)
    return reports


def _sum_if(cond, alias):
    return exp.alias_(
        exp.Sum(this=S.case((cond, exp.Literal.number(1)), default=exp.Literal.number(0))),
        alias,
        quoted=True,
    )


def _range_expr(fc, group):
    if not group or not fc.groups:
        return S.num(fc.pooled.min), S.num(fc.pooled.max)
    g = S.column(group)
    lo = S.case(
        *[(key_condition(g.copy(), k), S.num(ps.min)) for k, ps in fc.groups.items()],
        default=S.num(fc.pooled.min),
    )
    hi = S.case(
        *[(key_condition(g.copy(), k), S.num(ps.max)) for k, ps in fc.groups.items()],
        default=S.num(fc.pooled.max),
    )
    return lo, hi


def apply_source(
    con,
    source: DuckSource,
    plan: FittedPlan,
    target: Path,
    *,
    clip: bool = False,
    counts_from: str = VIEW,
    pairs: dict[str, str] | None = None,
):
    """Scale the opened file with ``plan`` and write ``target``; the reports.

    ``counts_from`` may name a table that already holds the file's fitted columns (and the
    grouping column), so that counting does not read the file again."""
    pairs = pairs or {label: label for label in plan.columns}
    for label in pairs:
        if label not in source.names:
            raise ColumnError(label, f"was fitted in the project but is not in {source.path.name}")
        kind = source.kinds.get(label)
        if kind not in (ColumnKind.NUMBER, ColumnKind.EMPTY, None):
            raise ColumnError(
                label,
                f"holds {kind} values in {source.path.name}, not numbers, so it cannot be scaled or restored",
            )
    group_by = plan.settings.group_by
    group = source.names.get(group_by) if group_by and group_by in source.names else None
    mapped = {source.names[label]: plan.columns[fitted] for label, fitted in pairs.items()}
    columns = [source.names[label] for label in source.labels]
    select = select_columns(columns, mapped, exp.to_table(VIEW), clip=clip, group=group)
    reports = count_reports(
        con,
        source,
        {source.names[lab]: (fitted, plan.columns[fitted]) for lab, fitted in pairs.items()},
        group,
        restoring=False,
        clip=clip,
        table=counts_from,
    )
    for r in reports:
        r.column = _label_of(source, r.column)
    if group_by and group is None and any(fc.groups for fc in plan.columns.values()):
        for r in reports:
            r.warnings.append(
                f"there is no '{group_by}' column here, so the parameters fitted on all groups were used"
            )
    write_select(con, source, select, target)
    return reports


def restore_source(
    con,
    source: DuckSource,
    plan: FittedPlan,
    pairs: dict[str, str],
    target: Path,
    *,
    names: dict[str, str] | None = None,
):
    """Restore the opened file's columns (label -> fitted column) and write ``target``;
    ``names`` gives restored columns new names in the output."""
    group_by = plan.settings.group_by
    group = source.names.get(group_by) if group_by and group_by in source.names else None
    mapped = {source.names[label]: plan.columns[fitted] for label, fitted in pairs.items()}
    columns = [source.names[label] for label in source.labels]
    renamed = {source.names[label]: new for label, new in (names or {}).items()}
    select = select_columns(
        columns, mapped, exp.to_table(VIEW), restoring=True, group=group, renamed=renamed
    )
    reports = count_reports(
        con,
        source,
        {source.names[lab]: (f, plan.columns[f]) for lab, f in pairs.items()},
        group,
        restoring=True,
        clip=False,
    )
    for r in reports:
        r.column = _label_of(source, r.column)
    write_select(con, source, select, target)
    return reports


def _label_of(source: DuckSource, name: str) -> str:
    for label, n in source.names.items():
        if n == name:
            return label
    return name
