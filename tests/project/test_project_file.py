"""The project file: save/load round trips, validation of every field, versions, the source."""

from __future__ import annotations

import copy
import json
import os
import shutil
from pathlib import Path

import numpy as np
import pytest

from scalewright.engine import ColumnChoice, FitSettings, get_method
from scalewright.errors import ProjectError, ReadError, WriteError
from scalewright.io import read_table
from scalewright.project import (
    PARAMETER_SHEET_COLUMNS,
    Project,
    load_project,
    locate_source,
    parameter_sheet,
    project_from_json,
    project_to_dict,
    project_to_json,
    save_project,
)
from scalewright.project import loading as project_loading
from scalewright.project import v1 as project_v1
from scalewright.tasks import fit_project
from support import SAMPLE_DATA

FIXTURES = Path(__file__).parent / "fixtures"
HARVEST = SAMPLE_DATA / "harvest_2025.csv"

# One method per numeric column of the sample data, with options that differ from the
# defaults where a method has any.
EVERY_METHOD = {
    "tree_age_years": ColumnChoice("decimal"),
    "trunk_girth_cm": ColumnChoice("robust"),
    "yield_kg": ColumnChoice("zscore"),
    "fruit_count": ColumnChoice("log", {"base": "10"}),
    "sugar_brix": ColumnChoice("boxcox", {"standardize": "yes"}),
    "irrigation_l_per_week": ColumnChoice("maxabs"),
    "pest_trap_count": ColumnChoice("yeojohnson", {"standardize": "yes"}),
    "soil_ph": ColumnChoice("minmax", {"low": "-1", "high": "1"}),
    "tree_code": ColumnChoice("none"),
}


@pytest.fixture(scope="module")
def harvest():
    return read_table(HARVEST)


