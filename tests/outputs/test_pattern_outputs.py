"""The clean pattern in the output folder: result.json's `pattern`, OUTDIR/hand-pattern.toml
and OUTDIR/pattern.dxf (read back with ezdxf).

Check values: counts of the model's own parts (edges, openings, columns, walls) and of the
pattern's lines, and exact reproduction (the hand check of the written file gives the
pattern's load factor, which equals the solve's within 1e-6).
"""
from __future__ import annotations

import json
from collections import Counter

import ezdxf
import pytest

from hingeline import solve
from hingeline.check import check_pattern, read_pattern
from hingeline.model import model_from_toml
from hingeline.outputs import result_json
from hingeline.outputs.dxf import LAYERS

# Invented test scenario: a bay with a riser, a free edge, a column and a short wall.
BAY = """\
title = "Test bay with riser, column and wall"
[slab]
outline = [[0.0, 0.0], [5.0, 0.0], [5.0, 4.0], [0.0, 4.0]]
edges = ["simple", "continuous", "free", "simple"]
[[slab.opening]]
polygon = [[1.0, 1.0], [1.6, 1.0], [1.6, 1.5], [1.0, 1.5]]
[[column]]
at = [3.8, 3.0]
size = [0.3, 0.3]
[[wall]]
path = [[0.0, 3.0], [1.0, 3.0]]
thickness = 0.2
[capacity]
sagging = 20.0
hogging = 25.0
[[load]]
type = "area"
value = 8.0
[analysis]
nodes = 150
"""


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    result = solve(model_from_toml(BAY), lower_bound=False)
    out = tmp_path_factory.mktemp("bay")
    paths = result_json.write_outputs(result, out, formats=())
    return result, out, paths


def test_pattern_files_are_written_after_the_others(written):
    _, out, paths = written
    assert [p.name for p in paths] == ["result.json", "hand-pattern.toml", "pattern.dxf"]


def test_hand_pattern_file_reproduces_the_pattern(written):
    result, out, _ = written
    stored = json.loads((out / "result.json").read_text())["pattern"]
    assert stored["load_factor"] == pytest.approx(result.load_factor, rel=1e-6)
    hc = check_pattern(result.model, read_pattern(out / "hand-pattern.toml"), optimise=False)
    assert hc.load_factor == pytest.approx(stored["load_factor"], rel=1e-6)


def test_stored_pattern_lines_add_up(written):
    _, out, _ = written
    stored = json.loads((out / "result.json").read_text())["pattern"]
    lines = stored["lines"]
    assert lines and sum(ln["share"] for ln in lines) == pytest.approx(1.0, rel=1e-9)
    # The hogging along the continuous edge and round the column (monolithic) is there.
    assert any(ln["at_support"] and ln["sense"] == "hogging" for ln in lines)


def test_dxf_layers_and_entities_match_the_pattern(written):
    result, out, _ = written
    stored = json.loads((out / "result.json").read_text())["pattern"]
    doc = ezdxf.readfile(out / "pattern.dxf")
    assert doc.header["$INSUNITS"] == 6                  # metres
    assert set(LAYERS) <= {layer.dxf.name for layer in doc.layers}
    count = Counter((e.dxftype(), e.dxf.layer) for e in doc.modelspace())
    sag = sum(ln["sense"] == "sagging" for ln in stored["lines"])
    assert count[("LINE", "hl-yield-sagging")] == sag
    assert count[("LINE", "hl-yield-hogging")] == len(stored["lines"]) - sag
    assert count[("TEXT", "hl-yield-numbers")] == len(stored["lines"])
    assert count[("LWPOLYLINE", "hl-slab-outline")] == 1
    assert count[("LWPOLYLINE", "hl-slab-openings")] == 1
    assert count[("LWPOLYLINE", "hl-columns")] == 1
    assert count[("LWPOLYLINE", "hl-walls")] == 1
    # Four outline edges: two simple, one continuous, one free.
    assert count[("LINE", "hl-edge-simple")] == 2
    assert count[("LINE", "hl-edge-continuous")] == 1
    assert count[("LINE", "hl-edge-free")] == 1
    # The drawing is in the model's coordinates: the outline's corners as given.
    outline = next(e for e in doc.modelspace() if e.dxf.layer == "hl-slab-outline")
    assert [tuple(p[:2]) for p in outline.get_points()] == [(0, 0), (5, 0), (5, 4), (0, 4)]
    numbers = sorted(int(e.dxf.text) for e in doc.modelspace() if e.dxf.layer == "hl-yield-numbers")
    assert numbers == [ln["number"] for ln in stored["lines"]]


def test_no_pattern_means_no_pattern_files(written, tmp_path, monkeypatch):
    result, _, _ = written
    first = result_json.write_outputs(result, tmp_path, formats=())
    assert (tmp_path / "pattern.dxf") in first
    # A mechanism that cannot be read as a clean pattern: null in result.json, and the
    # pattern files of an earlier run are removed with it.
    monkeypatch.setattr(result_json, "clean_pattern_of", lambda r: None)
    paths = result_json.write_outputs(result, tmp_path, formats=())
    assert [p.name for p in paths] == ["result.json"]
    assert not (tmp_path / "pattern.dxf").exists() and not (tmp_path / "hand-pattern.toml").exists()
    assert json.loads((tmp_path / "result.json").read_text())["pattern"] is None
