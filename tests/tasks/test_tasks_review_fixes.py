"""Review fixes in the shared jobs: output checks, table entry points, fingerprints, words."""

from __future__ import annotations

import hashlib
import inspect
import shutil
from pathlib import Path

import pytest

from scalewright.engine import ColumnChoice
from scalewright.errors import ColumnError, ScalewrightError, WriteError
from scalewright.io import ReadOptions, read_table, write_table
from scalewright.project import load_project, project_to_json, save_project
from scalewright.tasks import (
    apply_table,
    apply_to_file,
    check_target,
    export_scaled,
    fit_project,
    load_project_or_workbook,
    not_numbers,
    restore_file,
    restore_table,
    write_output,
)

SAMPLE_DATA = Path(__file__).resolve().parents[2] / "sample_data"
HARVEST = SAMPLE_DATA / "harvest_2025.csv"
HARVEST_2026 = SAMPLE_DATA / "harvest_2026.csv"
PREDICTIONS = SAMPLE_DATA / "predicted_yield_scaled.csv"


@pytest.fixture
def fitted(tmp_path):
    data = tmp_path / "harvest_2025.csv"
    shutil.copy(HARVEST, data)
    table = read_table(data)
    project = fit_project(table, {"yield_kg": ColumnChoice("zscore")})
    return tmp_path, table, project


# ----------------------------------------------------------------- 1. the loaded-from file


def test_restore_refuses_the_workbook_the_project_came_from(fitted):
    folder, table, project = fitted
    workbook = folder / "scaled.xlsx"
    export_scaled(table, project, workbook)
    before = workbook.read_bytes()
    loaded = load_project_or_workbook(workbook)
    assert loaded.loaded_from == workbook
    with pytest.raises(WriteError, match="the file the parameters come from"):
        restore_file(
            loaded, PREDICTIONS, workbook, mapping={"predicted_yield": "yield_kg"}, exact=True
        )
    with pytest.raises(WriteError, match="the file the parameters come from"):
        apply_to_file(loaded, HARVEST_2026, workbook)
    assert workbook.read_bytes() == before
    assert load_project_or_workbook(workbook).plan is not None


def test_load_project_records_where_it_was_loaded_from(fitted):
    folder, _table, project = fitted
    path = folder / "p.swproj"
    save_project(project, path)
    loaded = load_project(path)
    assert loaded.loaded_from == path
    assert load_project_or_workbook(path).loaded_from == path
    assert loaded == project  # not part of what a project is
    assert "loaded_from" not in project_to_json(loaded)


def test_check_target_messages(fitted):
    folder, table, project = fitted
    project.loaded_from = folder / "p.swproj"
    cases = [
        (folder / "x.swproj", {}, "this name is for project files"),
        (folder / "x.json", {}, "cannot write '.json' files"),
        (folder, {}, "cannot write 'no extension' files"),
        (folder / "harvest_2025.csv", {"source": table.source}, "the file the data was read"),
        (
            folder / "harvest_2025.csv",
            {"project": project},
            "the data file the parameters were fitted on",
        ),
        (folder / "p.swproj", {"project": project}, "this name is for project files"),
    ]
    for target, kwargs, message in cases:
        with pytest.raises(WriteError, match=message):
            check_target(target, **kwargs)
    (folder / "dir.csv").mkdir()
    with pytest.raises(WriteError, match="this is a folder"):
        check_target(folder / "dir.csv")
    assert check_target(str(folder / "ok.csv"), source=table.source, project=project) == (
        folder / "ok.csv"
    )
    # another job's own formats (the report's) replace the data formats
    assert check_target(folder / "r.html", formats=(".html",)) == folder / "r.html"
    with pytest.raises(WriteError, match=r"cannot write '\.csv' files; use one of \.html"):
        check_target(folder / "ok.csv", formats=(".html",))
    params = inspect.signature(check_target).parameters
    assert [p.kind for p in params.values()] == [
        inspect.Parameter.POSITIONAL_OR_KEYWORD,
        inspect.Parameter.KEYWORD_ONLY,
        inspect.Parameter.KEYWORD_ONLY,
        inspect.Parameter.KEYWORD_ONLY,
    ]


