"""Unit tests of the model stage (reading, normalising and validating input).

All geometry and values here are invented for testing the parsing and
validation mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import copy

import numpy as np
import pytest

from hingeline.errors import ModelError
from hingeline.model import (
    AreaLoad,
    Model,
    model_from_toml,
    parse_model,
    read_model,
)

RECT = [[0.0, 0.0], [7.2, 0.0], [7.2, 5.4], [0.0, 5.4]]
HOLE = [[1.0, 1.0], [2.2, 1.0], [2.2, 1.8], [1.0, 1.8]]

VALID_TOML = """
title = "test bay"

[slab]
outline = [[0.0, 0.0], [7.2, 0.0], [7.2, 5.4], [0.0, 5.4]]
edges = ["simple", "continuous", "simple", "free"]
thickness = 0.22

[[slab.opening]]
polygon = [[1.0, 1.0], [2.2, 1.0], [2.2, 1.8], [1.0, 1.8]]

[capacity]
sagging = [28.0, 22.0]
hogging = 35.0
bar_angle = 30.0

[[load]]
type = "area"
value = 5.0
region = [[3, 0], [7.2, 0], [7.2, 2], [3, 2]]

[[load]]
type = "area"
value = 1.5
factored = false
name = "finishes"

[analysis]
resolution = "fine"
mesh_size = 0.25
"""


def base() -> dict:
    """A minimal valid model as a parsed dict (fresh copy per call)."""
    return copy.deepcopy(
        {
            "slab": {"outline": RECT, "edges": ["simple", "continuous", "simple", "free"]},
            "capacity": {"sagging": 20.0},
            "load": [{"type": "area", "value": 5.0}],
        }
    )


def signed_area(p: np.ndarray) -> float:
    x, y = p[:, 0], p[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def edge_map(outline, edges) -> dict:
    """{frozenset of the two end points: label} for each edge."""
    pts = [tuple(map(float, p)) for p in outline]
    n = len(pts)
    return {frozenset((pts[k], pts[(k + 1) % n])): edges[k] for k in range(n)}


def error_of(data: dict, source: str = "model") -> str:
    with pytest.raises(ModelError) as info:
        parse_model(data, source)
    return str(info.value)


# --- valid input --------------------------------------------------------------


def test_valid_model_round_trip():
    m = model_from_toml(VALID_TOML)
    assert isinstance(m, Model)
    assert m.title == "test bay"
    np.testing.assert_array_equal(m.slab.outline, np.array(RECT))
    assert m.slab.outline.dtype == np.float64 and m.slab.outline.shape == (4, 2)
    assert m.slab.edges == ("simple", "continuous", "simple", "free")
    assert m.slab.thickness == 0.22
    assert len(m.slab.openings) == 1
    np.testing.assert_array_equal(m.slab.openings[0], np.array(HOLE))
    assert m.capacity.sagging == (28.0, 22.0)
    assert m.capacity.hogging == (35.0, 35.0)
    assert m.capacity.bar_angle == 30.0
    assert len(m.loads) == 2
    first, second = m.loads
    assert isinstance(first, AreaLoad)
    assert first.value == 5.0 and first.factored is True and first.name == "load 1"
    assert first.region.dtype == np.float64 and first.region.shape == (4, 2)
    assert second.region is None and second.factored is False and second.name == "finishes"
    assert m.analysis.resolution == "fine" and m.analysis.mesh_size == 0.25


def test_defaults():
    m = parse_model(base())
    assert m.title == ""
    assert m.slab.openings == () and m.slab.thickness is None
    assert m.capacity.sagging == (20.0, 20.0)
    assert m.capacity.hogging == (0.0, 0.0)
    assert m.capacity.bar_angle == 0.0
    assert m.analysis.resolution == "normal" and m.analysis.mesh_size is None
    (load,) = m.loads
    assert load.region is None and load.factored is True and load.name == "load 1"


def test_scalar_and_pair_capacities():
    d = base()
    d["capacity"] = {"sagging": [30, 12.5], "hogging": [0, 18]}
    m = parse_model(d)
    assert m.capacity.sagging == (30.0, 12.5)
    assert m.capacity.hogging == (0.0, 18.0)
    assert all(isinstance(v, float) for v in m.capacity.sagging + m.capacity.hogging)


def test_zero_hogging_is_valid():
    d = base()
    d["capacity"]["hogging"] = 0
    assert parse_model(d).capacity.hogging == (0.0, 0.0)


def test_zero_sagging_with_hogging_is_valid():
    d = base()
    d["capacity"] = {"sagging": 0, "hogging": 10}
    assert parse_model(d).capacity.sagging == (0.0, 0.0)


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


def test_region_sharing_the_slab_edge_is_valid():
    d = base()
    d["load"][0]["region"] = RECT
    np.testing.assert_array_equal(parse_model(d).loads[0].region, RECT)


def test_opening_close_to_but_clear_of_outline_is_valid():
    d = base()
    d["slab"]["opening"] = [{"polygon": [[1e-3, 1], [2, 1], [2, 2], [1e-3, 2]]}]
    assert len(parse_model(d).slab.openings) == 1


def test_arrays_are_read_only():
    m = parse_model(base())
    with pytest.raises(ValueError):
        m.slab.outline[0, 0] = 1.0


def test_parse_model_accepts_numpy_input():
    d = base()
    d["slab"]["outline"] = np.array(RECT)
    d["capacity"]["sagging"] = np.array([20.0, 10.0])
    m = parse_model(d)
    assert m.capacity.sagging == (20.0, 10.0)
    np.testing.assert_array_equal(m.slab.outline, RECT)


def test_read_model_from_file(tmp_path):
    f = tmp_path / "bay.toml"
    f.write_text(VALID_TOML, encoding="utf-8")
    m = read_model(f)
    assert m.title == "test bay" and len(m.loads) == 2
    assert read_model(str(f)).slab.edges == m.slab.edges


# --- file and TOML errors ---------------------------------------------------------


def test_missing_file(tmp_path):
    with pytest.raises(ModelError, match="nothere.toml.*not found"):
        read_model(tmp_path / "nothere.toml")


def test_directory_instead_of_file(tmp_path):
    with pytest.raises(ModelError, match="directory"):
        read_model(tmp_path)


def test_not_utf8(tmp_path):
    f = tmp_path / "latin.toml"
    f.write_bytes(b'title = "caf\xe9"\n')
    with pytest.raises(ModelError, match="latin.toml.*UTF-8"):
        read_model(f)


def test_toml_syntax_error_names_file_line_and_column(tmp_path):
    f = tmp_path / "broken.toml"
    f.write_text('title = "x"\n[slab]\noutline = = 3\n', encoding="utf-8")
    with pytest.raises(ModelError) as info:
        read_model(f)
    msg = str(info.value)
    assert "broken.toml" in msg and "line 3" in msg and "column" in msg


def test_source_prefixes_messages():
    d = base()
    del d["capacity"]
    assert error_of(d, source="bay.toml").startswith("bay.toml: ")


# --- missing items and wrong types ---------------------------------------------------


@pytest.mark.parametrize(
    "path, expected",
    [
        (("slab",), "[slab]"),
        (("slab", "outline"), "outline"),
        (("slab", "edges"), "edges"),
        (("capacity",), "[capacity]"),
        (("capacity", "sagging"), "sagging"),
        (("load",), "[[load]]"),
    ],
)
def test_missing_required_item(path, expected):
    d = base()
    t = d
    for key in path[:-1]:
        t = t[key]
    del t[path[-1]]
    msg = error_of(d)
    assert expected in msg


def test_empty_load_list():
    d = base()
    d["load"] = []
    assert "load" in error_of(d)


def test_single_bracket_load_table():
    text = VALID_TOML.replace('[[load]]\ntype = "area"\nvalue = 1.5\nfactored = false\nname = "finishes"\n', "")
    text = text.replace("[[load]]", "[load]")
    with pytest.raises(ModelError, match=r"\[\[load\]\]") as info:
        model_from_toml(text)
    assert "double brackets" in str(info.value)


def test_single_bracket_opening_table():
    d = base()
    d["slab"]["opening"] = {"polygon": HOLE}
    assert "[[slab.opening]]" in error_of(d)


def test_opening_without_polygon():
    d = base()
    d["slab"]["opening"] = [{"polygon": HOLE}, {}]
    assert "slab.opening[2] has no polygon" in error_of(d)


@pytest.mark.parametrize(
    "mutate, expected",
    [
        (lambda d: d["slab"]["outline"].__setitem__(2, [7.2, "5.4"]), "slab.outline vertex 3"),
        (lambda d: d["slab"]["outline"].__setitem__(1, [7.2, 0.0, 1.0]), "slab.outline vertex 2"),
        (lambda d: d["slab"]["outline"].__setitem__(1, 7.2), "slab.outline vertex 2"),
        (lambda d: d["slab"]["outline"].__setitem__(3, [float("nan"), 5.4]), "slab.outline vertex 4"),
        (lambda d: d["slab"].__setitem__("outline", "square"), "slab.outline"),
        (lambda d: d["capacity"].__setitem__("sagging", "20"), "capacity.sagging"),
        (lambda d: d["capacity"].__setitem__("sagging", [20, float("inf")]), "capacity.sagging[2]"),
        (lambda d: d["capacity"].__setitem__("sagging", [1, 2, 3]), "capacity.sagging"),
        (lambda d: d["capacity"].__setitem__("hogging", True), "capacity.hogging"),
        (lambda d: d["capacity"].__setitem__("bar_angle", float("nan")), "capacity.bar_angle"),
        (lambda d: d["load"][0].__setitem__("value", "5"), "load[1].value"),
        (lambda d: d["load"][0].__setitem__("factored", "yes"), "load[1].factored"),
        (lambda d: d["load"][0].__setitem__("name", 7), "load[1].name"),
        (lambda d: d["slab"].__setitem__("thickness", "thick"), "slab.thickness"),
        (lambda d: d.__setitem__("title", 3), "title"),
        (lambda d: d.__setitem__("slab", 5), "slab"),
        (lambda d: d.__setitem__("analysis", "fine"), "analysis"),
        (lambda d: d["slab"].__setitem__("edges", 4), "slab.edges"),
    ],
)
def test_wrong_types(mutate, expected):
    d = base()
    mutate(d)
    assert expected in error_of(d)


def test_non_finite_from_toml():
    text = VALID_TOML.replace("value = 5.0", "value = nan")
    with pytest.raises(ModelError, match=r"load\[1\]\.value is nan"):
        model_from_toml(text)


def test_unknown_top_level_key():
    msg = error_of({**base(), "colum": 3})
    assert "'colum'" in msg and "title, slab, capacity, load, analysis" in msg


@pytest.mark.parametrize(
    "mutate, key, where",
    [
        (lambda d: d["slab"].__setitem__("thicknes", 0.2), "thicknes", "[slab]"),
        (lambda d: d["capacity"].__setitem__("hoging", 3), "hoging", "[capacity]"),
        (lambda d: d["load"][0].__setitem__("valeu", 3), "valeu", "load[1]"),
        (lambda d: d.__setitem__("analysis", {"mesh": 0.2}), "mesh", "[analysis]"),
        (lambda d: d["slab"].__setitem__("opening", [{"polygon": HOLE, "depth": 1}]), "depth", "slab.opening[1]"),
    ],
)
def test_unknown_key_in_table(mutate, key, where):
    d = base()
    mutate(d)
    msg = error_of(d)
    assert f"'{key}'" in msg and where in msg and "allowed keys" in msg


def test_unknown_key_suggests_close_match():
    d = base()
    d["slab"]["thicknes"] = 0.2
    assert "did you mean 'thickness'" in error_of(d)


# --- polygon geometry -------------------------------------------------------------


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


# --- edges ---------------------------------------------------------------------------


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


def test_all_edges_free():
    d = base()
    d["slab"]["edges"] = ["free"] * 4
    msg = error_of(d)
    assert "slab.edges" in msg and '"simple" or "continuous"' in msg


# --- openings ---------------------------------------------------------------------------


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


# --- capacity ------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "capacity, expected",
    [
        ({"sagging": -5.0}, "capacity.sagging is -5"),
        ({"sagging": [20, -1]}, "capacity.sagging[2] is -1"),
        ({"sagging": 20, "hogging": -3}, "capacity.hogging is -3"),
        ({"sagging": 20, "hogging": [float("inf"), 3]}, "capacity.hogging[1]"),
        ({"sagging": float("nan")}, "capacity.sagging"),
    ],
)
def test_bad_capacity_value(capacity, expected):
    d = base()
    d["capacity"] = capacity
    assert expected in error_of(d)


@pytest.mark.parametrize("capacity", [{"sagging": 0}, {"sagging": [0, 0], "hogging": 0}, {"sagging": 0, "hogging": [0, 0]}])
def test_no_positive_capacity(capacity):
    d = base()
    d["capacity"] = capacity
    assert "no positive capacity" in error_of(d)


# --- loads -------------------------------------------------------------------------------


@pytest.mark.parametrize("value", [0, -2.5, float("nan"), float("inf")])
def test_bad_load_value(value):
    d = base()
    d["load"].append({"type": "area", "value": value, "name": "wind"})
    msg = error_of(d)
    assert "load[2].value" in msg and '"wind"' in msg


def test_missing_load_value():
    d = base()
    del d["load"][0]["value"]
    assert "load[1] has no value" in error_of(d)


def test_unknown_load_type():
    d = base()
    d["load"].append({"type": "snow", "value": 3.0})
    msg = error_of(d)
    assert "load[2].type" in msg and '"snow"' in msg and 'available load types: "area"' in msg


def test_missing_load_type():
    d = base()
    del d["load"][0]["type"]
    msg = error_of(d)
    assert "load[1] has no type" in msg and '"area"' in msg


def test_region_partly_outside():
    d = base()
    d["load"].append({"type": "area", "value": 1.0, "region": [[6, 4], [8, 4], [8, 5], [6, 5]]})
    msg = error_of(d)
    assert "load[2].region" in msg and "partly outside" in msg


def test_region_wholly_outside():
    d = base()
    d["load"][0]["region"] = [[10, 10], [11, 10], [11, 11], [10, 11]]
    msg = error_of(d)
    assert "load[1].region" in msg and "wholly outside" in msg


def test_region_overlapping_opening_names_load_and_opening():
    d = base()
    d["slab"]["opening"] = [{"polygon": [[5, 4], [6, 4], [6, 5], [5, 5]]}, {"polygon": HOLE}]
    d["load"].append({"type": "area", "value": 1.0, "name": "storage", "region": [[0, 0], [2, 0], [2, 2], [0, 2]]})
    msg = error_of(d)
    assert "load[2].region" in msg and '"storage"' in msg and "slab.opening[2]" in msg


def test_region_touching_opening_is_valid():
    d = base()
    d["slab"]["opening"] = [{"polygon": HOLE}]
    d["load"][0]["region"] = [[0, 0], [1, 0], [1, 2], [0, 2]]  # shares the opening's left side
    assert parse_model(d).loads[0].region is not None


def test_no_factored_load():
    d = base()
    d["load"][0]["factored"] = False
    d["load"].append({"type": "area", "value": 1.0, "factored": False})
    assert "factored = true" in error_of(d)


def test_duplicate_load_names():
    d = base()
    d["load"] = [{"type": "area", "value": 1.0}, {"type": "area", "value": 2.0, "name": "load 1"}]
    msg = error_of(d)
    assert "load[2]" in msg and "load[1]" in msg and '"load 1"' in msg


# --- analysis and thickness ------------------------------------------------------------------


def test_bad_resolution():
    d = base()
    d["analysis"] = {"resolution": "medium"}
    msg = error_of(d)
    assert "analysis.resolution" in msg and '"coarse", "normal", "fine"' in msg


@pytest.mark.parametrize("size", [0, -0.1, float("nan")])
def test_bad_mesh_size(size):
    d = base()
    d["analysis"] = {"mesh_size": size}
    assert "analysis.mesh_size" in error_of(d)


@pytest.mark.parametrize("t", [0, -0.2])
def test_bad_thickness(t):
    d = base()
    d["slab"]["thickness"] = t
    assert "slab.thickness" in error_of(d)


def test_non_table_model_data():
    with pytest.raises(ModelError, match="table"):
        parse_model([1, 2, 3])  # type: ignore[arg-type]
