"""Unit tests of the solver stages (candidates, load work, errors)."""
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
resolution = "coarse"
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


def test_too_fine_mesh_is_refused_with_a_message():
    big = BASE.format(edges='"simple"', hogging=10.0, extra="").replace('resolution = "coarse"', "mesh_size = 0.02")
    with pytest.raises(hingeline.ModelError, match="mesh_size"):
        hingeline.solve(hingeline.model_from_toml(big))
