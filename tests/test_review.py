"""Warnings beside a result: continuous edges without hogging capacity, a wide bracket,
a mechanism that lifts part of the slab (review.py)."""
from __future__ import annotations

import numpy as np
import pytest

import hingeline
from hingeline.result import LowerBound, Mechanism
from hingeline.review import GAP_WARNING, UPLIFT_WARNING, continuous_without_hogging, uplift, wide_gap

# Fox (Phil. Trans. R. Soc. A 277, 1974): clamped square with m' = m collapses at 42.851 m/L^2.
# Over any mechanism that vanishes on a fully supported outline the length-weighted sagging
# and hogging rotations are equal, so the simply supported square with m' = 0 (corners held
# down) collapses at half of it (derived, as in benchmarks/lower_no_top_bars.py).
SS_SQUARE_NO_TOP_BARS = 42.851 / 2

UNIT_SQUARE = """
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = {edges}
[capacity]
sagging = 1.0
hogging = {hogging}
[[load]]
type = "area"
value = 1.0
[analysis]
nodes = 150
"""


def unit_square(edges: str, hogging: str = "0.0"):
    return hingeline.model_from_toml(UNIT_SQUARE.format(edges=edges, hogging=hogging))


def test_continuous_edge_without_top_bars_is_named_and_acts_as_simply_supported():
    cont = hingeline.solve(unit_square('["continuous", "simple", "simple", "simple"]'))
    simple = hingeline.solve(unit_square('"simple"'))
    named = [w for w in cont.warnings if "continuous edge from (0, 0) to (1, 0)" in w]
    assert len(named) == 1 and "simply supported" in named[0]
    assert not [w for w in simple.warnings if "continuous edge" in w]
    # Both are the simply supported square without top bars: equal, and bracketing the exact value.
    assert cont.load_factor == pytest.approx(simple.load_factor, rel=1e-6)
    assert cont.lower_bound.load_factor <= SS_SQUARE_NO_TOP_BARS <= cont.load_factor


def test_continuous_edge_with_top_bars_across_it_gives_no_warning():
    # Hogging bars along direction 2 (y) only: across the edge y = 0 (normal along y) they count,
    # across the edge x = 1 (normal along x) they do not.
    model = unit_square('["continuous", "continuous", "simple", "simple"]', "[0.0, 0.8]")
    messages = continuous_without_hogging(model)
    assert len(messages) == 1 and "from (1, 0) to (1, 1)" in messages[0]


def test_zero_fixity_is_named():
    model = unit_square('[{type = "continuous", fixity = 0.0}, "simple", "simple", "simple"]', "1.0")
    messages = continuous_without_hogging(model)
    assert len(messages) == 1 and "fixity 0" in messages[0]


def _lower(value):
    return LowerBound(load_factor=value, solved=value, field=None, check=None, status="Solved", seconds=0.0)


def test_wide_gap_only_above_the_threshold():
    assert wide_gap(1.0, _lower(1.0 - 0.5 * GAP_WARNING)) == []
    assert wide_gap(1.0, None) == [] and wide_gap(1.0, _lower(None)) == []
    (message,) = wide_gap(2.0, _lower(1.6))
    assert "20.0 %" in message and "1.6" in message


def test_uplift_only_above_the_threshold():
    tri = np.array([[0, 1, 2]])
    xy = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    assert uplift(Mechanism(xy, tri, np.array([1.0, 0.0, -0.5 * UPLIFT_WARNING]))) == []
    (message,) = uplift(Mechanism(xy, tri, np.array([1.0, 0.0, -0.05])))
    assert "5.0 %" in message and "pattern" in message
