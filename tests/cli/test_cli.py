"""The installed ``scalewright`` command, run as a user would run it (in a subprocess).

Each subprocess costs about a second, so the checks are grouped; argument parsing that
needs no files is also exercised in-process through ``cli.main``.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from scalewright import cli
from scalewright.io import read_table
from support import SAMPLE_DATA

COMMAND = shutil.which("scalewright")


def run(*args, cwd: Path, module: bool = False) -> subprocess.CompletedProcess:
    assert COMMAND is not None, "the scalewright command is not installed (pip install -e .)"
    head = [sys.executable, "-m", "scalewright"] if module else [COMMAND]
    return subprocess.run(
        [*head, *map(str, args)], cwd=cwd, capture_output=True, text=True, timeout=120
    )


def assert_one_line_failure(result, *fragments: str) -> None:
    assert result.returncode == 1, result.stdout + result.stderr
    lines = result.stderr.splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("scalewright: ")
    for fragment in fragments:
        assert fragment in lines[0], lines[0]
    assert "Traceback" not in result.stderr + result.stdout


@pytest.fixture
def season(tmp_path: Path) -> Path:
    for name in ["harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"]:
        shutil.copy(SAMPLE_DATA / name, tmp_path / name)
    return tmp_path


def _train(column: str) -> np.ndarray:
    table = read_table(SAMPLE_DATA / "harvest_2025.csv")
    rows = table.data["split"] == "train"
    x = table.data.loc[rows, column].to_numpy(float, na_value=np.nan)
    return x[~np.isnan(x)]


# --------------------------------------------------------------------------- the scenario


def test_fit_apply_restore_show_scenario(season):
    fit = run(
        "fit", "harvest_2025.csv",
        "-m", "*=zscore", "-m", "pest_trap_count=yeojohnson", "-m", "soil_ph=minmax:low=-1,high=1",
        "--fit-where", "split=train",
        "-p", "harvest.swproj", "-o", "harvest_2025_scaled.xlsx",
        cwd=season,
    )  # fmt: skip
    assert fit.returncode == 0, fit.stderr
    assert fit.stderr == ""  # no progress: standard error is not a terminal here
    rows = int((read_table(SAMPLE_DATA / "harvest_2025.csv").data["split"] == "train").sum())
    assert fit.stdout.splitlines()[0] == (
        f"fitted 8 columns on {rows:,} rows where split is train; project saved to harvest.swproj"
    )
    doc = json.loads((season / "harvest.swproj").read_text(encoding="utf-8"))
    methods = {c: e["method"] for c, e in doc["columns"].items()}
    assert methods["pest_trap_count"] == "yeojohnson" and methods["soil_ph"] == "minmax"
    assert doc["columns"]["soil_ph"]["options"] == {"low": -1.0, "high": 1.0}
    assert {c for c, m in methods.items() if m == "zscore"} == {
        "tree_age_years", "trunk_girth_cm", "yield_kg", "fruit_count", "sugar_brix",
        "irrigation_l_per_week",
    }  # fmt: skip
    assert doc["source"]["relative"] == "harvest_2025.csv"

    apply = run(
        "apply", "harvest.swproj", "harvest_2026.csv", "-o", "harvest_2026_scaled.csv", "--clip",
        cwd=season,
    )  # fmt: skip
    assert apply.returncode == 0, apply.stderr
    new = (
        read_table(SAMPLE_DATA / "harvest_2026.csv")
        .data["yield_kg"]
        .to_numpy(float, na_value=np.nan)
    )
    train = _train("yield_kg")
    below, above = int(np.sum(new < train.min())), int(np.sum(new > train.max()))
    assert (
        f"yield_kg: {int(np.sum(~np.isnan(new))):,} values; {below:,} below and {above:,} above "
        "the fitted range, clipped into it"
    ) in apply.stdout.splitlines()
    scaled = read_table(season / "harvest_2026_scaled.csv").data["yield_kg"]
    expected = (np.clip(new, train.min(), train.max()) - np.mean(train)) / np.std(train, ddof=1)
    np.testing.assert_allclose(scaled.to_numpy(float, na_value=np.nan), expected, rtol=1e-12)

    restore = run(
        "restore", "harvest_2025_scaled.xlsx", "predicted_yield_scaled.csv",
        "--as", "predicted_yield=yield_kg", "-o", "predicted_kg.csv",
        cwd=season,
    )  # fmt: skip
    assert restore.returncode == 0, restore.stderr
    assert "predicted_yield (as yield_kg): 2,438 values restored" in restore.stdout
    pred = read_table(SAMPLE_DATA / "predicted_yield_scaled.csv").data
    out = read_table(season / "predicted_kg.csv").data
    # sample_data/README.md: predicted_kg = predicted_yield * sd + mean (sample sd, train rows).
    np.testing.assert_allclose(
        out["predicted_yield"], pred["predicted_yield"] * np.std(train, ddof=1) + np.mean(train),
        rtol=1e-12,
    )  # fmt: skip
    assert out["tree_code"].tolist() == pred["tree_code"].tolist()

    show = run("show", "harvest.swproj", cwd=season)
    assert show.returncode == 0, show.stderr
    lines = show.stdout.splitlines()
    assert lines[0] == f"data file:   {(season / 'harvest_2025.csv').resolve()}"
    assert f"fitted on:   {rows:,} rows where split is train" in lines
    # The report's words for the read settings (io.detect.describe_read_options).
    read = "encoding UTF-8, columns separated by comma, decimal point, column names on row 1"
    assert f"read with:   {read}" in lines
    yield_line = next(line for line in lines if line.startswith("yield_kg "))
    assert yield_line.split()[:3] == ["yield_kg", "z-score", "sd=sample"]
    assert f"mean {np.mean(train):.10g}, sd {np.std(train, ddof=1):.10g}" in yield_line
    assert f"{train.size:,} values" in yield_line
    soil_line = next(line for line in lines if line.startswith("soil_ph "))
    assert "min-max" in soil_line and "low=-1.0, high=1.0" in soil_line

    # python -m scalewright is the same program; the workbook alone is enough to show it.
    module = run("show", "harvest_2025_scaled.xlsx", cwd=season, module=True)
    assert module.returncode == 0, module.stderr
    assert yield_line in module.stdout.splitlines()


def test_help_for_every_command(tmp_path):
    top = run("--help", cwd=tmp_path)
    assert top.returncode == 0
    for command in ["open", "fit", "apply", "restore", "show"]:
        assert command in top.stdout
    for command, needle in [
        ("fit", "--fit-where split=train"),
        ("apply", "scalewright apply harvest.swproj harvest_2026.csv"),
        ("restore", "--as predicted_yield=yield_kg"),
        ("show", "scalewright show harvest.swproj"),
        ("open", "scalewright open harvest_2025.csv"),
    ]:
        result = run(command, "--help", cwd=tmp_path)
        assert result.returncode == 0, result.stderr
        assert "example" in result.stdout and needle in result.stdout, result.stdout


def test_usage_errors_exit_2(tmp_path):
    missing_project = run("fit", "harvest_2025.csv", "-m", "yield_kg=zscore", cwd=tmp_path)
    assert missing_project.returncode == 2
    assert "-p/--project" in missing_project.stderr
    unknown = run("scale", "x.csv", cwd=tmp_path)
    assert unknown.returncode == 2
    assert "invalid choice: 'scale'" in unknown.stderr


# --------------------------------------------------------------------------- bad input


def _bad_files(folder: Path) -> None:
    (folder / "empty.csv").write_bytes(b"")
    (folder / "garbage.csv").write_bytes(bytes((i * 7919) % 256 for i in range(4000)))
    (folder / "broken.xlsx").write_text("this is not a workbook", encoding="utf-8")
    (folder / "ragged.csv").write_text("a,b\n1,2\n3,4,5\n", encoding="utf-8")
    (folder / "notes.json").write_text("{}", encoding="utf-8")
    (folder / "corrupt.swproj").write_text('{"format": "scalewright-project",', encoding="utf-8")


BAD_FIT = [
    # (id, extra arguments, fragments the one line must hold)
    ("missing-file", ["nowhere.csv", "-m", "yield_kg=zscore"], ["nowhere.csv", "does not exist"]),
    ("empty-file", ["empty.csv", "-m", "a=zscore"], ["empty.csv", "empty"]),
    ("binary-garbage", ["garbage.csv", "-m", "a=zscore"], ["garbage.csv", "binary"]),
    ("wrong-extension", ["notes.json", "-m", "a=zscore"], ["notes.json", "'.json'"]),
    ("corrupt-workbook", ["broken.xlsx", "-m", "a=zscore"], ["broken.xlsx", "not a valid .xlsx"]),
    ("ragged-rows", ["ragged.csv", "-m", "a=zscore"], ["ragged.csv", "row 3 has 3 fields"]),
    ("unknown-column", ["harvest_2025.csv", "-m", "rainfall=zscore"], ["column 'rainfall'", "no such column"]),
    ("identifier", ["harvest_2025.csv", "-m", "tree_code=zscore"], ["column 'tree_code'", "identifiers are never scaled"]),
]  # fmt: skip


@pytest.mark.parametrize(
    ("args", "fragments"), [b[1:] for b in BAD_FIT], ids=[b[0] for b in BAD_FIT]
)
def test_fit_bad_input_exits_1_without_output(season, args, fragments):
    _bad_files(season)
    before = sorted(p.name for p in season.iterdir())
    result = run("fit", *args, "-p", "out.swproj", "-o", "out.xlsx", cwd=season)
    assert_one_line_failure(result, *fragments)
    assert sorted(p.name for p in season.iterdir()) == before  # nothing written, no temp files


def test_project_and_output_bad_input(season):
    _bad_files(season)
    ok = run("fit", "harvest_2025.csv", "-m", "yield_kg=zscore", "-p", "good.swproj", cwd=season)
    assert ok.returncode == 0, ok.stderr
    doc = json.loads((season / "good.swproj").read_text(encoding="utf-8"))
    doc["columns"]["yield_kg"]["params"]["sd"] = -2.0
    (season / "tampered.swproj").write_text(json.dumps(doc), encoding="utf-8")
    source_before = (season / "harvest_2026.csv").read_bytes()
    before = sorted(p.name for p in season.iterdir())

    cases = [
        (("apply", "corrupt.swproj", "harvest_2026.csv", "-o", "o.csv"),
         ["corrupt.swproj", "not a Scalewright project file (not valid JSON"]),
        (("apply", "tampered.swproj", "harvest_2026.csv", "-o", "o.csv"),
         ["tampered.swproj", "columns.yield_kg.params.sd: must be 0 or more"]),
        (("show", "missing.swproj"), ["missing.swproj", "no such file"]),
        (("apply", "good.swproj", "harvest_2026.csv", "-o", "harvest_2026.csv"),
         ["harvest_2026.csv", "the file the data was read from"]),
        (("restore", "good.swproj", "harvest_2026.csv", "-o", "good.swproj"),
         ["good.swproj", "this name is for project files"]),
        (("restore", "broken.xlsx", "predicted_yield_scaled.csv", "-o", "o.csv"),
         ["broken.xlsx", "not a valid .xlsx"]),
        (("restore", "good.swproj", "predicted_yield_scaled.csv", "--as", "predicted_yield=rain",
          "-o", "o.csv"), ["column 'rain'", "has no fitted parameters"]),
        (("apply", "good.swproj", "predicted_yield_scaled.csv", "-o", "o.xlsx"),
         ["column 'yield_kg'", "not in predicted_yield_scaled.csv"]),
    ]  # fmt: skip
    for args, fragments in cases:
        assert_one_line_failure(run(*args, cwd=season), *fragments)
    assert sorted(p.name for p in season.iterdir()) == before
    assert (season / "harvest_2026.csv").read_bytes() == source_before


# --------------------------------------------------------------------------- in-process parsing


@pytest.mark.parametrize(
    ("spec", "fragments"),
    [
        ("yield_kg=zcore", ["-m 'yield_kg=zcore'", "unknown method 'zcore'"]),
        ("yield_kg=minmax:low", ["the option 'low' must be written OPT=VALUE"]),
        ("yield_kg=minmax:", ["no options after ':'"]),
        ("yield_kg=minmax:low=1,high=0", ["minmax needs low < high"]),
        ("yield_kg=log:base=3", ["log option 'base' must be one of e, 10, 2, not '3'"]),
        ("yield_kg=zscore:scale=2", ["zscore has no option 'scale'"]),
        ("yield_kg=minmax:low=a", ["minmax option 'low' must be a number, not 'a'"]),
        ("yield_kg", ["-m 'yield_kg' must be written COLUMN=METHOD"]),
        ("yield_kg=minmax:low=0,low=1", ["the option 'low' is given twice"]),
    ],
)
def test_method_spec_errors(tmp_path, capsys, spec, fragments):
    # Checked before the data file is read: the file need not even exist.
    status = cli.main(
        ["fit", str(tmp_path / "none.csv"), "-m", spec, "-p", str(tmp_path / "p.swproj")]
    )
    err = capsys.readouterr().err
    assert status == 1 and err.count("\n") == 1 and err.startswith("scalewright: ")
    for fragment in fragments:
        assert fragment in err
    assert list(tmp_path.iterdir()) == []


def test_method_spec_parsing():
    assert cli.parse_method_spec("soil_ph=minmax:low=-1,high=1") == (
        "soil_ph", "minmax", {"low": "-1", "high": "1"}
    )  # fmt: skip
    assert cli.parse_method_spec("a=b=ZScore") == ("a=b", "zscore", {})
    assert cli.parse_method_spec("*=boxcox:standardize=yes") == (
        "*", "boxcox", {"standardize": "yes"}
    )  # fmt: skip
    assert cli.parse_mapping(["pred=x=yield_kg"], ["yield_kg"]) == {"pred=x": "yield_kg"}


def test_star_covers_numeric_columns_and_names_override(capsys):
    table = read_table(SAMPLE_DATA / "harvest_2025.csv")
    specs = cli.parse_method_specs(
        ["yield_kg=robust", "*=zscore", "soil_ph=none", "soil_ph=maxabs"]
    )
    choices = cli.build_choices(table, specs, group_by="tree_age_years")
    numeric = [c for c, k in table.kinds.items() if k == "number" and c != "tree_age_years"]
    assert list(choices) == numeric
    assert choices["yield_kg"].method == "robust"  # named beats '*' whatever the order
    assert choices["soil_ph"].method == "maxabs"  # the later -m for a column wins
    assert {choices[c].method for c in numeric if c not in ("yield_kg", "soil_ph")} == {"zscore"}


def test_fit_with_groups_and_boxcox_errors(season, capsys):
    status = cli.main(
        ["fit", str(season / "harvest_2025.csv"), "-m", "*=boxcox", "-p", str(season / "p.swproj")]
    )
    err = capsys.readouterr().err
    assert status == 1
    assert "column 'pest_trap_count': Box-Cox needs values above 0" in err
    status = cli.main(
        ["fit", str(season / "harvest_2025.csv"), "-m", "yield_kg=zscore", "--fit-where",
         "split=validation", "-p", str(season / "p.swproj")]
    )  # fmt: skip
    assert status == 1
    assert "no row has the value 'validation'" in capsys.readouterr().err
    status = cli.main(
        ["fit", str(season / "harvest_2025.csv"), "-m", "yield_kg=zscore", "--group-by",
         "farm", "-p", str(season / "p.swproj")]
    )  # fmt: skip
    assert status == 1
    assert "column 'farm': (--group-by) there is no such column" in capsys.readouterr().err
    status = cli.main(
        ["fit", str(season / "harvest_2025.csv"), "-m", "*=zscore", "--group-by", "orchard",
         "-p", str(season / "p.swproj"), "-o", str(season / "s.tsv")]
    )  # fmt: skip
    out = capsys.readouterr()
    assert status == 0, out.err
    assert "  orchard = Hilltop" in out.out
    assert (season / "p.swproj").exists() and (season / "s.tsv").exists()
    assert not (season / "p.json").exists()


def test_open_refuses_a_missing_file_before_starting_the_window(tmp_path, capsys):
    assert cli.main(["open", str(tmp_path / "nothing.csv")]) == 1
    assert "nothing.csv: there is no such file" in capsys.readouterr().err


def test_failed_project_save_removes_the_new_scaled_file(season, capsys, monkeypatch):
    from scalewright import project as project_module
    from scalewright.errors import WriteError

    def refuse(project, path):
        raise WriteError(path, "the disk is full")

    monkeypatch.setattr(project_module, "save_project", refuse)
    status = cli.main(
        ["fit", str(season / "harvest_2025.csv"), "-m", "yield_kg=zscore",
         "-p", str(season / "p.swproj"), "-o", str(season / "scaled.xlsx")]
    )  # fmt: skip
    assert status == 1
    assert "p.swproj: the disk is full" in capsys.readouterr().err
    assert not (season / "scaled.xlsx").exists() and not (season / "p.swproj").exists()
    status = cli.main(
        ["fit", str(season / "harvest_2025.csv"), "-m", "yield_kg=zscore",
         "-p", str(season / "no_folder" / "p.swproj")]
    )  # fmt: skip
    assert status == 1
    assert "p.swproj: the folder does not exist" in capsys.readouterr().err


class _Stream:
    def __init__(self, tty: bool) -> None:
        self.tty, self.text = tty, ""

    def isatty(self) -> bool:
        return self.tty

    def write(self, text: str) -> None:
        self.text += text

    def flush(self) -> None:
        pass


def test_progress_only_on_a_terminal():
    quiet = cli.TerminalProgress("reading", _Stream(tty=False))
    assert quiet.callback is None
    quiet(0.5)
    quiet.done()
    assert quiet.stream.text == ""
    loud = cli.TerminalProgress("reading", _Stream(tty=True))
    for f in (0.0, 0.004, 0.5, 1.0):
        loud.callback(f)
    loud.done()
    assert loud.stream.text.split("\r")[1:4] == ["reading:   0%", "reading:  50%", "reading: 100%"]
    assert loud.stream.text.endswith("\r")


@pytest.mark.parametrize("command", ["apply", "restore"])
def test_the_output_of_apply_and_restore_is_checked_once(season, capsys, monkeypatch, command):
    """One ``apply`` used to check its output five times (twice in the command, then in
    apply_to_file, apply_table and write_output): now once, and still before writing."""
    from scalewright import tasks

    project = season / "p.swproj"
    assert cli.main(["fit", str(season / "harvest_2025.csv"), "-m", "yield_kg=zscore",
                     "-p", str(project)]) == 0  # fmt: skip
    real = tasks.check_target
    calls = []

    def counted(*args, **kwargs):
        calls.append(args)
        return real(*args, **kwargs)

    monkeypatch.setattr(tasks, "check_target", counted)
    data = season / ("harvest_2026.csv" if command == "apply" else "predicted_yield_scaled.csv")
    extra = [] if command == "apply" else ["--as", "predicted_yield=yield_kg"]
    out = season / "out.csv"
    assert cli.main([command, str(project), str(data), "-o", str(out), *extra]) == 0
    assert len(calls) == 1 and out.is_file()
    # the one check still refuses the project's own files and the data read
    calls.clear()
    capsys.readouterr()
    assert cli.main([command, str(project), str(data), "-o", str(data), *extra]) == 1
    assert len(calls) == 1
    refused = season / "harvest_2025.csv"  # the file the parameters were fitted on
    assert cli.main([command, str(project), str(data), "-o", str(refused), *extra]) == 1
    assert "the data file the parameters were fitted on" in capsys.readouterr().err
