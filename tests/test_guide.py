"""The method guide: one source (the methods' own descriptions), the README section equal
to it, and its words about reversing true of the methods themselves."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from scalewright import guide
from scalewright.engine import METHODS
from support import SAMPLE_DATA

README = Path(__file__).resolve().parents[1] / "README.md"


def test_the_readme_method_guide_is_the_generated_one():
    text = README.read_text(encoding="utf-8")
    assert guide.current_section(text) == "\n\n" + guide.guide_markdown() + "\n", (
        "the README's method guide is out of date: run python -m scalewright.guide"
    )
    assert guide.replace_section(text) == text


def test_the_rewriting_command_checks_and_rewrites(tmp_path):
    readme = tmp_path / "README.md"
    readme.write_text(
        f"# x\n\n## Method guide\n\n{guide.BEGIN_MARK}\nold words\n{guide.END_MARK}\n\n## Next\n",
        encoding="utf-8",
    )
    run = [sys.executable, "-m", "scalewright.guide"]
    stale = subprocess.run([*run, "--check", str(readme)], capture_output=True, text=True)
    assert stale.returncode == 1 and "out of date" in stale.stdout
    assert "old words" in readme.read_text(encoding="utf-8")  # --check writes nothing
    assert subprocess.run([*run, str(readme)], capture_output=True).returncode == 0
    text = readme.read_text(encoding="utf-8")
    assert "old words" not in text and text.endswith("\n## Next\n")
    assert guide.current_section(text) == "\n\n" + guide.guide_markdown() + "\n"
    fresh = subprocess.run([*run, "--check", str(readme)], capture_output=True, text=True)
    assert fresh.returncode == 0, fresh.stdout


def test_a_readme_without_the_marks_is_refused_plainly():
    with pytest.raises(ValueError, match="no method guide section"):
        guide.replace_section("# a README without the guide\n")


def test_every_method_is_in_the_guide_with_all_four_answers():
    text = guide.guide_markdown()
    for method in METHODS.values():
        assert method.assumes and method.reverses, method.id
        section = guide.method_section(method)
        for words in (method.summary, method.when_to_use, method.assumes, method.reverses):
            assert words in section
        assert f"`{method.inverse_formula}`" in section
        assert section in text
        assert (guide.CAUTION_SHAPE in section) == method.changes_shape
    assert not any(m.linear for m in METHODS.values() if m.changes_shape)
    for caution in (guide.CAUTION_FIT_ON_TRAINING, guide.CAUTION_CLIPPING):
        assert caution in text
    assert guide.CAUTION_KEEP_PROJECT in text


@pytest.mark.parametrize("method_id", [m for m in METHODS if m != "none"])
def test_what_the_guide_says_about_reversing_holds(method_id):
    """'Fully, to floating-point rounding' and 'within the fitted range' are true of the
    method on the sample yields (fit, scale, reverse); numpy is the reference."""
    method = METHODS[method_id]
    data = pd.read_csv(SAMPLE_DATA / "harvest_2025.csv")["yield_kg"].dropna().to_numpy()
    params = method.fit(data, method.options())
    back = method.inverse_all(method.forward_all(data, params), params)
    words = method.reverses
    assert words.startswith(("Fully, to floating-point rounding", "Within")), words
    np.testing.assert_allclose(back, data, rtol=1e-9)


@pytest.mark.parametrize("method_id", list(METHODS))
def test_changes_shape_is_true_of_the_method(method_id):
    """A method that keeps the shape is a straight line: every pair of values keeps the
    ratio of its distances (the slope between any two points is one number). The guide's
    shape caution and the window's hint rest on ``changes_shape``; this checks it against
    what the method does to the sample yields (geometry, common practice)."""
    method = METHODS[method_id]
    data = np.unique(pd.read_csv(SAMPLE_DATA / "harvest_2025.csv")["yield_kg"].dropna())
    params = method.fit(data, method.options())
    scaled = method.forward_all(data, params)
    slopes = np.diff(scaled) / np.diff(data)
    straight = np.allclose(slopes, slopes[0], rtol=1e-9)
    assert method.changes_shape == (not straight)
    shaped_names = [m.name for m in METHODS.values() if m.changes_shape]
    text = guide.guide_markdown()
    overview = text.split("change the shape of the distribution")[0].lower()
    assert all(name.lower() in overview for name in shaped_names)
