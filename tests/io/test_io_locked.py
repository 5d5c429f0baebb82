"""A workbook really encrypted with a password (made by locked/make_locked.py)."""

from pathlib import Path

import pytest

from scalewright.errors import ReadError
from scalewright.io import read_table

LOCKED = Path(__file__).resolve().parent / "locked" / "locked.xlsx"


def test_encrypted_workbook_is_refused_with_a_plain_message():
    with pytest.raises(ReadError) as err:
        read_table(LOCKED)
    assert str(err.value) == (
        f"{LOCKED}: the workbook is protected with a password; "
        "save an unprotected copy and open that"
    )
