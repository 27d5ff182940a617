"""The lower bound of slabs without top bars (hogging capacity 0) next to openings and free edges.

By the lower-bound theorem a statically admissible field proves a load factor at or below the
collapse factor, which the mechanism's load factor bounds from above; conftest.py asserts on
every solve that the lower bound is at or below the load factor and that its field re-checks
(equilibrium, and yield nowhere exceeded, from the field alone). The 6 m slabs are those of
benchmarks/lower_no_top_bars.py, which measures their gaps at 450 nodes.
"""
import dataclasses

import numpy as np
import pytest
from unit_slabs import SQUARE, model

import hingeline
from hingeline.geometry.domain import build_domain
from hingeline.geometry.mesh import mesh_domain, mesh_size_for
from hingeline.lower import MomentField, check_field, slab_triangles, solve_lower_bound
from hingeline.lower.elements import (
    SIDES,
    control_values,
    element_capacities,
    node_values,
    scaled_check_sides,
    triangle_sides,
)
from hingeline.lower.fieldcheck import _scaled_ratio

SQUARE6 = [[0, 0], [6, 0], [6, 6], [0, 6]]
OPENING = [[2.5, 2.5], [3.5, 2.5], [3.5, 3.5], [2.5, 3.5]]
RECT = [[0, 0], [6, 0], [6, 4], [0, 4]]
ONE_FREE = ["simple", "simple", "free", "simple"]


def slab(outline, edges, hogging, opening=None, nodes=150):
    hole = f'[[slab.opening]]\npolygon = {opening}' if opening else ""
    return hingeline.model_from_toml(f"""
[slab]
outline = {outline}
edges = {edges!r}
{hole}
[capacity]
sagging = 20.0
hogging = {hogging}
[[load]]
type = "area"
value = 10.0
[analysis]
nodes = {nodes}
""".replace("'", '"'))


# (outline, edges, hogging, opening, nodes, largest gap). The gap limits are this
# project's targets for slabs without top bars beside openings and free edges, where the bound
# used to be exactly 0: 5 % at 450 nodes (measured 2.0, 2.3 and 3.1 % for the three slabs in
# benchmarks/lower_no_top_bars.py); two of them run at 150 nodes to keep the suite short, with
# limits just above the gaps measured there (4.2 and 5.0 %).
SIX = {
    "square, hogging 0": (SQUARE6, "simple", 0.0, None, 150, 0.06),
    "opening, hogging 0": (SQUARE6, "simple", 0.0, OPENING, 150, 0.06),
    "free edge, hogging 0": (RECT, ONE_FREE, 0.0, None, 450, 0.05),
    "opening, hogging 20": (SQUARE6, "simple", 20.0, OPENING, 150, None),
    "opening, hogging 4": (SQUARE6, "simple", 4.0, OPENING, 150, None),
    "opening, hogging 1": (SQUARE6, "simple", 1.0, OPENING, 150, None),
}


@pytest.mark.parametrize("name", SIX)
def test_six_slabs_bracket(name):
    outline, edges, hogging, opening, nodes, gap = SIX[name]
    r = hingeline.solve(slab(outline, edges, hogging, opening, nodes))
    lower = r.lower_bound.load_factor
    assert lower is not None and 0.0 < lower <= r.load_factor, r.warnings
    if gap is not None:
        assert r.gap <= gap


def test_simply_supported_square_without_top_bars_brackets_half_fox():
    # Exact 42.851 / 2 = 21.43 m/L^2: Fox, Phil. Trans. R. Soc. A 277 (1974) gives 42.851 for the
    # clamped square with m' = m; over any mechanism vanishing on a fully supported outline the
    # length-weighted sagging and hogging rotations are equal (edge hinges included), so m' = 0
    # on simple supports dissipates half as much on every mechanism. Both bounds must bracket it.
    exact = 42.851 / 2
    r = hingeline.solve(model(SQUARE, "simple", hogging=0.0))
    assert r.load_factor >= exact * (1 - 1e-3)
    assert 0.95 * exact <= r.lower_bound.load_factor <= exact   # 0.95: project target at 150 nodes


