"""Tests of model.slab: the [slab] section (outline orientation, edge conditions, thickness,
openings).

All geometry and values here are invented for testing the parsing and validation
mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import numpy as np
import pytest
from model_inputs import HOLE, RECT, base, edge_map, error_of, signed_area

from hingeline.model import parse_model


def test_single_edge_word_applies_to_all_edges():
    d = base()
    d["slab"]["edges"] = "continuous"
    assert parse_model(d).slab.edges == ("continuous",) * 4


def test_clockwise_outline_is_reversed_and_edges_follow():
    # Clockwise; edge 1 (0,0)->(0,5.4) is the left side and is "free",
    # edge 2 (0,5.4)->(7.2,5.4) is the top and is "continuous".
    cw = [[0.0, 0.0], [0.0, 5.4], [7.2, 5.4], [7.2, 0.0]]
    labels = ["free", "continuous", "simple", "simple"]
    d = base()
    d["slab"] = {"outline": cw, "edges": labels}
    m = parse_model(d)
    out = m.slab.outline
    assert signed_area(out) > 0
    # First vertex kept first, the rest reversed.
    np.testing.assert_array_equal(out, [[0.0, 0.0], [7.2, 0.0], [7.2, 5.4], [0.0, 5.4]])
    # The left side is now edge 4 (vertex 4 (0, 5.4) -> vertex 1 (0, 0)), still "free";
    # the top is edge 3, still "continuous".
    assert m.slab.edges[3] == "free"
    assert m.slab.edges[2] == "continuous"
    assert m.slab.edges[0] == "simple" and m.slab.edges[1] == "simple"
    # Every physical edge keeps its label.
    assert edge_map(out, m.slab.edges) == edge_map(cw, labels)


def test_clockwise_irregular_outline_keeps_every_edge_label():
    cw = [[0, 0], [0, 4], [2, 6], [5, 5], [6, 1], [3, -1]]
    labels = ["free", "simple", "continuous", "free", "simple", "continuous"]
    d = base()
    d["slab"] = {"outline": cw, "edges": labels}
    m = parse_model(d)
    assert signed_area(m.slab.outline) > 0
    assert edge_map(m.slab.outline, m.slab.edges) == edge_map(cw, labels)


def test_closing_vertex_dropped_and_holes_regions_made_ccw():
    d = base()
    d["slab"]["outline"] = RECT + [RECT[0]]
    hole_cw = HOLE[::-1] + [HOLE[::-1][0]]
    d["slab"]["opening"] = [{"polygon": hole_cw}]
    region_cw = [[3, 0], [3, 2], [7.2, 2], [7.2, 0], [3, 0]]
    d["load"][0]["region"] = region_cw
    m = parse_model(d)
    assert m.slab.outline.shape == (4, 2)
    assert m.slab.edges == ("simple", "continuous", "simple", "free")
    (hole,) = m.slab.openings
    assert hole.shape == (4, 2) and signed_area(hole) > 0
    region = m.loads[0].region
    assert region.shape == (4, 2) and signed_area(region) > 0
    assert signed_area(region) == pytest.approx(4.2 * 2)


# --- edges -----------------------------------------------------------------------------------


def test_edges_wrong_length():
    d = base()
    d["slab"]["edges"] = ["simple", "free", "simple"]
    msg = error_of(d)
    assert "slab.edges" in msg and "expected 4, got 3" in msg


def test_edges_wrong_length_with_closing_vertex_mentions_it():
    d = base()
    d["slab"]["outline"] = RECT + [RECT[0]]
    d["slab"]["edges"] = ["simple"] * 5
    msg = error_of(d)
    assert "expected 4, got 5" in msg and "closing vertex" in msg


def test_unknown_edge_word():
    d = base()
    d["slab"]["edges"] = ["simple", "simple", "fixed", "free"]
    msg = error_of(d)
    assert "slab.edges[3]" in msg and '"fixed"' in msg
    assert "edge 3 (vertex 3 (7.2, 5.4) to vertex 4 (0, 5.4))" in msg
    assert '"simple", "continuous", "free"' in msg


def test_unknown_single_edge_word():
    d = base()
    d["slab"]["edges"] = "pinned"
    msg = error_of(d)
    assert '"pinned"' in msg and '"simple", "continuous", "free"' in msg


@pytest.mark.parametrize("t", [0, -0.2])
def test_bad_thickness(t):
    d = base()
    d["slab"]["thickness"] = t
    assert "slab.thickness" in error_of(d)


# --- openings --------------------------------------------------------------------------------


def test_opening_close_to_but_clear_of_outline_is_valid():
    d = base()
    d["slab"]["opening"] = [{"polygon": [[1e-3, 1], [2, 1], [2, 2], [1e-3, 2]]}]
    assert len(parse_model(d).slab.openings) == 1


def test_single_bracket_opening_table():
    d = base()
    d["slab"]["opening"] = {"polygon": HOLE}
    assert "[[slab.opening]]" in error_of(d)


def test_opening_without_polygon():
    d = base()
    d["slab"]["opening"] = [{"polygon": HOLE}, {}]
    assert "slab.opening[2] has no polygon" in error_of(d)


def test_openings_overlap():
    d = base()
    d["slab"]["opening"] = [
        {"polygon": HOLE},
        {"polygon": [[5, 4], [6, 4], [6, 5], [5, 5]]},
        {"polygon": [[2, 1.5], [3, 1.5], [3, 3], [2, 3]]},
    ]
    msg = error_of(d)
    assert "slab.opening[1] and slab.opening[3]" in msg and "overlap" in msg


def test_openings_touch():
    d = base()
    d["slab"]["opening"] = [{"polygon": HOLE}, {"polygon": [[2.2, 1.0], [3, 1.0], [3, 1.8], [2.2, 1.8]]}]
    msg = error_of(d)
    assert "slab.opening[1] and slab.opening[2]" in msg and "touch" in msg
