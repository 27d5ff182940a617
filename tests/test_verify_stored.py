"""`hingeline verify` re-checks every stored number a person reads, and says when a result
belongs to another model (stored.py, verify.py). Each tampering below went unnoticed, or
ended as a solver failure, before these checks."""
from __future__ import annotations

import copy
import json

import pytest

import hingeline
from hingeline._cli.main import main
from hingeline.outputs.result_json import write_outputs

MODEL = """
title = "verify test slab"
[slab]
outline = [[0, 0], [4, 0], [4, 3], [0, 3]]
edges = ["simple", "continuous", "simple", "free"]
[[slab.opening]]
polygon = [[2.6, 1.8], [3.1, 1.8], [3.1, 2.3], [2.6, 2.3]]
[capacity]
sagging = [12.0, 9.0]
hogging = 6.0
[[zone]]
name = "strong strip"
polygon = [[1.0, 0.0], [2.0, 0.0], [2.0, 3.0], [1.0, 3.0]]
sagging = 20.0
hogging = 6.0
[[load]]
type = "area"
value = 8.0
[[load]]
type = "point"
value = 10.0
at = [1.5, 1.2]
[analysis]
nodes = 150
"""


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    folder = tmp_path_factory.mktemp("verify")
    (folder / "slab.toml").write_text(MODEL, encoding="utf-8")
    result = hingeline.solve(hingeline.read_model(folder / "slab.toml"))
    write_outputs(result, folder, formats=())
    return folder, json.loads((folder / "result.json").read_text(encoding="utf-8"))


def run_verify(folder, data, capsys, name="tampered.json"):
    (folder / name).write_text(json.dumps(data), encoding="utf-8")
    code = main(["verify", str(folder / "slab.toml"), str(folder / name)])
    return code, capsys.readouterr().out


def test_the_result_as_written_re_checks(written, capsys):
    folder, data = written
    code, out = run_verify(folder, data, capsys, "as_written.json")
    assert code == 0, out
    assert "DOES NOT" not in out


def tampered(data, change):
    d = copy.deepcopy(data)
    change(d)
    return d


def _set(path, value):
    def change(d):
        *head, last = path
        for key in head:
            d = d[key]
        d[last] = value(d[last]) if callable(value) else value
    return change


@pytest.mark.parametrize("change, says", [
    (_set(["yield_lines"], []), "no stored yield line"),
    (_set(["yield_lines", 0, "rotation"], lambda r: 2 * r), "yield_lines[0]"),
    (_set(["yield_lines", 0, "dissipation"], lambda w: 1.5 * w), "add up to"),
    (_set(["yield_lines", 0, "sense"], lambda s: "hogging" if s == "sagging" else "sagging"), "yield_lines[0]"),
    (_set(["certificate", "load_factor"], 99.0), "certificate.load_factor"),
    (_set(["work", "internal"], lambda w: 1.01 * w), "work.internal"),
    (_set(["lower_bound", "gap"], 0.0), "lower_bound.gap"),
])
def test_a_tampered_stored_number_fails_and_is_named(written, capsys, change, says):
    folder, data = written
    code, out = run_verify(folder, tampered(data, change), capsys)
    assert code == 1
    assert says in out and "DOES NOT RE-CHECK" in out


def test_moving_work_between_two_lines_is_caught(written, capsys):
    """The total stays right; each line's work no longer matches its length, rotation and
    capacity (Johansen's dissipation per unit length, m * theta)."""
    folder, data = written
    d = copy.deepcopy(data)
    inner = [k for k, ln in enumerate(d["yield_lines"]) if not ln["at_support"] and ln["dissipation"] > 0]
    shift = 0.25 * d["yield_lines"][inner[0]]["dissipation"]
    d["yield_lines"][inner[0]]["dissipation"] -= shift
    d["yield_lines"][inner[1]]["dissipation"] += shift
    code, out = run_verify(folder, d, capsys)
    assert code == 1 and f"yield_lines[{inner[0]}]" in out


def test_a_result_of_another_model_is_said_so_with_exit_1(written, capsys):
    folder, data = written
    other = folder / "other.toml"
    other.write_text(MODEL.replace("value = 8.0", "value = 9.0"), encoding="utf-8")
    (folder / "r.json").write_text(json.dumps(data), encoding="utf-8")
    code = main(["verify", str(other), str(folder / "r.json")])
    out = capsys.readouterr().out
    assert code == 1
    assert "does NOT belong to this model file" in out and "loads[0].value" in out
