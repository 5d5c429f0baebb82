"""The loader for format version 1: one function per section of the document."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from ..engine import ColumnChoice, FitSettings, FittedColumn, FittedPlan, Method, get_method
from ..errors import ScalewrightError
from ..io import ReadOptions
from .document import FittedOn, Project
from .fields import (
    SHA256,
    Invalid,
    get,
    list_of_text,
    number,
    obj,
    only,
    text,
    timestamp,
    whole,
    yes_no,
)
from .params import param_set

TOP = {
    "format",
    "version",
    "app_version",
    "created",
    "modified",
    "source",
    "read_options",
    "table",
    "fit",
    "columns",
}
PARAM_SET = {"params", "n", "min", "max"}
COLUMN = {
    "method",
    "options",
    "n_missing",
    "n_infinite",
    "groups",
    "warnings",
    "fitted_on",  # optional: only when the column was fitted on other data
} | PARAM_SET


def load(doc: dict[str, Any]) -> tuple[Project, str | None]:
    """A version-1 document as a Project, and the source path stored relative to it."""
    only(doc, TOP, "")
    app_version = text(get(doc, "app_version", ""), "app_version")
    created = timestamp(get(doc, "created", ""), "created")
    modified = timestamp(get(doc, "modified", ""), "modified")
    source, relative, size, sha = _source(get(doc, "source", ""))
    read_options = _read_options(obj(get(doc, "read_options", ""), "read_options"))
    columns, headers = _table(obj(get(doc, "table", ""), "table"))
    for label in read_options.kinds:  # kind corrections (absent in older files: none)
        if label not in columns:
            raise Invalid(f"read_options.kinds.{label}", "is not a column of the table")
    settings, rows_fitted = _fit(obj(get(doc, "fit", ""), "fit"), set(columns))
    fitted = rows_fitted is not None
    choices: dict[str, ColumnChoice] = {}
    plan_columns: dict[str, FittedColumn] = {}
    column_fitted_on: dict[str, FittedOn] = {}
    for label, raw in obj(get(doc, "columns", ""), "columns").items():
        choice, fc = _column(label, raw, set(columns), settings, fitted)
        choices[label] = choice
        if fc is not None:
            plan_columns[label] = fc
            if "fitted_on" in raw:
                column_fitted_on[label] = _fitted_on(raw["fitted_on"], f"columns.{label}")
    plan = FittedPlan(plan_columns, settings, rows_fitted) if fitted else None  # type: ignore[arg-type]
    project = Project(
        source=source,
        source_size=size,
        source_sha256=sha,
        read_options=read_options,
        columns=columns,
        headers=headers,
        choices=choices,
        settings=settings,
        plan=plan,
        created=created,
        modified=modified,
        app_version=app_version,  # type: ignore[arg-type]
        column_fitted_on=column_fitted_on,
    )
    return project, relative


def _fitted_on(raw: Any, column_path: str) -> FittedOn:
    path = f"{column_path}.fitted_on"
    d = obj(raw, path)
    only(d, {"size", "sha256", "rows"}, path)
    size = whole(get(d, "size", path), f"{path}.size", minimum=0, nullable=True)
    sha = text(get(d, "sha256", path), f"{path}.sha256", nullable=True)
    if sha is not None and not SHA256.fullmatch(sha):
        raise Invalid(f"{path}.sha256", "must be 64 lowercase hexadecimal digits")
    rows = whole(get(d, "rows", path), f"{path}.rows", minimum=0)
    return FittedOn(size, sha, rows)  # type: ignore[arg-type]


def _source(raw: Any) -> tuple[Path | None, str | None, int | None, str | None]:
    if raw is None:
        return None, None, None, None
    s = obj(raw, "source")
    only(s, {"relative", "absolute", "size", "sha256"}, "source")
    relative = text(get(s, "relative", "source"), "source.relative", nullable=True)
    absolute = text(get(s, "absolute", "source"), "source.absolute", nonempty=True)
    size = whole(get(s, "size", "source"), "source.size", minimum=0, nullable=True)
    sha = text(get(s, "sha256", "source"), "source.sha256", nullable=True)
    if sha is not None and not SHA256.fullmatch(sha):
        raise Invalid("source.sha256", "must be 64 lowercase hexadecimal digits")
    return Path(absolute), relative, size, sha  # type: ignore[arg-type]


def _read_options(raw: dict[str, Any]) -> ReadOptions:
    try:
        return ReadOptions.from_dict(raw)
    except (ValueError, TypeError) as err:
        field_name, sep, message = str(err).partition(": ")
        if sep and field_name.isidentifier():
            raise Invalid(f"read_options.{field_name}", message) from None
        raise Invalid("read_options", str(err)) from None


def _table(table: dict[str, Any]) -> tuple[list[str], list[str]]:
    only(table, {"columns", "headers"}, "table")
    columns = list_of_text(get(table, "columns", "table"), "table.columns")
    headers = list_of_text(get(table, "headers", "table"), "table.headers")
    if len(headers) != len(columns):
        raise Invalid("table.headers", f"has {len(headers)} names for {len(columns)} columns")
    seen: set[str] = set()
    for i, c in enumerate(columns):
        if c in seen:
            raise Invalid(f"table.columns[{i}]", f"'{c}' appears twice")
        seen.add(c)
    return columns, headers


def _fit(fit_doc: dict[str, Any], labels: set[str]) -> tuple[FitSettings, int | None]:
    only(fit_doc, {"fit_where", "group_by", "rows_fitted"}, "fit")
    raw_where = get(fit_doc, "fit_where", "fit")
    fit_where = None
    if raw_where is not None:
        w = obj(raw_where, "fit.fit_where")
        only(w, {"column", "value"}, "fit.fit_where")
        w_column = text(get(w, "column", "fit.fit_where"), "fit.fit_where.column")
        w_value = text(get(w, "value", "fit.fit_where"), "fit.fit_where.value")
        if w_column not in labels:
            raise Invalid("fit.fit_where.column", f"'{w_column}' is not a column of the table")
        fit_where = (w_column, w_value)
    group_by = text(get(fit_doc, "group_by", "fit"), "fit.group_by", nullable=True)
    if group_by is not None and group_by not in labels:
        raise Invalid("fit.group_by", f"'{group_by}' is not a column of the table")
    rows_fitted = whole(
        get(fit_doc, "rows_fitted", "fit"), "fit.rows_fitted", minimum=0, nullable=True
    )
    return FitSettings(fit_where, group_by), rows_fitted  # type: ignore[arg-type]


def _method(c: dict[str, Any], path: str) -> Method:
    method_id = text(get(c, "method", path), f"{path}.method")
    try:
        method = get_method(method_id)  # type: ignore[arg-type]
    except ScalewrightError as err:
        raise Invalid(f"{path}.method", str(err)) from None
    if method.id != method_id:
        raise Invalid(f"{path}.method", f"must be written '{method.id}'")
    return method


def _options(c: dict[str, Any], path: str, method: Method) -> dict[str, Any]:
    raw_opts = obj(get(c, "options", path), f"{path}.options")
    try:
        options = method.options(raw_opts)
    except ScalewrightError as err:
        raise Invalid(f"{path}.options", str(err)) from None
    readers = {"number": number, "yes/no": yes_no}
    for key, value in raw_opts.items():  # options() accepts "yes" for True; files store JSON
        spec_kind = next(s.kind for s in method.option_specs if s.name == key)
        readers.get(spec_kind, text)(value, f"{path}.options.{key}")
    return options


def _column(
    label: str, raw: Any, labels: set[str], settings: FitSettings, fitted: bool
) -> tuple[ColumnChoice, FittedColumn | None]:
    path = f"columns.{label}"
    if label not in labels:
        raise Invalid(path, "is not a column of the table (see table.columns)")
    c = obj(raw, path)
    method = _method(c, path)
    options = _options(c, path, method)
    choice = ColumnChoice(method.id, options)
    if method.id == "none" or not fitted:
        extra = sorted(set(c) - {"method", "options"}, key=lambda k: (k != "params", k))
        if extra:
            why = (
                "a column left as is has no fitted values"
                if method.id == "none"
                else "the project is not fitted (fit.rows_fitted is null)"
            )
            raise Invalid(f"{path}.{extra[0]}", f"must not be there: {why}")
        return choice, None
    if "params" not in c:
        raise Invalid(f"{path}.params", "is missing (the project was fitted)")
    if label == settings.group_by:
        raise Invalid(path, "is the grouping column, so it cannot be scaled too")
    only(c, COLUMN, path)
    pooled = param_set({k: c.get(k) for k in PARAM_SET if k in c}, path, method, options, PARAM_SET)
    n_missing = whole(get(c, "n_missing", path), f"{path}.n_missing", minimum=0)
    n_infinite = whole(get(c, "n_infinite", path), f"{path}.n_infinite", minimum=0)
    raw_groups = obj(get(c, "groups", path), f"{path}.groups")
    if raw_groups and settings.group_by is None:
        raise Invalid(f"{path}.groups", "must be empty: the fit has no group_by column")
    groups = {
        key: param_set(g, f"{path}.groups.{key}", method, options, PARAM_SET)
        for key, g in raw_groups.items()
    }
    warnings = list_of_text(get(c, "warnings", path), f"{path}.warnings")
    fc = FittedColumn(
        column=label,
        method=method.id,
        options=dict(options),
        pooled=pooled,
        groups=groups,
        n_missing=n_missing,  # type: ignore[arg-type]
        n_infinite=n_infinite,  # type: ignore[arg-type]
        warnings=tuple(warnings),
    )
    return choice, fc