def bits(value):
    """A structure where every float is replaced by its exact hex form (bit-identity)."""
    if isinstance(value, float):
        return ("float", value.hex())
    if isinstance(value, dict):
        return {k: bits(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [bits(v) for v in value]
    if hasattr(value, "__dataclass_fields__"):
        return {
            "type": type(value).__name__,
            **{k: bits(getattr(value, k)) for k in value.__dataclass_fields__},
        }
    return (type(value).__name__, value)


def fitted(harvest, choices=None, settings=None) -> Project:
    return fit_project(harvest, choices or EVERY_METHOD, settings or FitSettings())


# --------------------------------------------------------------------------- round trips


@pytest.mark.parametrize(
    "settings",
    [
        FitSettings(),
        FitSettings(fit_where=("split", "train")),
        FitSettings(group_by="orchard"),
        FitSettings(fit_where=("split", "train"), group_by="variety"),
    ],
    ids=["all-rows", "fit-subset", "grouped", "grouped-subset"],
)
def test_save_load_round_trip_is_bit_identical(harvest, tmp_path, settings):
    project = fitted(harvest, settings=settings)
    path = tmp_path / "harvest.swproj"
    save_project(project, path)
    loaded = load_project(path)

    assert bits(loaded.plan) == bits(project.plan)
    assert loaded.plan.settings == settings
    assert loaded.settings == settings
    assert loaded.choices == {k: v.normalized() for k, v in EVERY_METHOD.items()}
    assert loaded.read_options == harvest.options
    assert loaded.columns == list(harvest.data.columns)
    assert loaded.headers == harvest.headers
    assert loaded.source == HARVEST.resolve()
    assert (loaded.source_size, loaded.source_sha256) == (
        project.source_size,
        project.source_sha256,
    )
    assert loaded.created == project.created and loaded.modified == project.modified
    if settings.group_by:
        assert all(fc.groups for fc in loaded.plan.columns.values())
    # Saving what was loaded gives the same text again.
    assert project_to_json(loaded, path) == path.read_text(encoding="utf-8")


def test_json_layout_and_full_precision(harvest, tmp_path):
    project = fitted(harvest, settings=FitSettings(fit_where=("split", "train")))
    path = tmp_path / "sub" / "p.swproj"
    path.parent.mkdir()
    save_project(project, path)
    text = path.read_text(encoding="utf-8")
    doc = json.loads(text)
    assert doc["format"] == "scalewright-project" and doc["version"] == 1
    assert doc["source"]["relative"] == os.path.relpath(HARVEST.resolve(), path.parent).replace(
        os.sep, "/"
    )
    assert doc["source"]["absolute"] == str(HARVEST.resolve())
    assert doc["fit"] == {
        "fit_where": {"column": "split", "value": "train"},
        "group_by": None,
        "rows_fitted": int((harvest.data["split"] == "train").sum()),
    }
    assert list(doc["columns"]) == [c for c in harvest.data.columns if c in EVERY_METHOD]
    zscore = project.plan["yield_kg"].pooled.params
    # Floats are written as Python's repr (shortest text that reads back to the same double).
    assert f'"mean": {zscore["mean"]!r}' in text and f'"sd": {zscore["sd"]!r}' in text
    assert "NaN" not in text and "Infinity" not in text
    assert doc["columns"]["tree_code"] == {"method": "none", "options": {}}


def test_save_refuses_non_finite_and_keeps_the_old_file(harvest, tmp_path):
    path = tmp_path / "p.swproj"
    project = fitted(harvest, {"yield_kg": ColumnChoice("zscore")})
    save_project(project, path)
    before = path.read_bytes()
    project.plan["yield_kg"].pooled.params["mean"] = float("nan")
    with pytest.raises(ProjectError, match=r"columns\.yield_kg\.params\.mean"):
        save_project(project, path)
    assert path.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["p.swproj"]  # no temporary file left


def test_save_refuses_a_stale_choice(harvest, tmp_path):
    project = fitted(harvest, {"yield_kg": ColumnChoice("zscore")})
    project.choices["yield_kg"] = ColumnChoice("minmax")
    with pytest.raises(ProjectError, match=r"columns\.yield_kg: the method or its options changed"):
        save_project(project, tmp_path / "p.swproj")
    assert list(tmp_path.iterdir()) == []


def test_save_refuses_other_names_and_the_data_source(harvest, tmp_path):
    data = tmp_path / "data.csv"
    shutil.copy(HARVEST, data)
    project = fitted(read_table(data), {"yield_kg": ColumnChoice("zscore")})
    with pytest.raises(WriteError, match=r"must end in \.swproj"):
        save_project(project, tmp_path / "p.json")
    project.source = tmp_path / "x.swproj"  # a source with a project-like name
    project.source.write_text("data")
    with pytest.raises(WriteError, match="the file the data was read from"):
        save_project(project, tmp_path / "x.swproj")
    assert project.source.read_text() == "data"


def test_unfitted_project_round_trip(harvest, tmp_path):
    project = Project(
        source=None,
        read_options=harvest.options,
        columns=list(harvest.data.columns),
        headers=harvest.headers,
        choices={"yield_kg": ColumnChoice("minmax", {"low": 2, "high": 3}).normalized()},
        settings=FitSettings(group_by="orchard"),
    )
    path = tmp_path / "p.swproj"
    save_project(project, path)
    loaded = load_project(path)
    assert loaded.plan is None and loaded.source is None
    assert loaded.choices == {"yield_kg": ColumnChoice("minmax", {"low": 2.0, "high": 3.0})}
    assert loaded.settings == FitSettings(group_by="orchard")


# --------------------------------------------------------------------------- validation


@pytest.fixture(scope="module")
def good_doc(harvest):
    """A valid document with every method, fitted on the train rows."""
    project = fitted(harvest, settings=FitSettings(fit_where=("split", "train")))
    return project_to_dict(project)


@pytest.fixture(scope="module")
def grouped_doc(harvest):
    project = fitted(
        harvest,
        {"yield_kg": ColumnChoice("zscore"), "soil_ph": ColumnChoice("minmax")},
        FitSettings(group_by="orchard"),
    )
    return project_to_dict(project)


def _set(path: str, value):
    def mutate(doc):
        *parents, last = path.split("/")
        node = doc
        for p in parents:
            node = node[int(p)] if isinstance(node, list) else node[p]
        node[int(last) if isinstance(node, list) else last] = value

    return mutate


def _delete(path: str):
    def mutate(doc):
        *parents, last = path.split("/")
        node = doc
        for p in parents:
            node = node[p]
        del node[last]

    return mutate


def _scale(path: str, factor: float):
    def mutate(doc):
        *parents, last = path.split("/")
        node = doc
        for p in parents:
            node = node[p]
        node[last] = node[last] * factor

    return mutate


MUTATIONS = [
    # (id, mutation, expected message after the file name)
    ("format-wrong", _set("format", "other-tool"), "format: is 'other-tool'"),
    ("version-text", _set("version", "1"), "version: must be a whole number"),
    ("version-zero", _set("version", 0), "version: 0 is not a known format version"),
    ("app-version", _set("app_version", 5), "app_version: must be text"),
    ("created", _set("created", "yesterday"), "created: 'yesterday' is not a date and time"),
    ("modified-missing", _delete("modified"), "modified: is missing"),
    ("unknown-top", _set("colour", "red"), "colour: is not a field of this format version"),
    ("source-type", _set("source", "harvest.csv"), "source: must be an object"),
    ("source-size", _set("source/size", -1), "source.size: must be 0 or more"),
    ("source-sha", _set("source/sha256", "abc"), "source.sha256: must be 64 lowercase"),
    ("source-abs", _delete("source/absolute"), "source.absolute: is missing"),
    ("source-rel", _set("source/relative", 3), "source.relative: must be text or null"),
    ("read-delim", _set("read_options/delimiter", ";;"), "read_options.delimiter: must be one"),
    ("read-unknown", _set("read_options/quote", '"'), "read_options.quote: not a read option"),
    ("read-encoding", _set("read_options/encoding", "klingon"), "read_options.encoding"),
    ("read-header", _set("read_options/header_row", "1"), "read_options.header_row: expected"),
    ("table-columns", _set("table/columns", "a,b"), "table.columns: must be a list"),
    ("table-column-type", _set("table/columns/0", 7), "table.columns[0]: must be text"),
    ("table-duplicate", _set("table/columns/1", "tree_code"), "table.columns[1]: 'tree_code'"),
    ("table-headers", _set("table/headers", ["a"]), "table.headers: has 1 names for 13"),
    ("fit-missing", _delete("fit/rows_fitted"), "fit.rows_fitted: is missing"),
    ("fit-rows", _set("fit/rows_fitted", -3), "fit.rows_fitted: must be 0 or more"),
    ("fit-where-col", _set("fit/fit_where/column", "season"), "fit.fit_where.column: 'season'"),
    ("fit-where-val", _set("fit/fit_where/value", 1), "fit.fit_where.value: must be text"),
    ("fit-group", _set("fit/group_by", "farm"), "fit.group_by: 'farm' is not a column"),
    ("columns-type", _set("columns", []), "columns: must be an object"),
    ("column-ghost", _set("columns/ghost", {"method": "none", "options": {}}), "columns.ghost:"),
    ("method-unknown", _set("columns/yield_kg/method", "zcore"), "columns.yield_kg.method: unknown method 'zcore'"),
    ("method-case", _set("columns/yield_kg/method", "ZScore"), "columns.yield_kg.method: must be written 'zscore'"),
    ("method-missing", _delete("columns/yield_kg/method"), "columns.yield_kg.method: is missing"),
    ("option-unknown", _set("columns/yield_kg/options/center", "mean"), "columns.yield_kg.options: zscore has no option 'center'"),
    ("option-value", _set("columns/yield_kg/options/sd", "median"), "columns.yield_kg.options: zscore option 'sd' must be one of"),
    ("option-type", _set("columns/soil_ph/options/low", "-1"), "columns.soil_ph.options.low: must be a number"),
    ("option-yesno", _set("columns/sugar_brix/options/standardize", "yes"), "columns.sugar_brix.options.standardize: must be true or false"),
    ("option-range", _set("columns/soil_ph/options/low", 5.0), "columns.soil_ph.options: minmax needs low < high"),
    ("params-missing", _delete("columns/yield_kg/params"), "columns.yield_kg.params: is missing"),
    ("param-type", _set("columns/yield_kg/params/sd", "abc"), "columns.yield_kg.params.sd: must be a number"),
    ("param-bool", _set("columns/yield_kg/params/mean", True), "columns.yield_kg.params.mean: must be a number"),
    ("param-negative-sd", _set("columns/yield_kg/params/sd", -1.0), "columns.yield_kg.params.sd: must be 0 or more"),
    ("param-missing", _delete("columns/yield_kg/params/mean"), "columns.yield_kg.params.mean: is missing (zscore needs mean, sd, ddof)"),
    ("param-extra", _set("columns/yield_kg/params/median", 3.0), "columns.yield_kg.params.median: is not a parameter of zscore"),
    ("param-ddof-float", _set("columns/yield_kg/params/ddof", 1.0), "columns.yield_kg.params.ddof: must be a whole number"),
    ("param-ddof-option", _set("columns/yield_kg/params/ddof", 0), "columns.yield_kg.params.ddof: does not match the option sd"),
    ("param-mean-tampered", _scale("columns/yield_kg/params/mean", 100.0), "columns.yield_kg.params.mean: lies outside the fitted range"),
    ("n-zero", _set("columns/yield_kg/n", 0), "columns.yield_kg.n: must be 1 or more"),
    ("n-float", _set("columns/yield_kg/n", 12.5), "columns.yield_kg.n: must be a whole number"),
    ("min-above-max", _set("columns/yield_kg/min", 1e6), "columns.yield_kg.min: is larger than max"),
    ("n-missing", _set("columns/yield_kg/n_missing", -1), "columns.yield_kg.n_missing: must be 0 or more"),
    ("n-infinite", _delete("columns/yield_kg/n_infinite"), "columns.yield_kg.n_infinite: is missing"),
    ("warnings", _set("columns/yield_kg/warnings", "none"), "columns.yield_kg.warnings: must be a list"),
    ("warning-item", _set("columns/yield_kg/warnings", [3]), "columns.yield_kg.warnings[0]: must be text"),
    ("groups-ungrouped", _set("columns/yield_kg/groups", {"a": {}}), "columns.yield_kg.groups: must be empty"),
    ("column-extra", _set("columns/yield_kg/comment", "x"), "columns.yield_kg.comment: is not a field"),
    ("none-with-params", _set("columns/tree_code/params", {}), "columns.tree_code.params: must not be there"),
    ("minmax-low", _set("columns/soil_ph/params/low", 0.0), "columns.soil_ph.params.low: does not match the option low"),
    ("minmax-min", _set("columns/soil_ph/params/min", 5.0), "columns.soil_ph.params.min: does not match the smallest fitted value"),
    ("minmax-max-type", _set("columns/soil_ph/params/max", None), "columns.soil_ph.params.max: must be a number"),
    ("decimal-j", _set("columns/tree_age_years/params/j", 3), "columns.tree_age_years.params.j: is not the power of ten"),
    ("decimal-j-huge", _set("columns/tree_age_years/params/j", 400), "columns.tree_age_years.params.j: must be between"),
    ("robust-scale", _scale("columns/trunk_girth_cm/params/scale", 2.0), "columns.trunk_girth_cm.params.scale: must be q3 - q1"),
    ("robust-order", _set("columns/trunk_girth_cm/params/q1", 1e5), "columns.trunk_girth_cm.params.median: the quartiles must satisfy"),
    ("robust-rule", _set("columns/trunk_girth_cm/params/quantile_rule", 7), "columns.trunk_girth_cm.params.quantile_rule: must be text"),
    ("maxabs", _scale("columns/irrigation_l_per_week/params/maxabs", 0.5), "columns.irrigation_l_per_week.params.maxabs: must be the largest"),
    ("maxabs-zero", _set("columns/irrigation_l_per_week/params/maxabs", 0.0), "columns.irrigation_l_per_week.params.maxabs"),
    ("log-base", _set("columns/fruit_count/params/base", "e"), "columns.fruit_count.params.base: does not match the option base"),
    ("log-shift", _set("columns/fruit_count/params/shift", 2.5), "columns.fruit_count.params.shift: must be 0 or 1 - min"),
    ("boxcox-standardize", _set("columns/sugar_brix/params/standardize", False), "columns.sugar_brix.params.ddof: is not a parameter of boxcox when standardize is false"),
    ("boxcox-sd", _set("columns/sugar_brix/params/sd", 0.0), "columns.sugar_brix.params.sd: must be above 0"),
    ("boxcox-lambda", _set("columns/sugar_brix/params/lambda", "1.3"), "columns.sugar_brix.params.lambda: must be a number"),
    ("boxcox-min", _set("columns/sugar_brix/min", -1.0), "columns.sugar_brix.min: Box-Cox needs values above 0"),
    ("yj-missing-mean", _delete("columns/pest_trap_count/params/mean"), "columns.pest_trap_count.params.mean: is missing (yeojohnson needs lambda, standardize, mean, sd, ddof)"),
    ("yj-ddof", _set("columns/pest_trap_count/params/ddof", 0), "columns.pest_trap_count.params.ddof: must be 1"),
]  # fmt: skip


@pytest.mark.parametrize(
    ("mutate", "expected"), [m[1:] for m in MUTATIONS], ids=[m[0] for m in MUTATIONS]
)
def test_every_broken_field_is_named(good_doc, mutate, expected):
    doc = copy.deepcopy(good_doc)
    mutate(doc)
    with pytest.raises(ProjectError) as caught:
        project_from_json(json.dumps(doc), "harvest.swproj")
    assert str(caught.value).startswith(f"harvest.swproj: {expected}"), str(caught.value)


GROUP_MUTATIONS = [
    ("group-sd", _set("columns/yield_kg/groups/Hilltop/params/sd", "wide"), "columns.yield_kg.groups.Hilltop.params.sd: must be a number"),
    ("group-n", _set("columns/yield_kg/groups/Hilltop/n", -2), "columns.yield_kg.groups.Hilltop.n: must be 1 or more"),
    ("group-extra", _set("columns/yield_kg/groups/Hilltop/note", "x"), "columns.yield_kg.groups.Hilltop.note: is not a field"),
    ("group-type", _set("columns/yield_kg/groups/Hilltop", [1]), "columns.yield_kg.groups.Hilltop: must be an object"),
    ("group-minmax", _set("columns/soil_ph/groups/Hilltop/params/max", 9.0), "columns.soil_ph.groups.Hilltop.params.max: does not match"),
    ("group-col-scaled", _set("columns/orchard", {"method": "zscore", "options": {"sd": "sample"}}), "columns.orchard.params: is missing"),
]  # fmt: skip


@pytest.mark.parametrize(
    ("mutate", "expected"), [m[1:] for m in GROUP_MUTATIONS], ids=[m[0] for m in GROUP_MUTATIONS]
)
def test_every_broken_group_field_is_named(grouped_doc, mutate, expected):
    doc = copy.deepcopy(grouped_doc)
    mutate(doc)
    with pytest.raises(ProjectError) as caught:
        project_from_json(json.dumps(doc), "g.swproj")
    assert str(caught.value).startswith(f"g.swproj: {expected}"), str(caught.value)


def test_unfitted_project_must_not_hold_parameters(good_doc):
    doc = copy.deepcopy(good_doc)
    doc["fit"]["rows_fitted"] = None
    with pytest.raises(
        ProjectError,
        match=r"columns\.tree_age_years\.params: must not be there: the project is not fitted",
    ):
        project_from_json(json.dumps(doc), "p.swproj")


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("", "p.swproj: is not a Scalewright project file (not valid JSON"),
        ("{'format': 1}", "p.swproj: is not a Scalewright project file (not valid JSON"),
        ("[1, 2]", "p.swproj: is not a Scalewright project file (not a JSON object)"),
        ('{"version": 1}', "p.swproj: is not a Scalewright project file (no 'format' field)"),
        ('{"format": "scalewright-project", "version": 1, "x": NaN}', "'NaN' is not a number"),
        ('{"format": "scalewright-project", "version": 1, "x": -Infinity}', "'-Infinity' is not"),
        ('{"format": "scalewright-project", "format": "x"}', "the key 'format' appears twice"),
    ],
    ids=["empty", "python-literal", "list", "no-format", "nan", "infinity", "duplicate-key"],
)
def test_text_that_is_not_a_project(text, expected):
    with pytest.raises(ProjectError) as caught:
        project_from_json(text, "p.swproj")
    assert expected in str(caught.value)


