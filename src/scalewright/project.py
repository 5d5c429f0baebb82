"""The project document (``.swproj``): what was chosen, what was fitted, and on which file.

A project is UTF-8 JSON (see ``docs/project-file.md``). Floats are written with Python's
``repr`` (which is what :mod:`json` does), so every fitted parameter loads back bit for bit;
non-finite numbers are refused both ways. Loading validates every field and fails with a
:class:`ProjectError` whose message names the field, for example
``columns.yield_kg.params.sd: must be a number``. No pickle, no eval.

Format versions: ``_LOADERS`` has one loader per version the program can build a
:class:`Project` from, and ``_MIGRATIONS`` upgrades an older document one version at a time
(``n -> n + 1``), so a future version adds one migration and one loader. Every version has
committed fixture files in ``tests/project/fixtures`` that must keep loading.
"""

from __future__ import annotations

import datetime as dt
import json
import math
import os
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from . import __version__
from .engine import (
    ColumnChoice,
    FitError,
    FitSettings,
    FittedColumn,
    FittedPlan,
    ParamSet,
    get_method,
    log_shift,
    robust_scale,
)
from .errors import ProjectError, ReadError, ScalewrightError, WriteError
from .io import ReadOptions, atomic_path, ensure_not_source, fingerprint

FORMAT_NAME = "scalewright-project"
FORMAT_VERSION = 1
SUFFIX = ".swproj"
# A project holds parameters, not data: anything this large is not one of ours.
MAX_PROJECT_BYTES = 200 * 1024 * 1024


def now_iso() -> str:
    """The current time in UTC as ISO 8601 text, to the second."""
    return dt.datetime.now(dt.UTC).isoformat(timespec="seconds")


@dataclass
class Project:
    """Everything needed to re-apply or reverse a scaling, without the data itself."""

    source: Path | None = None  # absolute path of the data file the parameters were fitted on
    source_size: int | None = None
    source_sha256: str | None = None
    read_options: ReadOptions = field(default_factory=ReadOptions)
    columns: list[str] = field(default_factory=list)  # table labels in order
    headers: list[str] = field(default_factory=list)  # the file's own header text
    choices: dict[str, ColumnChoice] = field(default_factory=dict)  # label -> normalized choice
    settings: FitSettings = field(default_factory=FitSettings)
    plan: FittedPlan | None = None  # None until fitted
    created: str = field(default_factory=now_iso)
    modified: str = field(default_factory=now_iso)
    app_version: str = __version__
    # The file this project was loaded from (a .swproj or a scaled workbook), so that no
    # output is written over it. Not saved, and not part of what makes two projects equal.
    loaded_from: Path | None = field(default=None, compare=False)


# =========================================================================== writing


def _finite(value: Any, where: str) -> float:
    number = float(value)
    if not math.isfinite(number):
        raise ProjectError(where, "is not a finite number, so it cannot be saved")
    return number


def _plain(value: Any, where: str) -> Any:
    """A parameter or option value as a JSON-ready Python value (numbers kept exact)."""
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if hasattr(value, "dtype") and getattr(value.dtype, "kind", "") == "b":
        return bool(value)
    if isinstance(value, int) or (hasattr(value, "dtype") and value.dtype.kind in "iu"):
        return int(value)
    return _finite(value, where)


def _param_set_json(ps: ParamSet, where: str) -> dict[str, Any]:
    return {
        "params": {k: _plain(v, f"{where}.params.{k}") for k, v in ps.params.items()},
        "n": int(ps.n),
        "min": _finite(ps.min, f"{where}.min"),
        "max": _finite(ps.max, f"{where}.max"),
    }


def _column_order(project: Project) -> list[str]:
    labels = list(project.choices)
    if project.plan is not None:
        labels += [c for c in project.plan.columns if c not in project.choices]
    position = {c: i for i, c in enumerate(project.columns)}
    return sorted(labels, key=lambda c: (position.get(c, len(position)), labels.index(c)))


