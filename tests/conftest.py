"""Test setup shared by every test module.

Qt must be told to draw offscreen before any Qt module is imported, so this runs first.
"""

import os
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest  # noqa: E402

REPO_ROOT = Path(__file__).resolve().parents[1]
SAMPLE_DATA = REPO_ROOT / "sample_data"
# The shared reference folder sits beside the checkout (../shared); CI lays it out the same way.
SHARED_REFERENCE = REPO_ROOT.parent / "shared" / "reference"


@pytest.fixture
def sample_data_dir() -> Path:
    return SAMPLE_DATA