def test_overflowing_number_is_refused(good_doc):
    text = json.dumps(good_doc).replace(
        f'"sd": {good_doc["columns"]["yield_kg"]["params"]["sd"]!r}', '"sd": 1e400'
    )
    assert "1e400" in text
    with pytest.raises(
        ProjectError, match=r"columns\.yield_kg\.params\.sd: must be a finite number"
    ):
        project_from_json(text, "p.swproj")


def test_future_version_is_refused_politely(good_doc, tmp_path):
    doc = dict(good_doc, version=3, something_new={"a": 1})
    path = tmp_path / "new.swproj"
    path.write_text(json.dumps(doc), encoding="utf-8")
    with pytest.raises(ProjectError) as caught:
        load_project(path)
    assert str(caught.value) == (
        f"{path}: made by a newer Scalewright (format version 3); this one reads up to 1"
    )


def test_files_that_are_not_projects(tmp_path):
    with pytest.raises(ReadError, match="there is no such file"):
        load_project(tmp_path / "missing.swproj")
    binary = tmp_path / "garbage.swproj"
    binary.write_bytes(bytes(range(256)) * 4)
    with pytest.raises(
        ProjectError, match=r"garbage\.swproj: is not a Scalewright project file \(not UTF-8"
    ):
        load_project(binary)
    folder = tmp_path / "folder.swproj"
    folder.mkdir()
    with pytest.raises(ReadError, match="is a folder"):
        load_project(folder)