def _solved_free_edge_field():
    m = slab(RECT, ONE_FREE, 0.0)
    size = mesh_size_for(m, 150)
    d = build_domain(m, margin=size)
    mesh = mesh_domain(d, m, size)
    sol = solve_lower_bound(m, d, mesh.nodes, mesh.triangles)
    tri = slab_triangles(mesh.nodes, mesh.triangles, d)
    sd = triangle_sides(mesh.nodes, tri, d, m)
    cap = element_capacities(m, mesh.nodes[tri].mean(axis=1))
    return m, d, sol, sd, scaled_check_sides(sd, cap)


def test_recheck_rejects_yield_violations_near_a_free_edge():
    # The solved field of the 6 x 4 slab with a free edge and no top bars re-checks (ratio <= 1).
    # Each change below breaks "moment tensor positive semi-definite" (the hogging branch of
    # Nielsen's criterion with zero hogging capacity; Nielsen & Hoang, Limit Analysis and
    # Concrete Plasticity) somewhere in a triangle along the free edge, and the re-check must
    # then report a yield ratio above 1.
    m, d, sol, sd, scaled = _solved_free_edge_field()
    good = check_field(m, d, sol.field, sol.load_factor)
    assert good.yield_ratio <= 1.0
    tau = int(np.flatnonzero(scaled >= 0)[0])
    s = scaled[tau]
    i, j = SIDES[sd.local[s]]
    v = 3 - i - j
    n, t = sd.normal[s], sd.tangent[s]

    def changed(node, tensor):
        moments = sol.field.moments.copy()
        moments[tau, node] += tensor
        return check_field(m, d, MomentField(sol.field.nodes, sol.field.triangles, moments), sol.load_factor)

    # A twisting moment m_nt on the free edge itself (at its mid-point node): M = [[m_t, m_nt], [m_nt, 0]].
    twist = 0.01 * np.array([2 * n[0] * t[0], 2 * n[1] * t[1], n[0] * t[1] + n[1] * t[0]]) / 2
    assert changed(3 + sd.local[s], twist).yield_ratio > 1.0
    # A hogging moment normal to the edge at the opposite vertex (m_n < 0 inside the triangle).
    assert changed(v, -0.01 * np.array([n[0] ** 2, n[1] ** 2, n[0] * n[1]])).yield_ratio > 1.0
    # A hogging moment along the edge at one of its ends (m_t < 0 on the free edge).
    assert changed(i, -0.01 * np.array([t[0] ** 2, t[1] ** 2, t[0] * t[1]])).yield_ratio > 1.0


def _bernstein(bary):
    """(q, 6) quadratic Bernstein basis (vertices, then sides (0,1), (1,2), (2,0)) at barycentric points (q, 3)."""
    return np.concatenate([bary**2, 2 * bary[:, SIDES[:, 0]] * bary[:, SIDES[:, 1]]], axis=1)


