"""Lower-bound stage: the cone program for a statically admissible moment field on
equilibrium finite elements (elements.py), its assembly and its solve with Clarabel.

By the lower-bound theorem, a moment field that is in equilibrium with lambda times the
scaled loads (plus the held loads) and nowhere outside the yield criterion proves that
the slab carries lambda. We look for the best such field on the triangles of the analysis
mesh that lie in the slab (elements.py holds the element definitions), as a cone program:

- Per triangle, m_x, m_y and m_xy are quadratic, each held as its 6 Bernstein-Bezier
  control values (3 at the vertices, 3 on the sides). Unknowns: 18 per triangle, and lambda.
- Equilibrium in each triangle: m_x,xx + 2 m_xy,xy + m_y,yy + p = 0 (constant there).
- Across every inner side: the normal moment m_n is continuous (its 3 control values agree)
  and the Kirchhoff shear V_n = Q_n + dm_nt/dt balances (at both ends; it is linear), with
  a line load q: V_n(1) + V_n(2) = q, each in the side's own outward frame.
- At every node not on a support: the corner forces from the jumps of m_nt balance,
  sum over triangles of (m_nt of the side arriving - m_nt of the side leaving) = -P.
  Nodes on supported sides and the bearing points of pinned columns (their centres; the
  footprint is slab) take the unbalanced corner force as a free concentrated reaction.
- Boundary sides: free edges and openings m_n = 0 and V_n = q; simply supported edges and
  pinned faces of columns and walls m_n = 0; continuous edges and monolithic faces
  -fixity m'_n <= m_n <= 0 (hogging restraint only, as the upper bound assumes; m_n = 0
  where there are no top bars).
- Yield: the Johansen/Nielsen criterion in the bar axes, (m_p1 - m_1)(m_p2 - m_2) >= m_12^2
  and (m_n1 + m_1)(m_n2 + m_2) >= m_12^2 with both factors >= 0, imposed at the 6 control
  values of each triangle: a quadratic triangle lies in the convex hull of its control
  values and the criterion is convex, so the field is admissible everywhere, not only
  where checked. Each branch is a rotated quadratic cone (cones.py, which also holds the
  forms used where there are no top bars).

Solver: the problem is a second-order cone program, solved by Clarabel's interior point
method. We first wrote it as the linear program the literature uses (the circle replaced by
an inscribed 32-gon) for HiGHS: the clamped square at "normal" took 463 s in HiGHS's
interior point (dual simplex and PDLP did not finish the coarse mesh in 120 s), against
1.4 s for the cone program in Clarabel, which also drops the polygon's loss (1.0 % -> 0.4 %
below Fox's value on that case). The answer is re-checked afterwards (fieldcheck.py), with
the exact criterion, from the field alone.

Signs: w and loads positive downward; sagging moments positive (tension at the bottom).
Units: m, kN, kNm/m, kPa.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.errors`; never `hingeline.upper`.
References: Krabbenhoft and Damkilde, Computers & Structures 80 (2002), lower-bound limit
analysis of slabs with quadratic equilibrium elements; Nielsen and Hoang, Limit Analysis and
Concrete Plasticity (3rd ed., 2011), for the yield criterion.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass

import clarabel
import numpy as np
from scipy import sparse

from ..geometry.domain import HOGGING_SUPPORT, SUPPORTED, Domain
from ..model import Model
from ..model.criterion import normal_capacity
from .cones import lift_into_cones, tidy_controls, yield_conditions
from .elements import (
    FREE_KINDS,
    PAIR,
    SIDES,
    ZERO_MN_KINDS,
    MomentField,
    Sides,
    bearing_nodes,
    element_capacities,
    element_loads,
    gradients,
    hessians,
    kirchhoff_coeffs,
    no_top_bars,
    node_values,
    normal_moment_coeffs,
    point_loads_at_nodes,
    slab_triangles,
    triangle_sides,
    twist_coeffs,
    vertex_gradients,
)

log = logging.getLogger(__name__)

# Clarabel settings for a first solve and for solves again when the field fails its re-check.
# Measured on random slabs without top bars at "coarse": about half ended "AlmostSolved" with
# default settings, some with equilibrium residuals of 1e-5 to 1e-3 that fail the re-check; a
# larger static regularisation, or tighter iterative refinement, solved most of them (the
# first loses about 1e-5 of the load factor).
SOLVER_SETTINGS = (
    {},
    {"static_regularization_constant": 1e-7},
    {"iterative_refinement_reltol": 1e-14, "iterative_refinement_abstol": 1e-14, "iterative_refinement_max_iter": 20},
)
# Statuses whose iterate is not a moment field (a certificate of infeasibility instead).
NO_FIELD = ("PrimalInfeasible", "DualInfeasible", "AlmostPrimalInfeasible", "AlmostDualInfeasible")


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
    Columns: 18 control values per triangle (control k, component c at 18 t + 3 k + c), lambda.
    sides: the triangles' sides; cap: (t, 4) capacities per triangle (kNm/m)."""

    eq: sparse.csr_matrix
    eq_rhs: np.ndarray
    ineq: sparse.csr_matrix
    ineq_rhs: np.ndarray
    cone: sparse.csr_matrix
    cone_rhs: np.ndarray
    lam: int
    sides: Sides
    cap: np.ndarray


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


