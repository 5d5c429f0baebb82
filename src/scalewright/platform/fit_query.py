"""The aggregate query that computes a project's parameters where the data lives.

One query (sqlglot, any dialect) returns one row for the rows fitted on ("all") and, when
fitting per group, one row per group ("group"). Per fitted column ``c<i>`` (its position
among the fitted columns) it holds what the method's ``fit_summary`` needs:

- always: ``c<i>_n`` (finite values), ``_missing``, ``_infinite``, ``_min``, ``_max``;
- "moments": ``_mean1`` (first-pass mean), ``_devsum`` and ``_devsq`` (sums of the
  deviations from it and of their squares, in units of ``_devscale``, the range; the
  second pass of a two-pass algorithm);
- "quartiles": ``_q1a``/``_q1b`` ... ``_q3a``/``_q3b``, the two order statistics each
  type-7 quartile lies between (by ROW_NUMBER, exact in every dialect); the
  interpolation is done afterwards exactly as numpy does it;
- "lambda": for a round of the likelihood search, ``_centre``, ``_step``, ``_linear`` and
  ``_v0`` ... ``_v32``, the variance of the transformed values at the candidate lambdas
  ``centre + (k - 16) * step``; for the last round (lambda known), ``_lambda``,
  ``_tmean1``, ``_tdevsum``, ``_tdevsq``, the moments of the transformed values.

The search itself (which candidates next, when lambda is found) is ``power_search``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from sqlglot import exp

from ..engine import sql_terms as S
from ..engine.method_base import Method
from .select import key_condition

#: Candidates per round on each side of the centre (2 * HALF + 1 in all).
HALF = 16
PART = "scalewright_part"
GROUP = "scalewright_group"
ROWS = "scalewright_rows"
_QUARTILES = ((1, 0.25), (2, 0.5), (3, 0.75))
#: The needs (``Method.summary_needs``) this query can meet.
MET_NEEDS = frozenset({"moments", "quartiles", "lambda"})


@dataclass(frozen=True)
class FitColumn:
    index: int  # 1-based; the result's names are c<index>_...
    label: str  # the project's label
    name: str  # the column's name in the platform's table
    method: Method
    options: dict


@dataclass(frozen=True)
class FitSpec:
    columns: tuple[FitColumn, ...]
    group: str | None = None  # the grouping column's name in the platform's table
    fit_where: tuple[str, str] | None = None  # (column name in the platform, value key)


@dataclass
class Search:
    """One round of candidates: centre + k * step for k in -HALF..HALF."""

    centre: float
    step: float


@dataclass
class RoundPlan:
    """What one query asks for beyond the basic statistics.

    ``searches`` and ``lambdas`` are keyed by (column index, part key), the part key being
    "" for all fit rows and the group's key for a group; ``default_search`` serves parts
    with no entry (the first round, before any group is known).
    """

    searches: dict[tuple[int, str], Search] = field(default_factory=dict)
    lambdas: dict[tuple[int, str], float] = field(default_factory=dict)
    default_search: dict[int, Search] = field(default_factory=dict)
    basic: bool = True  # every column's statistics, or only the searches' (later rounds)

    def searching(self, index: int) -> bool:
        return index in self.default_search or any(i == index for i, _ in self.searches)

    def finishing(self, index: int) -> bool:
        return any(i == index for i, _ in self.lambdas)


def name(index: int, stat: str) -> str:
    return f"c{index}_{stat}"


def _ident(text: str) -> exp.Identifier:
    return exp.to_identifier(text, quoted=True)


def _col(text: str, table: str | None = None) -> exp.Column:
    return exp.Column(this=_ident(text), table=_ident(table) if table else None)


def _alias(e: exp.Expression, text: str) -> exp.Alias:
    return exp.alias_(e, text, quoted=True, copy=False)


def _count(e: exp.Expression | None = None) -> exp.Expression:
    return exp.Count(this=e if e is not None else exp.Star())


def _var_pop(e: exp.Expression) -> exp.Expression:
    return exp.VariancePop(this=e)


def _square(e: exp.Expression) -> exp.Expression:
    return S.mul(e, e.copy())


def _add(query: exp.Select, *items: exp.Expression) -> exp.Select:
    """``query.select(*items)`` in place (sqlglot's builders copy the whole tree by default,
    which makes building a query with many columns quadratic)."""
    return query.select(*items, copy=False)


def _lam_expr(index: int, k: int, plan: RoundPlan) -> exp.Expression:
    """centre + k * step for this row's part (the state joined in, or the default)."""
    default = plan.default_search.get(index, Search(0.0, 2.0 / HALF))
    centre = exp.Coalesce(
        this=_col(name(index, "centre"), "s"), expressions=[S.num(default.centre)]
    )
    step = exp.Coalesce(this=_col(name(index, "step"), "s"), expressions=[S.num(default.step)])
    if k == 0:
        return centre
    return S.add(centre, S.mul(S.num(float(k)), step))


