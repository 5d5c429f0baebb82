"""The jobs the window and the command line both run: fit, export, apply, restore.

Plain functions over ``io``, ``engine`` and ``project``, with no Qt. Long jobs take
``progress`` (called with a fraction 0..1) and ``cancelled`` (polled; when it returns True
the job raises :class:`~scalewright.errors.Cancelled` and leaves no output file), and pass
them on to the io layer.
"""

from __future__ import annotations

import dataclasses
import os
import re
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path

import pandas as pd

from . import __version__
from .engine import (
    ColumnChoice,
    ColumnReport,
    FitSettings,
    FittedPlan,
    apply,
    fit,
    get_method,
    restore,
)
from .errors import ColumnError, ProjectError, ReadError, ScalewrightError, WriteError
from .io import (
    SUPPORTED_WRITE,
    ColumnKind,
    ReadOptions,
    Table,
    ensure_not_source,
    read_embedded_project,
    read_table,
    write_scaled_workbook,
    write_table,
)
from .io import fingerprint as file_fingerprint
from .project import (
    SUFFIX,
    Project,
    load_project,
    now_iso,
    parameter_sheet,
    project_from_json,
    project_to_json,
)

Progress = Callable[[float], None]
CancelCheck = Callable[[], bool]


@dataclasses.dataclass(frozen=True)
class KindWords:
    """The plain words a user reads for a kind of column, in the window and the command line."""

    word: str  # the short word in lists ("yes/no")
    about: str  # one sentence on what the kind holds and what becomes of it
    not_scaled: str  # why it is not scaled, read after "is" ("" when it can be scaled)


KIND_WORDS: dict[ColumnKind, KindWords] = {
    ColumnKind.NUMBER: KindWords("number", "Numbers: this column can be scaled.", ""),
    ColumnKind.IDENTIFIER: KindWords(
        "identifier",
        "Codes or identifiers (for example with leading zeros): kept as text, never scaled.",
        "an identifier column; identifiers are never scaled",
    ),
    ColumnKind.DATE: KindWords(
        "date",
        "Dates or times: kept as they are, never scaled.",
        "a date column; dates are never scaled",
    ),
    ColumnKind.BOOLEAN: KindWords(
        "yes/no",
        "True/false values: kept as they are, never scaled.",
        "a yes/no column, not numbers, so it cannot be scaled",
    ),
    ColumnKind.TEXT: KindWords(
        "text",
        "Text or categories: kept as they are, never scaled.",
        "a text column, not numbers, so it cannot be scaled",
    ),
    ColumnKind.EMPTY: KindWords(
        "empty", "No values at all in this column.", "empty, so there is nothing to scale"
    ),
}


def why_not_scaled(kind: ColumnKind | str) -> str:
    """Why a column of this kind is not scaled, to read after "is" ("" for numbers)."""
    words = KIND_WORDS.get(kind)  # a kind or its plain value
    return words.not_scaled if words else "not a column of numbers, so it cannot be scaled"


def _part(progress: Progress | None, start: float, end: float) -> Progress | None:
    """A progress callback for one stage of a job, mapped onto [start, end]."""
    if progress is None:
        return None
    return lambda f: progress(start + (end - start) * min(max(f, 0.0), 1.0))


# --------------------------------------------------------------------------- fitting


def check_choices(table: Table, choices: Mapping[str, ColumnChoice]) -> None:
    """Refuse a method on a column that is not numbers (identifiers, dates, text)."""
    for label, choice in choices.items():
        if label not in table.data.columns:
            raise ColumnError(label, "there is no such column in " + table.source.name)
        if get_method(choice.method).id == "none":
            continue
        kind = table.kinds.get(label)
        if kind is not None and kind != ColumnKind.NUMBER:
            raise ColumnError(label, "is " + why_not_scaled(kind))