def test_migration_chain_runs_older_versions_through_each_step(good_doc, monkeypatch):
    """A document of version 1 passes through the 1 -> 2 migration when 2 is current."""
    seen = []

    def migrate_1_to_2(doc):
        seen.append(doc["version"])
        return dict(doc, version=2)

    def load_2(doc):
        seen.append(doc["version"])
        return project_v1.load(dict(doc, version=1))

    monkeypatch.setattr(project_loading, "FORMAT_VERSION", 2)
    monkeypatch.setattr(project_loading, "MIGRATIONS", {1: migrate_1_to_2})
    monkeypatch.setattr(project_loading, "LOADERS", {2: load_2})
    project = project_from_json(json.dumps(good_doc), "p.swproj")
    assert seen == [1, 2]
    assert project.plan is not None
    with pytest.raises(ProjectError, match="format version 3\\); this one reads up to 2"):
        project_from_json(json.dumps(dict(good_doc, version=3)), "p.swproj")


# --------------------------------------------------------------------------- fixtures


def _numbers(fixture: str) -> dict:
    return json.loads((FIXTURES / fixture).read_text(encoding="utf-8"))


@pytest.mark.parametrize("name", sorted(p.name for p in FIXTURES.glob("v1_*.swproj")))
def test_version_1_fixtures_load_with_exact_parameters(name):
    project = load_project(FIXTURES / name)
    doc = _numbers(name)  # the numbers as plain JSON reads them
    assert doc["version"] == 1
    assert project.source == HARVEST.resolve()  # relative path resolved from the fixture
    if doc["fit"]["rows_fitted"] is None:
        assert project.plan is None
        return
    assert set(project.plan.columns) == {
        c for c, e in doc["columns"].items() if e["method"] != "none"
    }
    for label, fc in project.plan.columns.items():
        entry = doc["columns"][label]
        assert bits(fc.pooled.params) == bits(entry["params"])
        assert (fc.pooled.n, fc.pooled.min, fc.pooled.max) == (
            entry["n"],
            entry["min"],
            entry["max"],
        )
        assert {k: bits(ps.params) for k, ps in fc.groups.items()} == {
            k: bits(g["params"]) for k, g in entry["groups"].items()
        }