def _whole(key: str) -> bool:
    """A whole-number key (``3``), which a double column reads as ``3.0``."""
    return re.fullmatch(r"-?\d+", key) is not None


def _state_match() -> exp.Expression:
    """A row's part has this state row: the same key, or for a whole-number key the same
    key as a double column reads it as text (``3.0`` for ``3``)."""
    same = exp.EQ(this=_col(GROUP, "v"), expression=_col(GROUP, "s"))
    as_double = exp.and_(
        exp.EQ(this=_col("whole", "s"), expression=exp.Literal.string("yes")),
        exp.EQ(
            this=_col(GROUP, "v"),
            expression=exp.DPipe(this=_col(GROUP, "s"), expression=exp.Literal.string(".0")),
        ),
    )
    return exp.or_(same, as_double)


def _state_rows(spec: FitSpec, plan: RoundPlan, keys: list[str]) -> exp.Expression:
    """A small table of the searches' centres and steps and the lambdas found, per part."""
    indexes = [c.index for c in spec.columns]
    rows = []
    for key in keys or [None]:
        items = [
            _alias(
                exp.cast(
                    exp.Literal.string(key) if key is not None else exp.Null(),
                    exp.DataType.build("varchar"),
                ),
                GROUP,
            ),
            _alias(exp.Literal.string("yes" if key is not None and _whole(key) else "no"), "whole"),
        ]
        for i in indexes:
            search = plan.searches.get((i, key)) if key is not None else None
            lam = plan.lambdas.get((i, key)) if key is not None else None
            for stat, value in (
                ("centre", search.centre if search else None),
                ("step", search.step if search else None),
                ("lambda", lam),
            ):
                lit = (
                    S.num(value)
                    if value is not None
                    else exp.cast(exp.Null(), exp.DataType.build("double"))
                )
                items.append(_alias(lit, name(i, stat)))
        rows.append(exp.select(*items))
    out = rows[0]
    for row in rows[1:]:
        out = exp.union(out, row, distinct=False)
    return out


