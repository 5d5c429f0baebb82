"""Running the fit query's rounds in DuckDB (embedded) until every parameter is known."""

from __future__ import annotations

from sqlglot import exp

from ..engine import FitSettings, FittedPlan
from ..errors import ColumnError
from .dialects import for_dialect
from .fit_query import build_fit_query
from .fitting import PlatformFit

#: More rounds than the search can need (it slides at most a few times, then narrows).
MAX_ROUNDS = 40


def fetch_rows(con, sql: str) -> list[dict]:
    cursor = con.execute(sql)
    names = [d[0] for d in cursor.description]
    return [dict(zip(names, row, strict=True)) for row in cursor.fetchall()]


def fit_in_duckdb(con, spec, source: exp.Expression, settings: FitSettings) -> FittedPlan:
    """Fit ``spec`` on the table or view ``source`` of the DuckDB connection ``con``."""
    state = PlatformFit(spec)
    plan = state.first_round()
    while plan is not None:
        if state.rounds >= MAX_ROUNDS:
            labels = sorted(
                {c.label for c in spec.columns for (i, _) in state.searches if i == c.index}
            )
            raise ColumnError(
                labels[0] if labels else "",
                f"the likelihood of lambda has no maximum within reach after {MAX_ROUNDS} "
                "passes (the values are nearly all the same); choose another method",
            )
        sql = for_dialect(build_fit_query(spec, source, plan), "duckdb").sql(dialect="duckdb")
        state.absorb(fetch_rows(con, sql))
        plan = state.next_round()
    return state.fitted_plan(settings)