def test_fixture_zscore_matches_the_published_sample_values():
    """sample_data/README.md states the mean and sample sd of yield_kg on the train rows."""
    params = load_project(FIXTURES / "v1_every_method.swproj").plan["yield_kg"].pooled.params
    assert params["ddof"] == 1
    assert params["mean"] == pytest.approx(75.54385054488843, rel=1e-15)
    assert params["sd"] == pytest.approx(36.650738430940336, rel=1e-15)


def test_fixture_parameters_agree_with_numpy_on_the_sample_data(harvest):
    """Independent check of the fixture numbers: numpy on the train rows of the sample."""
    plan = load_project(FIXTURES / "v1_every_method.swproj").plan
    train = harvest.data[harvest.data["split"] == "train"]

    def values(column):
        x = train[column].to_numpy(dtype=float, na_value=np.nan)
        return x[np.isfinite(x)]

    soil = values("soil_ph")
    assert plan["soil_ph"].pooled.params["min"] == soil.min()
    assert plan["soil_ph"].pooled.params["max"] == soil.max()
    girth = values("trunk_girth_cm")
    q1, med, q3 = np.quantile(girth, [0.25, 0.5, 0.75])  # numpy's default is type 7
    assert plan["trunk_girth_cm"].pooled.params["median"] == pytest.approx(med, rel=1e-15)
    assert plan["trunk_girth_cm"].pooled.params["scale"] == pytest.approx(q3 - q1, rel=1e-15)
    assert (
        plan["irrigation_l_per_week"].pooled.params["maxabs"]
        == np.abs(values("irrigation_l_per_week")).max()
    )
    ages = values("tree_age_years")
    j = plan["tree_age_years"].pooled.params["j"]
    assert ages.max() / 10**j < 1 <= ages.max() / 10 ** (j - 1)