def _part(spec: FitSpec, plan: RoundPlan, source: exp.Expression, grouped: bool, prefix: str):
    """The CTEs of one part (all fit rows, or per group) and its final SELECT."""
    ctes: list[tuple[str, exp.Expression]] = []
    cols = [
        c for c in spec.columns if plan.basic or plan.searching(c.index) or plan.finishing(c.index)
    ]
    if grouped:
        key = exp.Trim(this=exp.cast(_col(spec.group), exp.DataType.build("varchar")))
    else:
        key = exp.Literal.string("")
    rows_items = [_alias(key, GROUP)] + [
        _alias(exp.cast(_col(c.name), exp.DataType.build("double")), f"x{c.index}") for c in cols
    ]
    conds = []
    if spec.fit_where is not None:
        conds.append(key_condition(_col(spec.fit_where[0]), spec.fit_where[1]))
    if grouped:
        conds.append(exp.Not(this=exp.Is(this=_col(spec.group), expression=exp.Null())))
        conds.append(exp.NEQ(this=key.copy(), expression=exp.Literal.string("")))
    q = exp.select(*rows_items).from_(source.copy())
    if conds:
        q = q.where(exp.and_(*conds))
    ctes.append((f"{prefix}rows", q))

    # Finite values (NULL for missing and infinite), then the search's per-row base.
    inner = exp.select(
        _col(GROUP),
        *[
            item
            for c in cols
            for item in (
                _alias(
                    S.case((S.is_finite(_col(f"x{c.index}")), _col(f"x{c.index}"))), f"f{c.index}"
                ),
                _col(f"x{c.index}"),
            )
        ],
    ).from_(f"{prefix}rows")
    ctes.append((f"{prefix}finite", inner))
    outer_items = [_col(GROUP)]
    for c in cols:
        outer_items += [_col(f"f{c.index}"), _col(f"x{c.index}")]
        if plan.searching(c.index) or plan.finishing(c.index):
            outer_items.append(_alias(c.method.sql_search_base(_col(f"f{c.index}")), f"b{c.index}"))
    ctes.append((f"{prefix}values", exp.select(*outer_items).from_(f"{prefix}finite")))

    state = f"{prefix}state"
    ctes.append(
        (
            state,
            _state_rows(
                spec,
                plan,
                sorted({k for (_, k) in (*plan.searches, *plan.lambdas) if (k != "") == grouped}),
            ),
        )
    )

    def joined(base: str) -> exp.Select:
        return (
            exp.select()
            .from_(exp.to_table(base).as_("v", quoted=True))
            .join(
                exp.to_table(state).as_("s", quoted=True),
                on=_state_match(),
                join_type="left",
            )
        )

    # First pass.
    first = joined(f"{prefix}values").select(
        _alias(_col(GROUP, "v"), GROUP), _alias(_count(), ROWS)
    )
    for c in cols:
        f, i = _col(f"f{c.index}", "v"), c.index
        first = _add(
            first,
            _alias(_count(f), name(i, "n")),
            _alias(S.sub(_count(), _count(_col(f"x{i}", "v"))), name(i, "missing")),
            _alias(S.sub(_count(_col(f"x{i}", "v")), _count(f.copy())), name(i, "infinite")),
            _alias(exp.Min(this=f.copy()), name(i, "min")),
            _alias(exp.Max(this=f.copy()), name(i, "max")),
            _alias(exp.Avg(this=f.copy()), name(i, "mean1")),
        )
        b = _col(f"b{i}", "v")
        if plan.searching(i) and c.method.search_centred:
            first = _add(first, _alias(exp.Avg(this=b), name(i, "bmean")))
        if plan.finishing(i):
            t = c.method.sql_search_value(b.copy(), _col(name(i, "lambda"), "s"))
            first = _add(first, _alias(exp.Avg(this=t), name(i, "tmean1")))
    first = first.group_by(_col(GROUP, "v"), copy=False)
    ctes.append((f"{prefix}first", first))

    # Second pass: deviations from the first pass's means; the candidates' variances. The
    # per-row quantities are computed one level in, so that each formula below names
    # columns rather than repeating expressions.
    prepared = (
        exp.select(_alias(_col(GROUP, "v"), GROUP))
        .from_(exp.to_table(f"{prefix}values").as_("v", quoted=True))
        .join(
            exp.to_table(f"{prefix}first").as_("m", quoted=True),
            on=exp.EQ(this=_col(GROUP, "v"), expression=_col(GROUP, "m")),
        )
        .join(
            exp.to_table(state).as_("s", quoted=True),
            on=_state_match(),
            join_type="left",
        )
    )
    second = exp.select(_col(GROUP)).from_(f"{prefix}prepared")
    for c in cols:
        i = c.index
        if "moments" in c.method.summary_needs and plan.basic:
            # Deviations in units of the range, so that their squares neither underflow
            # (values near 1e-300) nor overflow (near 1e300); the range is given back.
            lo, hi = _col(name(i, "min"), "m"), _col(name(i, "max"), "m")
            span = S.case((S.gt(hi, lo), S.sub(hi.copy(), lo.copy())), default=S.num(1.0))
            prepared = _add(
                prepared,
                _alias(
                    S.div(S.sub(_col(f"f{i}", "v"), _col(name(i, "mean1"), "m")), span),
                    f"d{i}",
                ),
                _alias(span.copy(), f"span{i}"),
            )
            second = _add(
                second,
                _alias(exp.Max(this=_col(f"span{i}")), name(i, "devscale")),
                _alias(exp.Sum(this=_col(f"d{i}")), name(i, "devsum")),
                _alias(exp.Sum(this=_square(_col(f"d{i}"))), name(i, "devsq")),
            )
        if plan.searching(i):
            base = _col(f"b{i}", "v")
            if c.method.search_centred:
                base = S.sub(base, _col(name(i, "bmean"), "m"))
            prepared = _add(prepared, _alias(base, f"u{i}"))
            for k in range(-HALF, HALF + 1):
                prepared = _add(prepared, _alias(_lam_expr(i, k, plan), f"lam{i}_{k + HALF}"))
            second = _add(
                second,
                _alias(exp.Sum(this=c.method.sql_search_linear(_col(f"u{i}"))), name(i, "linear")),
                _alias(exp.Max(this=_col(f"lam{i}_{HALF}")), name(i, "centre")),
            )
            default = plan.default_search.get(i, Search(0.0, 2.0 / HALF))
            step = exp.Coalesce(this=_col(name(i, "step"), "s"), expressions=[S.num(default.step)])
            prepared = _add(prepared, _alias(step, f"step{i}"))
            second = _add(second, _alias(exp.Max(this=_col(f"step{i}")), name(i, "step")))
            for k in range(-HALF, HALF + 1):
                value = c.method.sql_search_value(_col(f"u{i}"), _col(f"lam{i}_{k + HALF}"))
                second = _add(second, _alias(_var_pop(value), name(i, f"v{k + HALF}")))
        if plan.finishing(i):
            t = c.method.sql_search_value(_col(f"b{i}", "v"), _col(name(i, "lambda"), "s"))
            prepared = _add(
                prepared,
                _alias(S.sub(t, _col(name(i, "tmean1"), "m")), f"t{i}"),
                _alias(_col(name(i, "lambda"), "s"), f"lambda{i}"),
            )
            second = _add(
                second,
                _alias(exp.Max(this=_col(f"lambda{i}")), name(i, "lambda")),
                _alias(exp.Sum(this=_col(f"t{i}")), name(i, "tdevsum")),
                _alias(exp.Sum(this=_square(_col(f"t{i}"))), name(i, "tdevsq")),
            )
    ctes.append((f"{prefix}prepared", prepared))
    second = second.group_by(_col(GROUP), copy=False)
    ctes.append((f"{prefix}second", second))

    # Quartiles: the order statistics around each type-7 position, by row number.
    quartile_cols = [c for c in cols if "quartiles" in c.method.summary_needs and plan.basic]
    for c in quartile_cols:
        i = c.index
        f = _col(f"f{i}")
        window = exp.Window(
            this=exp.RowNumber(),
            partition_by=[_col(GROUP)],
            order=exp.Order(expressions=[exp.Ordered(this=f.copy())]),
        )
        count = exp.Window(this=_count(), partition_by=[_col(GROUP)])
        ranked = (
            exp.select(
                _col(GROUP), _alias(f.copy(), "v"), _alias(window, "rn"), _alias(count, "cnt")
            )
            .from_(f"{prefix}values")
            .where(exp.Not(this=exp.Is(this=f.copy(), expression=exp.Null())))
        )
        ctes.append((f"{prefix}rank{i}", ranked))
        picks = []
        for j, q in _QUARTILES:
            position = exp.Floor(this=S.mul(S.sub(_col("cnt"), exp.Literal.number(1)), S.num(q)))
            for suffix, offset in (("a", 1), ("b", 2)):
                hit = S.eq(_col("rn"), S.add(position.copy(), exp.Literal.number(offset)))
                picks.append(
                    _alias(exp.Max(this=S.case((hit, _col("v")))), name(i, f"q{j}{suffix}"))
                )
        ctes.append(
            (
                f"{prefix}quart{i}",
                exp.select(_col(GROUP), *picks).from_(f"{prefix}rank{i}").group_by(_col(GROUP)),
            )
        )

    # The part's row: every statistic, named once.
    final = exp.select(_alias(exp.Literal.string("group" if grouped else "all"), PART))
    final = final.from_(exp.to_table(f"{prefix}first").as_("m", quoted=True)).join(
        exp.to_table(f"{prefix}second").as_("d", quoted=True),
        on=exp.EQ(this=_col(GROUP, "m"), expression=_col(GROUP, "d")),
    )
    first_names = [e.alias for e in first.expressions]
    second_names = [e.alias_or_name for e in second.expressions if e.alias_or_name != GROUP]
    final = _add(final, *[_alias(_col(n, "m"), n) for n in first_names])
    final = _add(final, *[_alias(_col(n, "d"), n) for n in second_names])
    for c in quartile_cols:
        alias = f"q{c.index}"
        final = final.join(
            exp.to_table(f"{prefix}quart{c.index}").as_(alias, quoted=True),
            on=exp.EQ(this=_col(GROUP, "m"), expression=_col(GROUP, alias)),
            join_type="left",
        )
        final = _add(
            final,
            *[
                _alias(_col(name(c.index, f"q{j}{s}"), alias), name(c.index, f"q{j}{s}"))
                for j, _ in _QUARTILES
                for s in "ab"
            ],
        )
    return ctes, final


