"""Tests of model.read: reading a model file or TOML text, the top level, the checks that span
sections, and [analysis].

All geometry and values here are invented for testing the parsing and validation
mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import numpy as np
import pytest
from model_inputs import HOLE, RECT, VALID_TOML, base, error_of

from hingeline.errors import ModelError
from hingeline.model import AreaLoad, Model, model_from_toml, parse_model, read_model


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
    assert m.analysis.nodes is None and m.analysis.mesh_size == 0.25
    assert m.analysis.target_gap == 0.02 and m.analysis.time_limit == 60.0


def test_defaults():
    m = parse_model(base())
    assert m.title == ""
    assert m.slab.openings == () and m.slab.thickness is None
    assert m.capacity.sagging == (20.0, 20.0)
    assert m.capacity.hogging == (0.0, 0.0)
    assert m.capacity.bar_angle == 0.0
    assert m.analysis.nodes is None and m.analysis.mesh_size is None
    assert m.analysis.target_gap == 0.03 and m.analysis.time_limit == 120.0
    (load,) = m.loads
    assert load.region is None and load.factored is True and load.name == "load 1"


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


# --- file and TOML errors --------------------------------------------------------------------


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


# --- missing sections, top level, checks across sections -------------------------------------


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


def test_unknown_top_level_key():
    msg = error_of({**base(), "colum": 3})
    assert "'colum'" in msg and "title, slab, capacity, load, analysis" in msg


def test_all_edges_free():
    d = base()
    d["slab"]["edges"] = ["free"] * 4
    msg = error_of(d)
    assert "slab.edges" in msg and '"simple" or "continuous"' in msg


def test_non_table_model_data():
    with pytest.raises(ModelError, match="table"):
        parse_model([1, 2, 3])  # type: ignore[arg-type]


# --- analysis --------------------------------------------------------------------------------


@pytest.mark.parametrize("word", ["coarse", "normal", "fine", "medium"])
def test_the_old_resolution_key_is_refused_naming_its_replacement(word):
    d = base()
    d["analysis"] = {"resolution": word}
    msg = error_of(d)
    assert "analysis.resolution is no longer read" in msg
    assert "analysis.nodes" in msg and "coarse = 150, normal = 450, fine = 1100" in msg
    assert "analysis.target_gap" in msg


def test_nodes_gap_and_time_limit_are_read():
    d = base()
    d["analysis"] = {"nodes": 300}
    assert parse_model(d).analysis.nodes == 300
    d["analysis"] = {"target_gap": 0.01, "time_limit": 30}
    a = parse_model(d).analysis
    assert a.nodes is None and a.target_gap == 0.01 and a.time_limit == 30.0


@pytest.mark.parametrize("analysis, words", [
    ({"nodes": 0}, "analysis.nodes"), ({"nodes": 4.5}, "analysis.nodes"), ({"nodes": True}, "analysis.nodes"),
    ({"nodes": 300, "mesh_size": 0.2}, "keep one of them"), ({"target_gap": 0}, "analysis.target_gap"),
    ({"target_gap": 1.5}, "analysis.target_gap"), ({"time_limit": -1}, "analysis.time_limit"),
    ({"time_limit": "long"}, "analysis.time_limit"),
])
def test_bad_mesh_settings(analysis, words):
    d = base()
    d["analysis"] = analysis
    assert words in error_of(d)


@pytest.mark.parametrize("size", [0, -0.1, float("nan")])
def test_bad_mesh_size(size):
    d = base()
    d["analysis"] = {"mesh_size": size}
    assert "analysis.mesh_size" in error_of(d)
