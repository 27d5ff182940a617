"""Lower-bound stage: a statically admissible moment field from equilibrium finite elements.

By the lower-bound theorem, a moment field that is in equilibrium with lambda times the
factored loads (plus the held loads) and nowhere outside the yield criterion proves that
the slab carries lambda. We look for the best such field on the triangles of the analysis
mesh that lie in the slab, as a linear program solved with HiGHS:

- Per triangle, m_x, m_y and m_xy are quadratic, each held as its 6 Bernstein-Bezier
  control values (3 at the vertices, 3 on the sides). Unknowns: 18 per triangle, and lambda.
- Equilibrium in each triangle: m_x,xx + 2 m_xy,xy + m_y,yy + p = 0 (constant there).
- Across every inner side: the normal moment m_n is continuous (its 3 control values agree)
  and the Kirchhoff shear V_n = Q_n + dm_nt/dt balances (at both ends; it is linear), with
  a line load q: V_n(1) + V_n(2) = q, each in the side's own outward frame.
- At every node not on a support: the corner forces from the jumps of m_nt balance,
  sum over triangles of (m_nt of the side arriving - m_nt of the side leaving) = -P.
- Boundary sides: free edges and openings m_n = 0 and V_n = q; simply supported edges and
  pinned faces of columns and walls m_n = 0; continuous edges and monolithic faces
  -fixity m'_n <= m_n <= 0 (hogging restraint only, as the upper bound assumes).
- Yield: the Johansen/Nielsen criterion in the bar axes, (m_p1 - m_1)(m_p2 - m_2) >= m_12^2
  and (m_n1 + m_1)(m_n2 + m_2) >= m_12^2 with both factors >= 0, imposed at the 6 control
  values of each triangle: a quadratic triangle lies in the convex hull of its control
  values and the criterion is convex, so the field is admissible everywhere, not only
  where checked. Each branch is a rotated quadratic cone: with a, b the two factors,
  u = a + b >= |(a - b, 2 m_12)|. We impose u (1 - CONE_MARGIN) >= |(a - b, 2 m_12)|, a cone
  just inside the true one, so that the solver's tolerance cannot carry the field outside.

Solver: the problem is a second-order cone program, solved by Clarabel's interior point
method. We first wrote it as the linear program the literature uses (the circle replaced by
an inscribed 32-gon) for HiGHS: the clamped square at "normal" took 463 s in HiGHS's
interior point (dual simplex and PDLP did not finish the coarse mesh in 120 s), against
1.4 s for the cone program in Clarabel, which also drops the polygon's loss (1.0 % -> 0.4 %
below Fox's value on that case). The answer is re-checked afterwards (fieldcheck.py), with
the exact criterion, from the field alone.

Signs: w and loads positive downward; sagging moments positive (tension at the bottom).
Units: m, kN, kNm/m, kPa. References: Krabbenhoft and Damkilde, Computers & Structures 80
(2002), lower-bound limit analysis of slabs with quadratic equilibrium elements; Nielsen and
Hoang, Limit Analysis and Concrete Plasticity (3rd ed., 2011), for the yield criterion.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass

import clarabel
import numpy as np
import shapely
from scipy import sparse

from ..errors import SolverError
from ..geometry.domain import (
    FACE_PINNED,
    FREE,
    HOGGING_SUPPORT,
    OPENING,
    SIMPLE,
    SUPPORTED,
    Domain,
    segment_distance,
)
from ..model import AreaLoad, LineLoad, Model, PointLoad
from ..model.criterion import normal_capacity

log = logging.getLogger(__name__)

# Relative margin by which the imposed cone lies inside the true yield cone, so that
# solver tolerances (about 1e-8) cannot carry the field outside the true criterion.
CONE_MARGIN = 1e-6

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


def _gradients(p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
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


class _Rows:
    """Sparse rows A x (= or <=) rhs, collected as (row, col, value) triplets."""

    def __init__(self, ncol: int):
        self.ncol = ncol
        self.r, self.c, self.v, self.rhs = [], [], [], []
        self.n = 0

    def add(self, cols: np.ndarray, vals: np.ndarray, rhs) -> None:
        """cols, vals: (k, w) entries of k new rows; rhs: (k,) or a scalar."""
        k = len(cols)
        self.add_triplets(np.repeat(np.arange(k), cols.shape[1]), np.asarray(cols).ravel(),
                          np.asarray(vals, float).ravel(), np.broadcast_to(np.asarray(rhs, float), (k,)))

    def add_triplets(self, row: np.ndarray, col: np.ndarray, val: np.ndarray, rhs: np.ndarray) -> None:
        """len(rhs) new rows with entries (row, col, val), row counted from 0 for the first new row."""
        self.r.append(row + self.n)
        self.c.append(col)
        self.v.append(val)
        self.rhs.append(rhs)
        self.n += len(rhs)

    def matrix(self) -> tuple[sparse.csr_matrix, np.ndarray]:
        if not self.n:
            return sparse.csr_matrix((0, self.ncol)), np.zeros(0)
        a = sparse.csr_matrix((np.concatenate(self.v), (np.concatenate(self.r), np.concatenate(self.c))),
                              shape=(self.n, self.ncol))
        a.sum_duplicates()
        a.eliminate_zeros()
        return a, np.concatenate(self.rhs)


@dataclass(frozen=True, eq=False)
class ConeProgram:
    """maximise x[lam] subject to eq @ x = eq_rhs, ineq @ x <= ineq_rhs, x[lam] >= 0 and
    cone_rhs - cone @ x in a product of 3-dimensional second-order cones (u >= |(v, w)|).
    Columns: 18 control values per triangle (control k, component c at 18 t + 3 k + c), lambda."""

    eq: sparse.csr_matrix
    eq_rhs: np.ndarray
    ineq: sparse.csr_matrix
    ineq_rhs: np.ndarray
    cone: sparse.csr_matrix
    cone_rhs: np.ndarray
    lam: int


@dataclass(frozen=True, eq=False)
class LowerBoundSolution:
    """load_factor: the lower bound (None when no admissible field was found).
    field: the moment field (node values), or None. rows, cols: size of the cone program.
    seconds: time of assembly and solve. status: Clarabel's status in words."""

    load_factor: float | None
    field: MomentField | None
    rows: int
    cols: int
    seconds: float
    status: str


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


