"""Turning aggregate results into fitted parameters, round by round.

``PlatformFit`` holds what the rounds have told so far. Each round's result rows (from
DuckDB, or from a data platform as CSV or JSON) are absorbed; ``next_round`` says what the
next query must compute, or None when every parameter is known; ``fitted_plan`` then
builds the same ``FittedPlan`` the in-memory fit would, through each method's
``fit_summary``.

The lambda search (docs/decisions.md, "Fitting where the data lives"): each round
evaluates the profile log-likelihood at 33 candidate lambdas in one pass (one variance
per candidate). The grid starts at -2..2 in steps of 0.125 (the bracket scipy's Brent
starts from), slides (with a step four times wider each time) while the best candidate is at an edge, and otherwise narrows around
the best candidate by 16 each round; once the step is at most 4e-5, a cubic fitted to that round's candidates gives
lambda (averaging out the rounding of each evaluation where the likelihood is flat). Yeo-Johnson's candidates stay within the bounds the in-memory fit uses.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

from ..engine import MAX_GROUPS, FitSettings, FittedColumn, FittedPlan, ParamSet, get_method
from ..engine.method_base import ValueSummary
from ..errors import ColumnError, ScalewrightError
from .fit_query import (
    GROUP,
    HALF,
    MET_NEEDS,
    PART,
    ROWS,
    FitColumn,
    FitSpec,
    RoundPlan,
    Search,
    name,
)
from .fit_query import quartiles_from as _quartiles
from .names import platform_names

#: Narrowing per round, and the step below which a parabola gives the final lambda.
NARROW = 16.0
FINE_STEP = 4e-5
#: Growth of the step while the grid slides towards a maximum beyond its edge.
GROW = 4.0
#: When the best candidate sits at a bound, narrow until the step is this small.
TINY_STEP = 1e-8


class ResultError(ScalewrightError):
    """A query result that does not fit the project (a column missing, a wrong value)."""


@dataclass
class _Part:
    """What is known of one part (all fit rows, or one group)."""

    rows: int = 0
    stats: dict[int, dict[str, Any]] = field(default_factory=dict)


def spec_for(project) -> FitSpec:
    """The columns to fit (every choice other than 'none'), named as in the platform."""
    labels = list(project.columns) or list(project.choices)
    names = platform_names(labels, list(project.headers))
    settings = project.plan.settings if project.plan is not None else project.settings
    columns = []
    for label, choice in project.choices.items():
        choice = choice.normalized()
        if choice.method == "none":
            continue
        check_needs(label, get_method(choice.method))
        columns.append(
            FitColumn(
                len(columns) + 1,
                label,
                names.get(label, label),
                get_method(choice.method),
                dict(choice.options),
            )
        )
    if not columns:
        raise ScalewrightError("the project chooses no method for any column; nothing to fit")
    group = names.get(settings.group_by, settings.group_by) if settings.group_by else None
    fit_where = None
    if settings.fit_where is not None:
        column, value = settings.fit_where
        fit_where = (names.get(column, column), value)
    return FitSpec(tuple(columns), group, fit_where)


def check_needs(label: str, method) -> None:
    """ColumnError when the aggregate query cannot give what this method's fit needs."""
    if not method.summary_needs <= MET_NEEDS:
        try:
            method.fit_summary(None, {})
        except ScalewrightError as err:
            raise ColumnError(label, str(err)) from None
        raise ColumnError(label, f"{method.name} cannot be fitted by an aggregate query")


def canonical_key(text: str) -> str:
    """A group's key as the engine writes it: ``3.0`` (a double read as text) is ``3``."""
    text = text.strip()
    if re.fullmatch(r"-?\d+\.0+", text):
        text = text.split(".")[0]
        return "0" if text == "-0" else text
    return text


def _number(value: Any, where: str) -> float | None:
    if value is None:
        return None
    if isinstance(value, bool):
        raise ResultError(f"{where}: expected a number, not {value!r}")
    if isinstance(value, (int, float)):
        return float(value)
    text = str(value).strip()
    if text == "" or text.lower() in ("null", "none", "nan", "na"):
        return None
    try:
        return float(text)
    except ValueError:
        raise ResultError(f"{where}: expected a number, not {text!r}") from None


