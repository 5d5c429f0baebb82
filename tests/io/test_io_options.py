"""ReadOptions as stored in a project file, and the unique-label rule."""

from __future__ import annotations

import json

import pytest

from scalewright.io import ReadOptions, unique_labels


def test_options_round_trip_through_json():
    options = ReadOptions("cp1252", ";", ",", ".", 2, None)
    text = json.dumps(options.to_dict())
    assert ReadOptions.from_dict(json.loads(text)) == options
    assert options.to_dict() == {
        "encoding": "cp1252",
        "delimiter": ";",
        "decimal": ",",
        "thousands": ".",
        "header_row": 2,
        "sheet": None,
    }


def test_missing_keys_mean_detect():
    assert ReadOptions.from_dict({"sheet": "Data"}) == ReadOptions(sheet="Data")


@pytest.mark.parametrize(
    ("data", "field"),
    [
        ({"delimeter": ";"}, "delimeter"),
        ({"decimal": ";"}, "decimal"),
        ({"thousands": "_"}, "thousands"),
        ({"header_row": -1}, "header_row"),
        ({"header_row": "2"}, "header_row"),
        ({"header_row": True}, "header_row"),
        ({"encoding": "no-such-codec"}, "encoding"),
        ({"delimiter": ";;"}, "delimiter"),
        ({"delimiter": '"'}, "delimiter"),
        ({"delimiter": "x"}, "delimiter"),
        ({"decimal": ",", "thousands": ","}, "thousands"),
    ],
)
def test_bad_option_names_the_key(data, field):
    with pytest.raises(ValueError, match=rf"^{field}:"):
        ReadOptions.from_dict(data)


def test_labels_blank_duplicate_and_collision():
    headers = ["x", "x", "", "Größe (m²)", "x", "x (2)", " ", "column 3"]
    assert unique_labels(headers) == [
        "x",
        "x (3)",  # "x (2)" is a header further on, so the second x skips it
        "column 3 (2)",  # "column 3" is a header further on too
        "Größe (m²)",
        "x (4)",
        "x (2)",
        "column 7",
        "column 3",
    ]


def test_labels_keep_unique_text_as_is():
    assert unique_labels(["a", "b ", " c"]) == ["a", "b ", " c"]
    assert unique_labels(["", ""]) == ["column 1", "column 2"]
    assert unique_labels(["a", "a", "a"]) == ["a", "a (2)", "a (3)"]