def test_write_output_refuses_the_loaded_from_file(fitted):
    folder, table, project = fitted
    workbook = folder / "keep.xlsx"
    workbook.write_bytes(b"not touched")
    project.loaded_from = workbook
    with pytest.raises(WriteError, match="the file the parameters come from"):
        write_output(workbook, table, None, project)
    assert workbook.read_bytes() == b"not touched"


# ----------------------------------------------------------------- 2. table entry points


def test_apply_table_and_restore_table_match_the_file_jobs(fitted):
    folder, _table, project = fitted
    new = read_table(HARVEST_2026)
    reports = apply_table(project, new, folder / "a.csv")
    reports_file = apply_to_file(project, HARVEST_2026, folder / "b.csv")
    assert [r.n_values for r in reports] == [r.n_values for r in reports_file]
    assert (folder / "a.csv").read_bytes() == (folder / "b.csv").read_bytes()
    scaled = read_table(folder / "a.csv")
    restored = restore_table(project, scaled, folder / "r.csv")
    assert [r.column for r in restored] == ["yield_kg"]
    back = read_table(folder / "r.csv").data["yield_kg"].to_numpy(float)
    original = new.data["yield_kg"].to_numpy(float)
    assert back == pytest.approx(original, rel=1e-12, nan_ok=True)
    with pytest.raises(WriteError, match="the file the data was read from"):
        restore_table(project, scaled, folder / "a.csv")


# ----------------------------------------------------------------- 3. fingerprint at read time


def test_fit_project_records_the_bytes_that_were_read(fitted):
    folder, table, _project = fitted
    raw = table.source.read_bytes()
    table.source.write_bytes(raw + b"\r\n")  # changed after reading, before saving
    project = fit_project(table, {"yield_kg": ColumnChoice("zscore")})
    assert (project.source_size, project.source_sha256) == (
        len(raw),
        hashlib.sha256(raw).hexdigest(),
    )


def test_fit_project_fingerprint_argument_overrides(fitted):
    _folder, table, _project = fitted
    project = fit_project(table, {"yield_kg": ColumnChoice("zscore")}, fingerprint=(12, "ab" * 32))
    assert (project.source_size, project.source_sha256) == (12, "ab" * 32)


# ----------------------------------------------------------------- 7. read options passed on


def test_apply_and_restore_use_given_read_options(fitted):
    folder, _table, project = fitted
    apply_to_file(project, HARVEST_2026, folder / "x.csv")  # detected: fine
    # Told that the header is on row 2, the file has no yield_kg column: the options were used.
    with pytest.raises(ColumnError, match="'yield_kg': was fitted in the project but is not in"):
        apply_to_file(project, HARVEST_2026, folder / "y.csv", options=ReadOptions(header_row=1))
    assert not (folder / "y.csv").exists()
    restore_file(project, folder / "x.csv", folder / "r.csv")
    with pytest.raises(ScalewrightError, match="no column matches a fitted column"):
        restore_file(
            project, folder / "x.csv", folder / "s.csv", options=ReadOptions(delimiter=";")
        )
    assert not (folder / "s.csv").exists()


# ----------------------------------------------------------------- 8. words


def test_no_command_line_words_in_the_restore_message(fitted):
    folder, _table, project = fitted
    other = folder / "other.csv"
    write_table(
        other,
        read_table(PREDICTIONS).data.rename(columns=lambda c: c + "_x"),
        [c + "_x" for c in read_table(PREDICTIONS).headers],
    )
    with pytest.raises(ScalewrightError) as caught:
        restore_file(project, other, folder / "o.csv")
    assert "no column matches a fitted column" in str(caught.value)
    assert "--" not in str(caught.value)


def test_not_numbers_says_yes_no(fitted):
    folder, _table, project = fitted
    path = folder / "yk.csv"
    path.write_text("yield_kg\ntrue\nfalse\n", encoding="utf-8")
    table = read_table(path)
    assert not_numbers(table, "yield_kg") == "holds yes/no values in yk.csv, not numbers"
    with pytest.raises(ColumnError, match="'yield_kg': holds yes/no values in yk.csv"):
        apply_table(project, table, folder / "f.csv")
    assert not (folder / "f.csv").exists()
