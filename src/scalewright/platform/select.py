"""``scalewright sql``: one SELECT that applies (or reverses) a project's scaling in SQL.

The statement is one sqlglot expression tree, written out in the dialect asked for. Every
column of the source passes through unchanged, in order; each fitted column is replaced by
its scaled (or restored) values under the same name. With groups, a CASE on the grouping
column picks each group's parameters, and the parameters fitted on all groups serve values
not seen when fitting (and missing group values), as in the engine. Missing values give
NULL; values the transform cannot map give NULL (the engine leaves them blank); infinities
pass through unchanged. The per-method formulas come from the method classes
(``sql_forward`` / ``sql_inverse``); this module knows nothing of any one method.
"""

from __future__ import annotations

import math

from sqlglot import exp

from ..engine import FittedColumn, ParamSet, get_method, value_key
from ..engine import sql_terms as S
from ..errors import ProjectError
from .dialects import for_dialect
from .names import check_dialect, platform_names


def _method_sql(method_id: str, restoring: bool):
    method = get_method(method_id)
    return method.sql_inverse if restoring else method.sql_forward


def key_condition(column: exp.Expression, key: str) -> exp.Expression:
    """The test that a row's value in ``column`` has this key (``engine.value_key``).

    Compared as trimmed text, whatever the platform's type of the column: a whole number
    key ``3`` matches the text ``3`` and ``3.0`` (how an integer and a double column read
    as text), so the test holds for text, integer and double columns alike.
    """
    text = exp.Trim(this=exp.cast(column, exp.DataType.build("varchar")))
    forms = [key]
    try:
        number = float(key)
    except ValueError:
        number = math.nan
    if math.isfinite(number) and number.is_integer() and value_key(number) == key:
        forms.append(f"{key}.0")
    if len(forms) == 1:
        return S.eq(text, exp.Literal.string(key))
    return exp.In(this=text, expressions=[exp.Literal.string(f) for f in forms])


def _clipped(x: exp.Expression, ps: ParamSet) -> exp.Expression:
    """Values below or above the fitted range moved to its ends; infinities kept."""
    finite = S.is_finite(x)
    return S.case(
        (S.and_(finite, S.lt(x.copy(), S.num(ps.min))), S.num(ps.min)),
        (S.and_(finite.copy(), S.gt(x.copy(), S.num(ps.max))), S.num(ps.max)),
        default=x.copy(),
    )


def mapped_body(
    fc: FittedColumn,
    x: exp.Expression,
    *,
    restoring: bool = False,
    clip: bool = False,
    group: exp.Expression | None = None,
) -> exp.Expression:
    """The SQL for one fitted column's scaled (or restored) values, before the checks
    that ``finished`` adds: for finite values only (the caller guards the rest)."""
    build = _method_sql(fc.method, restoring)

    def one(ps: ParamSet) -> exp.Expression:
        source = _clipped(x, ps) if clip and not restoring else x.copy()
        return build(source, ps.params)

    if group is not None and fc.groups:
        return S.case(
            *[(key_condition(group.copy(), key), one(ps)) for key, ps in fc.groups.items()],
            default=one(fc.pooled),
        )
    return one(fc.pooled)


def finished(x: exp.Expression, mapped: exp.Expression) -> exp.Expression:
    """Infinities (and NaN, where the platform has it) and NULL pass through unchanged, as
    in the engine; a finite value the transform cannot map (out of its domain, or beyond
    the float range) gives NULL, where the engine leaves a blank."""
    return S.case((S.is_finite(x), S.finite_or_null(mapped)), default=x.copy())


def build_select(
    project,
    *,
    restoring: bool = False,
    clip: bool = False,
    table: str | None = None,
) -> exp.Select:
    """The SELECT as a sqlglot tree (write it out with ``.sql(dialect=...)``), for a table
    with the source's columns: every fitted column mapped, the others passed through."""
    plan = project.plan
    if plan is None:
        raise ProjectError("project", "has no fitted parameters yet; fit it first")
    labels = list(project.columns) or list(plan.columns)
    names = platform_names(labels, list(project.headers))
    group_by = plan.settings.group_by
    source = table or default_table_name(project)
    source_table = exp.to_table(source) if "." in source else _quoted_table(source)
    pairs = {names[label]: plan.columns[label] for label in labels if label in plan.columns}
    return select_columns(
        [names[label] for label in labels],
        pairs,
        source_table,
        restoring=restoring,
        clip=clip,
        group=names.get(group_by, group_by) if group_by else None,
    )


def select_columns(
    columns: list[str],
    pairs: dict[str, FittedColumn],
    source: exp.Expression,
    *,
    restoring: bool = False,
    clip: bool = False,
    group: str | None = None,
    renamed: dict[str, str] | None = None,
) -> exp.Select:
    """SELECT every column of ``columns`` (names in the table ``source``), in order; those
    in ``pairs`` mapped with their fitted column's parameters. ``renamed`` gives a column
    another name in the output.

    An inner SELECT computes each mapped column's values once (under a helper name that
    cannot clash with a source column); the outer one checks them and lists every column
    under its own name.
    """
    renamed = renamed or {}
    group_col = S.column(group) if group else None
    helper = _helper_names(columns)
    inner: list[exp.Expression] = [S.column(name) for name in columns]
    outer: list[exp.Expression] = []
    for name in columns:
        x = S.column(name)
        out_name = renamed.get(name, name)
        fc = pairs.get(name)
        if fc is None or get_method(fc.method).id == "none":
            outer.append(exp.alias_(x, out_name, quoted=True) if out_name != name else x)
            continue
        body = mapped_body(fc, x, restoring=restoring, clip=clip, group=group_col)
        mapped = next(helper)
        inner.append(exp.alias_(S.case((S.is_finite(x.copy()), body)), mapped, quoted=True))
        outer.append(exp.alias_(finished(x.copy(), S.column(mapped)), out_name, quoted=True))
    staged = exp.select(*inner).from_(source).subquery("scaled_values")
    return exp.select(*outer).from_(staged)


def _helper_names(taken):
    taken = set(taken)
    n = 0
    while True:
        n += 1
        name = f"scalewright_value_{n}"
        if name not in taken:
            yield name


def _quoted_table(name: str) -> exp.Table:
    return exp.Table(this=exp.to_identifier(name, quoted=True))


def default_table_name(project) -> str:
    """The source file's name without its extension (the usual name of a loaded table)."""
    if project.source is not None:
        return project.source.stem
    return "source"


def select_sql(
    project,
    *,
    dialect: str = "duckdb",
    restoring: bool = False,
    clip: bool = False,
    table: str | None = None,
    pretty: bool = True,
) -> str:
    """The SELECT as text in ``dialect``."""
    dialect = check_dialect(dialect)
    tree = build_select(project, restoring=restoring, clip=clip, table=table)
    return for_dialect(tree, dialect).sql(dialect=dialect, pretty=pretty)
