"""Shared definitions of the lower bound's equilibrium elements: triangle geometry, the
quadratic moment field and its Bernstein-Bezier control values, capacities and loads per
triangle, the sides of the slab triangles in their own frames, point loads at nodes, the
coefficients of m_n, m_nt and the Kirchhoff shear V_n in terms of the control values, and
which sides and triangles get the special yield conditions used where there are no top bars
(zero-moment sides; triangles checked through the scaled tensor, see cones.py).

Per triangle, m_x, m_y and m_xy are quadratic, each held as its 6 Bernstein-Bezier control
values (3 at the vertices, 3 on the sides). A quadratic triangle lies in the convex hull of
its control values, which is what lets the yield criterion be checked at those 6 values.
The cone program (program.py) and the independent re-check of its answer (fieldcheck.py)
both build on these definitions.

Signs: w and loads positive downward; sagging moments positive (tension at the bottom).
Units: m, kN, kNm/m, kPa.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.errors`; never `hingeline.upper`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from ..errors import SolverError
from ..geometry.domain import (
    FACE_PINNED,
    FREE,
    HOGGING_SUPPORT,
    OPENING,
    SIMPLE,
    Domain,
    segment_distance,
)
from ..model import AreaLoad, LineLoad, Model, PointLoad

# Control points of a quadratic triangle: vertices 0, 1, 2 then sides (0,1), (1,2), (2,0).
SIDES = np.array([[0, 1], [1, 2], [2, 0]])
# Index of the control value of each vertex pair (i, j).
PAIR = np.array([[0, 3, 5], [3, 1, 4], [5, 4, 2]])


@dataclass(frozen=True, eq=False)
class MomentField:
    """A moment field, quadratic per triangle.

    nodes: (n, 2) in m; triangles: (t, 3) node indices, counter-clockwise.
    moments: (t, 6, 3) values of (m_x, m_y, m_xy) in kNm/m at the 3 vertices, then at the
        mid-points of sides (0,1), (1,2), (2,0) of each triangle (sagging positive).
    """

    nodes: np.ndarray
    triangles: np.ndarray
    moments: np.ndarray


def control_values(moments: np.ndarray) -> np.ndarray:
    """Bernstein-Bezier control values (t, 6, 3) from the node values of a MomentField:
    at a vertex the value itself, on a side 2 m_mid - (m_a + m_b) / 2."""
    c = moments.copy()
    for k, (i, j) in enumerate(SIDES):
        c[:, 3 + k] = 2.0 * moments[:, 3 + k] - 0.5 * (moments[:, i] + moments[:, j])
    return c


def node_values(controls: np.ndarray) -> np.ndarray:
    """Inverse of control_values."""
    m = controls.copy()
    for k, (i, j) in enumerate(SIDES):
        m[:, 3 + k] = 0.5 * controls[:, 3 + k] + 0.25 * (controls[:, i] + controls[:, j])
    return m


def twice_area(p: np.ndarray) -> np.ndarray:
    """(t,) twice the signed area (m^2, > 0 counter-clockwise) of triangles p (t, 3, 2)."""
    u, v = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
    return u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]


def slab_triangles(nodes: np.ndarray, triangles: np.ndarray, domain: Domain) -> np.ndarray:
    """The triangles of the analysis mesh that lie in the slab (not in fill), made
    counter-clockwise; the mesh follows every slab boundary, so each is wholly in or out."""
    c = nodes[triangles].mean(axis=1)
    tri = triangles[shapely.contains_xy(domain.slab, c[:, 0], c[:, 1])]
    p = nodes[tri]
    area2 = twice_area(p)
    tri[area2 < 0] = tri[area2 < 0][:, [0, 2, 1]]
    return tri


def bar_rotation(bar_angle_deg: float) -> np.ndarray:
    """(3, 3) matrix taking (m_x, m_y, m_xy) to (m_1, m_2, m_12) in the bar axes."""
    a = np.radians(bar_angle_deg)
    c, s = np.cos(a), np.sin(a)
    return np.array([[c * c, s * s, 2 * s * c],
                     [s * s, c * c, -2 * s * c],
                     [-s * c, s * c, c * c - s * s]])


def element_capacities(model: Model, centroids: np.ndarray) -> np.ndarray:
    """(t, 4): (m_p1, m_p2, m_n1, m_n2) in kNm/m of each triangle (the zone its centroid is in)."""
    cap = np.tile(np.r_[model.capacity.sagging, model.capacity.hogging], (len(centroids), 1)).astype(float)
    for zone in model.zones:
        inside = shapely.contains_xy(shapely.Polygon(zone.polygon), centroids[:, 0], centroids[:, 1])
        cap[inside] = np.r_[zone.sagging, zone.hogging]
    return cap


def element_loads(model: Model, domain: Domain, centroids: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(factored, held) area load in kPa on each triangle, from its centroid (patch
    boundaries are mesh lines, so a triangle is wholly in or out of every patch)."""
    pf, ph = np.zeros(len(centroids)), np.zeros(len(centroids))
    for load in model.loads:
        if not isinstance(load, AreaLoad):
            continue
        if load.region is None:
            inside = np.ones(len(centroids), bool)
        else:
            inside = shapely.contains_xy(shapely.Polygon(load.region), centroids[:, 0], centroids[:, 1])
        (pf if load.factored else ph)[inside] += load.value
    return pf, ph


