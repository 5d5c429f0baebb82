"""Write harvest_small.xls, the legacy-format workbook the .xls reading test uses.

Regenerating needs xlwt (``pip install xlwt``), which is not a dependency: the file is
committed, and only the reader is under test. Invented data (see sample_data/README.md).
"""

import datetime
from pathlib import Path

import xlwt

HERE = Path(__file__).resolve().parent


def main() -> None:
    book = xlwt.Workbook()
    sheet = book.add_sheet("harvest")
    dates = xlwt.easyxf(num_format_str="YYYY-MM-DD")
    for col, name in enumerate(["tree_code", "yield_kg", "planted_on", "note"]):
        sheet.write(0, col, name)
    rows = [
        ("000412", 81.5, datetime.date(2006, 3, 27), "=SUM(A1)"),
        ("000413", 55.25, datetime.date(1998, 4, 15), "fine"),
        ("000414", None, datetime.date(2010, 5, 8), None),
    ]
    for r, (code, kg, planted, note) in enumerate(rows, start=1):
        sheet.write(r, 0, code)
        if kg is not None:
            sheet.write(r, 1, kg)
        sheet.write(r, 2, planted, dates)
        if note is not None:
            sheet.write(r, 3, note)
    book.save(str(HERE / "harvest_small.xls"))


if __name__ == "__main__":
    main()
