"""What a report says about a project, as plain data that the HTML and PDF faces both show.

:func:`build_report` gathers it once: where the parameters came from (the data file and its
fingerprint as stored in the project, the dates), the cautions, and for every fitted column
its method, options, parameters (rounded for reading, exact beside them), the formula to
reverse it with the fitted numbers in place, the fit summary, warnings and the before/after
histograms. The histograms need the data: when the data file is missing, changed or
unreadable the report is still complete apart from them, and says why they are absent.
No Qt here.
"""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .. import __version__
from ..engine import (
    FittedColumn,
    Method,
    ParamSet,
    column_values,
    format_number,
    get_method,
    histogram,
    mapped_edges,
)
from ..engine.histogram import bar_heights
from ..engine.number_text import number_text
from ..errors import Cancelled, ProjectError, ScalewrightError
from ..guide import shape_caution
from ..io import ReadOptions, Table, read_table
from ..io.detect import describe_read_options
from ..project import ALL_ROWS, UNSEEN_GROUPS, Project, locate_source, now_iso, options_text
from . import svg
from .formulas import reverse_formula

Progress = Callable[[float], None]
CancelCheck = Callable[[], bool]

BINS = 30  # as many bars as the window draws
SHOWN_DIGITS = 6  # significant digits of a rounded parameter
ROUNDING_NOTE = (
    f"Values are shown rounded to {SHOWN_DIGITS} significant digits for reading. The exact "
    "values (as stored in the project file) are in the last column, and the formulas to "
    "reverse use them: type those, not the rounded ones."
)


GENERAL_CAUTIONS = (
    "The parameters were fitted on the rows stated in this report. To scale new data, "
    "re-apply these same parameters (Apply in the window, or scalewright apply); never fit "
    "them again on the new data, or the model would receive values on another scale.",
    "Values clipped into the fitted range when the parameters were applied cannot be "
    "restored exactly: restoring gives the end of the range, not the value that was there.",
    shape_caution(),
    "Scaled results feed decisions: keep the project file with the model it served, so that "
    "its inputs can be made again and its answers turned back into original units.",
)


# =========================================================================== the parts


@dataclass(frozen=True)
class Figure:
    """One histogram: a title above it and the image as standalone SVG text."""

    title: str
    svg: str


@dataclass(frozen=True)
class ParameterRow:
    group: str  # which parameter set ("all fitted rows", "orchard = Hilltop", ...)
    name: str  # the parameter in plain words
    shown: str  # rounded for reading
    exact: str  # full precision, as stored


@dataclass(frozen=True)
class ColumnSection:
    label: str
    header: str  # the file's own header text for the column
    anchor: str  # an id for links within the page (column names may hold anything)
    method: str
    method_summary: str
    options: str
    values_fitted: int  # on all fitted rows (every group together)
    fit_summary: list[str]
    parameters: list[ParameterRow]
    number_lists: list[tuple[str, str]]  # (title, numbers at full precision) for list parameters
    formula: str  # the method's formula to reverse, in parameter names
    reverse: list[tuple[str, str]]  # (parameter set, formula with the fitted numbers)
    warnings: list[str]
    cautions: list[str]
    figures: list[Figure] = field(default_factory=list)
    figures_note: str = ""  # how to read the figures (fit rows, groups)
    figures_missing: str = ""  # why there are no figures ("" when there are)


@dataclass(frozen=True)
class Report:
    title: str
    facts: list[tuple[str, str]]  # (what, value) about the project and its data file
    cautions: list[str]
    columns: list[ColumnSection]
    left_as_is: list[str]
    figures_missing: str  # why no column has figures ("" when the data was read)
    rounding_note: str = ROUNDING_NOTE


# =========================================================================== words


def shown_value(value: Any) -> str:
    """A value rounded for reading (the engine's number format, at 6 digits)."""
    if isinstance(value, str):
        return value
    return format_number(value, SHOWN_DIGITS)


def exact_value(value: Any) -> str:
    """A value at full precision (Python's repr of a float, which reads back bit for bit)."""
    if isinstance(value, float):
        return number_text(value, "r")
    return shown_value(value)