def assemble(model: Model, domain: Domain, nodes: np.ndarray, tri: np.ndarray) -> ConeProgram:
    """The lower-bound problem on the slab triangles tri (t, 3), counter-clockwise."""
    t = len(tri)
    ncol = 18 * t + 1
    lam = 18 * t
    p = nodes[tri]
    g, _ = _gradients(p)
    rows = _Rows(ncol)
    ineq = _Rows(ncol)
    centroids = p.mean(axis=1)
    pf, ph = element_loads(model, domain, centroids)

    # Equilibrium: sum_k H_k:(m_x, 2 m_xy, m_y) + lambda pf + ph = 0.
    h = hessians(g)
    coef = np.stack([h[:, :, 0, 0], h[:, :, 1, 1], 2.0 * h[:, :, 0, 1]], axis=2).reshape(t, 18)
    cols = np.concatenate([18 * np.arange(t)[:, None] + np.arange(18), np.full((t, 1), lam)], axis=1)
    rows.add(cols, np.concatenate([coef, pf[:, None]], axis=1), -ph)

    sd = triangle_sides(nodes, tri, domain, model)
    i_loc, j_loc = SIDES[sd.local, 0], SIDES[sd.local, 1]
    ctrl = np.stack([i_loc, PAIR[i_loc, j_loc], j_loc], axis=1)        # (s, 3) control values along the side
    mn = normal_moment_coeffs(sd.normal)                               # (s, 3)
    vg = vertex_gradients(g)                                           # (t, 3, 6, 2)
    v_start = kirchhoff_coeffs(vg[sd.tri, i_loc], sd.normal, sd.tangent)   # (s, 6, 3)
    v_end = kirchhoff_coeffs(vg[sd.tri, j_loc], sd.normal, sd.tangent)
    all18 = 18 * sd.tri[:, None] + np.arange(18)                          # (s, 18)

    # Inner sides, once each (s < partner): m_n control values agree, V_n balance at both ends.
    inner = np.flatnonzero(sd.partner > np.arange(len(sd.tri)))
    o = sd.partner[inner]
    for k in range(3):
        # The partner runs the other way: its control k is ours 2 - k.
        c1 = 18 * sd.tri[inner, None] + 3 * ctrl[inner, k, None] + np.arange(3)
        c2 = 18 * sd.tri[o, None] + 3 * ctrl[o, 2 - k, None] + np.arange(3)
        rows.add(np.concatenate([c1, c2], axis=1), np.concatenate([mn[inner], -mn[o]], axis=1), 0.0)
    q = sd.line_load
    for mine, theirs in ((v_start, v_end), (v_end, v_start)):
        # Our start is the partner's end.
        qf = q[inner, 0] + q[o, 0]
        qh = q[inner, 1] + q[o, 1]
        cols = np.concatenate([all18[inner], all18[o], np.full((len(inner), 1), lam)], axis=1)
        vals = np.concatenate([mine[inner].reshape(-1, 18), theirs[o].reshape(-1, 18), -qf[:, None]], axis=1)
        rows.add(cols, vals, qh)

    # Boundary sides.
    free = np.flatnonzero(np.isin(sd.kind, (FREE, OPENING)))
    zero_mn = np.flatnonzero(np.isin(sd.kind, (FREE, OPENING, SIMPLE, FACE_PINNED)))
    for k in range(3):
        c = 18 * sd.tri[zero_mn, None] + 3 * ctrl[zero_mn, k, None] + np.arange(3)
        rows.add(c, mn[zero_mn], 0.0)
    for vk in (v_start, v_end):
        cols = np.concatenate([all18[free], np.full((len(free), 1), lam)], axis=1)
        vals = np.concatenate([vk[free].reshape(-1, 18), -q[free, 0, None]], axis=1)
        rows.add(cols, vals, q[free, 1])
    # Continuous edges and monolithic faces: -fixity m'_n <= m_n <= 0. The support restrains
    # hogging only, as in the upper bound, where rotation the other way costs nothing.
    cap = element_capacities(model, centroids)
    held = np.flatnonzero(np.isin(sd.kind, HOGGING_SUPPORT))
    cap_held = cap[sd.tri[held]]
    hog = normal_capacity((cap_held[:, 2], cap_held[:, 3]), model.capacity.bar_angle, sd.normal[held])
    for k in range(3):
        c = 18 * sd.tri[held, None] + 3 * ctrl[held, k, None] + np.arange(3)
        ineq.add(c, -mn[held], sd.fixity[held] * hog)
        ineq.add(c, mn[held], 0.0)

    # Corner forces at nodes off the supports: sum of (m_nt arriving - m_nt leaving) = -P.
    supported = np.zeros(len(nodes), bool)
    sup = np.isin(sd.kind, SUPPORTED)
    supported[sd.a[sup]] = supported[sd.b[sup]] = True
    tw = twist_coeffs(sd.normal, sd.tangent)                         # (s, 3)
    # Side s arrives at its end node b (control j_loc) and leaves its start node a (control i_loc).
    node = np.concatenate([sd.b, sd.a])
    cols = np.concatenate([18 * sd.tri[:, None] + 3 * j_loc[:, None] + np.arange(3),
                           18 * sd.tri[:, None] + 3 * i_loc[:, None] + np.arange(3)])
    vals = np.concatenate([tw, -tw])
    keep = ~supported[node]
    used = np.unique(node[keep])
    row_of = np.full(len(nodes), -1)
    row_of[used] = np.arange(len(used))
    pts = point_loads_at_nodes(model, nodes, 1e-7 * domain.scale)
    rows.add_triplets(np.concatenate([np.repeat(row_of[node[keep]], 3), np.arange(len(used))]),
                      np.concatenate([cols[keep].ravel(), np.full(len(used), lam)]),
                      np.concatenate([vals[keep].ravel(), pts[used, 0]]), -pts[used, 1])

    # Yield at every control value: per branch (u, v, w) = const + K (m_1, m_2, m_12) in a cone,
    # positive branch a = m_p1 - m_1, b = m_p2 - m_2; negative a = m_n1 + m_1, b = m_n2 + m_2.
    R = bar_rotation(model.capacity.bar_angle)                       # (m1, m2, m12) = R m
    npts = 6 * t
    capp = np.repeat(cap, 6, axis=0)                                 # (6t, 4)
    shrink = np.array([1.0 - CONE_MARGIN, 1.0, 1.0])
    blocks, rhs = [], []
    for sign, c1, c2 in ((-1.0, 0, 1), (1.0, 2, 3)):
        K = shrink[:, None] * (np.array([[sign, sign, 0.0], [sign, -sign, 0.0], [0.0, 0.0, 2.0]]) @ R)
        const = shrink * np.stack([capp[:, c1] + capp[:, c2], capp[:, c1] - capp[:, c2], np.zeros(npts)], axis=1)
        r = np.repeat(np.arange(3 * npts), 3)
        c = np.tile(np.arange(3), 3 * npts) + 3 * np.repeat(np.arange(npts), 9)
        # The solver's form is s = rhs - A x in the cone, so A = -K.
        blocks.append(sparse.csr_matrix((np.tile(-K.ravel(), npts), (r, c)), shape=(3 * npts, ncol)))
        rhs.append(const.ravel())
    eq, eq_rhs = rows.matrix()
    iq, iq_rhs = ineq.matrix()
    return ConeProgram(eq, eq_rhs, iq, iq_rhs, sparse.vstack(blocks).tocsr(), np.concatenate(rhs), lam)


