"""``scalewright report``: HTML or PDF from a project or a scaled workbook, with the usual
refusals (another format, the project's own files) and no Qt for the HTML."""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap

import pytest

from scalewright import tasks
from scalewright.cli import main
from scalewright.io import read_table
from scalewright.project import project_to_json
from test_import_contract import QT_NAMES


def test_report_html_from_a_project(every_method, tmp_path, capsys):
    path, _data, project = every_method
    out = tmp_path / "harvest_report.html"
    assert main(["report", str(path), "-o", str(out)]) == 0
    assert capsys.readouterr().out == f"report written to {out}\n"
    html = out.read_text(encoding="utf-8")
    for label in project.plan.columns:
        assert label in html
    assert html.count("<svg") == 2 * len(project.plan.columns)


def test_report_from_a_scaled_workbook(every_method, tmp_path):
    path, data, project = every_method
    workbook = tmp_path / "harvest_2025_scaled.xlsx"
    tasks.export_scaled(read_table(data), project, workbook)
    out = tmp_path / "from_workbook.html"
    assert main(["report", str(workbook), "-o", str(out)]) == 0
    html = out.read_text(encoding="utf-8")
    assert str(workbook) in html
    assert html.count("<svg") == 2 * len(project.plan.columns)


def test_missing_data_is_noted_on_the_command_line(every_method, tmp_path, capsys):
    path, data, _project = every_method
    data.unlink()
    out = tmp_path / "r.html"
    assert main(["report", str(path), "-o", str(out)]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[1].startswith("  note: The figures could not be drawn: the data file")
    assert out.is_file()


@pytest.mark.parametrize(
    "name, message",
    [
        ("report.csv", "cannot write '.csv' files; use one of .html, .htm, .pdf"),
        ("harvest.swproj", "this name is for project files"),
        ("no_folder/report.html", "the folder does not exist"),
    ],
)
def test_refused_outputs_leave_nothing(every_method, tmp_path, capsys, name, message):
    path, _data, _project = every_method
    before = path.read_bytes()
    folder_files = sorted(p.name for p in tmp_path.iterdir())
    assert main(["report", str(path), "-o", str(tmp_path / name)]) == 1
    assert message in capsys.readouterr().err
    assert path.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == folder_files


def test_the_data_file_is_never_overwritten(tmp_path, capsys):
    # a data file that happens to end in .html cannot be a report target
    from scalewright.engine import ColumnChoice, FitSettings
    from scalewright.project import load_project, save_project

    data = tmp_path / "table.csv"
    data.write_text("a\n1\n2\n3\n", encoding="utf-8")
    project = tasks.fit_project(read_table(data), {"a": ColumnChoice("zscore")}, FitSettings())
    fake = tmp_path / "table.html"
    data.rename(fake)
    project.source = fake
    path = tmp_path / "p.swproj"
    save_project(project, path)
    assert load_project(path).source == fake
    assert main(["report", str(path), "-o", str(fake)]) == 1
    assert "the data file the parameters were fitted on" in capsys.readouterr().err
    assert fake.read_text(encoding="utf-8") == "a\n1\n2\n3\n"


def test_usage_error_without_output(every_method):
    path, _data, _project = every_method
    with pytest.raises(SystemExit) as exit_:
        main(["report", str(path)])
    assert exit_.value.code == 2


def test_html_report_is_written_with_qt_blocked(every_method, tmp_path):
    path, _data, _project = every_method
    out = tmp_path / "no_qt.html"
    code = textwrap.dedent(
        f"""
        import importlib.abc, sys
        class NoQt(importlib.abc.MetaPathFinder):
            def find_spec(self, name, path=None, target=None):
                if name.split(".")[0] in {set(QT_NAMES)!r}:
                    raise ImportError(name + " is blocked for this test")
        sys.meta_path.insert(0, NoQt())
        from scalewright.cli import main
        status = main(["report", {str(path)!r}, "-o", {str(out)!r}])
        assert not [m for m in sys.modules if m.split(".")[0] in {set(QT_NAMES)!r}]
        sys.exit(status)
        """
    )
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=False
    )
    assert result.returncode == 0, result.stderr
    assert out.read_text(encoding="utf-8").count("<svg") == 16


def test_project_text_is_unchanged_by_reporting(every_method, tmp_path):
    path, _data, project = every_method
    before = project_to_json(project, path)
    main(["report", str(path), "-o", str(tmp_path / "r.html")])
    assert path.read_text(encoding="utf-8") == before


def test_pdf_from_the_command_line_without_a_display(every_method, tmp_path):
    # no display and no platform named: the PDF path picks Qt's offscreen platform itself
    path, _data, _project = every_method
    out = tmp_path / "report.pdf"
    env = {k: v for k, v in os.environ.items() if k not in ("QT_QPA_PLATFORM", "DISPLAY")}
    env.pop("WAYLAND_DISPLAY", None)
    result = subprocess.run(
        [sys.executable, "-m", "scalewright", "report", str(path), "-o", str(out)],
        capture_output=True,
        text=True,
        timeout=300,
        env=env,
        check=False,
    )
    assert result.returncode == 0, result.stderr
    assert result.stdout == f"report written to {out}\n"
    assert out.read_bytes().startswith(b"%PDF-")
    assert not [p.name for p in tmp_path.iterdir() if p.name.startswith(".report.pdf")]