class PlatformFit:
    """The state of a fit done by aggregate queries (see module docstring)."""

    def __init__(self, spec: FitSpec) -> None:
        self.spec = spec
        self.parts: dict[str, _Part] = {}
        self.searches: dict[tuple[int, str], Search] = {}
        self.lambdas: dict[tuple[int, str], tuple[float, bool]] = {}  # found, constrained
        self.moments: dict[tuple[int, str], tuple[float, float]] = {}  # of transformed values
        self.rounds = 0

    # ------------------------------------------------------------------ rounds

    def first_round(self) -> RoundPlan:
        return RoundPlan(
            default_search={c.index: Search(0.0, 2.0 / HALF) for c in self._power_columns()}
        )

    def _column(self, index: int) -> FitColumn:
        return self.spec.columns[index - 1]

    def _power_columns(self) -> list[FitColumn]:
        return [c for c in self.spec.columns if "lambda" in c.method.summary_needs]

    def absorb(self, rows: Iterable[Mapping[str, Any]]) -> None:
        """Take in one round's result rows."""
        self.rounds += 1
        seen = False
        for raw in rows:
            row = {str(k).strip().lower(): v for k, v in raw.items()}
            if PART not in row:
                raise ResultError(f"the result has no column '{PART}'; is it the fit query's?")
            part = str(row[PART]).strip().lower()
            if part == "all":
                key = ""
            elif part == "group":
                raw_key = row.get(GROUP)
                if raw_key is None:
                    continue
                key = canonical_key(str(raw_key))
                if key == "":
                    continue
            else:
                raise ResultError(f"{PART}: expected 'all' or 'group', not {row[PART]!r}")
            seen = True
            self._absorb_part(key, row)
        if not seen:
            raise ResultError("the result has no rows")
        if "" not in self.parts:
            raise ResultError("the result has no row for all fit rows (scalewright_part 'all')")

    def _absorb_part(self, key: str, row: dict[str, Any]) -> None:
        part = self.parts.setdefault(key, _Part())
        rows = _number(row.get(ROWS), ROWS)
        if rows is not None:
            part.rows = int(rows)
        for c in self.spec.columns:
            stats = {
                k[len(f"c{c.index}_") :]: v for k, v in row.items() if k.startswith(f"c{c.index}_")
            }
            if not stats:
                continue
            known = part.stats.setdefault(c.index, {})
            where = f"column '{c.label}'" + (f" (group '{key}')" if key else "")
            for stat, value in stats.items():
                known[stat] = _number(value, f"{where}: {name(c.index, stat)}")
            if "lambda" in c.method.summary_needs:
                self._advance_search(c, key, known, where)

    def _advance_search(self, c: FitColumn, key: str, stats: dict, where: str) -> None:
        ident = (c.index, key)
        n, lo, hi = stats.get("n"), stats.get("min"), stats.get("max")
        if not n or lo is None or hi is None:
            return
        if stats.get("tdevsum") is not None and stats.get("lambda") is not None:
            t_mean = stats["tmean1"] + stats["tdevsum"] / n
            t_sq_dev = stats["tdevsq"] - stats["tdevsum"] ** 2 / n
            self.moments[ident] = (t_mean, t_sq_dev)
            if ident not in self.lambdas:
                self.lambdas[ident] = (stats["lambda"], False)
            return
        if ident in self.lambdas:
            return
        if lo == hi or (c.method.id == "boxcox" and not lo > 0):
            return  # fit_summary says why it cannot be fitted
        bounds = c.method.lambda_bounds(lo, hi)
        if c.method.id == "yeojohnson" and bounds is None:
            self._found(c, ident, 1.0, lo, hi)  # every lambda fits equally (as in memory)
            return
        if stats.get("v0") is None and stats.get("centre") is None:
            return
        search = Search(stats["centre"], stats["step"])
        variances = [stats.get(f"v{k}") for k in range(2 * HALF + 1)]
        outcome = step_search(c.method, search, variances, stats["linear"], n, bounds)
        if outcome is None:
            raise ColumnError(
                c.label,
                f"the likelihood cannot be evaluated for any lambda{where[len('column ' + repr(c.label)) :]}",
            )
        if isinstance(outcome, Search):
            self.searches[ident] = outcome
        else:
            self.searches.pop(ident, None)
            self._found(c, ident, outcome, lo, hi)

    def _found(self, c: FitColumn, ident, lam: float, lo: float, hi: float) -> None:
        self.lambdas[ident] = c.method.finish_lambda(lam, lo, hi)

    def next_round(self, *, basic: bool = False) -> RoundPlan | None:
        """What the next query must compute, or None when every parameter is known."""
        lambdas = {}
        for c in self._power_columns():
            for key in self.parts:
                ident = (c.index, key)
                if ident not in self.lambdas:
                    continue
                if c.options.get("standardize") and ident not in self.moments:
                    lambdas[ident] = self.lambdas[ident][0]
                elif basic:
                    # A result read from a file must hold everything found so far.
                    lambdas[ident] = self.lambdas[ident][0]
        if not self.searches and not any(
            ident not in self.moments and self._column(ident[0]).options.get("standardize")
            for ident in lambdas
        ):
            return None
        return RoundPlan(searches=dict(self.searches), lambdas=lambdas, basic=basic)

    # ------------------------------------------------------------------ result

    def summary(self, c: FitColumn, key: str) -> ValueSummary:
        stats = self.parts[key].stats.get(c.index, {})
        n = int(stats.get("n") or 0)
        lo, hi = stats.get("min"), stats.get("max")
        kw: dict[str, Any] = {}
        needs = c.method.summary_needs
        if "moments" in needs and n:
            for stat in ("mean1", "devsum", "devsq"):
                if stats.get(stat) is None:
                    raise ResultError(f"the result has no {name(c.index, stat)} for '{c.label}'")
            scale = stats.get("devscale") or 1.0
            kw["mean"] = stats["mean1"] + scale * (stats["devsum"] / n)
            kw["sq_dev"] = stats["devsq"] - stats["devsum"] ** 2 / n
            kw["dev_scale"] = scale
        if "quartiles" in needs and n:
            pairs = []
            for j in (1, 2, 3):
                a, b = stats.get(f"q{j}a"), stats.get(f"q{j}b")
                if a is None:
                    raise ResultError(
                        f"the result has no {name(c.index, f'q{j}a')} for '{c.label}'"
                    )
                pairs.append((a, b))
            kw["quartiles"] = _quartiles(n, pairs)
        if "lambda" in needs and (c.index, key) in self.lambdas:
            kw["lam"], kw["lam_constrained"] = self.lambdas[(c.index, key)]
            if (c.index, key) in self.moments:
                kw["t_mean"], kw["t_sq_dev"] = self.moments[(c.index, key)]
        return ValueSummary(
            n, lo if lo is not None else math.nan, hi if hi is not None else math.nan, **kw
        )

    def fitted_plan(self, settings: FitSettings) -> FittedPlan:
        """The fitted parameters, as the in-memory fit makes them."""
        if self.next_round() is not None:
            raise ScalewrightError("the lambda search is not finished; another round is needed")
        everyone = self.parts[""]
        if settings.fit_where is not None and everyone.rows == 0:
            column, wanted = settings.fit_where
            raise ColumnError(
                column, f"no row has the value '{wanted}', so there is nothing to fit on"
            )
        groups = sorted(k for k in self.parts if k)
        if len(groups) > MAX_GROUPS:
            raise ColumnError(
                settings.group_by or "",
                f"has {len(groups):,} different values; grouping works with at most {MAX_GROUPS:,}",
            )
        columns = {}
        for c in self.spec.columns:
            pooled, warnings = self._param_set(c, "")
            fitted_groups = {}
            for key in groups:
                if c.index not in self.parts[key].stats:
                    continue
                fitted_groups[key], more = self._param_set(c, key)
                warnings.extend(more)
            stats = everyone.stats.get(c.index, {})
            n_missing = int(stats.get("missing") or 0)
            n_infinite = int(stats.get("infinite") or 0)
            if n_infinite:
                warnings.append(
                    f"{n_infinite} infinite values were left out of the fit and are passed through"
                )
            if pooled.n < 2:
                warnings.append("only one value to fit on")
            columns[c.label] = FittedColumn(
                column=c.label,
                method=c.method.id,
                options=dict(c.options),
                pooled=pooled,
                groups=fitted_groups,
                n_missing=n_missing,
                n_infinite=n_infinite,
                warnings=tuple(warnings),
            )
        return FittedPlan(columns, settings, everyone.rows)

    def _param_set(self, c: FitColumn, key: str) -> tuple[ParamSet, list[str]]:
        where = f" (group '{key}')" if key else ""
        summary = self.summary(c, key)
        if summary.n == 0:
            raise ColumnError(c.label, f"has no numbers to fit{where}")
        try:
            result = c.method.fit_summary(summary, dict(c.options))
        except ScalewrightError as err:
            raise ColumnError(c.label, f"{err}{where}") from None
        return (
            ParamSet(dict(result), summary.n, summary.min, summary.max),
            [f"{w}{where}" for w in result.warnings],
        )


