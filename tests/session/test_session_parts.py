"""The window's Qt-free state: the fit store's outcomes, where each column's parameters
came from, and the steps of opening and saving a project (scalewright.session, projects).

No widget and no Qt here: these run wherever the engine runs.
"""

from __future__ import annotations

import shutil

import numpy as np
import pytest

from scalewright import projects, tasks
from scalewright.engine import ColumnChoice, FitSettings
from scalewright.errors import WriteError
from scalewright.io import read_table
from scalewright.project import FittedOn, SourceCheck, load_project, save_project
from scalewright.session import (
    ColumnFigures,
    FitFailed,
    FitStore,
    Fitted,
    Session,
    column_facts,
)
from support import SAMPLE_DATA

HARVEST_2025 = SAMPLE_DATA / "harvest_2025.csv"
EXTRA_ROW = "999999,Hilltop,Russet,2001-04-01,24,80.1,5000.0,900,13.1,4000,0,6.5,train\n"


@pytest.fixture(scope="module")
def harvest():
    return read_table(HARVEST_2025)


def _store(table):
    store = FitStore()
    store.reset(ColumnFigures(table.data, facts=column_facts(table)), table.data, FitSettings())
    return store


# ------------------------------------------------------------------ the fit store


def test_the_fit_store_gives_a_typed_outcome(harvest):
    store = _store(harvest)
    outcome = store.outcome("yield_kg", ColumnChoice("zscore"))
    assert isinstance(outcome, Fitted)
    x = harvest.data["yield_kg"].to_numpy(float, na_value=np.nan)
    x = x[np.isfinite(x)]
    # numpy as an independent reference: sample mean and sd (ddof=1)
    assert outcome.column.pooled.params["mean"] == pytest.approx(np.mean(x), rel=1e-12)
    assert outcome.column.pooled.params["sd"] == pytest.approx(np.std(x, ddof=1), rel=1e-12)
    # asked again, the same fit (kept per column and choice), not a second one
    assert store.outcome("yield_kg", ColumnChoice("zscore")) is outcome
    assert store.fit_count == 1
    # Box-Cox needs positive values (Box and Cox 1964); the failure is a message, not a raise
    failed = store.outcome("pest_trap_count", ColumnChoice("boxcox"))
    assert isinstance(failed, FitFailed)
    assert "pest_trap_count" in failed.message and "above 0" in failed.message


def test_slow_fits_wait_for_the_runner_and_late_ones_are_dropped(harvest):
    store = _store(harvest)
    held, landed = [], []
    store.runner = lambda work, deliver: held.append((work, deliver))
    store.background_values = 10
    store.on_landed = lambda label, key: landed.append(label)
    store.start("soil_ph", ColumnChoice("zscore"))  # a straight line: fitted at once
    store.start("yield_kg", ColumnChoice("robust"))  # sorts: handed to the runner
    assert len(held) == 1
    assert not store.fitting("soil_ph", ColumnChoice("zscore"))
    assert store.fitting("yield_kg", ColumnChoice("robust"))
    work, deliver = held.pop()
    deliver(work())
    assert landed == ["yield_kg"] and not store.fitting("yield_kg", ColumnChoice("robust"))
    assert isinstance(store.outcome("yield_kg", ColumnChoice("robust")), Fitted)
    # a fit that lands after the settings changed is dropped
    store.start("fruit_count", ColumnChoice("yeojohnson"))
    work, deliver = held.pop()
    store.reset(store._figures, harvest.data, FitSettings(fit_where=("split", "train")))
    deliver(work())
    assert landed == ["yield_kg"]
    assert not store.fitting("fruit_count", ColumnChoice("yeojohnson"))


# ------------------------------------------------------------------ provenance


def _saved_then_changed(tmp_path):
    """A project fitted on harvest.csv (yield_kg z-score, soil_ph min-max), then the file
    gains one row. Returns (data file, project path, the saved project)."""
    data = tmp_path / "harvest.csv"
    shutil.copy(HARVEST_2025, data)
    table = read_table(data)
    choices = {"yield_kg": ColumnChoice("zscore"), "soil_ph": ColumnChoice("minmax")}
    saved = tasks.fit_project(table, choices)
    path = tmp_path / "h.swproj"
    save_project(saved, path)
    with data.open("a", encoding="utf-8") as f:
        f.write(EXTRA_ROW)
    return data, path, load_project(path)


def _open(path, keep: bool):
    project = load_project(path)
    check = projects.find_source(project, path)
    table = read_table(check.path)
    opening = projects.open_on(project, check, table, lambda name: keep)
    session = Session()
    session.load_table(
        table,
        choices=opening.choices,
        settings=opening.settings,
        fitted=opening.fitted,
        fitted_on=opening.fitted_on,
    )
    return session, opening, table