def assemble(model: Model, domain: Domain, nodes: np.ndarray, tri: np.ndarray) -> ConeProgram:
    """The lower-bound problem on the slab triangles tri (t, 3), counter-clockwise."""
    t = len(tri)
    ncol = 18 * t + 1
    lam = 18 * t
    p = nodes[tri]
    g, _ = gradients(p)
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

    # Boundary sides. Continuous edges and monolithic faces: -fixity m'_n <= m_n <= 0. The
    # support restrains hogging only, as in the upper bound, where rotation the other way costs
    # nothing; without top bars that is m_n = 0, written as such.
    cap = element_capacities(model, centroids)
    no_top = no_top_bars(cap)[sd.tri]
    held_kind = np.isin(sd.kind, HOGGING_SUPPORT)
    free = np.flatnonzero(np.isin(sd.kind, FREE_KINDS))
    zero_mn = np.flatnonzero(np.isin(sd.kind, ZERO_MN_KINDS) | (held_kind & no_top))
    for k in range(3):
        c = 18 * sd.tri[zero_mn, None] + 3 * ctrl[zero_mn, k, None] + np.arange(3)
        rows.add(c, mn[zero_mn], 0.0)
    for vk in (v_start, v_end):
        cols = np.concatenate([all18[free], np.full((len(free), 1), lam)], axis=1)
        vals = np.concatenate([vk[free].reshape(-1, 18), -q[free, 0, None]], axis=1)
        rows.add(cols, vals, q[free, 1])
    held = np.flatnonzero(held_kind & ~no_top)
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
    supported |= bearing_nodes(domain.bearings, nodes, 1e-7 * domain.scale)
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

    cone, cone_rhs = yield_conditions(model, sd, cap, ncol, rows, ineq)
    eq, eq_rhs = rows.matrix()
    iq, iq_rhs = ineq.matrix()
    return ConeProgram(eq, eq_rhs, iq, iq_rhs, cone, cone_rhs, lam, sd, cap)


def solve_lower_bound(model: Model, domain: Domain, nodes: np.ndarray, triangles: np.ndarray,
                      attempt: int = 0, load_unit: float = 1.0) -> LowerBoundSolution:
    """Best statically admissible field on the slab triangles of the mesh (nodes, triangles),
    solved with SOLVER_SETTINGS[attempt].

    load_unit: a load factor of the size of the answer (the upper bound's, when known); the
    solver's unknown is lambda / load_unit, of order one like the moments. In units where
    the loads sum to about 1 and the capacities are about 1 (model/scaling.py), lambda itself
    is the collapse coefficient, 10 to 50: Clarabel's stopping tests, relative to the largest
    unknown, then left the moments accurate to only about 1e-8 of the capacities (6 m square,
    1 m opening, no top bars: equilibrium residual 5e-9, against 7e-11 with load_unit). It
    changes the numerics only: the field is re-checked on its own (fieldcheck.py)."""
    t0 = time.perf_counter()
    tri = slab_triangles(nodes, triangles, domain)
    prob = assemble(model, domain, nodes, tri)
    ncol = prob.lam + 1
    lam_row = sparse.csr_matrix(([-1.0], ([0], [prob.lam])), shape=(1, ncol))   # -lambda <= 0
    A = sparse.vstack([prob.eq, prob.ineq, lam_row, prob.cone]).tocsc()
    # lambda = load_unit * x[lam]: its column (the last) is multiplied by load_unit.
    A.data[A.indptr[prob.lam]:] *= load_unit
    b = np.concatenate([prob.eq_rhs, prob.ineq_rhs, [0.0], prob.cone_rhs])
    cones = [clarabel.ZeroConeT(prob.eq.shape[0]), clarabel.NonnegativeConeT(prob.ineq.shape[0] + 1)]
    cones += [clarabel.SecondOrderConeT(3)] * (prob.cone.shape[0] // 3)
    cost = np.zeros(ncol)
    cost[prob.lam] = -1.0
    settings = clarabel.DefaultSettings()
    settings.verbose = False
    # One thread: only a threaded linear solver would use more, and a parallel study runs one
    # worker process per core.
    if hasattr(settings, "max_threads"):
        settings.max_threads = 1
    for key, value in SOLVER_SETTINGS[attempt].items():
        setattr(settings, key, value)
    sol = clarabel.DefaultSolver(sparse.csc_matrix((ncol, ncol)), cost, A, b, cones, settings).solve()
    word = str(sol.status)
    log.info("lower bound: %d rows, %d columns, %s (attempt %d)", A.shape[0], ncol, word, attempt + 1)
    seconds = time.perf_counter() - t0
    # A field that is not "Solved" to full accuracy is kept: fieldcheck.py decides whether it holds.
    if word in NO_FIELD:
        return LowerBoundSolution(None, None, A.shape[0], ncol, seconds, word)
    x = np.asarray(sol.x)
    controls = tidy_controls(x[:prob.lam].reshape(len(tri), 6, 3), prob.sides, prob.cap)
    controls = lift_into_cones(controls, prob.sides, prob.cap)
    field = MomentField(nodes, tri, node_values(controls))
    return LowerBoundSolution(load_unit * float(x[prob.lam]), field, A.shape[0], ncol, seconds, word)
