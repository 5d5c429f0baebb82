"""Fitting a table's per-column choices, applying them, and restoring original units.

The engine's table-level API, in the spirit of scikit-learn's fit / transform /
inverse_transform: the choices (method and options, what the user picked) are kept apart
from the fitted values (``FittedColumn``), and both are plain data that the project file
can store without pickling.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from ..errors import ColumnError, ScalewrightError
from .method_base import FitResult, Method
from .methods import get_method
from .number_text import number_text


@dataclass(frozen=True)
class ColumnChoice:
    """What the user chose for one column: a method id and its options as given."""

    method: str = "none"
    options: Mapping[str, Any] = field(default_factory=dict)

    def normalized(self) -> ColumnChoice:
        """The same choice with the method id checked and every option filled in."""
        method = get_method(self.method)
        return ColumnChoice(method.id, method.options(self.options))


@dataclass(frozen=True)
class FitSettings:
    """Which rows the parameters are fitted on, and whether per group."""

    fit_where: tuple[str, str] | None = None  # (column, value as text): fit only on these rows
    group_by: str | None = None  # one parameter set per value of this column


@dataclass(frozen=True)
class ParamSet:
    """Fitted parameters with the size and range (original units) of what they were fitted on."""

    params: dict[str, Any]
    n: int
    min: float
    max: float


@dataclass(frozen=True)
class FittedColumn:
    column: str
    method: str
    options: dict[str, Any]
    pooled: ParamSet  # fitted on every fit row; used for groups not seen when fitting
    groups: dict[str, ParamSet] = field(default_factory=dict)
    n_missing: int = 0  # blank cells among the fit rows
    n_infinite: int = 0  # infinite values among the fit rows, left out of the fit
    warnings: tuple[str, ...] = ()

    @property
    def method_obj(self) -> Method:
        return get_method(self.method)

    def forward(
        self, x: np.ndarray, params: ParamSet | None = None, out: np.ndarray | None = None
    ) -> np.ndarray:
        """Scale ``x`` with the pooled (or the given) parameters; NaN and infinities pass.

        ``out`` (optional) is an array the result may be written into; use the returned one.
        """
        return self.method_obj.forward_all(x, (params or self.pooled).params, out)

    def inverse(
        self, y: np.ndarray, params: ParamSet | None = None, out: np.ndarray | None = None
    ) -> np.ndarray:
        return self.method_obj.inverse_all(y, (params or self.pooled).params, out)


@dataclass
class FittedPlan:
    columns: dict[str, FittedColumn]
    settings: FitSettings = FitSettings()
    n_rows: int = 0  # rows the parameters were fitted on

    def __getitem__(self, column: str) -> FittedColumn:
        return self.columns[column]


@dataclass
class ColumnReport:
    """What happened to one column when applying or restoring: counts and plain warnings."""

    column: str
    fitted_as: str
    n_values: int = 0
    n_below: int = 0  # below the fitted range (apply only)
    n_above: int = 0
    n_clipped: int = 0
    n_infinite: int = 0
    n_undefined: int = 0  # values the transform cannot map (left blank)
    unseen_groups: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)

    @property
    def n_outside(self) -> int:
        return self.n_below + self.n_above


# --------------------------------------------------------------------------- values


def value_key(value: Any) -> str:
    """Canonical text for a cell used as a group or a fit-subset value.

    Whole floats read as integers (``3.0`` -> ``"3"``) so that a group written as 3 in one
    file and 3.0 in another is the same group; missing values are ``""``.
    """
    if value is None or value is pd.NA or (isinstance(value, float) and math.isnan(value)):
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (float, np.floating)) and float(value).is_integer():
        return str(int(value))
    if isinstance(value, pd.Timestamp):
        return value.isoformat()
    return str(value).strip()


#: The most different values a grouping column may have. One parameter set per group is
#: fitted, shown and saved; beyond this the column is almost surely not a grouping (an id,
#: a measurement) and the project would be mostly parameters.
MAX_GROUPS = 1_000


def group_codes(
    series: pd.Series, *, limit: int | None = MAX_GROUPS
) -> tuple[np.ndarray, list[str]]:
    """Factorize ``series`` into integer codes and the canonical key of each code.

    Cells whose keys are the same (3 and 3.0 in a mixed column, 'A' and ' A') share one
    code, so that they form one group; missing cells have code -1. This is the
    ``group_keys`` argument of ``fit_column``. ColumnError when there are more than
    ``limit`` groups (``None``: no limit, for applying to a file with unseen groups).
    """
    codes, uniques = pd.factorize(series, use_na_sentinel=True)
    codes, keys = merge_group_keys(codes, [value_key(u) for u in uniques])
    if limit is not None and len(keys) > limit:
        raise ColumnError(
            str(series.name),
            f"has {len(keys):,} different values; grouping works with at most {limit:,}",
        )
    return codes, keys


def rows_by_code(codes: np.ndarray, use: np.ndarray | None = None) -> dict[int, np.ndarray]:
    """The row numbers of each code (>= 0) among the rows in ``use``, in one pass.

    A stable sort of the codes keeps every group's rows in their original order, so a
    group's values are the same array, in the same order, as ``x[codes == code]``.
    """
    codes = np.asarray(codes)
    rows = np.arange(codes.size) if use is None else np.flatnonzero(use)
    picked = codes[rows]
    if picked.size == 0:
        return {}
    order = np.argsort(picked, kind="stable")
    rows, picked = rows[order], picked[order]
    starts = np.flatnonzero(np.diff(picked, prepend=-2))  # where a new code begins
    ends = np.append(starts[1:], picked.size)
    return {int(picked[a]): rows[a:b] for a, b in zip(starts, ends, strict=True) if picked[a] >= 0}


def merge_group_keys(codes: np.ndarray, raw_keys: Sequence[str]) -> tuple[np.ndarray, list[str]]:
    """Give codes whose keys are equal one code (and blank keys the code -1)."""
    keys: list[str] = []
    index: dict[str, int] = {}
    remap = np.empty(len(raw_keys) + 1, dtype=np.intp)
    remap[-1] = -1  # code -1 (missing) indexes the last slot
    for i, key in enumerate(raw_keys):
        if key == "":
            remap[i] = -1
            continue
        if key not in index:
            index[key] = len(keys)
            keys.append(key)
        remap[i] = index[key]
    if len(keys) == len(raw_keys):
        return np.asarray(codes), keys
    return remap[np.asarray(codes)], keys


_TRUE_WORDS = {"true", "yes", "1"}
_FALSE_WORDS = {"false", "no", "0"}


def _wanted_key(series: pd.Series, wanted: Any) -> str:
    """The key of a value typed by the user, read as a number when the column is numeric
    and as yes or no (true/false/yes/no/1/0, any case) when the column is yes/no."""
    if pd.api.types.is_bool_dtype(series.dtype):
        text = value_key(wanted).lower()
        if text in _TRUE_WORDS:
            return "true"
        if text in _FALSE_WORDS:
            return "false"
        return value_key(wanted)
    if (
        isinstance(wanted, str)
        and pd.api.types.is_numeric_dtype(series.dtype)
        and not pd.api.types.is_bool_dtype(series.dtype)
    ):
        try:
            return value_key(float(wanted.strip()))
        except ValueError:
            pass
    return value_key(wanted)


def column_values(data: pd.DataFrame, column: str) -> np.ndarray:
    """The column as float64 with missing values as NaN; ColumnError if absent or not numeric."""
    if column not in data.columns:
        raise ColumnError(column, "there is no such column")
    series = data[column]
    if isinstance(series, pd.DataFrame):
        raise ColumnError(column, "the name is used by more than one column")
    if pd.api.types.is_bool_dtype(series.dtype) or not pd.api.types.is_numeric_dtype(series.dtype):
        raise ColumnError(column, "is not a numeric column, so it cannot be scaled")
    return series.to_numpy(dtype=np.float64, na_value=np.nan)


def fit_rows(data: pd.DataFrame, settings: FitSettings) -> np.ndarray:
    """Boolean mask of the rows the parameters are fitted on."""
    if settings.fit_where is None:
        return np.ones(len(data), dtype=bool)
    column, wanted = settings.fit_where
    if column not in data.columns:
        raise ColumnError(column, "the column named for choosing fit rows is not in the table")
    series = data[column]
    if isinstance(series, pd.DataFrame):
        raise ColumnError(column, "the name is used by more than one column")
    codes, keys = group_codes(series)
    key = _wanted_key(series, wanted)
    mask = codes == keys.index(key) if key in keys else np.zeros(len(data), dtype=bool)
    if not mask.any():
        raise ColumnError(column, f"no row has the value '{wanted}', so there is nothing to fit on")
    return mask


def _count(test, x: np.ndarray, scratch: np.ndarray | None) -> int:
    """How many values pass ``test`` (np.isnan, np.isinf, ...), into a reused bool buffer."""
    if scratch is None or scratch.size != x.size:
        return int(np.count_nonzero(test(x)))
    return int(np.count_nonzero(test(x, out=scratch)))


# --------------------------------------------------------------------------- fitting


def _fit_values(
    method: Method,
    column: str,
    x: np.ndarray,
    options: dict,
    label: str = "",
    n: int | None = None,
) -> tuple[ParamSet, list[str]]:
    """Fit ``x`` (finite values; or with NaN among them when ``n``, the number of finite
    values, is given, for methods whose fit ignores NaN)."""
    where = f" (group '{label}')" if label else ""
    n = x.size if n is None else n
    if n == 0:
        raise ColumnError(column, f"has no numbers to fit{where}")
    try:
        result: FitResult = method.fit(x, options)
    except ScalewrightError as err:
        raise ColumnError(column, f"{err}{where}") from None
    params = dict(result)
    lo, hi = result.data_range or (float(np.fmin.reduce(x)), float(np.fmax.reduce(x)))
    ps = ParamSet(params, int(n), lo, hi)
    return ps, [f"{w}{where}" for w in result.warnings]


def fit_column(
    values: np.ndarray,
    choice: ColumnChoice,
    *,
    column: str,
    fit_mask: np.ndarray | None = None,
    group_keys: tuple[np.ndarray, list[str]] | None = None,
) -> FittedColumn:
    """Fit one column's choice on the rows in ``fit_mask``, pooled and per group.

    ``values`` is the whole column (float64, NaN for missing); missing and infinite values
    are left out of the fit. ``group_keys`` is (codes, keys) from factorizing the grouping
    column.
    """
    choice = choice.normalized()
    method = get_method(choice.method)
    x = np.asarray(values, dtype=np.float64)
    finite = np.isfinite(x)
    if fit_mask is None:
        use = finite
        n_rows = x.size
        n_missing = _count(np.isnan, x, None)
    else:
        use = finite & fit_mask
        n_rows = int(np.count_nonzero(fit_mask))
        n_missing = int(np.count_nonzero(np.isnan(x) & fit_mask))
    n_finite = int(np.count_nonzero(use))
    n_infinite = n_rows - n_finite - n_missing
    if n_finite == x.size:
        fit_values = x
    elif method.fit_ignores_nan and fit_mask is None and n_infinite == 0:
        fit_values = x  # only NaN to leave out, and this fit skips them: no copy needed
    else:
        fit_values = x[use]
    pooled, warnings = _fit_values(method, column, fit_values, choice.options, n=n_finite)
    groups: dict[str, ParamSet] = {}
    if group_keys is not None and choice.method != "none":
        codes, keys = merge_group_keys(*group_keys)
        for code, rows in rows_by_code(codes, use).items():  # in order of the codes
            key = keys[code]
            groups[key], group_warnings = _fit_values(method, column, x[rows], choice.options, key)
            warnings.extend(group_warnings)
    if n_infinite:
        warnings.append(
            f"{n_infinite} infinite values were left out of the fit and are passed through"
        )
    if pooled.n < 2 and choice.method != "none":
        warnings.append("only one value to fit on")
    return FittedColumn(
        column=column,
        method=choice.method,
        options=dict(choice.options),
        pooled=pooled,
        groups=groups,
        n_missing=n_missing,
        n_infinite=n_infinite,
        warnings=tuple(warnings),
    )


def fit(
    data: pd.DataFrame,
    choices: Mapping[str, ColumnChoice],
    settings: FitSettings = FitSettings(),
) -> FittedPlan:
    """Fit every column whose choice is not 'none'. Raises ColumnError for the first problem."""
    mask = fit_rows(data, settings)
    group_keys = None
    if settings.group_by is not None:
        if settings.group_by not in data.columns:
            raise ColumnError(settings.group_by, "the grouping column is not in the table")
        group_keys = group_codes(data[settings.group_by])
    fit_mask = None if settings.fit_where is None else mask  # None: every row, no masking
    fitted: dict[str, FittedColumn] = {}
    for column, choice in choices.items():
        if get_method(choice.method).id == "none":
            continue
        if column == settings.group_by:
            raise ColumnError(column, "is the grouping column, so it cannot be scaled too")
        fitted[column] = fit_column(
            column_values(data, column),
            choice,
            column=column,
            fit_mask=fit_mask,
            group_keys=group_keys,
        )
    return FittedPlan(fitted, settings, int(np.count_nonzero(mask)))


# --------------------------------------------------------------------------- apply / restore


def _param_sets_by_row(
    fc: FittedColumn, data: pd.DataFrame, group_by: str | None, report: ColumnReport
) -> list[tuple[ParamSet, np.ndarray | None]]:
    """Which parameter set serves which rows: [(params, row numbers or mask, or None for
    all rows)]."""
    if group_by is None or not fc.groups:
        return [(fc.pooled, None)]
    if group_by not in data.columns:
        report.warnings.append(
            f"there is no '{group_by}' column here, so the parameters fitted on all groups were used"
        )
        return [(fc.pooled, None)]
    # A new file may have any number of groups (those not fitted use the pooled ones).
    codes, keys = group_codes(data[group_by], limit=None)
    # Code of the parameter set per key: its group's position, or -1 for the pooled set.
    names = list(fc.groups)
    position = {key: i for i, key in enumerate(names)}
    set_of = np.full(len(keys) + 1, -1, dtype=np.intp)  # the last slot: code -1, no group
    for code, key in enumerate(keys):
        if key in position:
            set_of[code] = position[key]
        else:
            report.unseen_groups.append(key)
    row_sets = set_of[codes]
    out: list[tuple[ParamSet, np.ndarray | None]] = [
        (fc.groups[names[i]], rows) for i, rows in rows_by_code(row_sets).items()
    ]
    pooled_rows = row_sets < 0
    if pooled_rows.any():
        out.append((fc.pooled, pooled_rows))
    return out


def _run(
    data: pd.DataFrame,
    plan: FittedPlan,
    pairs: Sequence[tuple[str, str]],
    *,
    restoring: bool,
    clip: bool = False,
) -> tuple[pd.DataFrame, list[ColumnReport]]:
    new_columns: dict[str, np.ndarray] = {}
    reports = []
    scratch = np.empty(len(data), dtype=bool)  # reused by every count below
    # One allocation for every new column: one large block is mapped with huge pages by
    # the operating system, far fewer page faults than one array per column. Rows that a
    # method does not write into are never touched, so they cost no memory.
    block = np.empty((len(pairs), len(data)))
    for i, (target, source) in enumerate(pairs):
        fc = plan.columns[source]
        x = column_values(data, target)
        n_missing = _count(np.isnan, x, scratch)
        report = ColumnReport(target, source, n_values=x.size - n_missing)
        report.n_infinite = _count(np.isinf, x, scratch)
        result = None
        for ps, rows in _param_sets_by_row(fc, data, plan.settings.group_by, report):
            part = x if rows is None else x[rows]
            if not restoring:
                # Infinities pass through: neither counted as outside nor clipped.
                # (NaN compares False; -inf < min and inf > max are taken off again.)
                # fmin/fmax skip NaN: two read-only passes settle the common case where
                # nothing lies outside the fitted range.
                n_below = n_above = 0
                if part.size and not np.fmin.reduce(part) >= ps.min:
                    n_below = int(np.count_nonzero(part < ps.min))
                if part.size and not np.fmax.reduce(part) <= ps.max:
                    n_above = int(np.count_nonzero(part > ps.max))
                if report.n_infinite:
                    n_below -= int(np.count_nonzero(part == -np.inf))
                    n_above -= int(np.count_nonzero(part == np.inf))
                report.n_below += n_below
                report.n_above += n_above
                if clip and n_below + n_above:
                    finite = np.isfinite(part)
                    part = np.where(finite, np.clip(part, ps.min, ps.max), part)
                    report.n_clipped += n_below + n_above
                mapped = fc.forward(part, ps, out=block[i] if rows is None else None)
            else:
                mapped = fc.inverse(part, ps, out=block[i] if rows is None else None)
            if rows is None:
                result = mapped
            else:
                if result is None:
                    result = block[i]
                    result.fill(np.nan)
                result[rows] = mapped
        if result is None:
            result = block[i]
            result.fill(np.nan)
        # NaN and infinities of the input come through unchanged, so any extra NaN is a
        # value the transform cannot map, and any extra infinity one that overflowed.
        n_undefined = 0
        if x.size - _count(np.isfinite, result, scratch) != n_missing + report.n_infinite:
            n_undefined = _count(np.isnan, result, scratch) - n_missing
            n_overflow = _count(np.isinf, result, scratch) - report.n_infinite
            if n_overflow:
                result[np.isinf(result) & np.isfinite(x)] = np.nan
                n_undefined += n_overflow
        report.n_undefined = n_undefined
        report_warnings(report, fc, restoring=restoring, clip=clip)
        new_columns[target] = result
        reports.append(report)
    return _with_columns(data, new_columns), reports


def report_warnings(report: ColumnReport, fc: FittedColumn, *, restoring: bool, clip: bool) -> None:
    """The warnings a column's counts call for, in one wording for every way of applying
    (in memory here, out of core through DuckDB)."""
    if report.unseen_groups:
        report.warnings.append(
            "groups not seen when fitting used the parameters fitted on all groups: "
            + ", ".join(f"'{k}'" for k in report.unseen_groups)
        )
    if report.n_undefined:
        what = "original units" if restoring else "scaled units"
        report.warnings.append(
            f"{report.n_undefined} values have no value in {what} for {fc.method} "
            "with these parameters (out of its domain or beyond the range of "
            "floating-point numbers) and were left blank"
        )
    if report.n_infinite:
        report.warnings.append(f"{report.n_infinite} infinite values were passed through unchanged")
    if report.n_outside and not clip:
        report.warnings.append(
            f"{report.n_below} values below and {report.n_above} above the fitted range "
            f"[{number_text(fc.pooled.min, 'r')}, {number_text(fc.pooled.max, 'r')}]"
            if not fc.groups
            else f"{report.n_below} values below and {report.n_above} above their group's fitted range"
        )


def _with_columns(data: pd.DataFrame, new_columns: Mapping[str, np.ndarray]) -> pd.DataFrame:
    """``data`` with some columns replaced by new float arrays, without copying anything.

    ``df[name] = array`` copies the array (pandas copy-on-write); building the frame from
    the columns instead shares the new arrays and, through copy-on-write, the untouched
    columns of ``data`` (which therefore can never be changed through the result).
    Column order, duplicate names, the index and the other columns' types are kept.
    """
    if not new_columns:
        return data.copy(deep=False)
    parts: dict[int, Any] = {}
    positions = {data.columns.get_loc(name): name for name in new_columns}
    for i in range(data.shape[1]):
        if i in positions:
            parts[i] = pd.Series(new_columns[positions[i]], index=data.index, copy=False)
        else:
            parts[i] = data.iloc[:, i]
    out = pd.DataFrame(parts, index=data.index, copy=False)
    out.columns = data.columns
    out.attrs = dict(data.attrs)
    return out


def apply(
    data: pd.DataFrame,
    plan: FittedPlan,
    *,
    clip: bool = False,
    mapping: Mapping[str, str] | None = None,
) -> tuple[pd.DataFrame, list[ColumnReport]]:
    """Scale every fitted column of ``data``; other columns are returned untouched.

    ``mapping`` pairs a column of ``data`` with the fitted column whose parameters scale it
    (for example ``{"yield_2026": "yield_kg"}``); a fitted column named in it is taken from
    its paired column(s) only, the others from the column of the same name.
    Values outside the range the parameters were fitted on are counted per column, and
    with ``clip`` moved to the nearest end of that range first.
    """
    mapping = dict(mapping or {})
    for target, source in mapping.items():
        if target not in data.columns:
            raise ColumnError(target, "is not in this table")
        if source not in plan.columns:
            raise ColumnError(source, "has no fitted parameters in the project")
    paired = set(mapping.values())
    pairs = []
    for c in plan.columns:
        if c in paired:
            pairs += [(target, c) for target, source in mapping.items() if source == c]
        elif c in data.columns:
            pairs.append((c, c))
        else:
            raise ColumnError(c, "was fitted in the project but is not in this table")
    seen: dict[str, str] = {}
    for target, source in pairs:
        if target in seen:
            raise ColumnError(
                target,
                f"would be scaled twice (with the parameters of '{seen[target]}' and of "
                f"'{source}'); pair each column once",
            )
        seen[target] = source
    return _run(data, plan, pairs, restoring=False, clip=clip)


def restore(
    data: pd.DataFrame, plan: FittedPlan, mapping: Mapping[str, str] | None = None
) -> tuple[pd.DataFrame, list[ColumnReport]]:
    """Turn scaled values back into original units.

    ``mapping`` maps a column of ``data`` to the fitted column whose parameters restore it
    (for example ``{"prediction": "yield_kg"}``). Without it, every column of ``data`` that
    was fitted is restored with its own parameters. Other columns pass through untouched.
    """
    if mapping is None:
        pairs = [(c, c) for c in data.columns if c in plan.columns]
    else:
        pairs = []
        for target, source in mapping.items():
            if target not in data.columns:
                raise ColumnError(target, "is not in the file to restore")
            if source not in plan.columns:
                raise ColumnError(source, "has no fitted parameters in the project")
            pairs.append((target, source))
    return _run(data, plan, pairs, restoring=True)
