"""Writing one expression tree out per dialect.

EXPM1 and LOG1P (see ``engine.sql_terms``) are Spark's own functions; for the other
dialects they are written out in the classic accurate forms: Kahan's ``(u - 1) * x / ln(u)``
with ``u = exp(x)``, and ``ln(u) * x / (u - 1)`` with ``u = 1 + x`` (Goldberg 1991, "What
every computer scientist should know about floating-point arithmetic", theorem 4), which
stay within a few units in the last place where ``exp(x) - 1`` and ``ln(1 + x)`` lose
every digit for tiny x.
"""

from __future__ import annotations

from sqlglot import exp

from ..engine.sql_terms import add, case, div, eq, exp_, ln, mul, num, sub

#: Dialects with no SINH function.
_NO_SINH = {"tsql"}
#: Dialects with EXPM1 and LOG1P of their own.
_NATIVE_EXPM1_LOG1P = {"spark", "databricks", "hive"}


def _kahan_expm1(x: exp.Expression) -> exp.Expression:
    """u = exp(x); x if u = 1, -1 if u = 0, else (u - 1) * x / ln(u) (Kahan)."""
    u = exp_(x)
    return case(
        (eq(u, exp.Literal.number(1)), x.copy()),
        (eq(u.copy(), exp.Literal.number(0)), num(-1.0)),
        default=div(mul(sub(u.copy(), exp.Literal.number(1)), x.copy()), ln(u.copy())),
    )


def _sinh_expm1(x: exp.Expression) -> exp.Expression:
    """2 * sinh(x / 2) * exp(x / 2): sinh keeps full precision for tiny x, and no CASE
    is needed but the one for x so negative that sinh overflows (the result is -1)."""
    half = div(x, num(2.0))
    return case(
        (exp.LT(this=x.copy(), expression=num(-1000.0)), num(-1.0)),
        default=mul(mul(num(2.0), exp.Sinh(this=half)), exp_(half.copy())),
    )


def _kahan_log1p(x: exp.Expression) -> exp.Expression:
    """u = 1 + x; x if u = 1, else ln(u) * x / (u - 1) (Goldberg 1991, theorem 4)."""
    u = add(exp.Literal.number(1), x)
    return case(
        (eq(u, exp.Literal.number(1)), x.copy()),
        default=div(mul(ln(u.copy()), x.copy()), sub(u.copy(), exp.Literal.number(1))),
    )


def for_dialect(tree: exp.Expression, dialect: str) -> exp.Expression:
    """The tree with EXPM1/LOG1P written out where ``dialect`` has no such functions."""
    if dialect in _NATIVE_EXPM1_LOG1P:
        return tree

    def lower(node: exp.Expression) -> exp.Expression:
        if isinstance(node, exp.Anonymous) and node.name.upper() in _WRITTEN_OUT:
            return _WRITTEN_OUT[node.name.upper()](node.expressions[0].copy().transform(lower))
        return node

    expm1 = _kahan_expm1 if dialect in _NO_SINH else _sinh_expm1
    _WRITTEN_OUT = {"EXPM1": expm1, "LOG1P": _kahan_log1p}
    return tree.copy().transform(lower)
