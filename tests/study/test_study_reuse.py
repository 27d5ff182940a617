"""Reuse between neighbouring variants: a variant's first LP starts from the active lines of
a solved neighbour, which changes the speed and not the load factor.

Why the load factors must agree: the LP loop stops only when pricing over every admissible
line proves that no line left out lowers the load factor (upper/lp.py), so each variant's
answer is the optimum of the same LP over all admissible lines on its mesh, whichever lines
its first round held; that optimum is unique in value (linear programming duality). The
agreement asked, 1e-6 relative, is the LP's stopping tolerance with margin.
"""
from __future__ import annotations

import json

import numpy as np
import pytest

from hingeline._cli.main import main
from hingeline.geometry.domain import build_domain
from hingeline.geometry.mesh import mesh_domain
from hingeline.model import model_from_toml
from hingeline.refine import lines_onto
from hingeline.study.order import Order
from hingeline.upper.candidates import build_candidates
from hingeline.upper.lp import _first_lines
from hingeline.upper.pricing import candidate_source

from study_inputs import ALONG_AXIS, MESH, read_rows, write_study

#: The along-axis study at three positions, x = 0.8, 1.4, 2.0 m.
GRID = ALONG_AXIS.replace("x = [0.8, 3.2]", "x = [0.8, 2.0]")


def _run(folder, *extra):
    study = write_study(folder, GRID)
    out = folder / "out"
    assert main(["study", str(study), "-o", str(out), "--mesh-size", MESH, "--jobs", "1", *extra]) == 0
    rows = read_rows(out / "study.csv")
    records = [json.loads((out / "variants" / r["variant"] / "variant.json").read_text()) for r in rows]
    return rows, records


@pytest.fixture(scope="module")
def both(tmp_path_factory):
    return _run(tmp_path_factory.mktemp("reuse")), _run(tmp_path_factory.mktemp("scratch"), "--no-reuse")


def test_reuse_gives_the_same_load_factors(both):
    (rows, _), (scratch, _) = both
    assert len(rows) == len(scratch) == 3
    for a, b in zip(rows, scratch):
        assert (a["x"], a["y"], a["variant"]) == (b["x"], b["y"], b["variant"])  # fingerprints: reuse not in them
        assert float(a["load_factor"]) == pytest.approx(float(b["load_factor"]), rel=1e-6, abs=0)


def test_reuse_happened(both):
    """With reuse every variant but the first solved starts with carried lines in its first
    LP; without, none does."""
    (_, records), (_, scratch) = both
    carried = sorted(r["carried_lines"] for r in records)
    assert carried[0] == 0 and all(c > 0 for c in carried[1:]), carried
    assert all(r["carried_lines"] == 0 for r in scratch)


def test_no_reuse_under_refinement(tmp_path):
    """Without a uniform mesh each variant is refined; nothing is carried (the first mesh's
    vertex would steer the refinement)."""
    study = write_study(tmp_path, ALONG_AXIS.replace("x = [0.8, 3.2]", "x = [0.8, 1.4]"))
    out = tmp_path / "out"
    assert main(["study", str(study), "-o", str(out), "--gap", "0.5", "--jobs", "1", "--no-lower-bound"]) == 0
    for r in read_rows(out / "study.csv"):
        rec = json.loads((out / "variants" / r["variant"] / "variant.json").read_text())
        assert rec["carried_lines"] == 0


#: An L-shaped slab (invented) with an opening: segments between its nodes may leave the
#: slab across the re-entrant corner, run through a third node, or cross the opening.
L_SLAB = """
[slab]
outline = [[0, 0], [4, 0], [4, 2], [2, 2], [2, 4], [0, 4]]
edges = "simple"
[[slab.opening]]
polygon = [[0.6, 0.6], [1.2, 0.6], [1.2, 1.2], [0.6, 1.2]]
[capacity]
sagging = 10.0
[[load]]
type = "area"
value = 5.0
"""


def test_carried_lines_are_the_admissible_ones_at_their_cost():
    """Every node pair offered as carried: the first LP holds exactly the admissible
    candidates (those leaving the slab's domain or running through a node are dropped),
    each with the cost the candidate machinery gives it. Lines across the opening are
    admissible (the opening is zero-strength fill of the domain) and cost only their length
    in the slab."""
    model = model_from_toml(L_SLAB)
    domain = build_domain(model, margin=0.6)
    mesh = mesh_domain(domain, model, 0.6)
    n = len(mesh.nodes)
    a, b = np.triu_indices(n, 1)
    every = np.stack([a, b], axis=1)
    first = _first_lines(candidate_source(mesh.nodes, domain, model), mesh.edges, every)
    cand = build_candidates(mesh.nodes, domain, model)
    keys, ref = first.cand.a.astype(np.int64) * n + first.cand.b, cand.a.astype(np.int64) * n + cand.b
    assert len(ref) < len(every)                    # some pairs are not admissible
    assert np.array_equal(np.sort(keys), np.sort(ref))
    o, r = np.argsort(keys), np.argsort(ref)
    assert np.allclose(first.cand.cost_plus[o], cand.cost_plus[r], rtol=1e-12, atol=0)
    # A pair across the opening: both ends left and right of it at its mid-height.
    p, q = mesh.nodes[cand.a], mesh.nodes[cand.b]
    t = (0.9 - p[:, 1]) / np.where(q[:, 1] != p[:, 1], q[:, 1] - p[:, 1], np.inf)
    x = p[:, 0] + t * (q[:, 0] - p[:, 0])
    across = (p[:, 0] < 0.6) & (q[:, 0] > 1.2) | (q[:, 0] < 0.6) & (p[:, 0] > 1.2)
    across &= (np.abs(t - 0.5) < 0.5) & (x > 0.6) & (x < 1.2)
    assert across.any()
    full = 10.0 * cand.length[across]  # isotropic 10 kNm/m over the whole length
    assert np.all(cand.cost_plus[across] < full - 1e-9)


def test_lines_onto_maps_ends_to_nearest_nodes():
    nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 1.0]])
    ends = np.array([[[0.9, 0.05], [0.1, 0.1]], [[0.02, 0.9], [0.1, 0.98]], [[1.0, 1.1], [0.0, 0.0]]])
    # The second line's ends both fall on node 2: dropped.
    assert lines_onto(ends, nodes).tolist() == [[0, 1], [0, 3]]


def test_order_snakes_and_hands_on_the_nearest_lines():
    """A 3 x 2 grid solved by one worker: along the first row, up, back along the second;
    each variant starts from the lines of its solved neighbour."""
    where = np.array([[x, y] for y in (0, 1) for x in (0, 1, 2)], float)
    order = Order(where)
    seq, got = [], []
    pick = order.take()
    while pick is not None:
        k, lines = pick
        seq.append(k)
        got.append(lines)
        order.solved(k, f"lines of {k}")
        pick = order.take(k)
    assert seq == [0, 1, 2, 5, 4, 3]
    assert got == [None, "lines of 0", "lines of 1", "lines of 2", "lines of 5", "lines of 4"]


def test_order_starts_workers_far_apart():
    where = np.array([[x, 0] for x in range(6)], float)
    order = Order(where)
    assert [order.take()[0], order.take()[0]] == [0, 5]
