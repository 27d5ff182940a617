"""Tests of model.supports: the [[column]], [[wall]] and [[zone]] sections as read (footprints,
clipping, defaults, refusals). Solving with them: tests/upper/test_columns_walls.py and
tests/upper/test_zones.py.

The inputs are invented for testing the reading mechanics only; footprint areas are checked
against the areas of rectangles and of the regular 16-gon, A = (n / 2) r^2 sin(2 pi / n).
"""
from __future__ import annotations

import math

import pytest
from model_inputs import HOLE, base, error_of, signed_area

from hingeline.model import parse_model
from hingeline.model.supports import STRIP


def with_supports(**tables) -> dict:
    d = base()
    d.update(tables)
    return d


def test_rectangular_column_footprint_is_its_size():
    (col,) = parse_model(with_supports(column=[{"at": [3.0, 2.0], "size": [0.4, 0.6]}])).supports
    assert col.polygon.area == pytest.approx(0.4 * 0.6, rel=1e-12)
    assert col.polygon.bounds == pytest.approx((2.8, 1.7, 3.2, 2.3), rel=1e-12)
    assert col.connection == "monolithic" and col.name == "column[1]"


def test_round_column_is_the_inscribed_16_gon():
    (col,) = parse_model(with_supports(column=[{"at": [3.0, 2.0], "diameter": 0.45}])).supports
    r = 0.225
    assert col.polygon.area == pytest.approx(8 * r * r * math.sin(2 * math.pi / 16), rel=1e-12)
    assert col.polygon.area < math.pi * r * r   # inside the circle: the smaller support


def test_corner_column_is_clipped_to_the_outline():
    (col,) = parse_model(with_supports(column=[{"at": [0.0, 0.0], "size": [0.4, 0.4], "name": "C1"}])).supports
    assert col.polygon.area == pytest.approx(0.2 * 0.2, rel=1e-12)   # the quarter on the slab
    assert col.name == "C1"


def test_wall_footprint_is_path_length_times_thickness():
    wall = {"path": [[1.0, 1.0], [1.0, 4.0], [5.0, 4.0]], "thickness": 0.3, "connection": "pinned"}
    (w,) = parse_model(with_supports(wall=[wall])).supports
    # Flat ends, mitred corner: the length of the centre line (3 + 4 m) times the thickness.
    assert w.physical.area == pytest.approx(7.0 * 0.3, rel=1e-12)
    assert w.connection == "pinned"
    # Without slab.thickness a pinned wall holds its path alone (EN 1992-1-1 5.3.2.2 with
    # a = t/2): a strip 2 x STRIP x t wide round it.
    assert w.polygon.area == pytest.approx(7.0 * 2 * STRIP * 0.3, rel=1e-9)
    assert w.physical.covers(w.polygon)


def test_pinned_wall_holds_the_strip_of_its_effective_span():
    # EN 1992-1-1 5.3.2.2 (Figure 5.4): the support of the effective span lies
    # a = min(h/2, t/2) inside each face; h = 0.2 m slab on a t = 0.3 m wall: a strip
    # t - 2a = 0.1 m wide along the path (4 m long).
    d = with_supports(wall=[{"path": [[1.0, 1.0], [5.0, 1.0]], "thickness": 0.3, "connection": "pinned"}])
    d["slab"]["thickness"] = 0.2
    (w,) = parse_model(d).supports
    assert w.polygon.area == pytest.approx(4.0 * 0.1, rel=1e-9)
    assert w.physical.area == pytest.approx(4.0 * 0.3, rel=1e-12)
    (m,) = parse_model(with_supports(wall=[{"path": [[1.0, 1.0], [5.0, 1.0]], "thickness": 0.3}])).supports
    assert m.polygon.area == pytest.approx(4.0 * 0.3, rel=1e-12) and m.footprint is None   # monolithic: whole


def test_default_wall_thickness_is_0_2_m():
    (w,) = parse_model(with_supports(wall=[{"path": [[1.0, 1.0], [5.0, 1.0]]}])).supports
    assert w.polygon.area == pytest.approx(4.0 * 0.2, rel=1e-12)


def test_columns_alone_may_support_a_slab_with_free_edges():
    d = with_supports(column=[{"at": [0.25, 0.25], "size": [0.5, 0.5]}])
    d["slab"]["edges"] = "free"
    assert len(parse_model(d).supports) == 1


@pytest.mark.parametrize(
    "tables, expected",
    [
        ({"column": {"at": [3, 2], "size": [0.4, 0.4]}}, "column must be a list of tables"),
        ({"column": [{"at": [9, 2], "size": [0.4, 0.4]}]}, "column[1] at (9, 2) stands outside slab.outline"),
        ({"column": [{"at": [3, 2], "size": [0.4, 0.4], "diameter": 0.4}]}, "column[1]: give either size"),
        ({"column": [{"at": [3, 2], "size": [0.4, 0]}]}, "column[1].size must be two lengths > 0"),
        ({"column": [{"at": [3, 2], "diameter": -0.4}]}, "column[1].diameter must be > 0"),
        ({"column": [{"at": [3, 2], "size": 0.4}]}, "column[1].size must be a pair of numbers [bx, by]"),
        ({"column": [{"at": [[3, 2]], "size": [0.4, 0.4]}]}, "column[1].at must be a pair of numbers [x, y] (m), got"),
        ({"column": [{"at": [3, 2], "diameter": 0.4, "name": ""}]}, "column[1].name"),
        ({"column": [{"at": [1.0, 1.0], "size": [0.4, 0.4]}]}, "column[1] lies partly under slab.opening[1]"),
        ({"wall": [{"path": [[1, 3]]}]}, "wall[1].path needs at least two points"),
        ({"wall": [{"path": [[1, 3], [5, 3]], "thickness": 0}]}, "wall[1].thickness = 0 m must be > 0"),
        ({"wall": [{"thickness": 0.2}]}, "wall[1] has no path"),
        ({"column": [{"at": [3, 3], "size": [0.4, 0.4], "name": "C1"}],
          "wall": [{"path": [[1, 3], [5, 3]], "name": "W1"}]}, "C1 and W1 overlap"),
    ],
)
def test_bad_supports(tables, expected):
    d = with_supports(**tables)
    d["slab"]["opening"] = [{"polygon": HOLE}]
    assert expected in error_of(d)


def test_zone_is_stored_counter_clockwise_with_its_capacities():
    zone = {"polygon": [[1, 1], [1, 2], [3, 2], [3, 1]], "sagging": [30, 20], "hogging": 5}   # clockwise
    (z,) = parse_model(with_supports(zone=[zone])).zones
    assert signed_area(z.polygon) == pytest.approx(2.0)
    assert z.sagging == (30.0, 20.0) and z.hogging == (5.0, 5.0) and z.name == "zone 1"
    assert not z.polygon.flags.writeable


@pytest.mark.parametrize(
    "zones, expected",
    [
        ({"polygon": [[1, 1], [2, 1], [2, 2], [1, 2]], "sagging": 5}, "zone must be a list of tables"),
        ([{"polygon": [[1, 1], [2, 1], [2, 2], [1, 2]], "sagging": 5, "hoging": 1}],
         "unknown key 'hoging' in [[zone]] zone[1]"),
        ([{"polygon": [[1, 1], [2, 1], [2, 2], [1, 2]]}], "zone[1] has no sagging"),
        ([{"polygon": [[1, 1], [2, 2], [2, 1], [1, 2]], "sagging": 5}], "zone[1].polygon intersects itself"),
    ],
)
def test_bad_zones(zones, expected):
    assert expected in error_of(with_supports(zone=zones))
