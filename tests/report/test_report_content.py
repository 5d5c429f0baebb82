"""What a report says: every fitted column, the project's exact parameters, formulas that
really reverse the scaling, escaped names, and images that are real, valid SVG."""

from __future__ import annotations

import math
import re
import shutil
import xml.etree.ElementTree as ET
from html.parser import HTMLParser

import numpy as np
import pandas as pd
import pytest
import scipy.stats
from report_helpers import fit_and_save

from scalewright import tasks
from scalewright.engine import ColumnChoice, FitSettings, column_values, histogram
from scalewright.io import read_table
from scalewright.project import ALL_ROWS, UNSEEN_GROUPS, load_project, save_project
from scalewright.report import build_report, render_html, write_report
from scalewright.report.formulas import reverse_formula
from scalewright.report.svg import nice_ticks

SVG_NS = "{http://www.w3.org/2000/svg}"


class _Text(HTMLParser):
    """The text a reader sees (tags dropped, entities decoded), headings kept apart."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.parts: list[str] = []
        self.headings: list[str] = []
        self._in = ""

    def handle_starttag(self, tag, attrs):
        self._in = tag

    def handle_data(self, data):
        self.parts.append(data)
        if self._in in ("h1", "h2"):
            self.headings.append(data)


def page_text(html: str) -> _Text:
    parser = _Text()
    parser.feed(html)
    return parser


def svgs(html: str) -> list[ET.Element]:
    """Every inline SVG of the page, parsed as XML (fails if one is not well-formed)."""
    return [ET.fromstring(m) for m in re.findall(r"<svg\b.*?</svg>", html, flags=re.S)]


def evaluate(formula: str, y: float) -> float:
    """A reverse formula evaluated as a person would type it ('^' is a power)."""
    env = {"exp": math.exp, "y": y}
    if formula.startswith("y' = "):  # a first step: undo the standardizing
        first, _, formula = formula.partition("; ")
        env["yp"] = eval(first.removeprefix("y' = "), {"__builtins__": {}}, env)
        formula = formula.replace("y'", "yp")
    if formula.startswith("where "):
        for branch in formula.split("; "):
            condition, _, expression = branch.removeprefix("where ").partition(": x = ")
            if eval(condition.replace("^", "**"), {"__builtins__": {}}, env):
                return eval(expression.replace("^", "**"), {"__builtins__": {}}, env)
        raise AssertionError(f"no branch of {formula!r} holds for y = {y}")
    return eval(formula.removeprefix("x = ").replace("^", "**"), {"__builtins__": {}}, env)


# ---------------------------------------------------------------------------- content


def test_every_fitted_column_with_the_projects_exact_parameters(every_method):
    path, data, project = every_method
    report = build_report(project, path)
    assert [s.label for s in report.columns] == list(project.plan.columns)
    assert report.left_as_is == ["orchard"]
    assert report.figures_missing == ""
    html = render_html(report)
    for section in report.columns:
        fc = project.plan[section.label]
        assert section.values_fitted == fc.pooled.n
        exact = {row.exact for row in section.parameters if row.group == ALL_ROWS}
        for key, value in fc.pooled.params.items():
            if isinstance(value, float):
                # full precision: the text reads back as the very same float
                assert repr(value) in exact, (section.label, key)
                assert repr(value) in html
        assert section.formula == fc.method_obj.inverse_formula
        assert section.warnings == list(fc.warnings)
    facts = dict(report.facts)
    assert facts["Data file SHA-256"].startswith(project.source_sha256)
    assert facts["Data file size"].startswith(f"{project.source_size:,} bytes")
    assert facts["Fitted on"] == "1,945 rows: the rows where split is train"
    assert facts["Read with"] == (  # the import settings' words, not key='value'
        "encoding UTF-8, columns separated by comma, decimal point, column names on row 1"
    )
    assert facts["Data file now"].startswith("found, unchanged")
    assert facts["Project file"] == str(path)
    for what in ("Project saved", "Project created", "Report made"):
        assert re.fullmatch(r"\d{4}-\d\d-\d\d \d\d:\d\d:\d\d UTC.*", facts[what]), what


def test_rounded_values_are_the_exact_ones_rounded(every_method):
    path, _data, project = every_method
    report = build_report(project, path)
    number = re.compile(r"-?\d[\d.e+-]*")
    rounded = [
        r
        for s in report.columns
        for r in s.parameters
        if number.fullmatch(r.shown) and r.exact != r.shown
    ]
    assert len(rounded) >= len(report.columns), "parameters need more than 6 digits"
    for row in rounded:
        assert float(row.shown) == pytest.approx(float(row.exact), rel=1e-5)
    assert "rounded to 6 significant digits" in report.rounding_note


def _reference_forward(method: str, x: np.ndarray, p: dict) -> np.ndarray:
    """Scaled values from the published formulas (DESIGN.md's table), with scipy's
    Box-Cox and Yeo-Johnson (scipy.stats.boxcox / yeojohnson with a given lambda)."""
    if method == "zscore":
        return (x - p["mean"]) / p["sd"]
    if method == "minmax":
        return (x - p["min"]) / (p["max"] - p["min"]) * (p["high"] - p["low"]) + p["low"]
    if method == "robust":
        return (x - p["median"]) / p["scale"]
    if method == "maxabs":
        return x / p["maxabs"]
    if method == "decimal":
        return x / 10.0 ** p["j"]
    if method == "log":
        return np.log(x + p["shift"]) / np.log(float(p["base"]) if p["base"] != "e" else math.e)
    t = (
        scipy.stats.boxcox(x, lmbda=p["lambda"])
        if method == "boxcox"
        else scipy.stats.yeojohnson(x, lmbda=p["lambda"])
    )
    return (t - p["mean"]) / p["sd"] if p.get("standardize") else t


def test_the_formulas_with_fitted_numbers_turn_scaled_values_back(every_method):
    path, data, project = every_method
    table = read_table(data)
    report = build_report(project, path)
    for section in report.columns:
        fc = project.plan[section.label]
        x = column_values(table.data, section.label)
        x = np.unique(x[np.isfinite(x)])
        x = x[np.linspace(0, x.size - 1, 25).astype(int)]  # smallest to largest
        [(group, formula)] = section.reverse
        assert group == ALL_ROWS
        y = _reference_forward(fc.method, x, fc.pooled.params)
        back = np.array([evaluate(formula, float(v)) for v in y])
        np.testing.assert_allclose(back, x, rtol=1e-9, atol=1e-9, err_msg=section.label)


@pytest.mark.parametrize(
    "method, params, y, x",
    [
        # hand-worked (common practice: the inverse of each published formula)
        ("minmax", {"min": 2.0, "max": 6.0, "low": -1.0, "high": 1.0}, 0.0, 4.0),
        ("decimal", {"j": -2}, 0.5, 0.005),
        ("log", {"base": "e", "shift": 1.0}, 0.0, 0.0),
        ("log", {"base": "2", "shift": 0.0}, 3.0, 8.0),
        ("boxcox", {"lambda": 0.0, "standardize": False}, 0.0, 1.0),
        ("yeojohnson", {"lambda": 0.0, "standardize": False}, math.log(3.0), 2.0),
        ("yeojohnson", {"lambda": 2.0, "standardize": False}, -math.log(3.0), -2.0),
        ("yeojohnson", {"lambda": 1.0, "standardize": False}, -2.0, -2.0),
        (
            "boxcox",
            {"lambda": 0.0, "standardize": True, "mean": 1.0, "sd": 2.0, "ddof": 1},
            0.5,
            math.exp(2.0),
        ),
    ],
)
def test_formula_edge_cases(method, params, y, x):
    assert evaluate(reverse_formula(method, params), y) == pytest.approx(x, rel=1e-12)


def test_negative_numbers_are_in_parentheses():
    formula = reverse_formula("zscore", {"mean": -3.5, "sd": 2.0, "ddof": 1})
    assert formula == "x = y * 2 + (-3.5)"


def test_groups_have_their_own_parameters_and_formulas(grouped):
    path, _data, project = grouped
    fc = project.plan["yield_kg"]
    [section] = build_report(project, path).columns
    sets = [g for g, _f in section.reverse]
    assert sets == [UNSEEN_GROUPS] + [f"orchard = {k}" for k in fc.groups]
    assert len(fc.groups) == 6
    for key, ps in fc.groups.items():
        formula = dict(section.reverse)[f"orchard = {key}"]
        assert formula == f"x = y * {ps.params['sd']!r} + {ps.params['mean']!r}"
    assert any("6 groups of orchard" in line for line in section.fit_summary)
    assert "guide only" in section.figures_note


# ---------------------------------------------------------------------------- images


def test_images_are_valid_svg_with_one_bar_per_filled_bin(every_method):
    path, data, project = every_method
    html = render_html(build_report(project, path))
    images = svgs(html)
    assert len(images) == 2 * len(project.plan.columns)
    table = read_table(data)
    for i, label in enumerate(project.plan.columns):
        h = histogram(column_values(table.data, label), 30)
        for image in images[2 * i : 2 * i + 2]:
            bars = image.find(f"{SVG_NS}g[@class='bars']")
            assert len(bars.findall(f"{SVG_NS}rect")) == int(np.count_nonzero(h.counts)), label
    assert "<script" not in html.lower()
    assert not re.search(r"""(src|href)=["'](?!#)""", html), "nothing is fetched"


def test_nice_ticks():
    # common practice: steps of 1, 2, 2.5 or 5 times a power of ten
    assert nice_ticks(0, 100, 5) == [0, 20, 40, 60, 80, 100]
    assert nice_ticks(-1.2, 1.2, 5) == pytest.approx([-1, -0.5, 0, 0.5, 1])
    assert nice_ticks(3, 3) == [3]


# ---------------------------------------------------------------------------- escaping


def test_odd_column_names_are_escaped(tmp_path):
    name = 'yield <b>kg</b> & "net"'
    data = tmp_path / "odd.csv"
    pd.DataFrame({name: [1.5, 2.5, 4.0, 8.0], "plain": [1, 2, 3, 4]}).to_csv(data, index=False)
    table = read_table(data)
    project = tasks.fit_project(table, {name: ColumnChoice("log")}, FitSettings())
    path = tmp_path / "odd.swproj"
    save_project(project, path)
    html = render_html(build_report(load_project(path), path))
    assert "<b>kg</b>" not in html
    assert "yield &lt;b&gt;kg&lt;/b&gt; &amp; &quot;net&quot;" in html
    assert "1. " + name in page_text(html).headings
    for image in svgs(html):  # the axis titles too, and still well-formed XML
        assert any(name in (t.text or "") for t in image.iter(f"{SVG_NS}text"))


# ---------------------------------------------------------------------------- no data


def test_missing_data_file_gives_a_report_without_figures_saying_why(every_method, tmp_path):
    path, data, project = every_method
    data.unlink()
    out = tmp_path / "report.html"
    report = write_report(load_project(path), out)
    assert "could not be drawn" in report.figures_missing
    assert "was not found" in report.figures_missing
    html = out.read_text(encoding="utf-8")
    assert "<svg" not in html
    assert html.count("could not be drawn") == 1 + len(report.columns)
    assert all(s.parameters and s.reverse for s in report.columns)


def test_changed_data_file_is_not_drawn(every_method, tmp_path):
    path, data, _project = every_method
    with open(data, "a", encoding="utf-8") as fh:
        fh.write("999999,Hilltop,Russet,2001-01-01,24,50,50,300,12,3000,0,6.5,train\n")
    report = build_report(load_project(path), path)
    assert "has changed since the parameters were fitted" in report.figures_missing
    assert dict(report.facts)["Data file now"].endswith("changed since the parameters were fitted")
    assert not any(s.figures for s in report.columns)


def test_moved_project_and_data_are_found_together(every_method, tmp_path):
    path, data, _project = every_method
    elsewhere = tmp_path / "moved"
    elsewhere.mkdir()
    shutil.move(path, elsewhere / path.name)
    shutil.move(data, elsewhere / "harvest_2025.csv")
    report = build_report(load_project(elsewhere / path.name), elsewhere / path.name)
    assert report.figures_missing == ""
    assert all(len(s.figures) == 2 for s in report.columns)


def test_unfitted_project_is_refused(every_method, tmp_path):
    from scalewright.errors import ProjectError
    from scalewright.project import Project

    with pytest.raises(ProjectError, match="no fitted parameters yet, so there is nothing"):
        build_report(Project(), None)


@pytest.mark.parametrize("shape", ["uniform", "normal"])
def test_quantile_lists_every_fitted_quantile_and_the_recipe_reverses(tmp_path, shape):
    path, _data = fit_and_save(
        tmp_path, {"yield_kg": ColumnChoice("quantile", {"shape": shape})}, FitSettings()
    )
    project = load_project(path)
    fc = project.plan["yield_kg"]
    report = build_report(project, path)
    [section] = report.columns
    [(title, numbers)] = section.number_lists
    listed = [float(v) for v in numbers.split(", ")]
    assert listed == fc.pooled.params["quantiles"]  # every one, bit for bit
    assert "listed below" in dict((r.name, r.exact) for r in section.parameters)["fitted quantiles"]
    html = render_html(report)
    assert numbers in html
    # follow the written recipe with the listed numbers (scipy's normal distribution for
    # the normal shape) and compare with the engine's inverse
    [(_group, recipe)] = section.reverse
    n = len(listed)
    assert f"u * {n - 1}" in recipe and f"the {n} fitted quantiles" in recipe
    y = np.array([0.0, 0.1234, 0.5, 0.87, 1.0]) if shape == "uniform" else np.array([-2, 0, 1.5])
    u = y if shape == "uniform" else scipy.stats.norm.cdf(y)
    i = np.minimum(np.floor(u * (n - 1)).astype(int), n - 2)
    q = np.array(listed)
    by_recipe = q[i] + (u * (n - 1) - i) * (q[i + 1] - q[i])
    np.testing.assert_allclose(by_recipe, fc.inverse(y), rtol=1e-12)


def test_bars_of_unequal_width_are_drawn_per_unit(every_method):
    path, _data, project = every_method
    report = build_report(project, path)
    by_label = {s.label: s for s in report.columns}
    pests = by_label["pest_trap_count"]  # Yeo-Johnson: widths change
    assert "count per unit" in pests.figures_note
    assert "count per unit" in pests.figures[1].svg
    assert "count per unit" not in pests.figures[0].svg
    ages = by_label["tree_age_years"]  # decimal scaling, a straight line: equal widths
    assert "count per unit" not in ages.figures_note + ages.figures[1].svg


def test_the_usual_cautions_are_stated(every_method):
    # issue 10: re-apply, never refit; clipped values; shape on purpose; keep the project
    path, _data, project = every_method
    report = build_report(project, path)
    said = " ".join(report.cautions)
    for words in (
        "never fit them again on the new data",
        "cannot be restored exactly",
        "change the shape of the distribution on purpose",
        "keep the project file with the model it served",
    ):
        assert words in said
    assert "Box-Cox" in said and "quantile" in said  # every method that is not a line
    by_label = {s.label: s for s in report.columns}
    assert any("shape" in c for c in by_label["yield_kg"].cautions)  # Box-Cox
    assert not by_label["fruit_count"].cautions  # z-score: a straight line


def test_a_column_kept_from_an_earlier_file_says_so_and_is_not_drawn(every_method):
    from scalewright.project import FittedOn

    path, _data, project = every_method
    earlier = FittedOn(size=1234, sha256="ab" * 32, rows=1900)
    project.column_fitted_on["yield_kg"] = earlier
    report = build_report(project, path)
    by_label = {s.label: s for s in report.columns}
    kept = by_label["yield_kg"]
    assert kept.fit_summary[0].endswith("from 1,900 rows: the rows where split is train.")
    assert any("earlier version" in line and "ab" * 32 in line for line in kept.fit_summary)
    assert not kept.figures and "earlier version of the data file" in kept.figures_missing
    others = [s for s in report.columns if s.label != "yield_kg"]
    assert all(len(s.figures) == 2 and "1,945 rows" in s.fit_summary[0] for s in others)