# --------------------------------------------------------------------------- the source


def _project_beside_data(tmp_path: Path, harvest) -> tuple[Path, Path]:
    folder = tmp_path / "season"
    folder.mkdir()
    data = folder / "harvest.csv"
    shutil.copy(HARVEST, data)
    project = fit_project(read_table(data), {"yield_kg": ColumnChoice("zscore")})
    path = folder / "harvest.swproj"
    save_project(project, path)
    return data, path


def test_relative_source_follows_a_moved_folder(tmp_path, harvest):
    data, path = _project_beside_data(tmp_path, harvest)
    moved = tmp_path / "archive"
    shutil.move(data.parent, moved)
    project = load_project(moved / "harvest.swproj")
    assert project.source == moved / "harvest.csv"
    check = locate_source(project, moved / "harvest.swproj")
    assert (check.path, check.moved, check.changed) == (moved / "harvest.csv", False, False)


def test_absolute_source_when_only_the_project_moved(tmp_path, harvest):
    data, path = _project_beside_data(tmp_path, harvest)
    elsewhere = tmp_path / "projects"
    elsewhere.mkdir()
    shutil.move(path, elsewhere / path.name)
    project = load_project(elsewhere / path.name)
    assert project.source == data.resolve()
    assert locate_source(project, elsewhere / path.name).path == data.resolve()


