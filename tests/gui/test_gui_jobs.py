"""Background jobs, and the window's apply/restore entry points that run through them."""

from __future__ import annotations

import threading
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from PySide6.QtCore import Qt

from scalewright import tasks
from scalewright.errors import ReadError
from scalewright.gui.jobs import JobRunner

SAMPLE = Path(__file__).resolve().parents[2] / "sample_data"


@pytest.fixture
def runner(qtbot):
    r = JobRunner()
    qtbot.addWidget(r)
    return r


def test_result_arrives_on_the_interface_thread(qtbot, runner):
    main = threading.get_ident()
    seen = {}

    def work(progress, cancelled):
        seen["worker"] = threading.get_ident()
        progress(0.5)
        return 42

    got = []
    job = runner.run("Adding", work, lambda r: got.append((r, threading.get_ident())))
    progress = []
    job.progressed.connect(progress.append)
    assert runner.busy and runner.isVisibleTo(runner.parentWidget() or runner)
    with qtbot.waitSignal(job.ended, timeout=5000):
        pass
    assert got == [(42, main)]
    assert seen["worker"] != main
    assert progress == [0.5]
    assert not runner.busy and job.outcome == "done"


def test_errors_are_delivered_not_raised(qtbot, runner):
    def work(progress, cancelled):
        raise ReadError("/tmp/x.csv", "there is no such file")

    errors = []
    job = runner.run("Reading", work, on_error=errors.append)
    with qtbot.waitSignal(job.ended, timeout=5000):
        pass
    assert len(errors) == 1 and isinstance(errors[0], ReadError)
    assert job.outcome == "failed"


def test_cancel_stops_the_work_at_its_next_progress_report(qtbot, runner):
    started = threading.Event()
    steps = []

    def work(progress, cancelled):
        for i in range(1000):
            started.set()
            progress(i / 1000)  # raises Cancelled once Cancel was pressed
            steps.append(i)
            time.sleep(0.002)
        return "finished"

    outcome = []
    job = runner.run(
        "Counting", work, lambda r: outcome.append(r), on_cancel=lambda: outcome.append("stopped")
    )
    qtbot.waitUntil(started.is_set, timeout=5000)
    qtbot.mouseClick(runner.cancel_button, Qt.MouseButton.LeftButton)
    assert "stopping" in runner.label.text()
    with qtbot.waitSignal(job.ended, timeout=5000):
        pass
    assert outcome == ["stopped"]
    assert len(steps) < 1000
    assert job.outcome == "cancelled"


def test_work_that_finished_before_cancel_counts_as_done(qtbot, runner):
    release = threading.Event()

    def work(progress, cancelled):
        release.wait(5)
        return "written"

    got = []
    job = runner.run("Writing", work, got.append, on_cancel=lambda: got.append("stopped"))
    qtbot.wait(50)
    runner.cancel()  # too late to stop anything: the work does not look again
    release.set()
    with qtbot.waitSignal(job.ended, timeout=5000):
        pass
    assert got == ["written"]


def test_one_job_at_a_time(qtbot, runner):
    release = threading.Event()
    job = runner.run("Waiting", lambda p, c: release.wait(5))
    with pytest.raises(RuntimeError):
        runner.run("Another", lambda p, c: None)
    release.set()
    with qtbot.waitSignal(job.ended, timeout=5000):
        pass
    assert not runner.busy


# ---------------------------------------------------------------- apply and restore from the window


def _choose_zscore_on_training_rows(window, wait_job):
    from scalewright.engine import FitSettings
    from scalewright.gui import commands

    commands.set_method(
        window.stack, window.session, ["yield_kg", "irrigation_l_per_week"], "zscore"
    )
    commands.push_settings(window.stack, window.session, FitSettings(fit_where=("split", "train")))


