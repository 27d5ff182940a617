"""The clean pattern: rigid regions, straight yield lines and fans read off a mechanism,
and the hand-pattern file they are written as.

Check values: Johansen's closed forms (simply supported isotropic square under a uniform
load, the diagonal pattern of four triangular regions: 24 m / L^2; a one-way strip,
simply supported on two opposite edges: 8 m / L^2; a simply supported regular n-gon with
a point load P at its centre, n triangular regions meeting there: P = 2 n m tan(pi / n)),
geometry (lengths, corners), and exact reproduction: the hand check of the written file
gives the pattern's load factor, which equals the mechanism's.
"""
from __future__ import annotations

import functools
import math

import numpy as np
import pytest
import shapely
from unit_slabs import SQUARE, model

import hingeline
from hingeline.check import check_pattern, pattern_from_toml, read_pattern
from hingeline.check.regions import slab_polygon
from hingeline.pattern import clean_pattern
from hingeline.result import Mechanism
from hingeline.upper.certificate import check_mechanism


def _reproduced(mdl, cp, tmp_path=None):
    """The hand check of the pattern's file, read from disk when a folder is given."""
    if tmp_path is None:
        pattern = pattern_from_toml(cp.hand_pattern)
    else:
        path = tmp_path / "hand-pattern.toml"
        path.write_text(cp.hand_pattern, encoding="utf-8")
        pattern = read_pattern(path)
    return check_pattern(mdl, pattern, optimise=False).load_factor


def _cone(outline, apex, refine=0):
    """The mechanism of rigid triangles (one per outline side) meeting at `apex` with w = 1
    there, each triangle split `refine` times into four (same planes, more mesh)."""
    outline = np.asarray(outline, float)
    V = np.vstack([outline, apex])
    w = np.concatenate([np.zeros(len(outline)), [1.0]])
    n = len(outline)
    T = np.array([[k, (k + 1) % n, n] for k in range(n)])
    for _ in range(refine):
        mids = {}
        newT = []

        def mid(i, j):
            nonlocal V, w
            key = (min(i, j), max(i, j))
            if key not in mids:
                V = np.vstack([V, 0.5 * (V[i] + V[j])])
                w = np.append(w, 0.5 * (w[i] + w[j]))
                mids[key] = len(V) - 1
            return mids[key]
        for a, b, c in T:
            ab, bc, ca = mid(a, b), mid(b, c), mid(c, a)
            newT += [[a, ab, ca], [ab, b, bc], [ca, bc, c], [ab, bc, ca]]
        T = np.array(newT)
    return Mechanism(V, T, w)


def _point_load_model(outline, edges):
    """Isotropic slab, m = m' = 1, a unit point load at the origin, coarse mesh."""
    return hingeline.model_from_toml(f"""
[slab]
outline = {outline}
edges = {edges!r}
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "point"
value = 1.0
at = [0.0, 0.0]
[analysis]
nodes = 150
""".replace("'", '"'))


def test_square_cone_reads_as_four_regions_and_two_diagonals():
    # Johansen: simply supported isotropic square, diagonal pattern, 24 m / L^2 (L = 1, m = 1).
    mdl = model(SQUARE, ["simple"] * 4)
    mech = _cone(SQUARE, [0.5, 0.5], refine=2)        # 64 triangles, 4 planes
    lf = check_mechanism(mdl, mech).load_factor
    assert lf == pytest.approx(24.0, rel=1e-12)
    cp = clean_pattern(mdl, mech, lf)
    assert cp is not None
    assert len(cp.regions) == 4 and not any(r.at_rest for r in cp.regions)
    assert cp.load_factor == pytest.approx(24.0, rel=1e-9)
    # Each region is a triangle: one side of the square and the centre; the mesh vertices
    # along its sides are not corners.
    for rings in cp.rings:
        assert len(rings) == 1 and len(rings[0]) == 3
        assert any(np.allclose(p, [0.5, 0.5]) for p in rings[0])
    for reg in cp.regions:
        assert reg.axis_contact == "line"
        assert reg.max_deflection == pytest.approx(cp.regions[0].max_deflection)
    # Two diagonals of length sqrt(2), sagging, half the work each.
    assert len(cp.lines) == 2
    for ln in cp.lines:
        assert ln.length == pytest.approx(math.sqrt(2), rel=1e-12)
        assert ln.sense == "sagging" and not ln.at_support
        assert ln.share == pytest.approx(0.5, rel=1e-12)
    assert sum(ln.work for ln in cp.lines) == pytest.approx(cp.internal, rel=1e-12)
    assert cp.fans == ()
    assert _reproduced(mdl, cp) == pytest.approx(cp.load_factor, rel=1e-12)


def test_regular_octagon_under_a_point_load_is_a_fan():
    # Simply supported regular octagon, m = 1, unit point load at the centre: P = 2 n m tan(pi/n).
    n = 8
    ang = 2 * np.pi * np.arange(n) / n
    outline = np.column_stack([np.cos(ang), np.sin(ang)]).round(15).tolist()
    mdl = _point_load_model(outline, ["simple"] * n)
    mech = _cone(outline, [0.0, 0.0], refine=1)
    lf = check_mechanism(mdl, mech).load_factor
    assert lf == pytest.approx(2 * n * math.tan(math.pi / n), rel=1e-9)
    cp = clean_pattern(mdl, mech, lf)
    assert len(cp.regions) == n
    # Opposite rays are one straight line through the load (a diameter, length 2), and the
    # n regions meeting at the load are one fan of n rays spanning 360 - 360 / n degrees.
    assert len(cp.lines) == n // 2
    assert all(ln.length == pytest.approx(2.0, rel=1e-9) for ln in cp.lines)
    assert len(cp.fans) == 1
    fan = cp.fans[0]
    assert fan.apex == pytest.approx((0.0, 0.0), abs=1e-12)
    assert sorted(fan.rays) == [1, 2, 3, 4]
    assert fan.angle == pytest.approx(360 - 360 / n, rel=1e-9)
    assert fan.share == pytest.approx(1.0, rel=1e-9)
    assert _reproduced(mdl, cp) == pytest.approx(cp.load_factor, rel=1e-12)


