"""The ``scalewright`` command: open the window, or fit, apply, restore and show in batch.

The same calls as the window (``scalewright.tasks``), with no Qt import unless the window
is asked for. Exit status: 0 success; 1 bad input, with one line ``scalewright: <message>``
on standard error and no output file left behind; 2 a usage error (argparse); 130 or 143
when stopped by Ctrl-C (SIGINT) or SIGTERM, after removing any unfinished file.
See ``docs/command-line.md``.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import signal
import sys
import threading
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from .errors import ColumnError, OptionError, ReadError, ScalewrightError

PROG = "scalewright"

# --------------------------------------------------------------------------- help text

DESCRIPTION = """\
Scale the numeric columns of a table, keep every fitted parameter in a project file,
re-apply them to new files and turn scaled values back into original units.

Without a command, opens the window."""


def _methods_help() -> str:
    """The methods and their options with defaults, read from the methods themselves."""
    from .engine import METHODS

    examples = [m.options_example() for m in METHODS.values() if m.option_specs]
    return (
        f"methods: {', '.join(METHODS)}\noptions (the defaults shown): {'   '.join(examples)}\n\n"
    )


FIT_EXAMPLES = """\
examples:
  scalewright fit harvest_2025.csv -m yield_kg=zscore -p yield.swproj
  scalewright fit harvest_2025.csv -m '*=zscore' -m pest_trap_count=yeojohnson \\
      --fit-where split=train -p harvest.swproj -o harvest_2025_scaled.xlsx
  scalewright fit harvest_2025.xlsx --sheet harvest_2025 -m soil_ph=minmax:low=-1,high=1 \\
      --group-by orchard -p soil.swproj
  scalewright fit payments_2025.csv --kind payment_cents=number \\
      -m payment_cents=zscore -p payments.swproj"""

APPLY_EXAMPLES = """\
examples:
  scalewright apply harvest.swproj harvest_2026.csv -o harvest_2026_scaled.csv
  scalewright apply harvest_2025_scaled.xlsx harvest_2026.xlsx -o harvest_2026_scaled.xlsx --clip
  scalewright apply harvest.swproj yields_2026.csv --as yield_2026=yield_kg -o yields_scaled.csv"""

RESTORE_EXAMPLES = """\
examples:
  scalewright restore harvest.swproj harvest_2026_scaled.csv -o harvest_2026_restored.csv
  scalewright restore harvest_2025_scaled.xlsx predicted_yield_scaled.csv \\
      --as predicted_yield=yield_kg -o predicted_yield_kg.csv
  scalewright restore harvest.swproj predicted_yield_scaled.csv --as predicted_yield=yield_kg \\
      --name predicted_yield=predicted_yield_kg -o predicted_yield_kg.csv"""

REPORT_EXAMPLES = """\
examples:
  scalewright report harvest.swproj -o harvest_report.html
  scalewright report harvest_2025_scaled.xlsx -o harvest_report.pdf"""

SQL_EXAMPLES = """\
dialects: duckdb, postgres, spark, snowflake, bigquery, tsql