def build_fit_query(spec: FitSpec, source: exp.Expression, plan: RoundPlan) -> exp.Expression:
    """The whole query: the part for all fit rows, and (with a group) the per-group part."""
    ctes, query = _part(spec, plan, source, False, "all_")
    if spec.group is not None:
        more, grouped = _part(spec, plan, source, True, "grp_")
        ctes += more
        query = exp.union(query, grouped, distinct=False)
    # sqlglot puts a WITH on the outermost statement: wrap the union in a SELECT.
    out = exp.select(exp.Star()).from_(query.subquery("scalewright_result"))
    for cte_name, cte in ctes:
        out = out.with_(_ident(cte_name), as_=cte)
    return out


def quartiles_from(n: int, pairs: list[tuple[float, float | None]]) -> tuple[float, float, float]:
    """Type-7 quartiles from the order statistics around each position, computed exactly
    as numpy's ``quantile(method="linear")`` does (its own interpolation on the pair)."""
    import numpy as np

    out = []
    for (_, q), (a, b) in zip(_QUARTILES, pairs, strict=True):
        position = (n - 1) * q
        gamma = position - math.floor(position)
        if b is None or gamma == 0:
            # numpy still interpolates (a + (b - a) * 0 == a for finite values).
            out.append(float(a))
            continue
        out.append(float(np.quantile(np.array([a, b]), gamma, method="linear")))
    return out[0], out[1], out[2]