def test_refused_when_the_raw_load_factor_disagrees():
    # A pattern whose work equation does not give the mechanism's load factor is not shown.
    mdl = model(SQUARE, ["simple"] * 4)
    mech = _cone(SQUARE, [0.5, 0.5])
    assert clean_pattern(mdl, mech, 24.0 * (1 + 1e-4)) is None
    assert clean_pattern(mdl, mech, 24.0) is not None


SLABS = {
    # name: (outline, edges, extra model text)
    "one-way strip": ([[0, 0], [1, 0], [1, 2], [0, 2]], ["free", "simple", "free", "simple"], ""),
    "L-shaped": ([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]],
                 ["simple", "continuous", "simple", "simple", "continuous", "simple"], ""),
    "opening and free edge": ([[0, 0], [2, 0], [2, 1.5], [0, 1.5]], ["simple", "simple", "free", "continuous"],
                              "[[slab.opening]]\npolygon = [[0.5, 0.4], [0.9, 0.4], [0.9, 0.8], [0.5, 0.8]]\n"),
    "column": ([[0, 0], [2, 0], [2, 2], [0, 2]], ["simple", "free", "free", "simple"],
               "[[column]]\nat = [1.6, 1.6]\nsize = [0.2, 0.2]\n"),
}


@functools.cache
def _solved(name):
    outline, edges, extra = SLABS[name]
    return hingeline.solve(model(outline, edges, extra=extra), lower_bound=False)


@pytest.mark.parametrize("name", sorted(SLABS))
def test_solved_slabs_reproduce_through_the_hand_file(name, tmp_path):
    res = _solved(name)
    cp = clean_pattern(res.model, res.mechanism, res.load_factor)
    assert cp is not None, name
    # The regions are the mechanism's planes: the work equation agrees with the solve ...
    assert cp.clean_load_factor == pytest.approx(res.load_factor, rel=1e-6)
    # ... and moving the junctions never raises it.
    assert cp.load_factor <= res.load_factor * (1 + 1e-9)
    # ... and the hand check of the file written reproduces it.
    assert _reproduced(res.model, cp, tmp_path) == pytest.approx(cp.load_factor, rel=1e-6)
    # The regions cover the slab (openings and supports excepted) without overlap.
    polys = [shapely.Polygon(r[0], r[1:]) for r in cp.rings]
    slab = slab_polygon(res.model)
    assert sum(p.area for p in polys) == pytest.approx(slab.area, rel=1e-9)
    assert shapely.union_all(polys).symmetric_difference(slab).area <= 1e-9 * slab.area
    # Lines: work adds up to the pattern's internal work; numbered by decreasing work.
    works = [ln.work for ln in cp.lines]
    assert sum(works) == pytest.approx(cp.internal, rel=1e-9)
    assert works == sorted(works, reverse=True)
    assert [ln.number for ln in cp.lines] == list(range(1, len(cp.lines) + 1))


def test_one_way_strip_is_two_regions_and_one_line():
    res = _solved("one-way strip")
    # Johansen: one-way strip of span L = 1 simply supported at both ends, 8 m / L^2.
    cp = clean_pattern(res.model, res.mechanism, res.load_factor)
    assert cp.load_factor == pytest.approx(8.0, rel=1e-6)
    moving = [r for r in cp.regions if not r.at_rest]
    assert len(moving) == 2
    assert len(cp.lines) == 1
    ln = cp.lines[0]
    assert ln.length == pytest.approx(2.0, rel=1e-9)          # across the strip's width
    assert ln.start[0] == pytest.approx(0.5) and ln.end[0] == pytest.approx(0.5)
    assert ln.sense == "sagging" and ln.share == pytest.approx(1.0)


def test_fan_under_a_point_load_on_a_clamped_slab():
    # A point load far from the edges of a clamped slab: the mechanism is a fan of rigid
    # regions round the load. For any such cone (apex deflection d, region i with boundary
    # length L_i at distance h_i from the apex), the sagging rays do m d sum(L_i / h_i) and
    # the hogging boundary m' d sum(L_i / h_i) (Johansen's yield-line theory, point loads):
    # with m = m' the rays do exactly half the work, and no cone beats the circular fan,
    # P >= 2 pi (m + m').
    mdl = _point_load_model([[-2, -2], [2, -2], [2, 2], [-2, 2]], ["continuous"] * 4)
    res = hingeline.solve(mdl, lower_bound=False)
    cp = clean_pattern(res.model, res.mechanism, res.load_factor)
    assert cp.load_factor >= 2 * math.pi * 2 * (1 - 1e-9)
    assert len(cp.fans) == 1
    fan = cp.fans[0]
    assert fan.apex == pytest.approx((0.0, 0.0), abs=1e-9)
    assert len(fan.rays) >= 8 and fan.angle > 270
    assert all(cp.lines[k - 1].sense == "sagging" for k in fan.rays)
    assert fan.share == pytest.approx(0.5, rel=1e-6)
