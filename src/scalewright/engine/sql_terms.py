"""The SQL vocabulary the methods write their formulas in (sqlglot expressions).

Imported only inside the methods' ``sql_forward`` / ``sql_inverse`` and by the
``platform`` package, so that ``import scalewright.engine`` never loads sqlglot.

Everything returns sqlglot expressions (one tree, written out per dialect at the end).
Numbers are written as Python's ``repr`` of the float (the shortest text that reads back to
the same double) inside ``CAST(... AS DOUBLE)``, so that no dialect keeps them as DECIMAL
and every dialect reads back the very same double.

Most SQL dialects have no ``expm1`` or ``log1p``: they are marked here as functions of
those names and written out per dialect by ``scalewright.platform.dialects`` in the
classic accurate forms (Kahan's ``(u - 1) * x / ln(u)`` with ``u = exp(x)``, and ``ln(u) * x / (u - 1)`` with
``u = 1 + x``; Goldberg 1991, "What every computer scientist should know about
floating-point arithmetic", theorem 4), which stay within a few units in the last place.
"""

from __future__ import annotations

import math

from sqlglot import exp


def num(value: float | int) -> exp.Expression:
    """An exact double literal: ``CAST(<repr> AS DOUBLE)``."""
    value = float(value)
    if not math.isfinite(value):
        raise ValueError(f"{value!r} cannot be written as a SQL number")
    return exp.cast(exp.Literal.number(repr(value)), exp.DataType.build("double"))


def as_double(e: exp.Expression) -> exp.Expression:
    return exp.cast(e, exp.DataType.build("double"))


def paren(e: exp.Expression) -> exp.Expression:
    return e if isinstance(e, (exp.Column, exp.Cast, exp.Paren, exp.Literal)) else exp.paren(e)


def add(a, b) -> exp.Expression:
    return exp.Add(this=paren(a), expression=paren(b))


def sub(a, b) -> exp.Expression:
    return exp.Sub(this=paren(a), expression=paren(b))


def mul(a, b) -> exp.Expression:
    return exp.Mul(this=paren(a), expression=paren(b))


def div(a, b) -> exp.Expression:
    return exp.Div(this=paren(a), expression=paren(b))


def neg(a) -> exp.Expression:
    return exp.Neg(this=paren(a))


def ln(a) -> exp.Expression:
    return exp.Ln(this=a)


def exp_(a) -> exp.Expression:
    return exp.Exp(this=a)


def case(*whens: tuple[exp.Expression, exp.Expression | None], default=None) -> exp.Expression:
    """``CASE WHEN c1 THEN v1 ... ELSE default END`` (no ELSE: NULL; a value None: NULL)."""
    out = exp.Case()
    for cond, value in whens:
        out = out.when(cond, value if value is not None else exp.Null(), copy=False)
    if default is not None:
        out = out.else_(default)
    return out


def lt(a, b) -> exp.Expression:
    return exp.LT(this=paren(a), expression=paren(b))


def gt(a, b) -> exp.Expression:
    return exp.GT(this=paren(a), expression=paren(b))


def ge(a, b) -> exp.Expression:
    return exp.GTE(this=paren(a), expression=paren(b))


def le(a, b) -> exp.Expression:
    return exp.LTE(this=paren(a), expression=paren(b))


def or_(*conds) -> exp.Expression:
    return exp.or_(*conds)


def eq(a, b) -> exp.Expression:
    return exp.EQ(this=paren(a), expression=paren(b))


def and_(*conds) -> exp.Expression:
    return exp.and_(*conds)


def is_finite(x: exp.Expression) -> exp.Expression:
    """True for finite numbers; false for infinities and NaN; NULL (unknown) for NULL.

    ``x - x = 0`` works in every dialect, including those with no infinity literal.
    """
    return eq(sub(x, x.copy()), exp.Literal.number(0))


def finite_or_null(e: exp.Expression) -> exp.Expression:
    """``e`` where it is finite, else NULL: a value the transform cannot map, or one beyond
    the float range, is left blank (as the engine does)."""
    return case((is_finite(e), e.copy()))


def expm1(x: exp.Expression) -> exp.Expression:
    """exp(x) - 1 accurately: Spark's own EXPM1, written out for other dialects
    (``for_dialect``)."""
    return exp.Anonymous(this="EXPM1", expressions=[x])


def log1p(x: exp.Expression) -> exp.Expression:
    """ln(1 + x) accurately, like ``expm1``; the caller guards the domain (x > -1)."""
    return exp.Anonymous(this="LOG1P", expressions=[x])


def column(name: str) -> exp.Column:
    """A quoted column reference (the name kept exactly, spaces and case included)."""
    return exp.Column(this=exp.to_identifier(name, quoted=True))
