"""``scalewright sql PROJECT --fit`` and ``scalewright fit PROJECT --from-sql-result FILE``.

The fit query runs in the data platform; its result (one row for all fit rows, and one per
group) is saved as CSV or JSON and read back here. Box-Cox and Yeo-Johnson need more than
one query (docs/decisions.md, "Fitting where the data lives"): each result says whether
another round is needed, and ``--after`` writes that round's query.
"""

from __future__ import annotations

import csv
import dataclasses
import json
from pathlib import Path

from ..errors import ReadError, ScalewrightError
from ..project import Project, now_iso
from .dialects import for_dialect
from .fit_query import build_fit_query
from .fitting import PlatformFit, ResultError, spec_for
from .names import check_dialect
from .select import _quoted_table, default_table_name


def read_result(path: str | Path) -> list[dict]:
    """The rows of a saved query result: CSV with a header row, a JSON array of objects,
    one JSON object, JSON lines, or an object with "columns" and "data"/"rows"."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise ReadError(path, "the file does not exist") from None
    except (OSError, UnicodeDecodeError) as err:
        raise ReadError(path, f"the file cannot be read ({err})") from None
    stripped = text.strip()
    if not stripped:
        raise ReadError(path, "the file is empty")
    if stripped[0] in "[{":
        try:
            doc = json.loads(stripped)
        except json.JSONDecodeError:
            try:
                doc = [json.loads(line) for line in stripped.splitlines() if line.strip()]
            except json.JSONDecodeError as err:
                raise ReadError(path, f"this is not valid JSON ({err})") from None
        if isinstance(doc, dict) and "columns" in doc and ("data" in doc or "rows" in doc):
            names = [c if isinstance(c, str) else c.get("name") for c in doc["columns"]]
            doc = [dict(zip(names, row, strict=False)) for row in doc.get("data", doc.get("rows"))]
        if isinstance(doc, dict):
            doc = [doc]
        if not isinstance(doc, list) or not all(isinstance(r, dict) for r in doc):
            raise ReadError(path, "expected JSON rows (objects of column: value)")
        return doc
    rows = list(csv.DictReader(text.splitlines()))
    if not rows:
        raise ReadError(path, "the file has a header but no rows")
    return rows


def _state_after(project: Project, after: str | Path | None) -> tuple[PlatformFit, object]:
    state = PlatformFit(spec_for(project))
    if after is None:
        return state, state.first_round()
    try:
        state.absorb(read_result(after))
    except ResultError as err:
        raise ReadError(Path(after), str(err)) from None
    return state, state.next_round(basic=True)


def fit_query_text(
    project: Project, *, dialect: str = "duckdb", table: str | None = None, after=None
) -> str:
    """The fit query (the first round, or the one after the result ``after``)."""
    from sqlglot import exp

    dialect = check_dialect(dialect)
    _, plan = _state_after(project, after)
    if plan is None:
        raise ScalewrightError(
            f"{after}: this result already holds every parameter; run "
            "'scalewright fit PROJECT --from-sql-result' on it"
        )
    source = table or default_table_name(project)
    source_table = exp.to_table(source) if "." in source else _quoted_table(source)
    tree = build_fit_query(spec_for(project), source_table, plan)
    return for_dialect(tree, dialect).sql(dialect=dialect, pretty=True)


def project_from_result(project: Project, result_path: str | Path) -> Project:
    """A new project: the choices of ``project``, the parameters from the result."""
    state = PlatformFit(spec_for(project))
    try:
        state.absorb(read_result(result_path))
    except ResultError as err:
        raise ReadError(Path(result_path), str(err)) from None
    if state.next_round() is not None:
        raise ScalewrightError(
            f"{result_path}: Box-Cox or Yeo-Johnson needs another round of the search for "
            "lambda; run the query that 'scalewright sql PROJECT --fit --after "
            f"{result_path}' prints, and give its result to --from-sql-result"
        )
    settings = project.plan.settings if project.plan is not None else project.settings
    plan = state.fitted_plan(settings)
    stamp = now_iso()
    return dataclasses.replace(
        project,
        source=None,
        source_size=None,
        source_sha256=None,
        choices={k: c.normalized() for k, c in project.choices.items()},
        settings=settings,
        plan=plan,
        created=stamp,
        modified=stamp,
    )