@pytest.mark.parametrize("seed", range(6))
def test_scaled_check_bounds_the_field_everywhere(seed):
    # What the re-check proves in a triangle along a free edge: h = _scaled_ratio(...) (kNm/m)
    # such that M + h I is positive semi-definite at every point of the triangle; checked on a
    # dense grid of points (no source needed: the definition of positive semi-definite, sampled).
    # Fields: M = m_t t t^T + lambda L (t n^T + n t^T) + c lambda^2 n n^T, lambda the barycentric
    # coordinate of the vertex opposite the free side, L linear, m_t quadratic: M is positive
    # semi-definite where the scaled tensor [[m_t, L], [L, c]] is (determinant c m_t - L^2);
    # and raw random quadratic fields.
    rng = np.random.default_rng(seed)
    p = rng.uniform(0, 1, (3, 2))
    u, w = p[1] - p[0], p[2] - p[0]
    if u[0] * w[1] - u[1] * w[0] < 0:
        p = p[[0, 2, 1]]
    local = seed % 3
    i, j = SIDES[local]
    v = 3 - i - j
    t = (p[j] - p[i]) / np.linalg.norm(p[j] - p[i])
    n = np.array([t[1], -t[0]])                  # outward for a counter-clockwise triangle
    g = np.linspace(0, 1, 41)
    bary = np.array([(x, y, 1 - x - y) for x in g for y in g if x + y <= 1 + 1e-12])
    basis = _bernstein(bary)
    tt, nn, tn = np.outer(t, t), np.outer(n, n), np.outer(t, n) + np.outer(n, t)
    c = rng.uniform(0.5, 2.0)

    def squared(L):
        """Control values of L^2 / c."""
        return np.concatenate([L**2, L[SIDES[:, 0]] * L[SIDES[:, 1]]]) / c

    def structured(L, m_t, rho=0.0):
        """Control values of the field above (L: vertex values of L; m_t: control values), plus
        rho at the control of m_n one step off the free side at its start (which it has 0)."""
        m_nt = np.zeros(6)
        m_nt[[side_control(i, v), side_control(j, v), v]] = L[i] / 2, L[j] / 2, L[v]
        m_n = np.zeros(6)
        m_n[[v, side_control(i, v)]] = c, rho
        tensors = m_t[:, None, None] * tt + m_nt[:, None, None] * tn + m_n[:, None, None] * nn
        return np.stack([tensors[:, 0, 0], tensors[:, 1, 1], tensors[:, 0, 1]], axis=1)

    L = rng.normal(size=3)
    spread = np.max((L[SIDES[:, 0]] - L[SIDES[:, 1]]) ** 2) / (4 * c)
    same = np.full(3, L[0])
    cases = {
        "inside": structured(L, squared(L) + spread + 0.01),
        # L constant: N is constant, equal to M at the opposite vertex, so h must reach -min eig(N).
        "outside": structured(same, squared(same) - 0.05),
        # m_t low on the sides' control values only: det N < 0 at the mid-points of the sides.
        "sides low": structured(same, L[0] ** 2 / c * np.r_[1.05, 1.05, 1.05, 0.8, 0.8, 0.8]),
        "off structure": structured(L, squared(L) + spread + 0.01, rho=-0.05),
        "random": rng.normal(size=(6, 3)),
    }
    for name, ctrl in cases.items():
        h = _scaled_ratio(ctrl[None], np.array([local]), n[None], t[None])[0]
        field = basis @ ctrl                        # (q, 3) moments at the points
        lowest = 0.5 * (field[:, 0] + field[:, 1]) - np.hypot(0.5 * (field[:, 0] - field[:, 1]), field[:, 2])
        assert np.all(lowest + h >= -1e-9 * max(1.0, h)), name
        if name == "inside":
            # Inside the criterion everywhere and proven so by the scaled check (h = 0), although
            # M's own control values one step off the side are outside it (m_n = 0 < |m_nt| there).
            assert h <= 1e-12 and lowest.min() >= -1e-12
        elif name != "random":
            assert lowest.min() < 0 and h > 0, name
        # The node values the field stores convert to the same control values.
        assert np.allclose(control_values(node_values(ctrl[None]))[0], ctrl)



def side_control(a, b):
    """Index of the control value on the side joining vertices a and b."""
    return 3 + next(k for k, side in enumerate(SIDES) if set(side) == {a, b})


def _scaled_slab(s, outline, edges, opening, nodes):
    """The slab of `slab` drawn s times larger in plan, with its capacities times s^2."""
    big = [[s * x, s * y] for x, y in outline]
    hole = [[s * x, s * y] for x, y in opening]
    m = slab(big, edges, 0.0, hole, nodes)
    cap = m.capacity
    return dataclasses.replace(m, capacity=dataclasses.replace(
        cap, sagging=tuple(s * s * v for v in cap.sagging), hogging=tuple(s * s * v for v in cap.hogging)))


def test_lower_bound_without_top_bars_is_proven_at_any_size():
    # Work equation of any mechanism of a slab drawn s times larger in plan: internal work
    # sum m l theta grows by s^2 m (l by s, theta by 1 / s for the same deflection), external
    # work lambda q integral w dA by s^2 at equal q (area by s^2). So the load factor is
    # unchanged when the moments scale by s^2 at equal area loads, for both bounds. Without top
    # bars the field's zero-capacity branch has no margin in the cone program; at either size
    # the field must re-check inside the criterion itself (ratio <= 1, not a bound scaled down
    # by the ratio) and give the same lower bound (1e-6: the solver's tolerance is about 1e-8).
    outline, edges, _, opening, nodes, _ = SIX["opening, hogging 0"]
    small = hingeline.solve(slab(outline, edges, 0.0, opening, nodes)).lower_bound
    large = hingeline.solve(_scaled_slab(10.0, outline, edges, opening, nodes)).lower_bound
    for lb in (small, large):
        assert lb.check.in_equilibrium and lb.check.yield_ratio <= 1.0, lb.check
        assert lb.load_factor == lb.solved
    assert large.load_factor == pytest.approx(small.load_factor, rel=1e-6)