def test_kept_and_refitted_columns_each_record_their_own_data(tmp_path):
    data, path, first = _saved_then_changed(tmp_path)
    old = FittedOn(first.source_size, first.source_sha256, 2412)
    session, opening, table = _open(path, keep=True)
    assert opening.message == (
        "Opened the project; the data file has changed since the project was saved; "
        "the saved parameters were kept."
    )
    assert session.fitted_on("yield_kg") == old == session.fitted_on("soil_ph")
    session.set_choices({"soil_ph": ColumnChoice("zscore")})  # refitted on the data now
    assert session.fitted_on("soil_ph") is None
    assert session.fitted_on("yield_kg") == old
    saved = projects.project_builder(session)()
    now = FittedOn(*tasks.file_fingerprint(data), 2413)
    assert saved.fitted_on("yield_kg") == old
    assert saved.fitted_on("soil_ph") == now
    assert (saved.source_size, saved.source_sha256) == (now.size, now.sha256)
    save_project(saved, tmp_path / "again.swproj")
    again = load_project(tmp_path / "again.swproj")
    assert again.fitted_on("yield_kg") == old and again.fitted_on("soil_ph") == now
    assert again.plan["yield_kg"].pooled.params == first.plan["yield_kg"].pooled.params
    # going back to the saved choice brings back the saved parameters and their record
    session.set_choices({"soil_ph": ColumnChoice("minmax")})
    assert session.fitted_on("soil_ph") == old
    whole = projects.project_builder(session)()
    assert whole.column_fitted_on == {}  # one record for all: the project's own, as before
    assert whole.fitted_on("soil_ph") == old == whole.fitted_on("yield_kg")


def test_fitting_again_records_the_data_as_it_is_now(tmp_path):
    data, path, first = _saved_then_changed(tmp_path)
    session, opening, _ = _open(path, keep=False)
    assert opening.fitted is None and opening.dirty
    assert "fitted again on the current data" in opening.message
    assert session.fitted_on("yield_kg") is None
    saved = projects.project_builder(session)()
    assert saved.column_fitted_on == {}
    assert saved.fitted_on("yield_kg") == FittedOn(*tasks.file_fingerprint(data), 2413)


def test_changing_the_fit_settings_refits_kept_columns_on_the_data_now(tmp_path):
    _, path, _ = _saved_then_changed(tmp_path)
    session, _, _ = _open(path, keep=True)
    session.set_settings(FitSettings(fit_where=("split", "train")))
    assert session.fitted_on("yield_kg") is None and session.fitted_on("soil_ph") is None


def test_an_unchanged_file_asks_nothing_and_keeps_only_earlier_records(tmp_path):
    data = tmp_path / "harvest.csv"
    shutil.copy(HARVEST_2025, data)
    project = tasks.fit_project(read_table(data), {"yield_kg": ColumnChoice("zscore")})
    project.column_fitted_on = {"yield_kg": FittedOn(10, "a" * 64, 5)}
    save_project(project, tmp_path / "p.swproj")

    def never(name):
        raise AssertionError("asked about an unchanged file")

    loaded = load_project(tmp_path / "p.swproj")
    check = projects.find_source(loaded, tmp_path / "p.swproj")
    assert not check.changed
    opening = projects.open_on(loaded, check, read_table(data), never)
    assert opening.fitted is not None and not opening.dirty and opening.message is None
    assert opening.fitted_on == {"yield_kg": FittedOn(10, "a" * 64, 5)}


def test_a_column_record_on_an_unfitted_column_is_refused(tmp_path):
    import json

    data = tmp_path / "harvest.csv"
    shutil.copy(HARVEST_2025, data)
    project = tasks.fit_project(read_table(data), {"yield_kg": ColumnChoice("zscore")})
    save_project(project, tmp_path / "p.swproj")
    doc = json.loads((tmp_path / "p.swproj").read_text(encoding="utf-8"))
    doc["columns"]["yield_kg"]["fitted_on"] = {"size": 1, "sha256": "XYZ", "rows": 3}
    (tmp_path / "bad.swproj").write_text(json.dumps(doc), encoding="utf-8")
    with pytest.raises(Exception, match=r"columns\.yield_kg\.fitted_on\.sha256"):
        load_project(tmp_path / "bad.swproj")


def test_a_project_opened_on_a_table_without_a_column_says_so(harvest):
    project = tasks.fit_project(harvest, {"yield_kg": ColumnChoice("zscore")})
    smaller = read_table(HARVEST_2025)
    smaller.data = smaller.data.drop(columns=["yield_kg"])
    check = SourceCheck(saved=project.source, path=project.source)
    opening = projects.open_on(project, check, smaller, lambda name: True)
    assert opening.message == "Opened the project; not in the data any more: yield_kg."


# ------------------------------------------------------------------ names and the check before writing


def test_the_project_file_name_rule(tmp_path):
    assert projects.with_project_suffix("a/season") == projects.Path("a/season.swproj")
    assert projects.with_project_suffix("season.SWPROJ").name == "season.SWPROJ"
    assert projects.suggested_project_name("x/harvest_2025.csv") == "harvest_2025.swproj"
    assert projects.is_project_file("p.swproj") and not projects.is_project_file("p.csv")
    with pytest.raises(WriteError, match="must end in .swproj"):
        projects.check_project_target(tmp_path / "p.json", None)
    with pytest.raises(WriteError, match="the folder does not exist"):
        projects.check_project_target(tmp_path / "no" / "p.swproj", None)
    assert projects.check_project_target(tmp_path / "p.swproj", None) == tmp_path / "p.swproj"


def test_the_check_before_writing_names_the_first_failed_column(harvest):
    session = Session()
    session.load_table(harvest)
    session.set_choices({"soil_ph": ColumnChoice("zscore")})
    assert projects.why_not_ready(session) is None
    session.set_choices({"pest_trap_count": ColumnChoice("boxcox")})
    problem = projects.why_not_ready(session)
    assert problem is not None and "pest_trap_count" in problem
