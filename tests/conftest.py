"""Test setup shared by every test module.

Qt must be told to draw offscreen before any Qt module is imported, so this runs first.
"""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest

from support import SAMPLE_DATA


@pytest.fixture
def sample_data_dir():
    return SAMPLE_DATA
