"""The command line says a file is not a table it reads, and which types it reads
(issue 8, item 5)."""

from __future__ import annotations

from scalewright import cli


def test_fit_on_a_readme_says_the_type_is_not_supported(tmp_path, capsys):
    readme = tmp_path / "README.md"
    readme.write_text("# Orchard notes\n\nPicked on Tuesday.\n", encoding="utf-8")
    status = cli.main(["fit", str(readme), "-m", "*=zscore", "-p", str(tmp_path / "p.swproj")])
    err = capsys.readouterr().err
    assert status == 1
    assert err.splitlines() == [
        f"scalewright: {readme}: this type of file ('.md', a Markdown text) is not supported; "
        "Scalewright opens tables: CSV (.csv), TSV (.tsv), delimited text (.txt), "
        "Workbook (.xlsx, .xlsm), older workbook (.xls), OpenDocument spreadsheet (.ods) "
        "and Parquet (.parquet)"
    ]
    assert not (tmp_path / "p.swproj").exists()