def fit_project(
    table: Table,
    choices: Mapping[str, ColumnChoice],
    settings: FitSettings | None = None,
    *,
    plan: FittedPlan | None = None,
    fingerprint: tuple[int, str] | None = None,
) -> Project:
    """Fit ``choices`` on ``table`` and return the project that records it all.

    ``plan``, when given, holds parameters already fitted for exactly these choices (the
    window keeps them, including saved parameters the user chose to keep after the data
    file changed); they are recorded as they are instead of being fitted again.

    The project records the size and SHA-256 of the data file as the table was read
    (``Table.size``/``sha256``), not as the file is now; ``fingerprint`` (size, SHA-256)
    overrides that, for parameters kept from a saved project, which belong to the file
    that project recorded.
    """
    settings = settings or FitSettings()
    check_choices(table, choices)
    normalized = {label: choice.normalized() for label, choice in choices.items()}
    if plan is None:
        plan = fit(table.data, normalized, settings)
    else:
        _check_plan_matches(plan, normalized, settings)
    source = size = sha = None
    if fingerprint is None and table.size is not None and table.sha256 is not None:
        fingerprint = (table.size, table.sha256)
    if table.source is not None and (fingerprint is not None or Path(table.source).is_file()):
        source = Path(os.path.abspath(table.source))
        size, sha = fingerprint if fingerprint is not None else file_fingerprint(source)
    stamp = now_iso()
    return Project(
        source=source,
        source_size=size,
        source_sha256=sha,
        read_options=table.options,
        columns=[str(c) for c in table.data.columns],
        headers=list(table.headers),
        choices=normalized,
        settings=settings,
        plan=plan,
        created=stamp,
        modified=stamp,
        app_version=__version__,
    )


def _check_plan_matches(
    plan: FittedPlan, choices: Mapping[str, ColumnChoice], settings: FitSettings
) -> None:
    chosen = {label: c for label, c in choices.items() if c.method != "none"}
    if plan.settings != settings or set(plan.columns) != set(chosen):
        raise ScalewrightError("the fitted parameters do not match the choices; fit again")
    for label, choice in chosen.items():
        fc = plan.columns[label]
        if (fc.method, dict(fc.options)) != (choice.method, dict(choice.options)):
            raise ColumnError(label, "was fitted with another method or options; fit again")


def _fitted(project: Project):
    if project.plan is None:
        raise ProjectError("project", "has no fitted parameters yet; fit it first")
    return project.plan


# --------------------------------------------------------------------------- writing


def check_target(
    target: str | os.PathLike,
    *,
    source: str | os.PathLike | None = None,
    project: Project | None = None,
    formats: Sequence[str] = SUPPORTED_WRITE,
) -> Path:
    """The path an output may be written to, or :class:`WriteError` saying why not.

    Refused: a project file name, a format not in ``formats`` (the data formats unless
    told otherwise, for example the report's), a folder, ``source``
    (the file the data is read from), and, for ``project``, the file it was loaded from
    (a project file or a scaled workbook) and the data file it was fitted on. Nothing is
    written; every job that writes an output checks here first, and so may a dialog.
    """
    target = Path(target)
    suffix = target.suffix.lower()
    if suffix == SUFFIX:
        raise WriteError(
            target,
            "this name is for project files; choose a data file name (" + ", ".join(formats) + ")",
        )
    if suffix not in formats:
        raise WriteError(
            target,
            f"cannot write '{suffix or 'no extension'}' files; use one of " + ", ".join(formats),
        )
    ensure_not_source(target, source)
    if project is not None:
        check_not_project_files(target, project)
    if target.is_dir():
        raise WriteError(target, "this is a folder; give a file name")
    return target


def check_not_project_files(target: Path, project: Project) -> None:
    """:class:`WriteError` when ``target`` is the file ``project`` was loaded from (a
    project file or a scaled workbook) or the data file it was fitted on."""
    _ensure_not(
        target,
        project.loaded_from,
        "this is the file the parameters come from; choose another name so it stays as it is",
    )
    _ensure_not(
        target,
        project.source,
        "this is the data file the parameters were fitted on; choose another name so it "
        "stays as it is",
    )


