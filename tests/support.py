"""Paths every test module may need (import as ``from support import ...``).

Kept out of conftest.py: with several conftest files in the tree, ``import conftest`` can
resolve to the wrong one.
"""

from pathlib import Path

REPO_ROOT = Path(__file__).resolve().parents[1]
SAMPLE_DATA = REPO_ROOT / "sample_data"
# The shared reference folder sits beside the checkout (../shared); CI lays it out the same way.
SHARED_REFERENCE = REPO_ROOT.parent / "shared" / "reference"
