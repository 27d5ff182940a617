"""Unit tests of the solver stages (candidates, load work, errors)."""
import importlib

import numpy as np
import pytest
from shapely.geometry import Polygon

import hingeline
from hingeline.upper.candidates import visible_pairs
from hingeline.upper.loadwork import area_load_work, polygon_edges


def test_overlap_removal_keeps_only_the_shortest_collinear_segments():
    nodes = np.array([[0, 0], [1, 0], [2, 0], [1, 1]], float)
    pairs = {tuple(p) for p in visible_pairs(nodes)}
    assert (0, 2) not in pairs  # passes through node 1
    assert pairs == {(0, 1), (1, 2), (0, 3), (1, 3), (2, 3)}


def test_load_work_of_pyramid_is_its_volume():
    # Unit square, apex deflection 1 at the centre: work of q = 1 is the pyramid volume 1/3.
    # Rotations: hinges along the supported edges -2 (slope 2 from the ground, hogging sense),
    # diagonals 2 sqrt(2) (sagging).
    sq = polygon_edges(Polygon([[0, 0], [1, 0], [1, 1], [0, 1]]))
    p = np.array([[0, 0], [1, 0], [1, 1], [0, 1], [0, 0], [1, 0]], float)
    q = np.array([[1, 0], [1, 1], [0, 1], [0, 0], [1, 1], [0, 1]], float)
    theta = np.array([-2, -2, -2, -2, 2 * np.sqrt(2), 2 * np.sqrt(2)])
    assert area_load_work(p, q, sq, 1.0) @ theta == pytest.approx(1 / 3, rel=1e-12)
    # A patch over the left half carries half of it (symmetry).
    half = polygon_edges(Polygon([[0, 0], [0.5, 0], [0.5, 1], [0, 1]]))
    assert area_load_work(p, q, half, 1.0) @ theta == pytest.approx(1 / 6, rel=1e-12)


BASE = """
[slab]
outline = [[0, 0], [4, 0], [4, 3], [0, 3]]
edges = {edges}
[capacity]
sagging = 10.0
hogging = {hogging}
[[load]]
type = "area"
value = 5.0
{extra}
[analysis]
nodes = 150
"""


def test_rigid_body_motion_is_reported():
    # One simple edge, three free: the slab rotates about the support without resisting.
    m = hingeline.model_from_toml(BASE.format(edges='["simple", "free", "free", "free"]', hogging=10.0, extra=""))
    with pytest.raises(hingeline.UnstableSlabError, match="without resisting"):
        hingeline.solve(m)


def test_cantilever_from_one_continuous_edge_is_stable():
    # One continuous edge (y = 0, width b = 4 m, span a = 3 m): the slab is a cantilever. Rigid
    # rotation theta = 1 about the support (hand work equation): internal m' b = 40 kNm, external
    # q b a^2 / 2 = 90 kNm, so 0.444; the optimum cannot exceed this mechanism.
    m = hingeline.model_from_toml(BASE.format(edges='["continuous", "free", "free", "free"]', hogging=10.0, extra=""))
    r = hingeline.solve(m)
    rigid = 10.0 * 4.0 / (5.0 * 4.0 * 3.0**2 / 2)
    assert 0 < r.load_factor <= rigid * (1 + 1e-9)


def test_held_load_alone_collapses():
    held = '[[load]]\ntype = "area"\nvalue = 500.0\nscaled = false'
    m = hingeline.model_from_toml(BASE.format(edges='"simple"', hogging=10.0, extra=held))
    with pytest.raises(hingeline.UnstableSlabError, match="held"):
        hingeline.solve(m)


def test_zero_hogging_capacity_is_valid():
    m = hingeline.model_from_toml(BASE.format(edges='"continuous"', hogging=0.0, extra=""))
    r = hingeline.solve(m)
    assert r.load_factor > 0
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


def test_held_load_lowers_load_factor_by_its_share():
    # With a held load h and factored load q of the same shape, collapse needs q*lf + h = q*lf0:
    # lf = lf0 - h/q exactly (same mechanism; work equation is linear in the loads).
    m0 = hingeline.model_from_toml(BASE.format(edges='"simple"', hogging=10.0, extra=""))
    held = '[[load]]\ntype = "area"\nvalue = 2.0\nscaled = false'
    m1 = hingeline.model_from_toml(BASE.format(edges='"simple"', hogging=10.0, extra=held))
    r0, r1 = hingeline.solve(m0), hingeline.solve(m1)
    assert r1.load_factor == pytest.approx(r0.load_factor - 2.0 / 5.0, rel=1e-6)


def test_too_fine_mesh_is_refused_before_meshing(monkeypatch):
    # 1e-4 m elements on a 4 m x 3 m slab would be about 1.4e9 nodes (2 A / (sqrt(3) h^2),
    # the node density of equilateral triangles): refused from the estimate, before the
    # mesher (which would run out of memory) is called.
    solve_module = importlib.import_module("hingeline.solve")

    def no_mesher(*args, **kwargs):
        raise AssertionError("the mesher was called")

    monkeypatch.setattr(solve_module, "mesh_domain", no_mesher)
    big = BASE.format(edges='"simple"', hogging=10.0, extra="").replace('nodes = 150', "mesh_size = 1e-4")
    with pytest.raises(hingeline.ModelError, match=r"analysis\.mesh_size = 0\.0001 m .* nodes"):
        hingeline.solve(hingeline.model_from_toml(big))
    with pytest.raises(hingeline.ModelError, match=r"^mesh_size = 0\.0001 m"):
        hingeline.solve(hingeline.model_from_toml(BASE.format(edges='"simple"', hogging=10.0, extra="")),
                        mesh_size=1e-4)


def test_lines_made_in_blocks_are_the_lines_made_at_once():
    # Overlap removal, the inside-the-domain tests, costs and work coefficients per block
    # of start nodes must give exactly the lines of one pass over all pairs: a slab with
    # an opening, a free edge (fill strip), a column (island) and a point load.
    from hingeline.geometry.domain import build_domain
    from hingeline.geometry.mesh import mesh_domain, mesh_size_for
    from hingeline.upper.candidates import build_candidates
    from hingeline.upper.loadwork import island_rows, load_coefficients
    from hingeline.upper.pricing import candidate_source, concat

    extra = ('[[slab.opening]]\npolygon = [[1.0, 1.0], [1.8, 1.0], [1.8, 1.6], [1.0, 1.6]]\n'
             '[[column]]\nat = [3.0, 1.5]\nsize = [0.2, 0.2]\n'
             '[[load]]\ntype = "point"\nvalue = 3.0\nat = [2.5, 2.2]')
    m = hingeline.model_from_toml(BASE.format(edges='["simple", "simple", "free", "continuous"]',
                                              hogging=8.0, extra=extra))
    size = mesh_size_for(m, 150)
    domain = build_domain(m, margin=size)
    nodes = mesh_domain(domain, m, size).nodes
    whole = build_candidates(nodes, domain, m)
    p, q = nodes[whole.a], nodes[whole.b]
    f, g, _ = load_coefficients(m, domain.slab, p, q)
    islands = island_rows(p, q, domain.islands).toarray()
    source = candidate_source(nodes, domain, m, block_lines=997)
    assert len(source.bounds) > 10
    parts = concat(list(source.blocks()))
    for name in ("a", "b", "length", "kind", "cost_plus", "cost_minus"):
        assert np.array_equal(getattr(parts.cand, name), getattr(whole, name)), name
    assert np.array_equal(parts.f, f) and np.array_equal(parts.g, g)
    assert np.array_equal(parts.extra.toarray(), islands)
