"""Projects the program saved itself must load again: bugs found in a code review."""

from __future__ import annotations

import json

import numpy as np
import pytest

from scalewright.engine import ColumnChoice, FitSettings
from scalewright.errors import ProjectError
from scalewright.io import read_table
from scalewright.project import load_project, project_from_json, project_to_json, save_project
from scalewright.tasks import fit_project


def _round_trip(tmp_path, values, choice):
    data = tmp_path / "values.csv"
    data.write_text("a\n" + "".join(f"{v!r}\n" for v in values), encoding="utf-8")
    table = read_table(data)
    assert table.data["a"].tolist() == list(values)  # the file holds exactly these values
    project = fit_project(table, {"a": choice}, FitSettings())
    path = tmp_path / "values.swproj"
    save_project(project, path)
    return project, load_project(path)


def test_bug_robust_with_a_very_narrow_middle_half_loads_again(tmp_path):
    # bug: "columns.a.params.scale: must be q3 - q1 (4.44e-16)": fit divided by 1 because
    # dividing by the IQR overflows, and the validation did not know that rule.
    one_up = float(np.nextafter(1.0, 2.0))
    values = [-1e300, 1.0, 1.0, one_up, float(np.nextafter(one_up, 2.0)), 1e300]
    project, loaded = _round_trip(tmp_path, values, ColumnChoice("robust"))
    params = loaded.plan["a"].pooled.params
    assert params["scale"] == 1.0 and params["q3"] - params["q1"] > 0
    assert params == project.plan["a"].pooled.params


def test_robust_iqr_is_refused_where_the_fit_divides_by_1(tmp_path):
    one_up = float(np.nextafter(1.0, 2.0))
    values = [-1e300, 1.0, 1.0, one_up, float(np.nextafter(one_up, 2.0)), 1e300]
    project, _ = _round_trip(tmp_path, values, ColumnChoice("robust"))
    doc = json.loads(project_to_json(project))
    params = doc["columns"]["a"]["params"]
    params["scale"] = params["q3"] - params["q1"]
    with pytest.raises(ProjectError, match=r"params\.scale: must be 1 \(the IQR is too narrow"):
        project_from_json(json.dumps(doc))


def test_robust_scale_1_is_still_refused_when_the_iqr_is_usable(tmp_path):
    project, _ = _round_trip(tmp_path, [1.0, 2.0, 4.0, 8.0, 9.0], ColumnChoice("robust"))
    doc = json.loads(project_to_json(project))
    assert doc["columns"]["a"]["params"]["scale"] == 8.0 - 2.0  # quartiles (type 7) 2 and 8
    doc["columns"]["a"]["params"]["scale"] = 1.0
    with pytest.raises(ProjectError, match=r"columns\.a\.params\.scale: must be q3 - q1 \(6\.0\)"):
        project_from_json(json.dumps(doc))


@pytest.mark.parametrize("lo", [-9e15, -1e16, -1e300])
def test_bug_log_of_a_hugely_negative_minimum_loads_again(tmp_path, lo):
    # bug: "shift must make every fitted value above 0": 1 - min rounded to -min.
    project, loaded = _round_trip(tmp_path, [lo, 0.0, 7.0], ColumnChoice("log"))
    shift = loaded.plan["a"].pooled.params["shift"]
    assert lo + shift > 0
    assert shift == project.plan["a"].pooled.params["shift"]


def test_log_shift_that_leaves_the_minimum_at_zero_is_still_refused(tmp_path):
    project, _ = _round_trip(tmp_path, [-1e16, 0.0, 7.0], ColumnChoice("log"))
    doc = json.loads(project_to_json(project))
    doc["columns"]["a"]["params"]["shift"] = 1e16  # 1 - min as it rounds: min + shift == 0
    with pytest.raises(ProjectError, match=r"params\.shift: must be 0 or 1 - min made just large"):
        project_from_json(json.dumps(doc))


def test_log_shift_of_1_minus_min_still_loads(tmp_path):
    project, loaded = _round_trip(tmp_path, [-3.5, 0.0, 7.0], ColumnChoice("log"))
    assert loaded.plan["a"].pooled.params["shift"] == 4.5
