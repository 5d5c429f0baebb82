"""Review fixes in the command line: the loaded-from workbook, fit -o safety, words."""

from __future__ import annotations

import argparse
import shutil
from pathlib import Path

import pytest

from scalewright import cli
from scalewright import project as project_module
from scalewright.errors import WriteError

SAMPLE_DATA = Path(__file__).resolve().parents[2] / "sample_data"


@pytest.fixture
def season(tmp_path: Path) -> Path:
    for name in ("harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"):
        shutil.copy(SAMPLE_DATA / name, tmp_path / name)
    return tmp_path


def _main(capsys, *args) -> tuple[int, str, str]:
    status = cli.main([str(a) for a in args])
    out = capsys.readouterr()
    return status, out.out, out.err


def test_restore_refuses_to_overwrite_the_workbook_it_reads_parameters_from(season, capsys):
    w = season / "W.xlsx"
    status, _, err = _main(
        capsys, "fit", season / "harvest_2025.csv", "-m", "yield_kg=zscore",
        "-p", season / "p.swproj", "-o", w,
    )  # fmt: skip
    assert status == 0, err
    before = w.read_bytes()
    # Named differently, so only the loaded-from check can tell it is the same file.
    status, _, err = _main(
        capsys, "restore", w, season / "predicted_yield_scaled.csv",
        "--as", "predicted_yield=yield_kg", "-o", season / "." / "W.xlsx",
    )  # fmt: skip
    assert status == 1
    assert "the file the parameters come from" in err
    assert w.read_bytes() == before


def test_restore_with_nothing_to_pair_names_the_flag(season, capsys):
    status, _, _ = _main(
        capsys, "fit", season / "harvest_2025.csv", "-m", "yield_kg=zscore",
        "-p", season / "p.swproj",
    )  # fmt: skip
    assert status == 0
    status, _, err = _main(
        capsys, "restore", season / "p.swproj", season / "predicted_yield_scaled.csv",
        "-o", season / "o.csv",
    )  # fmt: skip
    assert status == 1
    assert "no column matches a fitted column" in err
    assert "--as COLUMN=SOURCE_COLUMN" in err
    assert "FITTED_COLUMN" not in err
    assert not (season / "o.csv").exists()


def test_fit_output_kept_when_the_project_cannot_be_saved(season, capsys, monkeypatch):
    out = season / "scaled.csv"
    proj = season / "p.swproj"
    out.write_bytes(b"old output")
    proj.write_bytes(b"old project")

    def broken_save(*_args, **_kwargs):
        raise WriteError(proj, "the disk is full")

    monkeypatch.setattr(project_module, "save_project", broken_save)
    monkeypatch.setattr(project_module, "write_project_text", broken_save, raising=False)
    status, _, err = _main(
        capsys, "fit", season / "harvest_2025.csv", "-m", "yield_kg=zscore", "-p", proj, "-o", out
    )
    assert status == 1, err
    assert out.read_bytes() == b"old output"
    assert proj.read_bytes() == b"old project"
    assert sorted(p.name for p in season.iterdir()) == [
        "harvest_2025.csv", "harvest_2026.csv", "p.swproj", "predicted_yield_scaled.csv",
        "scaled.csv",
    ]  # fmt: skip


def test_fit_output_and_project_both_written(season, capsys):
    out = season / "scaled.csv"
    out.write_bytes(b"old output")
    status, stdout, err = _main(
        capsys, "fit", season / "harvest_2025.csv", "-m", "yield_kg=zscore",
        "-p", season / "p.swproj", "-o", out,
    )  # fmt: skip
    assert status == 0, err
    assert out.read_bytes() != b"old output"
    assert project_module.load_project(season / "p.swproj").plan is not None
    assert f"scaled data written to {out}" in stdout
    assert sorted(p.name for p in season.iterdir()) == [
        "harvest_2025.csv", "harvest_2026.csv", "p.swproj", "predicted_yield_scaled.csv",
        "scaled.csv",
    ]  # fmt: skip


def test_no_dead_names_left():
    assert not hasattr(cli, "UsageError")
    assert not hasattr(cli, "_check_output")
    parser = cli.build_parser()
    assert parser.formatter_class is argparse.RawDescriptionHelpFormatter