def test_source_found_beside_the_project_then_missing_then_changed(tmp_path, harvest):
    data, path = _project_beside_data(tmp_path, harvest)
    # Project and data end up in different folders, and the data beside the project
    # under its own name: found there, reported as moved.
    other = tmp_path / "other"
    other.mkdir()
    shutil.move(path, other / path.name)
    shutil.move(data, other / "x.csv")
    project = load_project(other / path.name)
    assert not locate_source(project, other / path.name).found
    assert "was not found" in locate_source(project, other / path.name).message
    shutil.move(other / "x.csv", other / "harvest.csv")
    check = locate_source(project, other / path.name)
    assert (check.path, check.moved, check.changed) == (other / "harvest.csv", True, False)
    assert "found beside the project file" in check.message
    # Same size, one byte different: caught by the SHA-256.
    raw = bytearray((other / "harvest.csv").read_bytes())
    raw[-3] = ord("9") if raw[-3] != ord("9") else ord("8")
    (other / "harvest.csv").write_bytes(bytes(raw))
    assert locate_source(project, other / path.name).changed
    # A different size is caught without hashing.
    with open(other / "harvest.csv", "ab") as fh:
        fh.write(b"\n")
    check = locate_source(project, other / path.name)
    assert check.changed and "has changed" in check.message


# --------------------------------------------------------------------------- parameters sheet


def test_parameter_sheet_rows(harvest):
    plan = fitted(harvest, settings=FitSettings(group_by="orchard")).plan
    sheet = parameter_sheet(plan)
    assert list(sheet.columns) == PARAMETER_SHEET_COLUMNS
    zs = sheet[sheet["column"] == "yield_kg"]
    pooled = zs[zs["group"].str.startswith("all groups")]
    assert (
        dict(zip(pooled["parameter"], pooled["value"], strict=True))
        == plan["yield_kg"].pooled.params
    )
    assert set(pooled["how to reverse (x = original, y = scaled)"]) == {
        get_method("zscore").inverse_formula
    }
    assert set(zs["group"]) - {pooled["group"].iloc[0]} == set(plan["yield_kg"].groups)
    hill = zs[zs["group"] == "Hilltop"]
    assert (
        hill["value"][hill["parameter"] == "sd"].item()
        == plan["yield_kg"].groups["Hilltop"].params["sd"]
    )
    assert hill["fitted on (values)"].iloc[0] == plan["yield_kg"].groups["Hilltop"].n
    sugar = sheet[(sheet["column"] == "sugar_brix") & (sheet["parameter"] == "standardize")]
    assert set(sugar["value"]) == {"yes"}
    assert set(sheet["method"]) == {
        get_method(c.method).name for c in EVERY_METHOD.values() if c.method != "none"
    }