def step_search(method, search: Search, variances, linear: float, n: float, bounds):
    """One step of the lambda search: the next Search, the lambda found, or None."""
    lams = [search.centre + float(k) * search.step for k in range(-HALF, HALF + 1)]
    llf = []
    for lam, var in zip(lams, variances, strict=True):
        inside = bounds is None or bounds[0] <= lam <= bounds[1]
        if var is None or not inside or not (var > 0 and math.isfinite(var)):
            llf.append(-math.inf)
            continue
        llf.append(method.llf_coef(lam) * linear - 0.5 * n * math.log(var))
    best = max(range(len(llf)), key=lambda k: (llf[k], -k))
    if llf[best] == -math.inf:
        return None
    lam = lams[best]
    left = llf[best - 1] if best > 0 else -math.inf
    right = llf[best + 1] if best < len(llf) - 1 else -math.inf
    at_edge = best in (0, len(llf) - 1)
    bound_limited = not at_edge and (left == -math.inf or right == -math.inf)
    if at_edge:
        beyond = lam + (search.step if best else -search.step)
        if bounds is None or bounds[0] <= beyond <= bounds[1]:
            # The maximum lies further out: slide, with ever wider steps (as a bracket
            # search grows its steps), so that far-off maxima are reached in a few rounds.
            return Search(lam, search.step * GROW)
        bound_limited = True
    if bound_limited:
        if search.step <= TINY_STEP:
            return lam
        return Search(lam, search.step / NARROW)
    if search.step <= FINE_STEP:
        lam = _polished(lams, llf, best, search.step)
        if bounds is not None:
            lam = min(max(lam, bounds[0]), bounds[1])
        return lam
    return Search(lam, search.step / NARROW)


def _polished(lams: list[float], llf: list[float], best: int, step: float) -> float:
    """The maximum of a cubic fitted by least squares to the last round's candidates.

    Near its maximum a likelihood can be so flat that the rounding of each evaluation
    matters; a fit through all 33 candidates averages that out, and its cubic term keeps
    the curve's asymmetry from moving the maximum.
    """
    import numpy as np

    k = np.arange(len(lams), dtype=float) - best
    y = np.asarray(llf, dtype=float)
    ok = np.isfinite(y)
    if ok.sum() < 5:
        return lams[best]
    c3, c2, c1, _ = np.polyfit(k[ok], y[ok] - y[best], 3)
    roots = np.roots([3 * c3, 2 * c2, c1]) if c3 != 0 else np.array([-c1 / (2 * c2)])
    found = [
        float(r.real)
        for r in np.atleast_1d(roots)
        if abs(r.imag) < 1e-12 and 6 * c3 * r.real + 2 * c2 < 0 and abs(r.real) <= 1.0
    ]
    if not found:
        return lams[best]
    return lams[best] + min(found, key=abs) * step
