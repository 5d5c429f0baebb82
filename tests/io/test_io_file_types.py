"""Files that are not tables say so and list the types that open (issue 8, item 5).

Judged by extension and by content: a .txt holding a delimited table still opens, a
one-column table still opens, and prose or a PDF under a table's name is refused.
"""

from __future__ import annotations

import pytest

from scalewright.errors import UnsupportedFile
from scalewright.io import ReadOptions, detect, read_table

TYPES = (
    "CSV (.csv), TSV (.tsv), delimited text (.txt), Workbook (.xlsx, .xlsm), "
    "older workbook (.xls), OpenDocument spreadsheet (.ods) and Parquet (.parquet)"
)
PROSE = (
    "Orchard diary, spring 2026\n"
    "\n"
    "The north slope was pruned on the third day of March, before the buds opened.\n"
    "Rain held off until the evening, so the pickers kept going until the light went.\n"
    "Next year we plan to net the young trees against the birds and the deer.\n"
    "The cider press needs a new belt before the autumn comes round again.\n"
)


@pytest.mark.parametrize(
    ("name", "seems"),
    [
        ("README.md", "('.md', a Markdown text)"),
        ("minutes.docx", "('.docx', a word-processor document)"),
        ("report.pdf", "('.pdf', a PDF document)"),
        ("photo.png", "('.png', an image)"),
        ("notes", "(no extension)"),
        ("data.feather", "('.feather')"),  # Parquet opens (issue 9); Feather does not
    ],
)
def test_an_unsupported_extension_names_the_type_and_lists_what_opens(tmp_path, name, seems):
    path = tmp_path / name
    path.write_bytes(b"anything")
    for read in (read_table, detect):
        with pytest.raises(UnsupportedFile) as caught:
            read(path)
        message = str(caught.value)
        assert message.startswith(f"{path}: this type of file {seems} is not supported; ")
        assert message.endswith(f"Scalewright opens tables: {TYPES}")


@pytest.mark.parametrize("suffix", [".txt", ".csv"])
def test_prose_under_a_table_name_does_not_look_like_a_table(tmp_path, suffix):
    path = tmp_path / f"diary{suffix}"
    path.write_text(PROSE, encoding="utf-8")
    with pytest.raises(UnsupportedFile, match="this does not look like a table"):
        detect(path)
    with pytest.raises(UnsupportedFile, match="no column separator"):
        read_table(path)


def test_prose_is_read_anyway_when_the_user_names_the_delimiter(tmp_path):
    path = tmp_path / "diary.txt"
    path.write_text(PROSE, encoding="utf-8")
    found = detect(path, ReadOptions(delimiter="|"))
    assert len(found.headers) == 1


@pytest.mark.parametrize(
    ("text", "columns"),
    [
        ("tree_code\tyield_kg\n000076\t96.2\n000081\t69.5\n000090\t71.0\n", 2),
        ("tree_code;yield_kg\n000076;96,2\n000081;69,5\n000090;71,0\n", 2),
        ("yield_kg\n96.2\n69.5\n71.0\n80.4\n", 1),
        # a one-column table of short text cells is a table, not prose
        ("variety\nEarly Red\nGreen Keeper\nLate Gold\n", 1),
        # sentences in a quoted column of a real table
        (
            'tree_code,note\n000076,"pruned hard in March, fruit set was very good"\n'
            '000081,"netted against the birds, two weeks before picking"\n'
            '000090,"left alone this season, as it was planted late"\n',
            2,
        ),
    ],
)
def test_a_txt_that_is_a_delimited_table_still_opens(tmp_path, text, columns):
    path = tmp_path / "harvest_notes.txt"
    path.write_text(text, encoding="utf-8")
    assert read_table(path).data.shape[1] == columns


@pytest.mark.parametrize(
    ("content", "words"),
    [
        (b"%PDF-1.7\n%invented\n", "this is a PDF document saved under a '.csv' name"),
        (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(64), "an older Office file"),
        (b"PK\x03\x04" + b"word/document.xml" + bytes(32), "a zipped file"),
    ],
)
def test_a_known_binary_format_under_a_csv_name_is_named(tmp_path, content, words):
    # Signatures: ISO 32000-1 7.5.2 (PDF), [MS-CFB] 2.2 (OLE2), PKWARE APPNOTE 4.3.7 (zip).
    path = tmp_path / "harvest.csv"
    path.write_bytes(content)
    with pytest.raises(UnsupportedFile) as caught:
        read_table(path)
    assert words in str(caught.value) and TYPES in str(caught.value)
