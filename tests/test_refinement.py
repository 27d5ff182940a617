"""Adaptive refinement (solve.py, refine.py): the stop rules, the best bound of each kind
kept with its own mechanism or field, result.json's refinement entries, `verify` on a
refined result, the refusal of the old `resolution` key and option, and the split of the
bound gap along the yield lines that decides where to refine.

Check value: the clamped square under uniform load with isotropic m = m' = 1 collapses at
42.851 m / L^2 (Fox, "Limit analysis for plates: the exact solution for a clamped square
plate of isotropic homogeneous material obeying the square yield criterion and loaded by
uniform pressure", Phil. Trans. R. Soc. A 277 (1974) 121-155). The two bounds must bracket
it (upper-bound and lower-bound theorems), up to the LP and cone solvers' tolerances
(relative 1e-6).
"""
from __future__ import annotations

import dataclasses
import io
import json

import numpy as np
import pytest
import unit_slabs

import hingeline
from hingeline._cli.main import main
from hingeline._cli.report import print_summary
from hingeline.geometry.domain import build_domain
from hingeline.geometry.mesh import SizeField
from hingeline.outputs.result_json import write_outputs
from hingeline.refine import gap_parts
from hingeline.verify import verify_result

FOX = 42.851  # Fox (1974), see the module docstring

CLAMPED = """
title = "clamped unit square"
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "continuous"
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "area"
value = 1.0
"""


@pytest.fixture(scope="module")
def clamped():
    model = hingeline.model_from_toml(CLAMPED)
    # 2 %: the first mesh (about 150 nodes) is measured at 3.1 %, the second at 1.8 %.
    return model, hingeline.solve(model, gap=0.02, time_limit=60)


def test_refinement_stops_by_the_gap_rule_with_both_bounds_bracketing_fox(clamped):
    _, r = clamped
    assert r.stop == "gap" and r.target_gap == 0.02
    assert len(r.refinement) >= 2
    assert r.gap <= 0.02
    assert r.refinement[0].gap > 0.02                                 # the first mesh alone did not reach it
    lower = r.lower_bound.load_factor
    assert lower <= FOX * (1 + 1e-6) and r.load_factor >= FOX * (1 - 1e-6)
    # the reported bounds are the best of each kind over the steps
    assert r.load_factor == min(st.load_factor for st in r.refinement)
    assert lower == max(st.lower_bound for st in r.refinement)
    # the meshes grow step by step
    nodes = [st.nodes for st in r.refinement]
    assert nodes == sorted(nodes) and nodes[-1] > nodes[0]
    assert not any("target gap" in w for w in r.warnings)


def test_a_uniform_mesh_is_one_step_without_refinement():
    model = hingeline.model_from_toml(CLAMPED)
    r = hingeline.solve(model, nodes=150)
    assert r.stop == "uniform" and r.target_gap is None
    assert len(r.refinement) == 1 and r.refinement[0].nodes == r.stats.slab_nodes
    assert r.refinement[0].load_factor == r.load_factor


def test_the_time_limit_stops_refinement_with_a_warning_not_an_error():
    model = hingeline.model_from_toml(CLAMPED)
    r = hingeline.solve(model, gap=0.001, time_limit=0.01)
    assert r.stop == "time" and len(r.refinement) == 1
    assert any("target gap of 0.10 % was not reached" in w and "time limit" in w for w in r.warnings)


def test_a_step_that_no_longer_narrows_stops_refinement():
    # Without a lower bound refinement watches the upper bound: on the simply supported square
    # the first mesh already finds Johansen's 24 (its diagonals are mesh lines), so the second
    # step cannot lower it and refinement stops as stalled.
    model = hingeline.model_from_toml(CLAMPED.replace('"continuous"', '"simple"'))
    r = hingeline.solve(model, lower_bound=False, gap=0.01, time_limit=60)
    assert r.stop == "stalled" and len(r.refinement) == 2
    assert r.lower_bound is None


def test_result_json_holds_the_refinement_and_verify_passes(clamped, tmp_path):
    model, r = clamped
    model_path = tmp_path / "clamped.toml"
    model_path.write_text(CLAMPED, encoding="utf-8")
    write_outputs(r, tmp_path / "out", formats=())
    data = json.loads((tmp_path / "out" / "result.json").read_text(encoding="utf-8"))
    ref = data["refinement"]
    assert ref["stop"] == "gap" and ref["target_gap"] == 0.02 and "target gap" in ref["stop_reason"]
    assert [s["nodes"] for s in ref["steps"]] == [st.nodes for st in r.refinement]
    assert [s["load_factor"] for s in ref["steps"]] == [st.load_factor for st in r.refinement]
    assert [s["lower_bound"] for s in ref["steps"]] == [st.lower_bound for st in r.refinement]
    assert data["load_factor"] == min(s["load_factor"] for s in ref["steps"])
    assert data["lower_bound"]["load_factor"] == max(s["lower_bound"] for s in ref["steps"])
    assert main(["verify", str(model_path), str(tmp_path / "out" / "result.json")]) == 0