def project_to_dict(project: Project, project_path: Path | None = None) -> dict[str, Any]:
    """The JSON document as plain Python objects (see :func:`project_to_json`)."""
    source = None
    if project.source is not None:
        absolute = Path(os.path.abspath(project.source))
        relative = None
        if project_path is not None:
            try:
                folder = os.path.abspath(Path(project_path).parent)
                relative = Path(os.path.relpath(absolute, folder)).as_posix()
            except ValueError:  # another drive on Windows: no relative path exists
                relative = None
        source = {
            "relative": relative,
            "absolute": str(absolute),
            "size": project.source_size,
            "sha256": project.source_sha256,
        }
    plan = project.plan
    settings = plan.settings if plan is not None else project.settings
    fit_where = None
    if settings.fit_where is not None:
        fit_where = {"column": settings.fit_where[0], "value": settings.fit_where[1]}
    columns: dict[str, Any] = {}
    for label in _column_order(project):
        where = f"columns.{label}"
        fitted = plan.columns.get(label) if plan is not None else None
        choice = project.choices.get(label)
        if choice is None:
            assert fitted is not None
            choice = ColumnChoice(fitted.method, fitted.options)
        try:
            choice = choice.normalized()
        except ScalewrightError as err:
            raise ProjectError(where, str(err)) from None
        if fitted is not None and (
            fitted.method != choice.method or dict(fitted.options) != dict(choice.options)
        ):
            raise ProjectError(
                where, "the method or its options changed after fitting; fit again before saving"
            )
        if fitted is None and plan is not None and choice.method != "none":
            raise ProjectError(
                where, "has a method but no fitted parameters; fit again before saving"
            )
        entry: dict[str, Any] = {
            "method": choice.method,
            "options": {k: _plain(v, f"{where}.options.{k}") for k, v in choice.options.items()},
        }
        if fitted is not None:
            entry.update(_param_set_json(fitted.pooled, where))
            entry["n_missing"] = int(fitted.n_missing)
            entry["n_infinite"] = int(fitted.n_infinite)
            entry["groups"] = {
                str(key): _param_set_json(ps, f"{where}.groups.{key}")
                for key, ps in fitted.groups.items()
            }
            entry["warnings"] = [str(w) for w in fitted.warnings]
        columns[label] = entry
    return {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "app_version": project.app_version,
        "created": project.created,
        "modified": project.modified,
        "source": source,
        "read_options": project.read_options.to_dict(),
        "table": {"columns": list(project.columns), "headers": list(project.headers)},
        "fit": {
            "fit_where": fit_where,
            "group_by": settings.group_by,
            "rows_fitted": int(plan.n_rows) if plan is not None else None,
        },
        "columns": columns,
    }