@dataclass(frozen=True, eq=False)
class Sides:
    """Every side of every triangle, in its own outward frame.

    tri, local: (s,) triangle and local side index (0: vertices 0-1, 1: 1-2, 2: 2-0).
    a, b: (s,) global nodes at its start and end (counter-clockwise round the triangle).
    normal, tangent: (s, 2) outward unit normal and unit tangent from a to b; length: (s,) m.
    partner: (s,) index of the same side seen from the neighbouring triangle, -1 on the boundary.
    kind: (s,) boundary kind code (geometry.py) of boundary sides, -1 inside.
    fixity: (s,) hogging share of continuous edges (1 elsewhere).
    line_load: (s,) line load along the side, kN/m (factored, held) -> (s, 2).
    """

    tri: np.ndarray
    local: np.ndarray
    a: np.ndarray
    b: np.ndarray
    normal: np.ndarray
    tangent: np.ndarray
    length: np.ndarray
    partner: np.ndarray
    kind: np.ndarray
    fixity: np.ndarray
    line_load: np.ndarray


def triangle_sides(nodes: np.ndarray, tri: np.ndarray, domain: Domain, model: Model) -> Sides:
    """Sides of the slab triangles with their neighbours, boundary kinds and line loads."""
    t = len(tri)
    a = tri[:, SIDES[:, 0]].ravel()
    b = tri[:, SIDES[:, 1]].ravel()
    tri_of = np.repeat(np.arange(t), 3)
    local = np.tile(np.arange(3), t)
    d = nodes[b] - nodes[a]
    length = np.hypot(d[:, 0], d[:, 1])
    tangent = d / length[:, None]
    normal = np.stack([tangent[:, 1], -tangent[:, 0]], axis=1)  # right of travel = outward (CCW)

    key = np.minimum(a, b) * len(nodes) + np.maximum(a, b)
    order = np.argsort(key, kind="stable")
    ks = key[order]
    partner = np.full(len(a), -1)
    same = np.flatnonzero(ks[1:] == ks[:-1])
    partner[order[same]] = order[same + 1]
    partner[order[same + 1]] = order[same]

    kind = np.full(len(a), -1)
    fixity = np.ones(len(a))
    bnd = np.flatnonzero(partner < 0)
    if bnd.size:
        mid = 0.5 * (nodes[a[bnd]] + nodes[b[bnd]])
        dist = segment_distance(mid, domain.edges)
        near = dist.argmin(axis=1)
        if np.any(dist[np.arange(len(bnd)), near] > 1e-6 * domain.scale):
            raise SolverError("lower bound: a boundary side of the slab mesh lies on no slab edge (mesh and "
                              "domain disagree); report this model to the developers")
        kind[bnd] = domain.edge_kind[near]
        fixity[bnd] = domain.edge_fixity[near]

    line_load = np.zeros((len(a), 2))
    tol = 1e-7 * domain.scale
    for load in model.loads:
        if not isinstance(load, LineLoad):
            continue
        path = np.asarray(load.path, float)
        segs = np.stack([path[:-1], path[1:]], axis=1)
        on = (segment_distance(nodes[a], segs) <= tol) & (segment_distance(nodes[b], segs) <= tol)
        hit = on.any(axis=1)
        # An inner side is shared by two triangles: each takes half of the load in its V_n row
        # (the row adds both sides' shears, so the load is counted once).
        share = np.where(partner[hit] >= 0, 0.5, 1.0)
        line_load[hit, 0 if load.factored else 1] += share * load.value
    return Sides(tri_of, local, a, b, normal, tangent, length, partner, kind, fixity, line_load)