def test_apply_to_next_season_with_clipping(qtbot, opened, tmp_path, wait_job, harvest_table):
    w = opened
    _choose_zscore_on_training_rows(w, wait_job)
    w.act_apply.trigger()
    qtbot.waitUntil(lambda: w.apply_dialog is not None, timeout=30000)
    dialog = w.apply_dialog
    assert dialog.isVisible()
    target = tmp_path / "harvest_2026_scaled.csv"
    dialog.set_data_file(SAMPLE / "harvest_2026.csv")
    qtbot.waitUntil(lambda: not dialog.is_busy() and bool(dialog.preview_reports()), timeout=30000)
    # the preview lists values beyond the 2025 range (the dry summer at Stone Terrace)
    assert dialog.preview_reports()["irrigation_l_per_week"].n_above > 0
    dialog.set_clip(True)
    dialog.set_output(target)
    written = []
    w.file_written.connect(written.append)
    dialog.save()
    qtbot.waitUntil(lambda: dialog.written_path() is not None, timeout=30000)
    assert written == [target]
    reference = tmp_path / "reference.csv"
    project = tasks.fit_project(harvest_table, w.session.chosen(), w.session.settings)
    tasks.apply_to_file(project, SAMPLE / "harvest_2026.csv", reference, clip=True)
    assert target.read_bytes() == reference.read_bytes()
    got = pd.read_csv(target)
    top = project.plan["irrigation_l_per_week"]
    assert got["irrigation_l_per_week"].max() == pytest.approx(
        float(top.forward(np.array([top.pooled.max]))[0])
    )


def test_restore_predictions_with_a_mapping(qtbot, opened, tmp_path, wait_job, harvest_table):
    w = opened
    _choose_zscore_on_training_rows(w, wait_job)
    w.act_restore.trigger()
    qtbot.waitUntil(lambda: w.restore_dialog is not None, timeout=30000)
    dialog = w.restore_dialog
    dialog.set_data_file(SAMPLE / "predicted_yield_scaled.csv")
    qtbot.waitUntil(lambda: not dialog.is_busy() and dialog.table_read() is not None, timeout=30000)
    dialog.set_mapping("predicted_yield", "yield_kg")
    target = tmp_path / "predicted_kg.csv"
    dialog.set_output(target)
    dialog.save()
    qtbot.waitUntil(lambda: dialog.written_path() is not None, timeout=30000)
    got = pd.read_csv(target, dtype={"tree_code": str})
    scaled = pd.read_csv(SAMPLE / "predicted_yield_scaled.csv", dtype={"tree_code": str})
    # sample_data/README.md: predicted_kg = predicted_yield * sd + mean
    expected = scaled["predicted_yield"] * 36.650738430940336 + 75.54385054488843
    np.testing.assert_allclose(got["predicted_yield"], expected, rtol=1e-12)
    assert list(got["tree_code"][:3]) == list(scaled["tree_code"][:3])


def test_cancelling_a_workbook_write_leaves_nothing_behind(qtbot, runner, tmp_path, monkeypatch):
    """Issue 8, "Nothing left behind": Cancel in the middle of a workbook write keeps the
    earlier file and leaves no ``.part`` file, nor xlsxwriter's row files in the system's
    temporary folder."""
    import tempfile

    system_temp = tmp_path / "system-temp"
    out_dir = tmp_path / "out"
    system_temp.mkdir()
    out_dir.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(system_temp))
    target = out_dir / "harvest_scaled.xlsx"
    target.write_bytes(b"the earlier workbook")
    frame = pd.DataFrame({"yield_kg": np.linspace(40.0, 120.0, 60_000)})
    mid_write = threading.Event()
    cancel_pressed = threading.Event()

    def work(progress, cancelled):
        def report(fraction):
            if fraction > 0:  # rows are being written into the unfinished file
                mid_write.set()
                cancel_pressed.wait(5)
            progress(fraction)

        tasks.write_output(target, frame, ["yield_kg"], None, progress=report, cancelled=cancelled)

    job = runner.run("Writing", work)
    qtbot.waitUntil(mid_write.is_set, timeout=10_000)
    assert any(p.name.endswith(".part") for p in out_dir.iterdir())
    assert list(system_temp.iterdir())  # xlsxwriter's row file, while it writes
    qtbot.mouseClick(runner.cancel_button, Qt.MouseButton.LeftButton)
    cancel_pressed.set()
    with qtbot.waitSignal(job.ended, timeout=10_000):
        pass
    assert job.outcome == "cancelled"
    assert [p.name for p in out_dir.iterdir()] == ["harvest_scaled.xlsx"]
    assert target.read_bytes() == b"the earlier workbook"
    assert list(system_temp.iterdir()) == []