def project_to_json(project: Project, project_path: Path | None = None) -> str:
    """The project as indented UTF-8 JSON text; the source is stored relative to
    ``project_path``'s folder (when given) and as an absolute path."""
    doc = project_to_dict(project, project_path)
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def save_project(project: Project, path: str | os.PathLike) -> None:
    """Write the project to ``path`` atomically, updating ``project.modified``.

    The text goes to a temporary file in the same folder which is then renamed over the
    target, so a failed save leaves any earlier file untouched. The data source is never
    overwritten, and the name must end in ``.swproj``.
    """
    path = Path(path)
    if path.suffix.lower() != SUFFIX:
        raise WriteError(path, f"a project file name must end in {SUFFIX}")
    if project.source is not None:
        ensure_not_source(path, project.source)
    modified_before = project.modified
    project.modified = now_iso()
    try:
        text = project_to_json(project, path)
    except BaseException:
        project.modified = modified_before
        raise
    with atomic_path(path) as tmp, open(tmp, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(text)
        fh.flush()
        os.fsync(fh.fileno())


# =========================================================================== reading


class _Invalid(Exception):
    """A field failed validation: ``path`` is the dotted field name."""

    def __init__(self, path: str, message: str) -> None:
        super().__init__(message)
        self.path = path
        self.message = message


def _reject_constant(name: str) -> float:
    raise ValueError(f"'{name}' is not a number a project file may contain")


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            raise ValueError(f"the key '{key}' appears twice in one object")
        out[key] = value
    return out


def _parse(text: str, where: str) -> Any:
    try:
        return json.loads(text, parse_constant=_reject_constant, object_pairs_hook=_no_duplicates)
    except json.JSONDecodeError as err:
        raise ProjectError(
            where,
            f"is not a Scalewright project file (not valid JSON: {err.msg} at line "
            f"{err.lineno}, column {err.colno})",
        ) from None
    except (ValueError, RecursionError) as err:
        raise ProjectError(where, f"is not a Scalewright project file ({err})") from None


def project_from_json(text: str, where: str = "project") -> Project:
    """Build a Project from JSON text, validating every field.

    ``where`` names the file in messages: ``"plan.swproj: columns.a.params.sd: must be a
    number"``. The source path is taken as stored (absolute); :func:`load_project` resolves
    the relative path against the project's folder.
    """
    doc = _parse(text, where)
    project, _relative = _from_document(doc, where)
    return project


def _from_document(doc: Any, where: str) -> tuple[Project, str | None]:
    if not isinstance(doc, dict):
        raise ProjectError(where, "is not a Scalewright project file (not a JSON object)")
    name = doc.get("format")
    if name != FORMAT_NAME:
        if name is None:
            raise ProjectError(where, "is not a Scalewright project file (no 'format' field)")
        raise ProjectError(
            f"{where}: format", f"is {name!r}, not {FORMAT_NAME!r}: not a Scalewright project file"
        )
    version = doc.get("version")
    if isinstance(version, bool) or not isinstance(version, int):
        raise ProjectError(f"{where}: version", "must be a whole number")
    if version > FORMAT_VERSION:
        raise ProjectError(
            where,
            f"made by a newer Scalewright (format version {version}); "
            f"this one reads up to {FORMAT_VERSION}",
        )
    if version < 1 or (version not in _LOADERS and version not in _MIGRATIONS):
        raise ProjectError(f"{where}: version", f"{version} is not a known format version")
    try:
        while version not in _LOADERS:
            doc = _MIGRATIONS[version](doc)
            version += 1
        return _LOADERS[version](doc)
    except _Invalid as err:
        raise ProjectError(f"{where}: {err.path}" if where else err.path, err.message) from None


# --------------------------------------------------------------------------- field checks


def _obj(d: Any, path: str) -> dict[str, Any]:
    if not isinstance(d, dict):
        raise _Invalid(path, "must be an object")
    return d


def _get(d: dict[str, Any], key: str, path: str) -> Any:
    if key not in d:
        raise _Invalid(f"{path}.{key}" if path else key, "is missing")
    return d[key]


def _only(d: dict[str, Any], keys: set[str], path: str) -> None:
    unknown = sorted(set(d) - keys)
    if unknown:
        where = f"{path}.{unknown[0]}" if path else unknown[0]
        raise _Invalid(where, "is not a field of this format version")


def _str(v: Any, path: str, *, nullable: bool = False, nonempty: bool = False) -> str | None:
    if v is None and nullable:
        return None
    if not isinstance(v, str):
        raise _Invalid(path, "must be text" + (" or null" if nullable else ""))
    if nonempty and not v.strip():
        raise _Invalid(path, "must not be empty")
    return v


def _int(v: Any, path: str, *, minimum: int | None = None, nullable: bool = False) -> int | None:
    if v is None and nullable:
        return None
    if isinstance(v, bool) or not isinstance(v, int):
        raise _Invalid(path, "must be a whole number" + (" or null" if nullable else ""))
    if minimum is not None and v < minimum:
        raise _Invalid(path, f"must be {minimum} or more, not {v}")
    return v


def _num(v: Any, path: str) -> float:
    if isinstance(v, bool) or not isinstance(v, int | float):
        raise _Invalid(path, "must be a number")
    try:
        number = float(v)
    except OverflowError:
        raise _Invalid(path, "is too large for a number") from None
    if not math.isfinite(number):
        raise _Invalid(path, "must be a finite number")
    return number


def _bool(v: Any, path: str) -> bool:
    if not isinstance(v, bool):
        raise _Invalid(path, "must be true or false")
    return v


def _list_of_str(v: Any, path: str) -> list[str]:
    if not isinstance(v, list):
        raise _Invalid(path, "must be a list")
    return [_str(item, f"{path}[{i}]") for i, item in enumerate(v)]  # type: ignore[misc]


def _timestamp(v: Any, path: str) -> str:
    text = _str(v, path)
    try:
        dt.datetime.fromisoformat(text)  # type: ignore[arg-type]
    except ValueError:
        raise _Invalid(path, f"'{text}' is not a date and time (ISO 8601)") from None
    return text  # type: ignore[return-value]


_SHA256 = re.compile(r"[0-9a-f]{64}")


# --------------------------------------------------------------------------- parameters

# Every parameter each method's forward and inverse read (see engine/methods.py), with its
# type; the power methods add mean, sd and ddof when standardized.
_PARAM_KINDS: dict[str, dict[str, str]] = {
    "none": {},
    "minmax": {"min": "number", "max": "number", "low": "number", "high": "number"},
    "zscore": {"mean": "number", "sd": "number", "ddof": "int"},
    "decimal": {"j": "int"},
    "robust": {
        "median": "number",
        "q1": "number",
        "q3": "number",
        "scale": "number",
        "quantile_rule": "text",
    },
    "maxabs": {"maxabs": "number"},
    "log": {"base": "text", "shift": "number"},
    "boxcox": {"lambda": "number", "standardize": "bool"},
    "yeojohnson": {"lambda": "number", "standardize": "bool"},
}
_STANDARDIZED = {"mean": "number", "sd": "number", "ddof": "int"}
# 10.0 ** |j| must be a finite double for decimal scaling to be reversible.
_DECIMAL_J = (-308, 308)


def _decimal_shift(value: float, j: int) -> float:
    """``value / 10**j`` exactly as the decimal method computes it."""
    return float(get_method("decimal").forward(np.array([value]), {"j": j})[0])


def param_kinds(method: str, params: Mapping[str, Any] | None = None) -> dict[str, str]:
    """The parameters ``method`` needs (name -> "number", "int", "text" or "bool")."""
    kinds = dict(_PARAM_KINDS[method])
    if method in ("boxcox", "yeojohnson") and params is not None and params.get("standardize"):
        kinds.update(_STANDARDIZED)
    return kinds


def _near(a: float, lo: float, hi: float) -> bool:
    """``a`` lies in [lo, hi], allowing for the rounding of a mean."""
    slack = 1e-9 * max(abs(lo), abs(hi), hi - lo, 1e-300)
    return lo - slack <= a <= hi + slack


def _param_set(d: Any, path: str, method: str, options: dict[str, Any], keys: set[str]) -> ParamSet:
    d = _obj(d, path)
    _only(d, keys, path)
    n = _int(_get(d, "n", path), f"{path}.n", minimum=1)
    lo = _num(_get(d, "min", path), f"{path}.min")
    hi = _num(_get(d, "max", path), f"{path}.max")
    if lo > hi:
        raise _Invalid(f"{path}.min", f"is larger than max ({lo!r} > {hi!r})")
    raw = _obj(_get(d, "params", path), f"{path}.params")
    params = _params(raw, f"{path}.params", method, options, lo, hi)
    return ParamSet(params, n, lo, hi)  # type: ignore[arg-type]


def _params(
    raw: dict[str, Any], path: str, method: str, options: dict[str, Any], lo: float, hi: float
) -> dict[str, Any]:
    if method in ("boxcox", "yeojohnson") and "standardize" in raw:
        _bool(raw["standardize"], f"{path}.standardize")
    kinds = param_kinds(method, raw)
    unknown = sorted(set(raw) - set(kinds))
    if unknown:
        hint = ""
        if method in ("boxcox", "yeojohnson") and unknown[0] in _STANDARDIZED:
            hint = " when standardize is false"
        raise _Invalid(f"{path}.{unknown[0]}", f"is not a parameter of {method}{hint}")
    params: dict[str, Any] = {}
    for key, kind in kinds.items():
        if key not in raw:
            raise _Invalid(f"{path}.{key}", f"is missing ({method} needs {', '.join(kinds)})")
        value = raw[key]
        where = f"{path}.{key}"
        if kind == "number":
            params[key] = _num(value, where)
        elif kind == "int":
            params[key] = _int(value, where)
        elif kind == "bool":
            params[key] = _bool(value, where)
        else:
            params[key] = _str(value, where)
    _check_params(method, params, options, path, lo, hi)
    return params


def _check_params(
    method: str, p: dict[str, Any], options: dict[str, Any], path: str, lo: float, hi: float
) -> None:
    """Relations the fitted values must satisfy: catches impossible or edited values."""

    def bad(key: str, message: str) -> None:
        raise _Invalid(f"{path}.{key}", message)

    if method == "minmax":
        if p["low"] != options["low"]:
            bad("low", f"does not match the option low ({options['low']!r})")
        if p["high"] != options["high"]:
            bad("high", f"does not match the option high ({options['high']!r})")
        if p["min"] != lo:
            bad("min", f"does not match the smallest fitted value ({lo!r})")
        if p["max"] != hi:
            bad("max", f"does not match the largest fitted value ({hi!r})")
    elif method == "zscore":
        if p["ddof"] not in (0, 1):
            bad("ddof", "must be 0 (population sd) or 1 (sample sd)")
        if p["ddof"] != (1 if options["sd"] == "sample" else 0):
            bad("ddof", f"does not match the option sd ({options['sd']})")
        if p["sd"] < 0:
            bad("sd", "must be 0 or more")
        if not _near(p["mean"], lo, hi):
            bad("mean", f"lies outside the fitted range [{lo!r}, {hi!r}]")
    elif method == "decimal":
        j = p["j"]
        if not _DECIMAL_J[0] <= j <= _DECIMAL_J[1]:
            bad("j", f"must be between {_DECIMAL_J[0]} and {_DECIMAL_J[1]}")
        biggest = max(abs(lo), abs(hi))
        if biggest == 0:
            if j != 0:
                bad("j", "must be 0 when every fitted value is 0")
        elif not (_decimal_shift(biggest, j) < 1 <= _decimal_shift(biggest, j - 1)):
            bad("j", f"is not the power of ten for the fitted range [{lo!r}, {hi!r}]")
    elif method == "robust":
        q1, median, q3 = p["q1"], p["median"], p["q3"]
        if not lo <= q1 <= median <= q3 <= hi:
            bad("median", "the quartiles must satisfy min <= q1 <= median <= q3 <= max")
        expected = robust_scale(q1, median, q3, lo, hi)
        if p["scale"] != expected:
            if expected == q3 - q1:
                bad("scale", f"must be q3 - q1 ({expected!r})")
            why = "q1 equals q3" if not q3 > q1 else "the IQR is too narrow to divide by"
            bad("scale", f"must be 1 ({why})")
    elif method == "maxabs":
        biggest = max(abs(lo), abs(hi))
        expected = biggest if biggest > 0 else 1.0
        if p["maxabs"] != expected:
            bad("maxabs", f"must be the largest absolute fitted value ({expected!r})")
    elif method == "log":
        if p["base"] != options["base"]:
            bad("base", f"does not match the option base ({options['base']})")
        shift = p["shift"]
        try:
            fit_shift: float | None = log_shift(lo)
        except FitError:
            fit_shift = None
        if shift != 0.0 and shift != fit_shift:
            if fit_shift is None:
                bad("shift", "must be 0 (no shift can lift the smallest fitted value above 0)")
            elif fit_shift == 1.0 - lo:
                bad("shift", f"must be 0 or 1 - min ({fit_shift!r})")
            else:
                bad("shift", f"must be 0 or 1 - min made just large enough ({fit_shift!r})")
        if not lo + shift > 0:
            bad("shift", "must make every fitted value above 0")
    elif method in ("boxcox", "yeojohnson"):
        if p["standardize"] != options["standardize"]:
            bad("standardize", "does not match the option standardize")
        if method == "boxcox" and not lo > 0:
            raise _Invalid(f"{path[: -len('.params')]}.min", "Box-Cox needs values above 0")
        if p["standardize"]:
            if not p["sd"] > 0:
                bad("sd", "must be above 0")
            if p["ddof"] != 1:
                bad("ddof", "must be 1 (sample sd)")


# --------------------------------------------------------------------------- version 1

_V1_TOP = {
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
_V1_PARAM_SET = {"params", "n", "min", "max"}
_V1_COLUMN = {"method", "options", "n_missing", "n_infinite", "groups", "warnings"} | _V1_PARAM_SET


def _load_v1(doc: dict[str, Any]) -> tuple[Project, str | None]:
    _only(doc, _V1_TOP, "")
    app_version = _str(_get(doc, "app_version", ""), "app_version")
    created = _timestamp(_get(doc, "created", ""), "created")
    modified = _timestamp(_get(doc, "modified", ""), "modified")

    source = relative = size = sha = None
    raw_source = _get(doc, "source", "")
    if raw_source is not None:
        s = _obj(raw_source, "source")
        _only(s, {"relative", "absolute", "size", "sha256"}, "source")
        relative = _str(_get(s, "relative", "source"), "source.relative", nullable=True)
        absolute = _str(_get(s, "absolute", "source"), "source.absolute", nonempty=True)
        size = _int(_get(s, "size", "source"), "source.size", minimum=0, nullable=True)
        sha = _str(_get(s, "sha256", "source"), "source.sha256", nullable=True)
        if sha is not None and not _SHA256.fullmatch(sha):
            raise _Invalid("source.sha256", "must be 64 lowercase hexadecimal digits")
        source = Path(absolute)  # type: ignore[arg-type]

    raw_options = _obj(_get(doc, "read_options", ""), "read_options")
    try:
        read_options = ReadOptions.from_dict(raw_options)
    except (ValueError, TypeError) as err:
        field_name, sep, message = str(err).partition(": ")
        if sep and field_name.isidentifier():
            raise _Invalid(f"read_options.{field_name}", message) from None
        raise _Invalid("read_options", str(err)) from None

    table = _obj(_get(doc, "table", ""), "table")
    _only(table, {"columns", "headers"}, "table")
    columns = _list_of_str(_get(table, "columns", "table"), "table.columns")
    headers = _list_of_str(_get(table, "headers", "table"), "table.headers")
    if len(headers) != len(columns):
        raise _Invalid("table.headers", f"has {len(headers)} names for {len(columns)} columns")
    seen: set[str] = set()
    for i, c in enumerate(columns):
        if c in seen:
            raise _Invalid(f"table.columns[{i}]", f"'{c}' appears twice")
        seen.add(c)
    for label in read_options.kinds:  # kind corrections (absent in older files: none)
        if label not in seen:
            raise _Invalid(f"read_options.kinds.{label}", "is not a column of the table")

    fit_doc = _obj(_get(doc, "fit", ""), "fit")
    _only(fit_doc, {"fit_where", "group_by", "rows_fitted"}, "fit")
    raw_where = _get(fit_doc, "fit_where", "fit")
    fit_where = None
    if raw_where is not None:
        w = _obj(raw_where, "fit.fit_where")
        _only(w, {"column", "value"}, "fit.fit_where")
        w_column = _str(_get(w, "column", "fit.fit_where"), "fit.fit_where.column")
        w_value = _str(_get(w, "value", "fit.fit_where"), "fit.fit_where.value")
        if w_column not in seen:
            raise _Invalid("fit.fit_where.column", f"'{w_column}' is not a column of the table")
        fit_where = (w_column, w_value)
    group_by = _str(_get(fit_doc, "group_by", "fit"), "fit.group_by", nullable=True)
    if group_by is not None and group_by not in seen:
        raise _Invalid("fit.group_by", f"'{group_by}' is not a column of the table")
    rows_fitted = _int(
        _get(fit_doc, "rows_fitted", "fit"), "fit.rows_fitted", minimum=0, nullable=True
    )
    settings = FitSettings(fit_where, group_by)
    fitted = rows_fitted is not None

    raw_columns = _obj(_get(doc, "columns", ""), "columns")
    choices: dict[str, ColumnChoice] = {}
    plan_columns: dict[str, FittedColumn] = {}
    for label, raw in raw_columns.items():
        path = f"columns.{label}"
        if label not in seen:
            raise _Invalid(path, "is not a column of the table (see table.columns)")
        c = _obj(raw, path)
        method_id = _str(_get(c, "method", path), f"{path}.method")
        try:
            method = get_method(method_id)  # type: ignore[arg-type]
        except ScalewrightError as err:
            raise _Invalid(f"{path}.method", str(err)) from None
        if method.id != method_id:
            raise _Invalid(f"{path}.method", f"must be written '{method.id}'")
        raw_opts = _obj(_get(c, "options", path), f"{path}.options")
        try:
            options = method.options(raw_opts)
        except ScalewrightError as err:
            raise _Invalid(f"{path}.options", str(err)) from None
        for key, value in raw_opts.items():  # options() accepts "yes" for True; files store JSON
            spec_kind = next(s.kind for s in method.option_specs if s.name == key)
            if spec_kind == "number":
                _num(value, f"{path}.options.{key}")
            elif spec_kind == "yes/no":
                _bool(value, f"{path}.options.{key}")
            else:
                _str(value, f"{path}.options.{key}")
        choices[label] = ColumnChoice(method.id, options)
        if method.id == "none" or not fitted:
            extra = sorted(set(c) - {"method", "options"}, key=lambda k: (k != "params", k))
            if extra:
                why = (
                    "a column left as is has no fitted values"
                    if method.id == "none"
                    else "the project is not fitted (fit.rows_fitted is null)"
                )
                raise _Invalid(f"{path}.{extra[0]}", f"must not be there: {why}")
            continue
        has_params = "params" in c
        if not has_params:
            raise _Invalid(f"{path}.params", "is missing (the project was fitted)")
        if label == group_by:
            raise _Invalid(path, "is the grouping column, so it cannot be scaled too")
        _only(c, _V1_COLUMN, path)
        pooled = _param_set(
            {k: c.get(k) for k in _V1_PARAM_SET if k in c}, path, method.id, options, _V1_PARAM_SET
        )
        n_missing = _int(_get(c, "n_missing", path), f"{path}.n_missing", minimum=0)
        n_infinite = _int(_get(c, "n_infinite", path), f"{path}.n_infinite", minimum=0)
        raw_groups = _obj(_get(c, "groups", path), f"{path}.groups")
        if raw_groups and group_by is None:
            raise _Invalid(f"{path}.groups", "must be empty: the fit has no group_by column")
        groups = {
            key: _param_set(g, f"{path}.groups.{key}", method.id, options, _V1_PARAM_SET)
            for key, g in raw_groups.items()
        }
        warnings = _list_of_str(_get(c, "warnings", path), f"{path}.warnings")
        plan_columns[label] = FittedColumn(
            column=label,
            method=method.id,
            options=dict(options),
            pooled=pooled,
            groups=groups,
            n_missing=n_missing,  # type: ignore[arg-type]
            n_infinite=n_infinite,  # type: ignore[arg-type]
            warnings=tuple(warnings),
        )

    plan = FittedPlan(plan_columns, settings, rows_fitted) if fitted else None  # type: ignore[arg-type]
    project = Project(
        source=source,
        source_size=size,  # type: ignore[arg-type]
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
    )
    return project, relative


_LOADERS: dict[int, Callable[[dict[str, Any]], tuple[Project, str | None]]] = {1: _load_v1}
# version n -> function turning a version-n document into a version n+1 document.
_MIGRATIONS: dict[int, Callable[[dict[str, Any]], dict[str, Any]]] = {}


def load_project(path: str | os.PathLike) -> Project:
    """Read and validate a ``.swproj`` file.

    The source is the stored relative path resolved against the project's folder when a
    file is there (project and data moved together), otherwise the stored absolute path.
    """
    path = Path(path)
    try:
        size = path.stat().st_size
        if size > MAX_PROJECT_BYTES:
            raise ProjectError(path, "is too large to be a Scalewright project file")
        raw = path.read_bytes()
    except FileNotFoundError:
        raise ReadError(path, "there is no such file") from None
    except IsADirectoryError:
        raise ReadError(path, "is a folder, not a project file") from None
    except OSError as err:
        raise ReadError(path, f"cannot be read ({err.strerror or err})") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise ProjectError(path, "is not a Scalewright project file (not UTF-8 text)") from None
    doc = _parse(text, str(path))
    project, relative = _from_document(doc, str(path))
    if project.source is not None and relative is not None:
        beside = Path(os.path.normpath(path.parent.absolute() / relative))
        if beside.is_file():
            project.source = beside
    project.loaded_from = path
    return project


# =========================================================================== the source


@dataclass(frozen=True)
class SourceCheck:
    """Where the data a project was fitted on is now, and whether it changed."""

    saved: Path | None  # the path the project holds
    path: Path | None  # where the file is now; None when it was not found
    moved: bool = False  # found beside the project file rather than at the saved path
    changed: bool = False  # size or SHA-256 differ from when the parameters were fitted

    @property
    def found(self) -> bool:
        return self.path is not None

    @property
    def message(self) -> str:
        if self.saved is None:
            return "the project does not name a data file"
        if self.path is None:
            return f"the data file {self.saved} was not found (nor beside the project file)"
        parts = [f"data file {self.path}"]
        if self.moved:
            parts.append(f"found beside the project file (it was saved as {self.saved})")
        if self.changed:
            parts.append("it has changed since the parameters were fitted")
        return "; ".join(parts)


def locate_source(project: Project, project_path: str | os.PathLike | None) -> SourceCheck:
    """Find the project's data file: the saved path, else a file of that name beside the
    project file. ``changed`` compares size and then SHA-256 with the saved fingerprint."""
    saved = project.source
    if saved is None:
        return SourceCheck(None, None)
    found: Path | None = None
    moved = False
    if saved.is_file():
        found = saved
    elif project_path is not None:
        beside = Path(project_path).absolute().parent / saved.name
        if beside.is_file():
            found, moved = beside, True
    if found is None:
        return SourceCheck(saved, None)
    changed = False
    if project.source_size is not None or project.source_sha256 is not None:
        size = found.stat().st_size
        if project.source_size is not None and size != project.source_size:
            changed = True
        elif project.source_sha256 is not None:
            changed = fingerprint(found)[1] != project.source_sha256
    return SourceCheck(saved, found, moved, changed)


# =========================================================================== parameters sheet

PARAMETER_SHEET_COLUMNS = [
    "column",
    "method",
    "options",
    "group",
    "parameter",
    "value",
    "fitted on (values)",
    "smallest fitted value",
    "largest fitted value",
    "how to reverse (x = original, y = scaled)",
]
ALL_ROWS = "all fitted rows"
UNSEEN_GROUPS = "all groups (used for groups not seen when fitting)"


def options_text(options: Mapping[str, Any]) -> str:
    """Options as ``name=value, ...`` with yes/no for switches and repr for numbers."""
    parts = []
    for key, value in options.items():
        if isinstance(value, bool):
            value = "yes" if value else "no"
        elif isinstance(value, float):
            value = repr(value)
        parts.append(f"{key}={value}")
    return ", ".join(parts)


def parameter_sheet(plan: FittedPlan) -> pd.DataFrame:
    """One row per fitted parameter (and per group), readable by a person.

    Values keep full precision; a yes/no parameter reads ``yes``/``no``.
    """
    rows: list[list[Any]] = []
    for label, fc in plan.columns.items():
        method = get_method(fc.method)
        sets = [(ALL_ROWS if not fc.groups else UNSEEN_GROUPS, fc.pooled)]
        sets += [(str(k), ps) for k, ps in fc.groups.items()]
        for group, ps in sets:
            items = list(ps.params.items()) or [("(none)", "")]
            for name, value in items:
                if isinstance(value, bool):
                    value = "yes" if value else "no"
                rows.append(
                    [
                        label,
                        method.name,
                        options_text(fc.options),
                        group,
                        name,
                        value,
                        ps.n,
                        ps.min,
                        ps.max,
                        method.inverse_formula,
                    ]
                )
    return pd.DataFrame(rows, columns=PARAMETER_SHEET_COLUMNS, dtype=object)