def gradients(p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Barycentric gradients g (t, 3, 2) in 1/m and areas (t,) in m^2 of CCW triangles p (t, 3, 2)."""
    area2 = twice_area(p)
    g = np.empty((len(p), 3, 2))
    for i in range(3):
        j, k = (i + 1) % 3, (i + 2) % 3
        g[:, i, 0] = (p[:, j, 1] - p[:, k, 1]) / area2
        g[:, i, 1] = (p[:, k, 0] - p[:, j, 0]) / area2
    return g, 0.5 * area2


def hessians(g: np.ndarray) -> np.ndarray:
    """(t, 6, 2, 2): second derivatives of each Bernstein basis function (control value k)."""
    h = np.empty((len(g), 6, 2, 2))
    for i in range(3):
        h[:, i] = 2.0 * g[:, i, :, None] * g[:, i, None, :]
    for k, (i, j) in enumerate(SIDES):
        gij = g[:, i, :, None] * g[:, j, None, :]
        h[:, 3 + k] = 2.0 * (gij + gij.transpose(0, 2, 1))
    return h


def vertex_gradients(g: np.ndarray) -> np.ndarray:
    """(t, 3, 6, 2): gradient at vertex v of each Bernstein basis function k.
    d(l_i^2) = 2 l_i g_i; d(2 l_i l_j) = 2 (l_j g_i + l_i g_j), at vertex v (l = e_v)."""
    out = np.zeros((len(g), 3, 6, 2))
    for v in range(3):
        out[:, v, v] = 2.0 * g[:, v]
        for k, (i, j) in enumerate(SIDES):
            if v == i:
                out[:, v, 3 + k] = 2.0 * g[:, j]
            elif v == j:
                out[:, v, 3 + k] = 2.0 * g[:, i]
    return out


def normal_moment_coeffs(n: np.ndarray) -> np.ndarray:
    """(s, 3): m_n = n^T M n as coefficients of (m_x, m_y, m_xy)."""
    return np.stack([n[:, 0] ** 2, n[:, 1] ** 2, 2 * n[:, 0] * n[:, 1]], axis=1)


def twist_coeffs(n: np.ndarray, t: np.ndarray) -> np.ndarray:
    """(s, 3): m_nt = n^T M t as coefficients of (m_x, m_y, m_xy)."""
    return np.stack([n[:, 0] * t[:, 0], n[:, 1] * t[:, 1], n[:, 0] * t[:, 1] + n[:, 1] * t[:, 0]], axis=1)


def kirchhoff_coeffs(grad: np.ndarray, n: np.ndarray, t: np.ndarray) -> np.ndarray:
    """(s, 6, 3): V_n = Q.n + d(m_nt)/dt at a point where the basis gradients are grad (s, 6, 2),
    as coefficients of the (6, 3) control values. Q = (m_x,x + m_xy,y, m_xy,x + m_y,y)."""
    gx, gy = grad[..., 0], grad[..., 1]
    gt = gx * t[:, None, 0] + gy * t[:, None, 1]
    tw = twist_coeffs(n, t)
    return np.stack([n[:, None, 0] * gx + tw[:, None, 0] * gt,
                     n[:, None, 1] * gy + tw[:, None, 1] * gt,
                     n[:, None, 0] * gy + n[:, None, 1] * gx + tw[:, None, 2] * gt], axis=2)


def point_loads_at_nodes(model: Model, nodes: np.ndarray, tol: float) -> np.ndarray:
    """(n, 2) point loads (factored, held) in kN at each node; every point load sits on a node."""
    out = np.zeros((len(nodes), 2))
    for load in model.loads:
        if isinstance(load, PointLoad):
            d = np.hypot(*(nodes - np.asarray(load.at, float)).T)
            k = int(d.argmin())
            if d[k] > tol:
                raise SolverError(f"lower bound: point load {load.name} is not on a mesh node; report this model "
                                  "to the developers")
            out[k, 0 if load.factored else 1] += load.value
    return out


# Boundary kinds with free edges' conditions (m_n = 0, V_n = q), and all kinds with m_n = 0.
FREE_KINDS = (FREE, OPENING)
ZERO_MN_KINDS = (FREE, OPENING, SIMPLE, FACE_PINNED)


def no_top_bars(cap: np.ndarray) -> np.ndarray:
    """(t,) True where a triangle has no hogging capacity in either bar direction (cap (t, 4))."""
    return (cap[:, 2] == 0.0) & (cap[:, 3] == 0.0)


def zero_moment_sides(sd: Sides, cap: np.ndarray) -> np.ndarray:
    """(s,) True for boundary sides of triangles without top bars where m_n = 0: free edges,
    openings, simple supports and pinned faces, and also continuous edges and monolithic faces,
    whose restraint -fixity m'_n <= m_n <= 0 closes to m_n = 0 when m'_n = 0. There the
    hogging branch of the criterion (M positive semi-definite) leaves m_nt = 0 and m_t >= 0."""
    return np.isin(sd.kind, (*ZERO_MN_KINDS, *HOGGING_SUPPORT)) & no_top_bars(cap)[sd.tri]


def scaled_check_sides(sd: Sides, cap: np.ndarray) -> np.ndarray:
    """(t,) for each triangle the side (index into sd) whose scaled tensor is checked for
    yield instead of the moments themselves, or -1.

    Chosen: triangles without top bars whose only zero-moment side (zero_moment_sides) is a
    free edge or an opening side with no line load on it. There m_n and m_nt vanish on the
    side and V_n = m_n,n + 2 m_nt,t = 0 there, so m_n = O(lambda^2) and m_nt = O(lambda),
    lambda the barycentric coordinate of the opposite vertex: N = D^-1 M D^-1 with
    D = diag(1, lambda) in the side's (t, n) frame is a quadratic polynomial, and N positive
    semi-definite at its control values gives M positive semi-definite on the whole triangle.
    """
    t = len(cap)
    zero = zero_moment_sides(sd, cap)
    count = np.bincount(sd.tri[zero], minlength=t)
    free = zero & np.isin(sd.kind, FREE_KINDS) & np.all(sd.line_load == 0.0, axis=1)
    pick = np.flatnonzero(free & (count[sd.tri] == 1))
    out = np.full(t, -1)
    out[sd.tri[pick]] = pick
    return out


def scaled_controls(local: np.ndarray) -> tuple[np.ndarray, ...]:
    """Control indices (m,) for triangles checked on side `local` (m,) (0, 1, 2):
    i, j (its start and end vertices), v (the opposite vertex), ij (its own side control),
    iv, jv (the controls of the other two sides, one step off it)."""
    i, j = SIDES[local, 0], SIDES[local, 1]
    v = 3 - i - j
    return i, j, v, PAIR[i, j], PAIR[i, v], PAIR[j, v]
