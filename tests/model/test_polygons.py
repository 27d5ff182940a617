"""Tests of model.polygons: polygon validity (distinct vertices, area, self-intersection) and
openings strictly inside the outline.

All geometry and values here are invented for testing the parsing and validation
mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import numpy as np
import pytest
from model_inputs import HOLE, base, error_of

from hingeline.model import parse_model

BAD_POLYGONS = {
    "two distinct": ([[0, 0], [4, 0], [0, 0]], "2 distinct vertices"),
    "all same": ([[1, 1], [1, 1], [1, 1]], "1 distinct vertices"),
    "zero area": ([[0, 0], [1, 0], [2, 0], [3, 0]], "zero area"),
    "repeated consecutive": ([[0, 0], [4, 0], [4, 0], [4, 3], [0, 3]], "vertex 2 (4, 0) and vertex 3 (4, 0)"),
    "bow tie": ([[0, 0], [4, 3], [4, 0], [0, 3]], "edge 1 (vertex 1 (0, 0) to vertex 2 (4, 3)) and edge 3"),
    "fold back": ([[0, 0], [4, 0], [2, 0], [0, 3]], "edge 1 (vertex 1 (0, 0) to vertex 2 (4, 0)) and edge 2"),
    "pinched vertex": ([[0, 0], [4, 0], [2, 1.5], [4, 3], [0, 3], [2, 1.5]], "edge 2"),
}


def _shift(poly, dx, dy):
    return [[x + dx, y + dy] for x, y in poly]


@pytest.mark.parametrize("case", sorted(BAD_POLYGONS))
def test_bad_outline(case):
    poly, expected = BAD_POLYGONS[case]
    d = base()
    d["slab"] = {"outline": poly, "edges": "simple"}
    msg = error_of(d)
    assert "slab.outline" in msg and expected in msg


@pytest.mark.parametrize("case", sorted(BAD_POLYGONS))
def test_bad_opening(case):
    poly, expected = BAD_POLYGONS[case]
    d = base()
    d["slab"]["outline"] = [[0, 0], [20, 0], [20, 20], [0, 20]]
    # The bad opening is shifted clear of the first opening and of the outline,
    # so only the part of `expected` before any coordinates is compared.
    d["slab"]["opening"] = [{"polygon": HOLE}, {"polygon": _shift(poly, 10, 10)}]
    msg = error_of(d)
    assert "slab.opening[2]" in msg and expected.split(" (")[0] in msg


@pytest.mark.parametrize("case", sorted(BAD_POLYGONS))
def test_bad_load_region(case):
    poly, expected = BAD_POLYGONS[case]
    d = base()
    d["load"].append({"type": "area", "value": 1.0, "region": poly})
    msg = error_of(d)
    assert "load[2].region" in msg and expected in msg


def test_self_intersection_message_gives_crossing_point():
    d = base()
    d["slab"] = {"outline": [[0, 0], [4, 3], [4, 0], [0, 3]], "edges": "simple"}
    assert "(2, 1.5)" in error_of(d)



# A pentagon whose fourth vertex comes down to height h over the bottom edge (edge 1). The
# tolerance is 1e-9 x the outline's extent (4 m here), 4e-9 m; the numbers below are worked by
# hand from the vertices.
def _dipping(h: float, dx: float = 0.0, dy: float = 0.0) -> list:
    return [[x + dx, y + dy] for x, y in [[0, 0], [4, 0], [4, 3], [2, h], [0, 3]]]


def test_vertex_within_tolerance_of_another_edge_is_refused():
    d = base()
    d["slab"] = {"outline": _dipping(2e-9), "edges": "simple"}
    msg = error_of(d)
    assert ("edge 1 (vertex 1 (0, 0) to vertex 2 (4, 0)) and edge 3 (vertex 3 (4, 3) to vertex 4 (2, 2e-09)) "
            "cross or touch at (2, 2e-09)") in msg


def test_vertex_clear_of_another_edge_by_more_than_tolerance_is_valid():
    d = base()
    d["slab"] = {"outline": _dipping(1e-8), "edges": "simple"}
    assert parse_model(d).slab.outline.shape == (5, 2)


def test_vertex_within_tolerance_is_refused_far_from_the_origin():
    # Surveyed coordinates, 5000 km from the origin: a coordinate there is rounded to about
    # 1e-9 m, a quarter of the tolerance, and the vertex must still be seen near edge 1.
    d = base()
    d["slab"] = {"outline": _dipping(2e-9, 5e6, 5e6), "edges": "simple"}
    msg = error_of(d)
    assert "slab.outline intersects itself: edge 1" in msg and "and edge 3" in msg


def test_first_of_several_crossings_in_vertex_order_is_named():
    # Edge 3 (10, 10)-(7, -2) crosses edge 1 at (7.5, 0); edge 4 (7, -2)-(3, 12) crosses it
    # too, at (45/7, 0). Edge 1 with edge 3 comes first in vertex order.
    d = base()
    d["slab"] = {"outline": [[0, 0], [10, 0], [10, 10], [7, -2], [3, 12], [0, 10]], "edges": "simple"}
    msg = error_of(d)
    assert ("edge 1 (vertex 1 (0, 0) to vertex 2 (10, 0)) and edge 3 (vertex 3 (10, 10) to vertex 4 (7, -2)) "
            "cross or touch at (7.5, 0)") in msg



def test_small_polygons_far_from_the_origin_keep_their_orientation():
    # A 30 mm square opening and load region in site coordinates, listed counter-clockwise
    # (x rising along the first side, then y): both must be stored as given. The sum of cross
    # products in floating point gives this square a negative area (-0.0039 m^2 against the
    # exact +0.0009 m^2), which once turned it clockwise.
    x0, y0 = 5000316.0, 5000210.0
    square = [[5000319.004, 5000212.5], [5000319.034, 5000212.5], [5000319.034, 5000212.53], [5000319.004, 5000212.53]]
    d = base()
    d["slab"] = {"outline": [[x0, y0], [x0 + 6, y0], [x0 + 6, y0 + 4], [x0, y0 + 4]], "edges": "simple",
                 "opening": [{"polygon": square}]}
    d["load"][0]["region"] = [[x0, y0], [x0 + 2, y0], [x0 + 2, y0 + 2], [x0, y0 + 2]]
    d["load"].append({"type": "area", "value": 1.0, "region": _shift(square, 1.0, 0.0)})
    m = parse_model(d)
    np.testing.assert_array_equal(m.slab.openings[0], square)
    np.testing.assert_array_equal(m.loads[1].region, _shift(square, 1.0, 0.0))


# --- strictly inside the outline -------------------------------------------------------------


@pytest.mark.parametrize(
    "poly, expected",
    [
        ([[0, 1], [2, 1], [2, 2], [0, 2]], "vertex 1 (0, 1) lies on the outline"),  # touches left edge
        ([[1, 1e-12], [2, 1e-12], [2, 2], [1, 2]], "vertex 1 (1, 1e-12) lies on the outline"),  # within tolerance
        ([[-1, 1], [2, 1], [2, 2], [-1, 2]], "vertex 1 (-1, 1) lies outside"),  # crosses it
        ([[10, 10], [11, 10], [11, 11], [10, 11]], "vertex 1 (10, 10) lies outside"),  # wholly outside
    ],
)
def test_opening_not_strictly_inside(poly, expected):
    d = base()
    d["slab"]["opening"] = [{"polygon": HOLE}, {"polygon": poly}]
    msg = error_of(d)
    assert "slab.opening[2]" in msg and expected in msg


def test_opening_crossing_reentrant_corner_with_all_vertices_inside():
    d = base()
    d["slab"]["outline"] = [[0, 0], [6, 0], [6, 3], [3, 3], [3, 6], [0, 6]]  # L shape
    d["slab"]["edges"] = "simple"
    d["slab"]["opening"] = [{"polygon": [[2, 2], [5, 2], [2, 5]]}]
    msg = error_of(d)
    assert "slab.opening[1]" in msg and "meets the outline" in msg