examples:
  scalewright sql harvest.swproj --dialect spark --table orchard_db.harvest_2026
  scalewright sql harvest.swproj --restore --dialect postgres --table predictions
  scalewright sql harvest.swproj --fit --dialect snowflake --table harvest > fit.sql
  scalewright fit harvest.swproj --from-sql-result fit_result.csv -p harvest_platform.swproj"""

SHOW_EXAMPLES = """\
examples:
  scalewright show harvest.swproj
  scalewright show harvest_2025_scaled.xlsx"""


def _add_output(p: argparse.ArgumentParser, metavar: str, help: str, required: bool) -> None:
    p.add_argument("-o", "--output", metavar=metavar, required=required, help=help)


def _add_sheet(p: argparse.ArgumentParser) -> None:
    p.add_argument("--sheet", metavar="NAME", help="the worksheet to read (workbooks)")


def _add_engine(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--engine",
        choices=("memory", "duckdb"),
        help="read the whole file into memory, or stream it through DuckDB (for files "
        "larger than memory; CSV, TSV and Parquet); chosen from the file's size and the "
        "free memory when not given",
    )


class _Parser(argparse.ArgumentParser):
    """A parser whose epilog can be made when help is shown: the method list reads the
    engine, which a command that does not need it should not have to import."""

    def __init__(self, *args: Any, make_epilog: Callable[[], str] | None = None, **kw: Any):
        super().__init__(*args, **kw)
        self._make_epilog = make_epilog

    def format_help(self) -> str:
        if self._make_epilog is not None:
            self.epilog = self._make_epilog()
        return super().format_help()


class VersionAction(argparse.Action):
    """``--version``: the version line, then the shipped libraries and their licences."""

    def __init__(self, option_strings, dest=argparse.SUPPRESS, **kwargs) -> None:
        super().__init__(option_strings, dest, nargs=0, default=argparse.SUPPRESS, **kwargs)

    def __call__(self, parser, namespace, values, option_string=None) -> None:
        from .about import version_text

        try:
            print(version_text(), flush=True)
        except BrokenPipeError:  # piped into a program that stopped reading (| head -1)
            with contextlib.suppress(OSError):
                sys.stdout = open(os.devnull, "w")  # noqa: SIM115
        parser.exit()


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog=PROG,
        description=DESCRIPTION,
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="Run 'scalewright COMMAND --help' for the options and examples of a command.",
    )
    parser.add_argument(
        "--version", action=VersionAction, help="show the version and the libraries' licences"
    )
    commands = parser.add_subparsers(dest="command", metavar="COMMAND")

    p = commands.add_parser(
        "open",
        help="open the window on a data or project file",
        description="Open the window on a data file (.csv, .tsv, .xlsx, ...) or a project "
        "(.swproj).",
        epilog="example:\n  scalewright open harvest_2025.csv",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", metavar="FILE", help="data file or project file")
    p.add_argument(
        "--check-and-quit",
        action="store_true",
        help="open FILE with the detected settings, print what was read and quit (to check "
        "that an installed copy starts; status 1 if FILE could not be opened)",
    )

    p = commands.add_parser(
        "fit",
        help="fit methods to the columns of a data file and save the project",
        description="Fit a scaling method to columns of DATA and save the fitted parameters "
        "in a project file (and, with -o, the scaled data).",
        make_epilog=lambda: _methods_help() + FIT_EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument(
        "data",
        metavar="DATA",
        help="the data file to fit on (with --from-sql-result: the project the query was "
        "written from)",
    )
    p.add_argument(
        "-m",
        "--method",
        metavar="COLUMN=METHOD[:OPT=VALUE,...]",
        action="append",
        help="the method for a column; '*=METHOD' for every numeric column (a -m naming a "
        "column overrides '*'); repeat for more columns",
    )
    p.add_argument(
        "-p",
        "--project",
        metavar="PROJECT",
        required=True,
        help="the project file to write (.swproj)",
    )
    _add_sheet(p)
    p.add_argument(
        "--kind",
        dest="kinds",
        metavar="COLUMN=KIND",
        action="append",
        default=[],
        help="read COLUMN as number, identifier, text or date instead of the kind guessed "
        "(for example amount_cents=number); kept in the project for apply and restore; "
        "repeat for more columns",
    )
    p.add_argument(
        "--group-by", metavar="COLUMN", help="fit one set of parameters per value of COLUMN"
    )
    p.add_argument(
        "--fit-where",
        metavar="COLUMN=VALUE",
        help="fit only on the rows where COLUMN is VALUE (for example split=train); "
        "every row is still scaled",
    )
    _add_output(p, "SCALED", "also write the scaled data (.xlsx, .csv, .tsv or .parquet)", False)
    _add_engine(p)
    p.add_argument(
        "--from-sql-result",
        metavar="FILE",
        help="make the project from the one-row result (CSV or JSON) of the query that "
        "'scalewright sql DATA --fit' prints; DATA is then that project",
    )

    p = commands.add_parser(
        "apply",
        help="scale a new file with the parameters of a project",
        description="Scale DATA with the parameters saved in PROJECT (a .swproj file or a "
        "scaled workbook); nothing is refitted. Prints, per column, how many values lie "
        "outside the range the parameters were fitted on.",
        epilog=APPLY_EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("project", metavar="PROJECT", help="project file or scaled workbook")
    p.add_argument("data", metavar="DATA", help="the data file to scale")
    _add_output(p, "OUTPUT", "the scaled file to write (.xlsx, .csv, .tsv or .parquet)", True)
    _add_sheet(p)
    _add_engine(p)
    p.add_argument(
        "--clip",
        action="store_true",
        help="move values outside the fitted range to its nearest end first",
    )
    p.add_argument(
        "--as",
        dest="mapping",
        metavar="COLUMN=FITTED_COLUMN",
        action="append",
        default=[],
        help="scale COLUMN of DATA with the parameters fitted for FITTED_COLUMN (for a file "
        "whose column has another name); repeat for more columns",
    )

    p = commands.add_parser(
        "restore",
        help="turn scaled values back into original units",
        description="Turn the scaled columns of DATA back into original units with the "
        "parameters of PROJECT_OR_WORKBOOK. Columns with the name of a fitted column are "
        "restored; --as restores a differently named column; other columns pass through.",
        epilog=RESTORE_EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("project", metavar="PROJECT_OR_WORKBOOK", help="project file or scaled workbook")
    p.add_argument("data", metavar="DATA", help="the file with scaled values")
    _add_output(p, "OUTPUT", "the restored file to write (.xlsx, .csv, .tsv or .parquet)", True)
    _add_sheet(p)
    _add_engine(p)
    p.add_argument(
        "--as",
        dest="mapping",
        metavar="COLUMN=SOURCE_COLUMN",
        action="append",
        default=[],
        help="restore COLUMN of DATA with the parameters fitted for SOURCE_COLUMN",
    )
    p.add_argument(
        "--name",
        dest="names",
        metavar="COLUMN=NEW_NAME",
        action="append",
        default=[],
        help="call restored COLUMN NEW_NAME in the output (by default it keeps its name); "
        "repeat for more columns",
    )

    p = commands.add_parser(
        "sql",
        help="print the SQL that scales a table the way a project does",
        description="Print one SELECT that applies the project's fitted scaling to a table "
        "with the source's columns (other columns pass through unchanged), or with "
        "--restore turns scaled values back into original units. With --fit, print the "
        "aggregate query that computes the parameters inside the data platform instead.",
        epilog=SQL_EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("project", metavar="PROJECT", help="project file or scaled workbook")
    p.add_argument(
        "--dialect",
        default="duckdb",
        choices=("duckdb", "postgres", "spark", "snowflake", "bigquery", "tsql"),
        help="the SQL dialect to write (default duckdb)",
    )
    p.add_argument(
        "--table", metavar="NAME", help="the table to read (default: the data file's name)"
    )
    what = p.add_mutually_exclusive_group()
    what.add_argument(
        "--restore", action="store_true", help="turn scaled values back into original units"
    )
    what.add_argument(
        "--fit",
        action="store_true",
        help="print the aggregate query whose result 'scalewright fit PROJECT "
        "--from-sql-result FILE' turns into a project",
    )
    p.add_argument(
        "--clip",
        action="store_true",
        help="move values outside the fitted range to its nearest end first",
    )
    p.add_argument(
        "--after",
        metavar="RESULT",
        help="with --fit: the next round's query, after the result of the previous one "
        "(Box-Cox and Yeo-Johnson search lambda in rounds)",
    )

    p = commands.add_parser(
        "show",
        help="print a project as a readable table",
        description="Print the project: its data file, the rows fitted on, and per column "
        "the method, options, key parameters and warnings.",
        epilog=SHOW_EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("project", metavar="PROJECT", help="project file or scaled workbook")

    p = commands.add_parser(
        "report",
        help="write a report of a project for colleagues and auditors (.html or .pdf)",
        description="Write one file that records the project: the data file and its "
        "fingerprint, the dates, and per column the method, parameters, the formula to "
        "reverse it, the fit summary, warnings and histograms before and after. The "
        "histograms need the data file; without it the report says why they are missing.",
        epilog=REPORT_EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("project", metavar="PROJECT_OR_WORKBOOK", help="project file or scaled workbook")
    _add_output(p, "FILE", "the report to write (.html or .pdf)", True)
    return parser


# --------------------------------------------------------------------------- progress


class TerminalProgress:
    """Percentages on standard error, only when it is a terminal."""

    def __init__(self, label: str, stream=None) -> None:
        self.stream = stream or sys.stderr
        self.label = label
        self.last = -1
        try:
            self.enabled = self.stream.isatty()
        except (AttributeError, ValueError):
            self.enabled = False

    def __call__(self, fraction: float) -> None:
        if not self.enabled:
            return
        percent = int(max(0.0, min(1.0, fraction)) * 100)
        if percent != self.last:
            self.last = percent
            self.stream.write(f"\r{self.label}: {percent:3d}%")
            self.stream.flush()

    def done(self) -> None:
        if self.enabled and self.last >= 0:
            self.stream.write("\r" + " " * (len(self.label) + 6) + "\r")
            self.stream.flush()
            self.last = -1

    @property
    def callback(self) -> Callable[[float], None] | None:
        return self if self.enabled else None


@contextlib.contextmanager
def _progress(label: str):
    bar = TerminalProgress(label)
    try:
        yield bar.callback
    finally:
        bar.done()


# --------------------------------------------------------------------------- parsing


def _split_pair(text: str, what: str, example: str) -> tuple[str, str]:
    left, sep, right = text.partition("=")
    if not sep or not left.strip() or not right.strip():
        raise OptionError(f"{what} '{text}' must be written {example}")
    return left.strip(), right.strip()


def parse_method_spec(text: str) -> tuple[str, str, dict[str, str]]:
    """``COLUMN=METHOD[:OPT=VALUE,...]`` -> (column, method id, raw options).

    A column name may itself hold ``=`` or ``:``: the split is at the ``=`` followed by a
    known method id.
    """
    from .engine import METHODS, get_method

    example = "COLUMN=METHOD[:OPT=VALUE,...], for example yield_kg=zscore:sd=population"
    best = None
    for i, ch in enumerate(text):
        if ch == "=" and i > 0 and text[i + 1 :].partition(":")[0].strip().lower() in METHODS:
            best = i
            break
    if best is None:
        _column, method_part = _split_pair(text, "-m", example)
        try:
            get_method(method_part.partition(":")[0])
        except OptionError as err:
            raise OptionError(f"-m '{text}': {err}") from None
        raise OptionError(f"-m '{text}' must be written {example}")
    column, method_part = text[:best].strip(), text[best + 1 :]
    method_id, colon, opt_text = method_part.partition(":")
    options: dict[str, str] = {}
    if colon:
        if not opt_text.strip():
            raise OptionError(f"-m '{text}': no options after ':' (write OPT=VALUE,...)")
        for item in opt_text.split(","):
            name, sep, value = item.partition("=")
            if not sep or not name.strip() or not value.strip():
                raise OptionError(
                    f"-m '{text}': the option '{item}' must be written OPT=VALUE "
                    "(for example low=-1)"
                )
            if name.strip() in options:
                raise OptionError(f"-m '{text}': the option '{name.strip()}' is given twice")
            options[name.strip()] = value.strip()
    return column, method_id.strip().lower(), options


def parse_method_specs(specs: Sequence[str]) -> list[tuple[str, Any]]:
    """Check every ``-m`` before any file is read: [(column, normalized choice)]."""
    from .engine import ColumnChoice, get_method

    out = []
    for spec in specs:
        column, method_id, raw = parse_method_spec(spec)
        method = get_method(method_id)
        try:
            options = method.options(raw)
        except OptionError as err:
            raise OptionError(f"-m '{spec}': {err}") from None
        out.append((column, ColumnChoice(method.id, options)))
    return out


def build_choices(table, specs: Sequence[tuple[str, Any]], group_by: str | None = None):
    """Choices from parsed ``-m`` arguments: '*' covers every numeric column (except the
    grouping column); a named column overrides '*', and a later -m an earlier one."""
    from .io import ColumnKind

    star: Any = None
    named: dict[str, Any] = {}
    for column, choice in specs:
        if column == "*":
            star = choice
            continue
        if column not in table.data.columns:
            raise ColumnError(
                column,
                f"there is no such column in {table.source.name} "
                f"(columns: {_name_list(table.data.columns)})",
            )
        named[column] = choice
    choices: dict = {}
    if star is not None:
        for label, kind in table.kinds.items():
            if kind == ColumnKind.NUMBER and label != group_by:
                choices[label] = star
    choices.update(named)
    return choices


def parse_kinds(pairs: Sequence[str]) -> dict[str, str]:
    """``--kind COLUMN=KIND`` pairs; split at the last ``=`` (a kind word holds none), so a
    column name may contain ``=``."""
    from .io import CORRECTABLE_KINDS

    words = ", ".join(CORRECTABLE_KINDS)
    out: dict[str, str] = {}
    for text in pairs:
        column, sep, kind = text.rpartition("=")
        if not sep or not column.strip() or not kind.strip():
            raise OptionError(f"--kind '{text}' must be written COLUMN=KIND, for example id=text")
        column, kind = column.strip(), kind.strip().lower()
        if kind not in CORRECTABLE_KINDS:
            raise OptionError(f"--kind '{text}': '{kind}' is not a kind (use one of {words})")
        if column in out and out[column] != kind:
            raise OptionError(f"--kind names the column '{column}' twice")
        out[column] = kind
    return out


def check_kinds(table, kinds: dict[str, str]) -> None:
    """Every ``--kind`` column is in the table."""
    for column in kinds:
        if column not in table.data.columns:
            raise ColumnError(
                column,
                f"(--kind) there is no such column in {table.source.name} "
                f"(columns: {_name_list(table.data.columns)})",
            )


def check_identifiers(table, choices) -> None:
    """A method on a column read as an identifier whose every cell is a number: say how to
    read it as numbers instead (the general refusal comes later, in ``tasks``)."""
    import shlex

    from .io import identifier_of_numbers

    for label, choice in choices.items():
        if choice.method == "none":
            continue
        reason = identifier_of_numbers(table, label)
        if reason is not None:
            pair = f"{label}=number"
            quoted = shlex.quote(pair) if shlex.quote(pair) != pair else f"'{pair}'"
            raise ColumnError(
                label,
                f"was read as an identifier ({reason}), and identifiers are never scaled; "
                f"add --kind {quoted} to scale it",
            )


def _name_list(names, limit: int = 12) -> str:
    names = [str(n) for n in names]
    shown = ", ".join(names[:limit])
    return shown + (f", ... ({len(names)} in all)" if len(names) > limit else "")


def parse_mapping(pairs: Sequence[str], fitted: Sequence[str]) -> dict[str, str]:
    """``--as COLUMN=SOURCE_COLUMN`` pairs; the split prefers an ``=`` followed by a fitted
    column name, so either name may contain ``=``."""
    out: dict[str, str] = {}
    for text in pairs:
        split = None
        for i, ch in enumerate(text):
            if ch == "=" and text[i + 1 :].strip() in fitted and text[:i].strip():
                split = i
                break
        if split is None:
            column, source = _split_pair(text, "--as", "COLUMN=SOURCE_COLUMN")
        else:
            column, source = text[:split].strip(), text[split + 1 :].strip()
        if column in out:
            raise OptionError(f"--as names the column '{column}' twice")
        out[column] = source
    return out


def parse_names(pairs: Sequence[str]) -> dict[str, str]:
    """``--name COLUMN=NEW_NAME`` pairs, split at the first ``=``."""
    out: dict[str, str] = {}
    for text in pairs:
        column, new = _split_pair(text, "--name", "COLUMN=NEW_NAME")
        if column in out:
            raise OptionError(f"--name names the column '{column}' twice")
        out[column] = new
    return out


# --------------------------------------------------------------------------- commands


def _open_window(path: str | None, check_and_quit: bool = False) -> int:
    if path is not None and not Path(path).exists():
        raise ReadError(path, "there is no such file")
    try:
        from .gui.app import main as window_main
    except ImportError as err:
        if (err.name or "").startswith(("PySide6", "shiboken6", "pyqtgraph")):
            raise ScalewrightError(
                "the window needs PySide6 (pip install PySide6-Essentials)"
            ) from None
        raise ScalewrightError(f"the window cannot start ({err})") from None
    status = window_main(path=path, check_and_quit=check_and_quit)
    return int(status or 0)


def cmd_fit(args: argparse.Namespace) -> int:
    from .engine import FitSettings
    from .io import ReadOptions, atomic_path, read_table
    from .project import project_to_json, save_project
    from .projects import check_project_target
    from .tasks import check_target, export_scaled, fit_project

    project_path = check_project_target(args.project, args.data)
    output = check_target(args.output, source=args.data) if args.output else None
    if args.from_sql_result is not None:
        return _fit_from_sql_result(args, project_path, output)
    if not args.method:
        raise OptionError("fit needs at least one -m COLUMN=METHOD")
    specs = parse_method_specs(args.method)
    kinds = parse_kinds(args.kinds)
    fit_where = None
    if args.fit_where is not None:
        fit_where = _split_pair(args.fit_where, "--fit-where", "COLUMN=VALUE, e.g. split=train")
    from .platform.files import choose_engine

    if choose_engine(args.data, args.engine) == "duckdb":
        return _fit_duckdb(args, project_path, output, specs, FitSettings(fit_where, args.group_by))

    with _progress("reading") as progress:
        table = read_table(args.data, ReadOptions(sheet=args.sheet, kinds=kinds), progress=progress)
    check_kinds(table, kinds)
    if fit_where is not None and fit_where[0] not in table.data.columns:
        raise ColumnError(
            fit_where[0], f"(--fit-where) there is no such column in {table.source.name}"
        )
    if args.group_by is not None and args.group_by not in table.data.columns:
        raise ColumnError(
            args.group_by, f"(--group-by) there is no such column in {table.source.name}"
        )
    choices = build_choices(table, specs, args.group_by)
    check_identifiers(table, choices)
    if not any(c.method != "none" for c in choices.values()):
        raise OptionError(
            "no column to fit: every -m chose 'none' or '*' matched no numeric column"
        )
    project = fit_project(table, choices, FitSettings(fit_where, args.group_by))
    project_to_json(project, project_path)  # any field that cannot be saved fails here
    reports = []
    if output is None:
        save_project(project, project_path)
    else:
        # The scaled data goes to a temporary file that replaces the output only once the
        # project is saved, so a failure at either step leaves both earlier files as they were.
        with atomic_path(output, keep_suffix=True) as staged:
            with _progress("writing") as progress:
                reports = export_scaled(table, project, staged, progress=progress)
            save_project(project, project_path)
    _print_fitted(project, project_path, output, reports)
    return 0


def _print_fitted(project, project_path: Path, output, reports) -> None:
    plan = project.plan
    assert plan is not None
    where = ""
    if plan.settings.fit_where is not None:
        where = f" where {plan.settings.fit_where[0]} is {plan.settings.fit_where[1]}"
    print(
        f"fitted {len(plan.columns)} column{'s' if len(plan.columns) != 1 else ''} on "
        f"{plan.n_rows:,} rows{where}; project saved to {project_path}"
    )
    for line in show_lines(project, project_path, header=False):
        print(line)
    if output is not None:
        print(f"scaled data written to {output}")
        for line in _report_notes(reports):
            print(line)


def _fit_duckdb(args, project_path: Path, output, specs, settings) -> int:
    """``fit`` through DuckDB: the file is streamed, never loaded whole."""
    from .io import atomic_path
    from .platform.files import fit_file
    from .project import project_to_json, save_project

    reports = []
    if output is None:
        project, _ = fit_file(
            args.data, specs, settings, project_path=project_path, sheet=args.sheet
        )
        project_to_json(project, project_path)
        save_project(project, project_path)
    else:
        with atomic_path(output, keep_suffix=True) as staged:
            project, reports = fit_file(
                args.data,
                specs,
                settings,
                project_path=project_path,
                output=staged,
                sheet=args.sheet,
            )
            project_to_json(project, project_path)
            save_project(project, project_path)
    _print_fitted(project, project_path, output, reports)
    return 0


def _fit_from_sql_result(args, project_path: Path, output) -> int:
    """``fit PROJECT --from-sql-result FILE``: the parameters the platform computed."""
    import dataclasses

    from .platform.results import project_from_result
    from .project import save_project
    from .tasks import load_project_or_workbook

    if output is not None:
        raise OptionError("-o cannot be used with --from-sql-result (the data is not here)")
    if args.method or args.group_by or args.fit_where:
        raise OptionError(
            "with --from-sql-result the methods, groups and fit rows come from the project; "
            "leave out -m, --group-by and --fit-where"
        )
    base = load_project_or_workbook(args.data)
    project = project_from_result(base, args.from_sql_result)
    project = dataclasses.replace(project, loaded_from=None)
    save_project(project, project_path)
    _print_fitted(project, project_path, None, [])
    return 0


def _report_notes(reports) -> list[str]:
    from .tasks import describe_reports

    return [line for line in describe_reports(reports) if line.startswith("  note:")]


def cmd_apply(args: argparse.Namespace) -> int:
    from .tasks import (
        MissingFittedColumn,
        apply_to_file,
        check_not_project_files,
        check_target,
        describe_reports,
        load_project_or_workbook,
    )

    # The output is checked once: its name before the project is read, then that it is
    # none of the project's own files.
    output = check_target(args.output, source=args.data)
    project = load_project_or_workbook(args.project)
    check_not_project_files(output, project)
    mapping = parse_mapping(args.mapping, list(project.plan.columns) if project.plan else [])
    from .platform.files import apply_file, choose_engine

    if choose_engine(args.data, args.engine) == "duckdb":
        if args.sheet is not None:
            raise OptionError("--sheet is for workbooks; the DuckDB engine reads CSV and Parquet")
        if project.plan is None:
            raise ScalewrightError(f"{args.project}: the project has no fitted parameters")
        reports = apply_file(project, args.data, output, clip=args.clip, mapping=mapping)
        for line in describe_reports(reports):
            print(line)
        print(f"scaled data written to {output}")
        return 0
    try:
        with _progress("scaling") as progress:
            reports = apply_to_file(
                project,
                args.data,
                output,
                clip=args.clip,
                mapping=mapping,
                sheet=args.sheet,
                progress=progress,
                checked=True,
            )
    except MissingFittedColumn as err:
        raise ScalewrightError(
            f"{err}; if it has another name there, pair them with --as COLUMN={err.column}"
        ) from None
    for line in describe_reports(reports):
        print(line)
    print(f"scaled data written to {output}")
    return 0


def cmd_restore(args: argparse.Namespace) -> int:
    from .tasks import (
        NothingToRestore,
        check_not_project_files,
        check_target,
        describe_reports,
        load_project_or_workbook,
        restore_file,
    )

    output = check_target(args.output, source=args.data)  # once, as for apply
    project = load_project_or_workbook(args.project)
    check_not_project_files(output, project)
    if project.plan is None:
        raise ScalewrightError(f"{args.project}: the project has no fitted parameters")
    mapping = parse_mapping(args.mapping, list(project.plan.columns))
    names = parse_names(args.names)
    from .platform.files import choose_engine

    if choose_engine(args.data, args.engine) == "duckdb":
        from .platform.files import restore_file as restore_streamed

        if args.sheet is not None:
            raise OptionError("--sheet is for workbooks; the DuckDB engine reads CSV and Parquet")
        try:
            reports = restore_streamed(project, args.data, output, mapping, names)
        except NothingToRestore as err:
            raise ScalewrightError(
                f"{err}; name the pairs with --as COLUMN=SOURCE_COLUMN"
            ) from None
        for line in describe_reports(reports, restoring=True):
            print(line)
        print(f"restored data written to {output}")
        return 0
    try:
        with _progress("restoring") as progress:
            reports = restore_file(
                project,
                args.data,
                output,
                mapping=mapping,
                names=names,
                sheet=args.sheet,
                progress=progress,
                checked=True,
            )
    except NothingToRestore as err:
        raise ScalewrightError(f"{err}; name the pairs with --as COLUMN=SOURCE_COLUMN") from None
    for line in describe_reports(reports, restoring=True):
        print(line)
    print(f"restored data written to {output}")
    return 0


def cmd_sql(args: argparse.Namespace) -> int:
    """Print the SELECT (or, with --fit, the aggregate query) for a data platform."""
    from .tasks import load_project_or_workbook

    project = load_project_or_workbook(args.project)
    if args.after is not None and not args.fit:
        raise OptionError("--after goes with --fit")
    if args.fit:
        if args.clip:
            raise OptionError("--clip is for applying; a fit query does not clip")
        from .platform.results import fit_query_text

        text = fit_query_text(project, dialect=args.dialect, table=args.table, after=args.after)
    else:
        from .platform.select import select_sql

        if project.plan is None:
            raise ScalewrightError(
                f"{args.project}: the project has no fitted parameters; fit it first, or "
                "use --fit to compute them in the platform"
            )
        if args.restore and args.clip:
            raise OptionError("--clip is for applying, not for restoring")
        text = select_sql(
            project,
            dialect=args.dialect,
            restoring=args.restore,
            clip=args.clip,
            table=args.table,
        )
    print(text.rstrip() + ";")
    return 0


def cmd_show(args: argparse.Namespace) -> int:
    from .projects import is_project_file
    from .tasks import load_project_or_workbook

    project = load_project_or_workbook(args.project)
    path = Path(args.project)
    for line in show_lines(project, path if is_project_file(path) else None):
        print(line)
    return 0


def cmd_report(args: argparse.Namespace) -> int:
    from .report import check_report_target, write_report
    from .tasks import load_project_or_workbook

    output = check_report_target(args.output)
    project = load_project_or_workbook(args.project)
    with _progress("reading the data") as progress:
        report = write_report(project, output, progress=progress)
    print(f"report written to {output}")
    if report.figures_missing:
        print(f"  note: {report.figures_missing}")
    return 0


# --------------------------------------------------------------------------- show


def _table(rows: list[list[str]]) -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    lines = []
    for n, r in enumerate(rows):
        lines.append("  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)).rstrip())
        if n == 0:
            lines.append("  ".join("-" * w for w in widths))
    return lines


def show_lines(project, project_path: Path | None, *, header: bool = True) -> list[str]:
    """The project as plain lines: where it came from, then one row per fitted column."""
    from .engine import get_method
    from .io.detect import describe_read_options
    from .project import locate_source, options_text

    lines: list[str] = []
    plan = project.plan
    settings = plan.settings if plan is not None else project.settings
    if header:
        check = locate_source(project, project_path)
        lines.append(f"data file:   {project.source if project.source else '(none)'}")
        if check.saved is not None:
            if not check.found:
                lines.append("             not found (nor beside the project file)")
            else:
                if check.moved:
                    lines.append(f"             found beside the project: {check.path}")
                if check.changed:
                    lines.append("             changed since the parameters were fitted")
        shown = describe_read_options(project.read_options) or "detected settings"
        lines.append(f"read with:   {shown}")
        rows_line = f"{plan.n_rows:,} rows" if plan is not None else "not fitted yet"
        if settings.fit_where is not None:
            rows_line += f" where {settings.fit_where[0]} is {settings.fit_where[1]}"
        lines.append(f"fitted on:   {rows_line}")
        if settings.group_by is not None:
            lines.append(f"grouped by:  {settings.group_by}")
        lines.append(
            f"saved:       {project.modified} (created {project.created}, "
            f"Scalewright {project.app_version})"
        )
        lines.append("")
    if plan is None or not plan.columns:
        lines.append("no fitted columns")
        return lines
    rows = [["column", "method", "options", "key parameters", "fitted on", "warnings"]]
    notes: list[str] = []
    for label, fc in plan.columns.items():
        method = get_method(fc.method)
        rows.append(
            [
                label,
                method.name,
                options_text(fc.options) or "-",
                method.describe_params(fc.pooled.params, brief=True),
                f"{fc.pooled.n:,} values",
                str(len(fc.warnings)) if fc.warnings else "-",
            ]
        )
        for key, ps in fc.groups.items():
            rows.append(
                [
                    "",
                    f"  {settings.group_by} = {key}",
                    "",
                    method.describe_params(ps.params, brief=True),
                    f"{ps.n:,} values",
                    "",
                ]
            )
        notes += [f"{label}: {w}" for w in fc.warnings]
    lines += _table(rows)
    left = sorted(set(project.choices) - set(plan.columns))
    if left:
        lines.append(f"left as is: {_name_list(left)}")
    if notes:
        lines.append("")
        lines.append("warnings:")
        lines += [f"  {n}" for n in notes]
    return lines


# --------------------------------------------------------------------------- main

_COMMANDS: dict[str, Callable[[argparse.Namespace], int]] = {
    "fit": cmd_fit,
    "apply": cmd_apply,
    "restore": cmd_restore,
    "show": cmd_show,
    "sql": cmd_sql,
    "report": cmd_report,
    "open": lambda args: _open_window(args.file, args.check_and_quit),
}


def _one_line(message: str) -> str:
    return " ".join(str(message).split())


def _fail(message: str) -> int:
    sys.stderr.write(f"{PROG}: {_one_line(message)}\n")
    sys.stderr.flush()
    return 1


class Stopped(BaseException):
    """SIGINT or SIGTERM arrived: unwinds like Ctrl-C, so every ``finally`` and
    ``atomic_path`` removes its unfinished files before the command ends."""

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum


_STOP_WORDS = {signal.SIGINT: "by Ctrl-C", signal.SIGTERM: "by a request to end (SIGTERM)"}


@contextlib.contextmanager
def _stop_on_signals():
    """Turn SIGINT and SIGTERM into :class:`Stopped` while a batch command runs.

    Only the first signal is acted on; later ones are ignored so that removing the
    unfinished files is not itself cut short.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught = tuple(_STOP_WORDS)

    def stop(signum, frame) -> None:
        for s in caught:
            signal.signal(s, signal.SIG_IGN)
        raise Stopped(signum)

    previous = {s: signal.signal(s, stop) for s in caught}
    try:
        yield
    finally:
        for s, handler in previous.items():
            signal.signal(s, handler)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)  # exits with status 2 on a usage error
    try:
        if args.command is None:
            return _open_window(None)
        if args.command == "open":
            return _COMMANDS[args.command](args)
        with _stop_on_signals():
            return _COMMANDS[args.command](args)
    except Stopped as stop:
        # The conventional status of a program ended by a signal: 128 + its number.
        sys.stderr.write(
            f"{PROG}: stopped {_STOP_WORDS[stop.signum]}; no unfinished file was left\n"
        )
        return 128 + int(stop.signum)
    except ScalewrightError as err:
        return _fail(str(err))
    except OSError as err:
        if isinstance(err, BrokenPipeError):  # output piped into a program that stopped
            with contextlib.suppress(OSError):
                sys.stdout = open(os.devnull, "w")  # noqa: SIM115
            return 1
        where = f"{err.filename}: " if err.filename else ""
        return _fail(f"{where}{err.strerror or err}")
    except MemoryError:
        return _fail("not enough memory for this file")
    except KeyboardInterrupt:
        sys.stderr.write(f"{PROG}: stopped by Ctrl-C\n")
        return 130
    except Exception as err:  # a bug: still one line, never a traceback
        if os.environ.get("SCALEWRIGHT_DEBUG"):
            raise
        return _fail(f"unexpected error ({type(err).__name__}: {err}); please report this")