def _when(stamp: str) -> str:
    """An ISO time stamp as 'YYYY-MM-DD HH:MM:SS UTC' (as stored when it does not parse)."""
    try:
        moment = dt.datetime.fromisoformat(stamp)
    except ValueError:
        return stamp
    if moment.tzinfo is not None:
        moment = moment.astimezone(dt.UTC)
        return moment.strftime("%Y-%m-%d %H:%M:%S UTC")
    return moment.strftime("%Y-%m-%d %H:%M:%S")


def _count(n: int, word: str) -> str:
    return f"{n:,} {word}{'' if n == 1 else 's'}"


# =========================================================================== building


def _rows_words(project: Project, rows: int | None = None) -> str:
    """Which rows were fitted: ``rows`` of them (the project's count unless given)."""
    plan = project.plan
    assert plan is not None
    rows = plan.n_rows if rows is None else rows
    where = plan.settings.fit_where
    if where is None:
        return f"all {_count(rows, 'row')} of the data file"
    return f"{_count(rows, 'row')}: the rows where {where[0]} is {where[1]}"


def _earlier_data(project: Project, label: str):
    """What the column was fitted on when that is not the data file the project records
    (saved parameters kept after the file changed), else None."""
    own = project.column_fitted_on.get(label)
    if own is None or (own.size, own.sha256) == (project.source_size, project.source_sha256):
        return None
    return own


def _facts(project: Project, project_path: Path | None, source_state: str, made: str):
    plan = project.plan
    assert plan is not None
    facts = [
        (
            "Project file",
            os.path.abspath(project_path) if project_path else "not saved (the window's choices)",
        ),
        ("Data file", str(project.source) if project.source else "none recorded"),
    ]
    if project.source_size is not None:
        facts.append(("Data file size", f"{project.source_size:,} bytes (as fitted)"))
    if project.source_sha256 is not None:
        facts.append(("Data file SHA-256", f"{project.source_sha256} (as fitted)"))
    facts.append(("Data file now", source_state))
    facts.append(("Read with", describe_read_options(project.read_options) or "detected settings"))
    facts.append(("Fitted on", _rows_words(project)))
    if plan.settings.group_by is not None:
        facts.append(
            (
                "Grouped by",
                f"{plan.settings.group_by}: one parameter set per value, plus one fitted on "
                "all rows for values not seen when fitting",
            )
        )
    facts.append(
        ("Project saved", f"{_when(project.modified)} (Scalewright {project.app_version})")
    )
    facts.append(("Project created", _when(project.created)))
    facts.append(("Report made", f"{_when(made)} (Scalewright {__version__})"))
    return facts


def _header_of(project: Project, label: str) -> str:
    try:
        return project.headers[project.columns.index(label)]
    except (ValueError, IndexError):
        return label


def _param_sets(project: Project, fc: FittedColumn) -> list[tuple[str, ParamSet]]:
    sets = [(ALL_ROWS if not fc.groups else UNSEEN_GROUPS, fc.pooled)]
    group_by = project.plan.settings.group_by if project.plan else None
    sets += [(f"{group_by} = {key}", ps) for key, ps in fc.groups.items()]
    return sets


def _fit_summary(project: Project, fc: FittedColumn) -> list[str]:
    fitted_on = project.fitted_on(fc.column)
    rows = fitted_on.rows if fitted_on is not None else None
    lines = [f"Fitted on {_count(fc.pooled.n, 'value')} from {_rows_words(project, rows)}."]
    earlier = _earlier_data(project, fc.column)
    if earlier is not None:
        size = f"{earlier.size:,} bytes" if earlier.size is not None else "size not recorded"
        lines.append(
            "These parameters were kept from an earlier version of the data file "
            f"({size}, SHA-256 {earlier.sha256 or 'not recorded'}), not the one named above."
        )
    left_out = []
    if fc.n_missing:
        left_out.append(_count(fc.n_missing, "blank cell"))
    if fc.n_infinite:
        left_out.append(_count(fc.n_infinite, "infinite value"))
    if left_out:
        lines.append("Left out of the fit: " + " and ".join(left_out) + " among those rows.")
    lines.append(
        f"Fitted range (original units): smallest {shown_value(fc.pooled.min)}, largest "
        f"{shown_value(fc.pooled.max)}. New values outside it are counted when the "
        "parameters are applied, and may be clipped into it."
    )
    if fc.groups:
        group_by = project.plan.settings.group_by if project.plan else "the group column"
        sizes = ", ".join(f"{key} ({ps.n:,})" for key, ps in fc.groups.items())
        lines.append(
            f"Fitted separately for each of the {len(fc.groups)} groups of {group_by} "
            f"(values per group: {sizes}); values of a group not seen when fitting use the "
            "parameters fitted on all rows."
        )
    return lines


