"""Write locked.xlsx: a small workbook really encrypted with the password "harvest".

Regenerating needs msoffcrypto-tool (``pip install msoffcrypto-tool``), which is not a
dependency: the file is committed, and only the reader's refusal is under test.
"""

import io
from pathlib import Path

import openpyxl
from msoffcrypto.format.ooxml import OOXMLFile

HERE = Path(__file__).resolve().parent


def main() -> None:
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["tree_code", "yield_kg"])
    sheet.append(["000412", 81.5])
    plain = io.BytesIO()
    book.save(plain)
    plain.seek(0)
    with open(HERE / "locked.xlsx", "wb") as out:
        OOXMLFile(plain).encrypt("harvest", out)


if __name__ == "__main__":
    main()
