"""Kind corrections in the project file (``read_options.kinds``): saved, loaded, checked;
files written before corrections existed load with none."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest

from scalewright.engine import ColumnChoice
from scalewright.errors import ProjectError
from scalewright.io import ReadOptions, read_table
from scalewright.project import load_project, project_from_json, project_to_dict, save_project
from scalewright.tasks import fit_project
from support import SAMPLE_DATA

FIXTURES = Path(__file__).parent / "fixtures"


@pytest.fixture(scope="module")
def corrected_doc():
    # tree_code holds leading-zero codes (sample_data/README.md): read as text on request.
    table = read_table(SAMPLE_DATA / "harvest_2025.csv", ReadOptions(kinds={"tree_code": "text"}))
    project = fit_project(table, {"yield_kg": ColumnChoice("zscore")})
    return project_to_dict(project)


@pytest.mark.parametrize("name", sorted(p.name for p in FIXTURES.glob("v1_*.swproj")))
def test_old_fixtures_load_without_corrections(name):
    doc = json.loads((FIXTURES / name).read_text(encoding="utf-8"))
    assert "kinds" not in doc["read_options"]
    assert load_project(FIXTURES / name).read_options.kinds == {}


def test_corrections_are_saved_and_loaded(corrected_doc, tmp_path):
    assert corrected_doc["read_options"]["kinds"] == {"tree_code": "text"}
    project = project_from_json(json.dumps(corrected_doc), "p.swproj")
    assert project.read_options.kinds == {"tree_code": "text"}
    save_project(project, tmp_path / "p.swproj")
    assert load_project(tmp_path / "p.swproj").read_options == project.read_options


@pytest.mark.parametrize(
    ("kinds", "expected"),
    [
        ({"no_such": "number"}, "read_options.kinds.no_such: is not a column of the table"),
        ({"tree_code": "numeric"}, "read_options.kinds: column 'tree_code': 'numeric' is not"),
        (["tree_code"], "read_options.kinds: expected an object"),
    ],
)
def test_a_bad_correction_names_the_field(corrected_doc, kinds, expected):
    doc = copy.deepcopy(corrected_doc)
    doc["read_options"]["kinds"] = kinds
    with pytest.raises(ProjectError) as caught:
        project_from_json(json.dumps(doc), "p.swproj")
    assert str(caught.value).startswith(f"p.swproj: {expected}"), str(caught.value)