def test_verify_re_checks_bounds_from_two_different_meshes(clamped, tmp_path):
    # The lower bound of the first mesh with the mechanism of the last: each is re-checked on
    # its own (the field carries its nodes, the mechanism its triangulation).
    model, r = clamped
    first = hingeline.solve(model, nodes=150)            # the first mesh of the refinement
    assert first.stats.mesh_size == r.stats.mesh_size
    mixed = dataclasses.replace(r, lower_bound=first.lower_bound)
    write_outputs(mixed, tmp_path, formats=())
    data = json.loads((tmp_path / "result.json").read_text(encoding="utf-8"))
    v = verify_result(model, data)
    assert v.ok and v.lower == first.lower_bound.load_factor and v.upper == r.load_factor
    assert len(data["lower_bound"]["field"]["nodes"]) <= first.stats.nodes < r.refinement[-1].nodes


def test_the_old_resolution_option_is_refused_naming_its_replacement(tmp_path, capsys):
    path = tmp_path / "m.toml"
    path.write_text(CLAMPED, encoding="utf-8")
    assert main(["solve", str(path), "-o", str(tmp_path / "out"), "--resolution", "fine"]) == 2
    err = capsys.readouterr().err
    assert "--resolution is no longer an option" in err and "--nodes" in err and "fine = 1100" in err
    path.write_text(CLAMPED + '[analysis]\nresolution = "coarse"\n', encoding="utf-8")
    assert main(["solve", str(path), "-o", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "analysis.resolution is no longer read" in err and "analysis.nodes" in err
    assert not (tmp_path / "out").exists()


def _full_and_other(value: float):
    """The clamped square under two load cases, "full" (1 kPa) and "other" (`value` kPa),
    refined to a 2 % gap: the governing result and the other case's load factor and lower bound."""
    model = hingeline.model_from_toml(CLAMPED.replace('value = 1.0\n', 'value = 1.0\nname = "all"\n') + f"""
[[load]]
type = "area"
name = "part"
value = {value}
[[case]]
name = "full"
loads = ["all"]
[[case]]
name = "other"
loads = ["part"]
""")
    r = hingeline.solve_cases(model, gap=0.02, time_limit=60)
    assert r.case == "full" and r.stop == "gap"
    assert r.lower_bound.load_factor <= FOX <= r.load_factor
    return r, dict(r.cases)["other"], dict(zip([n for n, _ in r.cases], r.case_lower_bounds))["other"]


def test_a_load_case_that_cannot_govern_is_not_refined():
    # Half the load: twice Fox's factor, bracketed by the case's own bounds; its lower bound
    # alone proves it cannot govern, so it stays at the first mesh (its bracket wider).
    r, upper, lower = _full_and_other(0.5)
    assert len(r.refinement) >= 2
    assert lower <= 2 * FOX <= upper
    assert lower > r.load_factor
    out = io.StringIO()
    print_summary(r, [], out=out)
    assert "'other'" in out.getvalue() and "(cannot govern: lower bound above the governing load factor)" in out.getvalue()


def test_a_load_case_that_may_govern_is_refined_from_the_governing_mesh():
    # 98 % of the load (Fox's factor / 0.98, 2 % above): the case's first-mesh lower bound does
    # not clear the governing load factor, so it refines too, to its own target.
    r, upper, lower = _full_and_other(0.98)
    assert lower <= FOX / 0.98 <= upper
    assert (upper - lower) / upper <= 0.02


HOLE = '[[slab.opening]]\npolygon = [[0.4, 0.4], [0.6, 0.4], [0.6, 0.6], [0.4, 0.6]]'


@pytest.mark.parametrize("model", [
    unit_slabs.model(unit_slabs.SQUARE, "continuous"),
    unit_slabs.model(unit_slabs.SQUARE, ["continuous", "simple", "free", "continuous"], hogging=0.5, extra=HOLE),
], ids=["clamped", "hole and free edge"])
def test_the_gap_splits_onto_the_yield_lines_by_virtual_work(model):
    # Refinement marks where (m_p - m_n) |theta| is large along the mechanism's lines. By the
    # principle of virtual work (the field is in equilibrium with the lower bound's loads, the
    # rotations are a mechanism) these parts add up to (upper - lower) x scaled-load work, and
    # each is >= 0 because the field is inside the yield criterion (lower-bound theorem; both
    # as in Nielsen and Hoang, Limit Analysis and Concrete Plasticity, recalled from memory). The
    # slab with an opening and a free edge has yield lines in the fill, which lose nothing.
    r = hingeline.solve(model, nodes=150)
    h = r.stats.mesh_size
    domain = build_domain(model, margin=h)
    # Pieces an eighth of the element size long: the mid-point rule is then exact to 0.1 %
    # (measured: 0.08 % and 0.10 % on these slabs; 2 % and 4 % with half-element pieces).
    _, parts = gap_parts(model, domain, r.yield_lines, r.lower_bound, SizeField(h / 8, np.zeros((0, 2)), np.zeros(0)))
    gap_work = (r.load_factor - r.lower_bound.load_factor) * r.work.factored
    assert gap_work > 0
    assert parts.min() >= -1e-6
    assert parts.sum() == pytest.approx(gap_work, rel=5e-3)