def _column_cautions(fc: FittedColumn) -> list[str]:
    cautions = []
    if not get_method(fc.method).linear:
        cautions.append(
            "This method changes the shape of the distribution on purpose (compare the two "
            "histograms): equal steps in scaled units are not equal steps in original units."
        )
    if fc.method in ("boxcox", "yeojohnson"):
        cautions.append(
            "Some scaled values (far beyond the fitted range) have no original value; "
            "restoring leaves them blank."
        )
    if fc.method == "quantile":
        cautions.append(
            "New values beyond the fitted range all become the end ranks, so they cannot be "
            "told apart after scaling, nor restored exactly."
        )
    return cautions


def _parameters(
    method: Method, sets: Sequence[tuple[str, ParamSet]]
) -> tuple[list[ParameterRow], list[tuple[str, str]]]:
    """The parameter table in the method's own words, and every list of numbers in full
    (the quantile method's fitted quantiles): [(title, the numbers)]."""
    rows, lists = [], []
    for group, ps in sets:
        for spec in method.params_present(ps.params):
            if spec.name not in ps.params:
                continue
            value = ps.params[spec.name]
            shown = spec.says(value) if spec.says is not None else shown_value(value)
            if isinstance(value, list):
                exact = f"all {len(value):,} listed below"
                title = spec.label[:1].upper() + spec.label[1:]
                title += f" ({group}), exact, in order" if len(sets) > 1 else ", exact, in order"
                lists.append((title, ", ".join(number_text(float(v), "r") for v in value)))
            else:
                exact = exact_value(value)
            rows.append(ParameterRow(group, spec.label, shown, exact))
    return rows, lists


def _figures(
    project: Project, fc: FittedColumn, header: str, values: np.ndarray
) -> tuple[list[Figure], str]:
    h = histogram(values, BINS)
    scaled = mapped_edges(h.edges, fc)
    name = get_method(fc.method).name
    n = int(h.counts.sum())
    figures = [
        Figure(
            "Before: original units",
            svg.histogram_svg(
                h.edges,
                h.counts,
                colour=svg.ORIGINAL,
                axis_title=header,
                description=f"Histogram of {header} in original units ({n:,} values)",
            ),
        ),
        Figure(
            f"After: scaled with {name}",
            svg.histogram_svg(
                scaled,
                h.counts,
                colour=svg.SCALED,
                axis_title=f"{header}, scaled",
                description=f"Histogram of {header} scaled with {name}: the same bars on "
                "mapped edges",
            ),
        ),
    ]
    usable = np.isfinite(scaled[:-1]) & np.isfinite(scaled[1:])
    per_unit = bar_heights(scaled, h.counts, usable)[1]
    notes = [
        f"Every row's value, fitted or not ({n:,}, blanks left out), in {len(h.counts)} bars; the scaled side "
        "is the same bars on edges mapped through the transform"
        + (", as count per unit of width since they differ in width." if per_unit else ".")
    ]
    settings = project.plan.settings if project.plan else None
    if fc.groups and settings is not None:
        notes.append(
            f"Fitted separately for each group of '{settings.group_by}'. The scaled "
            "histogram uses the parameters fitted on all rows, so it is a guide only."
        )
    lost = ~usable & (h.counts > 0)
    if lost.any():
        notes.append(
            f"{_count(int(h.counts[lost].sum()), 'value')} in {_count(int(lost.sum()), 'bar')} "
            "lie outside what the method can map and are not drawn on the scaled side."
        )
    return figures, " ".join(notes)


