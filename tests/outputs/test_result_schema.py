"""result.json against its JSON Schema, docs/result.schema.json (draft 2020-12).

The document checked is the result.json written for a real coarse solve of an
invented slab: an L-shaped panel with a small riser opening, mixed edges and a
held load, so that every optional part of the format (openings, free and
continuous edges, held loads, hogging lines) is present.
"""
from __future__ import annotations

import copy
import json
from pathlib import Path

import jsonschema  # in the "test" extra; a plain import so a missing package fails, not skips
import pytest

from hingeline import solve
from hingeline.model import model_from_toml
from hingeline.outputs.result_json import write_outputs

SCHEMA_PATH = Path(__file__).resolve().parents[2] / "docs" / "result.schema.json"

# Invented test scenario: L-shaped store-room slab with a riser, coarse mesh.
L_SLAB = """\
title = "Test L-shaped slab with a riser"
[slab]
outline = [[0.0, 0.0], [6.0, 0.0], [6.0, 3.0], [3.0, 3.0], [3.0, 5.0], [0.0, 5.0]]
edges = ["simple", "continuous", "free", "simple", "simple", "continuous"]
thickness = 0.18
[[slab.opening]]
polygon = [[1.0, 1.0], [1.8, 1.0], [1.8, 1.6], [1.0, 1.6]]
[capacity]
sagging = [18.0, 15.0]
hogging = 24.0
[[load]]
type = "area"
name = "imposed"
value = 6.0
[[load]]
type = "area"
name = "self weight"
value = 5.5
scaled = false
[[load]]
type = "line"
name = "partition"
value = 3.0
path = [[0.5, 2.5], [2.5, 2.5]]
scaled = false
[[load]]
type = "point"
name = "plant"
value = 4.0
at = [4.5, 1.5]
[[zone]]
name = "trimmers"
polygon = [[0.7, 0.7], [2.1, 0.7], [2.1, 1.9], [0.7, 1.9]]
sagging = 25.0
[[column]]
name = "C1"
at = [1.5, 4.0]
size = [0.3, 0.3]
connection = "monolithic"
[analysis]
nodes = 150
"""


@pytest.fixture(scope="module")
def schema() -> dict:
    data = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(data)      # the schema itself is valid 2020-12
    return data


@pytest.fixture(scope="module")
def document(tmp_path_factory) -> dict:
    result = solve(model_from_toml(L_SLAB))
    outdir = tmp_path_factory.mktemp("schema")
    write_outputs(result, outdir, formats=())
    return json.loads((outdir / "result.json").read_text(encoding="utf-8"))


def errors(schema: dict, doc: dict) -> list:
    return list(jsonschema.Draft202012Validator(schema).iter_errors(doc))


def test_schema_is_draft_2020_12(schema):
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"


def test_real_result_json_validates(schema, document):
    # the document exercises the optional parts the schema describes
    assert document["model"]["openings"] and document["model"]["thickness"] == 0.18
    assert any(not load["factored"] for load in document["model"]["loads"])
    assert {"area", "line", "point"} == {load["type"] for load in document["model"]["loads"]}
    assert document["model"]["zones"] and document["model"]["supports"]
    assert {"sagging", "hogging"} == {line["sense"] for line in document["yield_lines"]}
    assert errors(schema, document) == []


def test_schema_lists_every_field_result_to_dict_writes(schema, document):
    # every key written is declared (additionalProperties is false at each level) and required
    assert set(schema["required"]) == set(document) == set(schema["properties"])
    for key in ("work", "mechanism", "stats", "certificate", "model"):
        sub = schema["properties"][key]
        assert set(sub["required"]) == set(document[key]) == set(sub["properties"]), key
    line_schema = schema["properties"]["yield_lines"]["items"]
    assert set(line_schema["required"]) == set(document["yield_lines"][0])


def test_every_declared_field_has_a_description(schema):
    def walk(node, path):
        if isinstance(node, dict):
            for name, sub in node.get("properties", {}).items():
                if name not in schema["properties"]["units"]["properties"]:
                    assert "description" in sub or "$ref" in sub, f"{path}.{name} has no description"
            for key, sub in node.items():
                walk(sub, f"{path}.{key}")
        elif isinstance(node, list):
            for i, sub in enumerate(node):
                walk(sub, f"{path}[{i}]")

    walk(schema, "$")


def _corrupt(doc: dict, change) -> dict:
    bad = copy.deepcopy(doc)
    change(bad)
    return bad


@pytest.mark.parametrize("name, change", [
    ("load_factor as a string", lambda d: d.__setitem__("load_factor", str(d["load_factor"]))),
    ("mechanism missing", lambda d: d.pop("mechanism")),
    ("unknown top-level key", lambda d: d.__setitem__("load_factr", 1.0)),
    ("yield line sense misspelt", lambda d: d["yield_lines"][0].__setitem__("sense", "sag")),
    ("triangle with two indices", lambda d: d["mechanism"]["triangles"].__setitem__(0, [0, 1])),
    ("negative triangle index", lambda d: d["mechanism"]["triangles"].__setitem__(0, [0, 1, -2])),
    ("vertex with three coordinates", lambda d: d["mechanism"]["vertices"].__setitem__(0, [0.0, 0.0, 0.0])),
    ("stats.nodes as a float", lambda d: d["stats"].__setitem__("nodes", 169.5)),
    ("edge condition unknown", lambda d: d["model"]["edges"].__setitem__(0, "fixed")),
    ("work.held missing", lambda d: d["work"].pop("held")),
    ("cautions empty", lambda d: d.__setitem__("cautions", [])),
])
def test_schema_rejects_corrupted_documents(schema, document, name, change):
    bad = _corrupt(document, change)
    assert errors(schema, bad), f"schema accepted a document with {name}"
    assert errors(schema, document) == []      # the original is untouched and still valid

