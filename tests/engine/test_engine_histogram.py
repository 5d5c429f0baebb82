"""Linked histograms: bar i in original units holds exactly the values of bar i in scaled
units (../shared/DESIGN.md, "The window": the scaled bins are the original bins mapped
through the transform). The data are invented from a fixed seed.
"""

from __future__ import annotations

import numpy as np
import pytest

from scalewright.engine import ColumnChoice, bars_in_range, fit_column, histogram, mapped_edges

RNG = np.random.default_rng(5)
VALUES = np.concatenate([RNG.lognormal(2.0, 0.8, 3000), [np.nan] * 5, [np.inf]])

CASES = [
    ("minmax", {}),
    ("minmax", {"low": -1, "high": 1}),
    ("zscore", {}),
    ("decimal", {}),
    ("robust", {}),
    ("maxabs", {}),
    ("log", {}),
    ("log", {"base": "2"}),
    ("boxcox", {}),
    ("boxcox", {"standardize": True}),
    ("yeojohnson", {}),
    ("none", {}),
]


@pytest.mark.parametrize(("method", "options"), CASES)
def test_bar_i_holds_the_same_values_on_both_sides(method, options):
    fc = fit_column(VALUES, ColumnChoice(method, options), column="c")
    h = histogram(VALUES, bins=25)
    assert h.counts.sum() == np.count_nonzero(np.isfinite(VALUES))
    edges = mapped_edges(h.edges, fc)
    assert np.array_equal(edges, fc.forward(h.edges))
    assert np.all(np.diff(edges) > 0)  # increasing methods keep bar order
    scaled = fc.forward(VALUES)
    counts, _ = np.histogram(scaled[np.isfinite(scaled)], bins=edges)
    assert counts.tolist() == h.counts.tolist()


def test_histogram_edges_and_counts_match_numpy():
    h = histogram(VALUES, bins=12)
    finite = VALUES[np.isfinite(VALUES)]
    counts, edges = np.histogram(finite, bins=12)  # numpy reference
    assert h.counts.tolist() == counts.tolist() and np.array_equal(h.edges, edges)


def test_histogram_of_constant_and_empty_columns():
    h = histogram(np.array([3.0, 3.0, np.nan]), bins=4)
    assert h.edges[0] == 2.5 and h.edges[-1] == 3.5 and h.counts.sum() == 2
    h = histogram(np.array([np.nan]))
    assert h.counts.sum() == 0 and len(h.edges) == 2


def test_bars_in_range():
    edges = np.array([0.0, 1.0, 2.0, 3.0, 4.0])  # bars [0,1) [1,2) [2,3) [3,4]
    assert bars_in_range(edges, 0.5, 2.5) == (0, 2)
    assert bars_in_range(edges, 1.0, 1.5) == (1, 1)
    assert bars_in_range(edges, 1.0, 2.0) == (1, 1)  # touching the next bar's left edge only
    assert bars_in_range(edges, 2.5, 0.5) == (0, 2)  # a range dragged right to left
    assert bars_in_range(edges, -5.0, 10.0) == (0, 3)


def test_bars_in_range_agree_across_the_link():
    fc = fit_column(VALUES, ColumnChoice("boxcox"), column="c")
    h = histogram(VALUES, bins=20)
    low, high = 6.0, 15.0  # a range selected in original units...
    mapped = mapped_edges(h.edges, fc)
    ends = fc.forward(np.array([low, high]))  # ...is the same bars in scaled units
    assert bars_in_range(h.edges, low, high) == bars_in_range(mapped, ends[0], ends[1])


@pytest.mark.parametrize(
    ("values", "bins", "width"),
    [
        (np.arange(5, 31), 30, 1.0),  # tree ages 5..30: one bar per year
        (np.arange(0, 39), 30, 2.0),  # trap counts 0..38: 39 numbers, bars two wide
        (np.array([0.0, 0.0, 1.0, 7.0, np.nan]), 30, 1.0),
    ],
)
def test_whole_numbers_get_whole_width_bars_centred_on_them(values, bins, width):
    h = histogram(values.astype(float), bins=bins)
    assert len(h.counts) <= bins
    np.testing.assert_allclose(np.diff(h.edges), width)
    finite = values[np.isfinite(values)]
    assert h.edges[0] == finite.min() - 0.5 and h.edges[-1] >= finite.max() + 0.5
    assert h.counts.sum() == finite.size
    if width == 1.0 and np.array_equal(finite, np.arange(finite.min(), finite.max() + 1)):
        assert (h.counts == 1).all()  # consecutive numbers: no empty bar between full ones


def test_integer_edges_stay_inside_the_domain_of_log_and_box_cox():
    # Counts from 1 up: the first edge is 0.5, still positive, so every mapped edge exists.
    counts = np.arange(1.0, 60.0)
    h = histogram(counts)
    for method in ("log", "boxcox"):
        fc = fit_column(counts, ColumnChoice(method), column="c")
        assert np.isfinite(mapped_edges(h.edges, fc)).all()