def solve_lower_bound(model: Model, domain: Domain, nodes: np.ndarray, triangles: np.ndarray) -> LowerBoundSolution:
    """Best statically admissible field on the slab triangles of the mesh (nodes, triangles)."""
    t0 = time.perf_counter()
    tri = slab_triangles(nodes, triangles, domain)
    prob = assemble(model, domain, nodes, tri)
    ncol = prob.lam + 1
    lam_row = sparse.csr_matrix(([-1.0], ([0], [prob.lam])), shape=(1, ncol))   # -lambda <= 0
    A = sparse.vstack([prob.eq, prob.ineq, lam_row, prob.cone]).tocsc()
    b = np.concatenate([prob.eq_rhs, prob.ineq_rhs, [0.0], prob.cone_rhs])
    cones = [clarabel.ZeroConeT(prob.eq.shape[0]), clarabel.NonnegativeConeT(prob.ineq.shape[0] + 1)]
    cones += [clarabel.SecondOrderConeT(3)] * (prob.cone.shape[0] // 3)
    cost = np.zeros(ncol)
    cost[prob.lam] = -1.0
    settings = clarabel.DefaultSettings()
    settings.verbose = False
    solver = clarabel.DefaultSolver(sparse.csc_matrix((ncol, ncol)), cost, A, b, cones, settings)
    sol = solver.solve()
    seconds = time.perf_counter() - t0
    word = str(sol.status)
    log.info("lower bound: %d rows, %d columns, %s, %.2f s", A.shape[0], ncol, word, seconds)
    # "AlmostSolved" (reduced accuracy) is kept: fieldcheck.py decides whether the field holds.
    if word not in ("Solved", "AlmostSolved"):
        return LowerBoundSolution(None, None, A.shape[0], ncol, seconds, word)
    x = np.asarray(sol.x)
    controls = x[:prob.lam].reshape(len(tri), 6, 3)
    field = MomentField(nodes, tri, node_values(controls))
    return LowerBoundSolution(float(x[prob.lam]), field, A.shape[0], ncol, seconds, word)