def _column(
    project: Project, index: int, fc: FittedColumn, data: Any, data_problem: str
) -> ColumnSection:
    method = get_method(fc.method)
    header = _header_of(project, fc.column)
    sets = _param_sets(project, fc)
    parameters, number_lists = _parameters(method, sets)
    figures: list[Figure] = []
    note = ""
    missing = data_problem
    if not missing and _earlier_data(project, fc.column) is not None:
        missing = (
            "The figures could not be drawn: these parameters were fitted on an earlier "
            "version of the data file, whose values are not the ones read for this report."
        )
    if not missing:
        try:
            values = column_values(data, fc.column)
        except ScalewrightError as err:
            missing = f"The figures could not be drawn: {err}."
        else:
            figures, note = _figures(project, fc, header, values)
    return ColumnSection(
        label=fc.column,
        header=header,
        anchor=f"column-{index + 1}",
        method=method.name,
        method_summary=method.summary,
        options=options_text(fc.options) or "none",
        values_fitted=fc.pooled.n,
        fit_summary=_fit_summary(project, fc),
        parameters=parameters,
        number_lists=number_lists,
        formula=method.inverse_formula,
        reverse=[(group, reverse_formula(fc.method, ps.params)) for group, ps in sets],
        warnings=[str(w) for w in fc.warnings],
        cautions=_column_cautions(fc),
        figures=figures,
        figures_note=note,
        figures_missing=missing,
    )


def load_data(
    project: Project,
    project_path: Path | None,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> tuple[Any, str, str]:
    """(data or None, why the figures cannot be drawn or "", the data file's state in words).

    The data file is found as the command line finds it (:func:`project.locate_source`):
    at its saved path, else beside the project file. A changed file is not read: its
    values are not the ones the parameters were fitted on.
    """
    check = locate_source(project, project_path)
    if check.saved is None:
        return None, "no figures: the project does not name a data file", "none recorded"
    if not check.found:
        return (
            None,
            f"The figures could not be drawn: {check.message}.",
            "not found (nor beside the project file)",
        )
    state = "found, unchanged (same size and SHA-256)"
    if check.moved:
        state = f"found beside the project file, at {check.path}; unchanged"
    if check.changed:
        return (
            None,
            f"The figures could not be drawn: the data file {check.path} has changed since the "
            "parameters were fitted (its size or SHA-256 differs), so its values are not the "
            "ones the parameters describe.",
            f"{check.path}: changed since the parameters were fitted",
        )
    if project.source_size is None and project.source_sha256 is None:
        state = "found (the project holds no fingerprint to compare)"
    try:
        table = read_table(
            check.path,
            project.read_options or ReadOptions(),
            progress=progress,
            cancelled=cancelled,
        )
    except Cancelled:
        raise
    except ScalewrightError as err:
        return (
            None,
            f"The figures could not be drawn: the data file could not be read ({err}).",
            state,
        )
    return table.data, "", state


def build_report(
    project: Project,
    project_path: str | os.PathLike | None = None,
    *,
    table: Table | None = None,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> Report:
    """Everything a report shows about a fitted ``project``.

    ``table``, when given (the window's open data), is used for the histograms instead of
    reading the data file again, unless its fingerprint differs from the project's.
    """
    path = Path(project_path) if project_path is not None else None
    if project.plan is None:
        where = path or project.loaded_from or "project"
        raise ProjectError(where, "has no fitted parameters yet, so there is nothing to report")
    if table is not None:
        data, problem, state = table.data, "", "open in the window"
        if (
            project.source_sha256 is not None
            and table.sha256 is not None
            and table.sha256 != project.source_sha256
        ):
            data = None
            problem = (
                "The figures could not be drawn: the open data file has changed since the "
                "parameters were fitted, so its values are not the ones they describe."
            )
            state = "changed since the parameters were fitted"
    else:
        data, problem, state = load_data(project, path, progress=progress, cancelled=cancelled)
    made = now_iso()
    plan = project.plan
    columns = [_column(project, i, fc, data, problem) for i, fc in enumerate(plan.columns.values())]
    left = [
        _header_of(project, label)
        for label, choice in project.choices.items()
        if choice.method == "none" and label not in plan.columns
    ]
    name = project.source.name if project.source is not None else "a table"
    return Report(
        title=f"Scaling report: {name}",
        facts=_facts(project, path, state, made),
        cautions=list(GENERAL_CAUTIONS),
        columns=columns,
        left_as_is=left,
        figures_missing=problem,
    )