def _ensure_not(target: Path, other: Path | None, message: str) -> None:
    try:
        ensure_not_source(target, other)
    except WriteError:
        raise WriteError(target, message) from None


def write_output(
    target: str | os.PathLike,
    data: Table | pd.DataFrame,
    headers: Sequence[str] | None,
    project: Project | None,
    *,
    source: str | os.PathLike | None = None,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> None:
    """Write ``data`` to ``target`` in the format its extension names.

    ``.xlsx`` with a fitted ``project`` is a scaled workbook (data, parameters sheet and the
    project embedded); otherwise the plain table. ``target`` is checked by
    :func:`check_target` first: neither ``source`` (the file the data was read from) nor
    the project's own files are ever overwritten.
    """
    if isinstance(data, Table):
        source = data.source if source is None else source
        headers = data.headers if headers is None else headers
        data = data.data
    target = check_target(target, source=source, project=project)
    _write_checked(target, data, headers, project, progress=progress, cancelled=cancelled)


def _write_checked(
    target: Path,
    data: pd.DataFrame,
    headers: Sequence[str] | None,
    project: Project | None,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> None:
    """:func:`write_output` to a target :func:`check_target` has passed."""
    if headers is None:
        headers = [str(c) for c in data.columns]
    if target.suffix.lower() == ".xlsx" and project is not None and project.plan is not None:
        write_scaled_workbook(
            target,
            data,
            list(headers),
            parameter_sheet(project.plan),
            project_to_json(project),
            progress=progress,
            cancelled=cancelled,
        )
    else:
        write_table(target, data, list(headers), progress=progress, cancelled=cancelled)


def export_scaled(
    table: Table,
    project: Project,
    target: str | os.PathLike,
    *,
    clip: bool = False,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> list[ColumnReport]:
    """Scale ``table`` with the project's parameters and write it to ``target``.

    The same job as :func:`apply_table`, named for the table the project was fitted on.
    """
    return apply_table(project, table, target, clip=clip, progress=progress, cancelled=cancelled)


def reading_for(project: Project, options: ReadOptions | None = None) -> ReadOptions:
    """How to read a new file for ``project``: the layout as given (else detected afresh),
    with the project's kind corrections unless ``options`` carries its own."""
    options = options or ReadOptions()
    if options.kinds or not project.read_options.kinds:
        return options
    return dataclasses.replace(options, kinds=project.read_options.kinds)


def _read(
    path: str | os.PathLike,
    options: ReadOptions | None,
    sheet: str | None,
    progress: Progress | None,
    cancelled: CancelCheck | None,
) -> Table:
    options = options or ReadOptions()
    if sheet is not None:
        options = dataclasses.replace(options, sheet=sheet)
    return read_table(path, options, progress=progress, cancelled=cancelled)


def _new_file(
    project: Project,
    data_path: str | os.PathLike,
    target: str | os.PathLike,
    options: ReadOptions | None,
    sheet: str | None,
    progress: Progress | None,
    cancelled: CancelCheck | None,
    checked: bool,
) -> tuple[Path, Table]:
    """The checked target and the new file read as the project reads it (the first half
    of the progress), for applying or restoring."""
    _fitted(project)
    target = Path(target) if checked else check_target(target, source=data_path, project=project)
    reading = reading_for(project, options)
    return target, _read(data_path, reading, sheet, _part(progress, 0.0, 0.5), cancelled)


def apply_to_file(
    project: Project,
    data_path: str | os.PathLike,
    target: str | os.PathLike,
    *,
    clip: bool = False,
    mapping: Mapping[str, str] | None = None,
    sheet: str | None = None,
    options: ReadOptions | None = None,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    checked: bool = False,
) -> list[ColumnReport]:
    """Read ``data_path`` and scale it with the saved parameters (see :func:`apply_table`).

    ``options`` says how to read the file (by default its layout is detected afresh, and
    the project's kind corrections are kept: :func:`reading_for`); ``sheet``, when given,
    picks the worksheet over ``options.sheet``. ``checked`` says the caller has already
    passed ``target`` through :func:`check_target` with this data file and project (the
    output is checked once, before anything is read).
    """
    target, table = _new_file(
        project, data_path, target, options, sheet, progress, cancelled, checked
    )
    return _apply_checked(
        project,
        table,
        target,
        clip=clip,
        mapping=mapping,
        progress=_part(progress, 0.5, 1.0),
        cancelled=cancelled,
    )


def apply_table(
    project: Project,
    table: Table,
    target: str | os.PathLike,
    *,
    clip: bool = False,
    mapping: Mapping[str, str] | None = None,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> list[ColumnReport]:
    """Scale a table read from a new file with the saved parameters (nothing is refitted)
    and write it to ``target``.

    Each fitted column is scaled in the column of the same name, unless ``mapping`` pairs
    it with another (file column -> fitted column, e.g. ``{"yield_2026": "yield_kg"}``),
    as for :func:`restore_table`. The reports count, per column, the values outside the
    range the parameters were fitted on; with ``clip`` those are moved to the nearest end
    of that range first.
    """
    _fitted(project)
    target = check_target(target, source=table.source, project=project)
    return _apply_checked(
        project, table, target, clip=clip, mapping=mapping, progress=progress, cancelled=cancelled
    )


def _apply_checked(
    project: Project,
    table: Table,
    target: Path,
    *,
    clip: bool,
    mapping: Mapping[str, str] | None,
    progress: Progress | None,
    cancelled: CancelCheck | None,
) -> list[ColumnReport]:
    """:func:`apply_table` to a target :func:`check_target` has passed."""
    plan = _fitted(project)
    mapping = _checked_pairs(table, plan, mapping or {})
    paired = set(mapping.values())
    columns = list(mapping) + [c for c in plan.columns if c not in paired]
    _check_fitted_columns_numeric(table, columns)
    data, reports = apply(blank_as_numbers(table, columns), plan, clip=clip, mapping=mapping)
    _write_checked(target, data, table.headers, project, progress=progress, cancelled=cancelled)
    return reports


def not_numbers(table: Table, label: str) -> str:
    """Why a column of ``table`` cannot be scaled or restored ("" when it can)."""
    kind = table.kinds.get(label)
    if kind is not None and kind not in (ColumnKind.NUMBER, ColumnKind.EMPTY):
        return (
            f"holds {KIND_WORDS[kind].word if kind in KIND_WORDS else kind} values in "
            f"{table.source.name}, not numbers"
        )
    return ""


class MissingFittedColumn(ColumnError):
    """A fitted column is not in the new file (each face adds how to pair it)."""


def _check_fitted_columns_numeric(table: Table, columns: Sequence[str]) -> None:
    for label in columns:
        if label not in table.data.columns:
            raise MissingFittedColumn(
                label, f"was fitted in the project but is not in {table.source.name}"
            )
        if why := not_numbers(table, label):
            raise ColumnError(label, f"{why}, so it cannot be scaled or restored")


def blank_as_numbers(table: Table, columns: Sequence[str]) -> pd.DataFrame:
    """The data with wholly blank columns among ``columns`` as float (all missing).

    A column that is blank in a new file reads as kind EMPTY; scaling or restoring it gives
    blanks rather than an error.
    """
    empty = [c for c in columns if table.kinds.get(c) == ColumnKind.EMPTY]
    if not empty:
        return table.data
    data = table.data.copy()
    for c in empty:
        data[c] = pd.Series(float("nan"), index=data.index, dtype="float64")
    return data


class NothingToRestore(ScalewrightError):
    """No column of the file is paired with a fitted column (the command line adds how to
    name the pairs; the window shows its mapping table)."""


def restore_file(
    project: Project,
    data_path: str | os.PathLike,
    target: str | os.PathLike,
    *,
    mapping: Mapping[str, str] | None = None,
    names: Mapping[str, str] | None = None,
    exact: bool = False,
    sheet: str | None = None,
    options: ReadOptions | None = None,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    checked: bool = False,
) -> list[ColumnReport]:
    """Read ``data_path`` and turn its scaled values back into original units (see
    :func:`restore_table`). ``options``, ``sheet`` and ``checked`` as for
    :func:`apply_to_file`."""
    target, table = _new_file(
        project, data_path, target, options, sheet, progress, cancelled, checked
    )
    return _restore_checked(
        project,
        table,
        target,
        mapping=mapping,
        names=names,
        exact=exact,
        progress=_part(progress, 0.5, 1.0),
        cancelled=cancelled,
    )


def restore_table(
    project: Project,
    table: Table,
    target: str | os.PathLike,
    *,
    mapping: Mapping[str, str] | None = None,
    names: Mapping[str, str] | None = None,
    exact: bool = False,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> list[ColumnReport]:
    """Turn scaled values in ``table`` back into original units and write ``target``.

    Columns are matched to fitted columns by :func:`auto_mapping`; ``mapping`` adds or
    overrides pairs (file column -> fitted column, e.g. ``{"predicted_yield": "yield_kg"}``).
    With ``exact``, only the pairs in ``mapping`` are restored (the window's mapping table,
    where the user may set a name match to "leave as is"). Columns not restored pass
    through untouched. ``names`` gives a restored column a new name in the output (file
    column -> new name, e.g. ``{"predicted_yield": "predicted_yield_kg"}``, now that it
    holds kilograms); without it each keeps its name. The output is a plain table.
    """
    _fitted(project)
    target = check_target(target, source=table.source, project=project)
    return _restore_checked(
        project,
        table,
        target,
        mapping=mapping,
        names=names,
        exact=exact,
        progress=progress,
        cancelled=cancelled,
    )


def _restore_checked(
    project: Project,
    table: Table,
    target: Path,
    *,
    mapping: Mapping[str, str] | None,
    names: Mapping[str, str] | None,
    exact: bool,
    progress: Progress | None,
    cancelled: CancelCheck | None,
) -> list[ColumnReport]:
    """:func:`restore_table` to a target :func:`check_target` has passed."""
    plan = _fitted(project)
    pairs = {} if exact else auto_mapping(list(table.data.columns), project)
    pairs.update(_checked_pairs(table, plan, mapping or {}))
    if not pairs:
        raise NothingToRestore(
            f"{table.source.name}: no column matches a fitted column of the project "
            f"(fitted: {', '.join(plan.columns) or 'none'})"
        )
    _check_fitted_columns_numeric(table, list(pairs))
    headers = renamed_headers(table, pairs, names or {})
    data, reports = restore(blank_as_numbers(table, pairs), plan, pairs)
    _write_checked(target, data, headers, None, progress=progress, cancelled=cancelled)
    return reports


def _checked_pairs(table: Table, plan: FittedPlan, mapping: Mapping[str, str]) -> dict[str, str]:
    """``mapping`` (file column -> fitted column) after checking both names exist."""
    for column, fitted in mapping.items():
        if column not in table.data.columns:
            raise ColumnError(column, f"is not in {table.source.name}")
        if fitted not in plan.columns:
            fitted_names = ", ".join(plan.columns) or "none"
            raise ColumnError(
                fitted, f"has no fitted parameters in the project (fitted: {fitted_names})"
            )
    return dict(mapping)


def renamed_headers(
    table: Table, restored: Mapping[str, str], names: Mapping[str, str]
) -> list[str]:
    """The output's header row: ``table.headers`` with each restored column named in
    ``names`` (file column -> new name) given its new name.

    Refused: renaming a column that is not restored, an empty name, and a name that
    another column of the output already has.
    """
    headers = list(table.headers)
    labels = [str(c) for c in table.data.columns]
    for column, new in names.items():
        if column not in labels:
            raise ColumnError(column, f"is not in {table.source.name}, so it cannot be renamed")
        if column not in restored:
            raise ColumnError(column, "is not restored, so it keeps its name")
        if not new.strip():
            raise ColumnError(column, "the new name is empty")
        headers[labels.index(column)] = new
    counts: dict[str, int] = {}
    for h in headers:
        counts[h] = counts.get(h, 0) + 1
    for column, new in names.items():
        if counts[new] > 1:
            raise ColumnError(
                column,
                f"cannot be renamed '{new}': the output already has a column of that name",
            )
    return headers


def load_project_or_workbook(path: str | os.PathLike) -> Project:
    """A project from a ``.swproj`` file or from a scaled workbook that embeds one."""
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix == SUFFIX:
        return load_project(path)  # which records loaded_from itself
    if suffix in (".xlsx", ".xlsm"):
        if not path.is_file():
            raise ReadError(path, "there is no such file")
        text = read_embedded_project(path)
        if text is None:
            raise ProjectError(
                path,
                "holds no Scalewright project (only scaled workbooks written by Scalewright do)",
            )
        project = project_from_json(text, f"{path} (embedded project)")
        project.loaded_from = path
        return project
    raise ProjectError(path, f"is not a project file ({SUFFIX}) or a scaled workbook (.xlsx)")


def _loose(name: str) -> str:
    return re.sub(r"[\s_]+", "", name).casefold()


def auto_mapping(columns: Sequence[str], project: Project) -> dict[str, str]:
    """Pair each data column with the fitted column of the same name.

    Exact names first; then names equal when case, spaces and underscores are ignored
    (``Yield KG`` -> ``yield_kg``), but only where that match is unambiguous.
    """
    fitted = list(_fitted(project).columns)
    loose: dict[str, list[str]] = {}
    for name in fitted:
        loose.setdefault(_loose(name), []).append(name)
    out: dict[str, str] = {}
    for column in columns:
        if column in fitted:
            out[column] = column
            continue
        candidates = loose.get(_loose(column), [])
        if len(candidates) == 1:
            out[column] = candidates[0]
    return out


# --------------------------------------------------------------------------- reporting


def _count(n: int, word: str) -> str:
    return f"{n:,} {word}{'' if n == 1 else 's'}"


# Warnings the count lines below already say in other words.
_COUNTED = ("fitted range", "infinite values were passed", "left blank")


def describe_report(r: ColumnReport, *, restoring: bool = False) -> list[str]:
    """How both faces show one column's report: a line of counts (values, out-of-range,
    clipping, blanks, infinities), then one ``  note:`` line per warning not counted."""
    name = r.column if r.column == r.fitted_as else f"{r.column} (as {r.fitted_as})"
    parts = [_count(r.n_values, "value") + (" restored" if restoring else "")]
    if not restoring:
        if r.n_outside:
            parts.append(
                f"{r.n_below:,} below and {r.n_above:,} above the fitted range"
                + (", clipped into it" if r.n_clipped else "")
            )
        else:
            parts.append("none outside the fitted range")
    if r.n_undefined:
        units = "original" if restoring else "scaled"
        parts.append(f"{r.n_undefined:,} left blank (no value in {units} units)")
    if r.n_infinite:
        parts.append(f"{_count(r.n_infinite, 'infinite value')} passed through")
    notes = [f"  note: {w}" for w in r.warnings if not any(c in w for c in _COUNTED)]
    return [f"{name}: " + "; ".join(parts), *notes]


def describe_reports(reports: Sequence[ColumnReport], *, restoring: bool = False) -> list[str]:
    """:func:`describe_report` for every column, one after the other."""
    return [line for r in reports for line in describe_report(r, restoring=restoring)]
