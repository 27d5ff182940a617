"""Tests of what a model keeps for the calculation record: the [project] table, the model
file it was read from (name, SHA-256 of its bytes, text), and where each edge and run lies on
the outline as written (EdgeOrigin).

All geometry and values are invented for testing the parsing mechanics; the SHA-256 check
value is computed by the standard library (hashlib) from the same bytes.
"""
from __future__ import annotations

import hashlib

import pytest
from model_inputs import VALID_TOML, base, error_of

from hingeline.model import model_from_toml, parse_model, read_model
from hingeline.model.types import EdgeOrigin, Project


def test_project_table_is_read():
    d = base()
    d["project"] = {"job": "Library extension", "reference": "CAL-014", "revision": "B",
                    "prepared_by": "A. Engineer", "checked_by": "B. Checker"}
    m = parse_model(d)
    assert m.project == Project("Library extension", "CAL-014", "B", "A. Engineer", "B. Checker")


def test_project_is_optional_and_each_key_too():
    assert parse_model(base()).project == Project()
    d = base()
    d["project"] = {"revision": "P1"}
    assert parse_model(d).project == Project(revision="P1")


def test_project_unknown_key_named():
    d = base()
    d["project"] = {"job": "x", "checkd_by": "me"}
    msg = error_of(d)
    assert "'checkd_by'" in msg and "[project]" in msg and "checked_by" in msg


@pytest.mark.parametrize("value", [3, ["a"], {"a": 1}])
def test_project_value_must_be_text(value):
    d = base()
    d["project"] = {"reference": value}
    assert "project.reference must be text" in error_of(d)


def test_project_must_be_a_table():
    d = base()
    d["project"] = "job"
    assert "[project]" in error_of(d)


def test_read_model_keeps_the_file(tmp_path):
    text = VALID_TOML.replace("test bay", "test bay — ü")   # non-ASCII: bytes differ from characters
    path = tmp_path / "bay.toml"
    path.write_bytes(text.encode("utf-8"))
    m = read_model(path)
    assert m.source.name == "bay.toml"
    assert m.source.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert m.source.text == text


def test_model_from_text_has_no_file():
    assert model_from_toml(VALID_TOML).source is None


def test_plain_edges_keep_their_numbers():
    m = parse_model(base())
    assert [o.edge for o in m.slab.origin] == [1, 2, 3, 4]
    assert m.slab.origin[0] == EdgeOrigin(1, 0.0, 7.2, 1, False)


def test_runs_keep_the_edge_number_and_their_extent():
    d = base()
    d["slab"]["edges"] = ["simple", {"runs": [{"type": "free", "to": 1.5}, {"type": "simple", "to": 4.0},
                                              {"type": "free"}]}, {"type": "continuous", "fixity": 0.6}, "simple"]
    m = parse_model(d)
    # edge 2 of the 7.2 x 5.4 rectangle is 5.4 m long: runs 0-1.5, 1.5-4.0, 4.0-5.4
    assert [(o.edge, o.start, o.end, o.runs) for o in m.slab.origin] == [
        (1, 0.0, 7.2, 1), (2, 0.0, 1.5, 3), (2, 1.5, 4.0, 3), (2, 4.0, 5.4, 3), (3, 0.0, 7.2, 1), (4, 0.0, 5.4, 1)]
    assert m.slab.edges == ("simple", "free", "simple", "free", "continuous", "simple")
    assert m.slab.fixity[4] == 0.6


def test_clockwise_outline_keeps_the_file_numbers():
    d = base()
    d["slab"]["outline"] = [[0.0, 0.0], [0.0, 5.4], [7.2, 5.4], [7.2, 0.0]]   # clockwise
    d["slab"]["edges"] = ["simple", "continuous", "free", "simple"]
    m = parse_model(d)
    kinds = {o.edge: kind for o, kind in zip(m.slab.origin, m.slab.edges)}
    assert kinds == {1: "simple", 2: "continuous", 3: "free", 4: "simple"}
    assert all(o.reversed for o in m.slab.origin)


def test_self_weight_keeps_its_unit_weight():
    d = base()
    d["slab"]["thickness"] = 0.2
    d["load"].append({"type": "self_weight", "unit_weight": 24.0, "scaled": False})
    d["load"].append({"type": "self_weight", "name": "screed weight"})
    m = parse_model(d)
    assert m.loads[0].unit_weight is None
    assert m.loads[1].unit_weight == 24.0 and m.loads[1].value == pytest.approx(24.0 * 0.2)
    assert m.loads[2].unit_weight == 25.0          # the default, as documented in docs/model-format.md
