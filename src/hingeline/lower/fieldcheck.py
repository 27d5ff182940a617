"""Re-check of a lower-bound moment field, from the field and the model alone.

The field is re-read as plain polynomials (each component of each triangle fitted
exactly through its 6 node values as a + b x + c y + d x^2 + e xy + f y^2), not
through the control values the solver used, and every condition of static
admissibility is evaluated at points:

- equilibrium in each triangle, m_x,xx + 2 m_xy,xy + m_y,yy + p (kPa);
- jumps of the normal moment m_n (kNm/m) and of the Kirchhoff shear
  V_n = Q_n + dm_nt/dt (kN/m, less any line load) at 5 points of every inner side;
- boundary conditions at 5 points of every boundary side (free: m_n = 0, V_n = q;
  simple and pinned faces: m_n = 0; continuous and monolithic faces:
  -fixity m'_n <= m_n <= 0);
- corner forces (kN) at every node off the supports (supported sides and the bearing points of
  pinned columns, taken from the model's columns, not from the solver's rows);
- the total load the field carries (area loads on the triangles, line loads on their sides,
  point loads at their nodes) against the loads of the model on the slab (shapely);
- the exact yield criterion (Nielsen's, in the bar axes) as a ratio: the smallest s with
  the field inside s times the capacities, at the control values (which bound the field)
  and at 10 points of each triangle (a barycentric grid of step 1/3, corners included).
  In triangles along a free edge without top bars (elements.scaled_check_sides) the
  hogging branch is proven instead on N = D^-1 M D^-1, D = diag(1, lambda) in the edge's
  (t, n) frame, lambda the barycentric coordinate of the opposite vertex: M is split into
  D N D, N quadratic, and a remainder R made of the control values that the structure
  requires to vanish (m_n and m_nt on the edge, m_n one step off it). N + s eps I positive
  semi-definite at its control values gives M + (s eps + |R|) I positive semi-definite on
  the whole triangle (D^2 <= I, |R| bounded by its largest control value), eps being the
  floored hogging capacity; that sum over eps is the ratio reported there.

Units: m, kN, kNm/m, kPa; sagging positive.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from ..geometry.domain import HOGGING_SUPPORT, SUPPORTED, Domain
from ..model import AreaLoad, LineLoad, Model
from ..model.criterion import normal_capacity
from .elements import (
    FREE_KINDS,
    SIDES,
    ZERO_MN_KINDS,
    MomentField,
    bar_rotation,
    bearing_nodes,
    control_values,
    element_capacities,
    element_loads,
    point_loads_at_nodes,
    scaled_check_sides,
    scaled_controls,
    triangle_sides,
    twice_area,
)

# Relative size of the residuals accepted as "in equilibrium": the solver's tolerance is
# about 1e-8 of the problem's scale.
EQUILIBRIUM_RTOL = 1e-6
# Smallest capacity used in the yield ratio, as a share of the largest capacity (kNm/m).
CAPACITY_FLOOR = 1e-8


@dataclass(frozen=True)
class FieldCheck:
    """Largest residuals of the field (absolute, in their units) and the largest yield ratio.

    equilibrium: kPa; moment_jump: kNm/m (jumps of m_n and boundary m_n); shear_jump: kN/m
    (jumps of V_n and free-edge V_n); corner: kN; load_total: kN (loads carried by the
    field's triangles, sides and nodes against the model's loads on the slab).
    relative: the largest of these, each divided by its scale (load intensity, capacity,
    capacity / element size, capacity, total load).
    yield_ratio: largest ratio at the control values (<= 1: inside the criterion everywhere;
        along free edges without top bars, the hogging branch through the scaled tensor);
    yield_ratio_points: largest ratio at 10 grid points of each triangle (<= yield_ratio).
    """

    equilibrium: float
    moment_jump: float
    shear_jump: float
    corner: float
    load_total: float
    relative: float
    yield_ratio: float
    yield_ratio_points: float

    @property
    def in_equilibrium(self) -> bool:
        return self.relative <= EQUILIBRIUM_RTOL


def _fit(p: np.ndarray, moments: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Monomial coefficients (t, 6, 3) of each component, in local coordinates
    (x - x0) / h, with x0 (t, 2) the centroid and h (t,) a size of each triangle."""
    x0 = p.mean(axis=1)
    h = np.sqrt(np.abs(twice_area(p)))
    mids = 0.5 * (p[:, SIDES[:, 0]] + p[:, SIDES[:, 1]])
    pts = (np.concatenate([p, mids], axis=1) - x0[:, None]) / h[:, None, None]
    V = _monomials(pts)
    return np.linalg.solve(V, moments), x0, h


def _monomials(xy: np.ndarray) -> np.ndarray:
    x, y = xy[..., 0], xy[..., 1]
    return np.stack([np.ones_like(x), x, y, x * x, x * y, y * y], axis=-1)


class _Poly:
    """Evaluate the fitted field and its derivatives at points given per triangle."""

    def __init__(self, field: MomentField):
        self.coef, self.x0, self.h = _fit(field.nodes[field.triangles], field.moments)

    def _local(self, tri, pts):
        return (pts - self.x0[tri]) / self.h[tri, None]

    def value(self, tri, pts):
        """(k, 3) moments at points pts (k, 2) of triangles tri (k,)."""
        return np.einsum("km,kmc->kc", _monomials(self._local(tri, pts)), self.coef[tri])

    def grad(self, tri, pts):
        """(k, 3, 2) gradient of each component."""
        x, y = self._local(tri, pts).T
        c = self.coef[tri]
        dx = c[:, 1] + 2 * c[:, 3] * x[:, None] + c[:, 4] * y[:, None]
        dy = c[:, 2] + c[:, 4] * x[:, None] + 2 * c[:, 5] * y[:, None]
        return np.stack([dx, dy], axis=2) / self.h[tri, None, None]

    def hessian(self):
        """(t, 3, 3): (xx, yy, xy) second derivatives of each component, constant per triangle."""
        c = self.coef
        return np.stack([2 * c[:, 3], 2 * c[:, 5], c[:, 4]], axis=2) / self.h[:, None, None] ** 2


def _mn(m, n):
    return m[:, 0] * n[:, 0] ** 2 + m[:, 1] * n[:, 1] ** 2 + 2 * m[:, 2] * n[:, 0] * n[:, 1]


def _mnt(m, n, t):
    return m[:, 0] * n[:, 0] * t[:, 0] + m[:, 1] * n[:, 1] * t[:, 1] + m[:, 2] * (n[:, 0] * t[:, 1] + n[:, 1] * t[:, 0])


def _kirchhoff(poly, tri, pts, n, t):
    g = poly.grad(tri, pts)                                   # (k, 3 components, 2)
    qx = g[:, 0, 0] + g[:, 2, 1]                              # m_x,x + m_xy,y
    qy = g[:, 2, 0] + g[:, 1, 1]                              # m_xy,x + m_y,y
    gt = np.einsum("kcd,kd->kc", g, t)                        # d/dt of each component
    dmnt = _mnt(gt, n, t)
    return qx * n[:, 0] + qy * n[:, 1] + dmnt


def normal_moments(field: MomentField, points: np.ndarray, normals: np.ndarray, tol: float) -> np.ndarray:
    """Normal moment m_n (kNm/m, sagging positive) of the field at `points` (k, 2), m, across
    lines of unit normal `normals` (k, 2); NaN where no triangle of the field is within tol (m).
    A point on a side of two triangles takes either: m_n is continuous across sides."""
    pts = np.asarray(points, float).reshape(-1, 2)
    out = np.full(len(pts), np.nan)
    if not len(pts) or not len(field.triangles):
        return out
    tris = shapely.polygons(field.nodes[field.triangles])
    hit, tri = shapely.STRtree(tris).query(shapely.points(pts), predicate="dwithin", distance=tol)
    hit, first = np.unique(hit, return_index=True)
    tri = tri[first]
    out[hit] = _mn(_Poly(field).value(tri, pts[hit]), np.asarray(normals, float).reshape(-1, 2)[hit])
    return out


def yield_ratio(m: np.ndarray, cap: np.ndarray, bar_angle: float, hogging: bool = True) -> np.ndarray:
    """Smallest s >= 0 with moments m (k, 3) inside s times the capacities cap (k, 4) =
    (m_p1, m_p2, m_n1, m_n2) under Nielsen's criterion; inf if no s does (e.g. hogging
    where there are no top bars). Found by bisection (the scaled sets are nested).
    hogging=False: the sagging branch alone."""
    m1, m2, m12 = (m @ bar_rotation(bar_angle).T).T

    def inside(s):
        a, b = s * cap[:, 0] - m1, s * cap[:, 1] - m2
        ok = (a >= 0) & (b >= 0) & (a * b >= m12**2)
        if not hogging:
            return ok
        c, d = s * cap[:, 2] + m1, s * cap[:, 3] + m2
        return ok & (c >= 0) & (d >= 0) & (c * d >= m12**2)

    lo, hi = np.zeros(len(m)), np.full(len(m), 1e6)
    ok0 = inside(lo)
    never = ~inside(hi)
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        good = inside(mid)
        hi = np.where(good, mid, hi)
        lo = np.where(good, lo, mid)
    return np.where(ok0, 0.0, np.where(never, np.inf, hi))


def _scaled_ratio(ctrl: np.ndarray, local: np.ndarray, n: np.ndarray, t: np.ndarray) -> np.ndarray:
    """(m,) the smallest h >= 0 (kNm/m) with M + h I positive semi-definite on each triangle,
    from its control values ctrl (m, 6, 3) through N = D^-1 M D^-1 on side `local` (m,) of
    outward normal n and tangent t (m, 2), as in the module docstring."""
    frame = np.stack([t, n], axis=2)                                  # columns t, n
    M = np.stack([np.stack([ctrl[..., 0], ctrl[..., 2]], -1), np.stack([ctrl[..., 2], ctrl[..., 1]], -1)], -2)
    tn = np.einsum("kai,kqab,kbj->kqij", frame, M, frame)             # (m, 6, 2, 2) in (t, n)
    m_t, m_nt, m_n = tn[..., 0, 0], tn[..., 0, 1], tn[..., 1, 1]
    r = np.arange(len(ctrl))
    i, j, v, ij, iv, jv = scaled_controls(local)
    r_nt, r_nn = np.zeros_like(m_nt), np.zeros_like(m_n)
    for k in (i, j, ij):
        r_nt[r, k], r_nn[r, k] = m_nt[r, k], m_n[r, k]
    for k in (iv, jv):
        r_nn[r, k] = m_n[r, k]
    remainder = np.abs(r_nn) / 2 + np.hypot(r_nn / 2, r_nt)          # spectral norm of R's control values
    lin = np.empty((len(ctrl), 3))                                   # m_nt / lambda at the vertices
    lin[r, i], lin[r, j], lin[r, v] = 2 * m_nt[r, iv], 2 * m_nt[r, jv], m_nt[r, v]
    n_nt = np.concatenate([lin, 0.5 * (lin[:, SIDES[:, 0]] + lin[:, SIDES[:, 1]])], axis=1)
    n_nn = m_n[r, v][:, None]
    low = 0.5 * (m_t + n_nn) - np.hypot(0.5 * (m_t - n_nn), n_nt)    # smallest eigenvalue of N
    return np.maximum(-low, 0.0).max(axis=1) + remainder.max(axis=1)


def check_field(model: Model, domain: Domain, field: MomentField, load_factor: float) -> FieldCheck:
    """Re-check `field` as statically admissible for `load_factor` times the scaled loads
    plus the held loads of `model`."""
    nodes, tri = field.nodes, field.triangles
    p = nodes[tri]
    poly = _Poly(field)
    centroids = p.mean(axis=1)
    pf, ph = element_loads(model, domain, centroids)
    H = poly.hessian()
    eq = H[:, 0, 0] + H[:, 1, 1] + 2 * H[:, 2, 2] + load_factor * pf + ph
    area = 0.5 * np.abs(twice_area(p))

    # The model's loads on the slab (kN), from shapely alone: they set the scale of the residuals
    # and are compared with what the field carries (a load missed by the mesh would show here).
    total, force = 0.0, 0.0
    for load in model.loads:
        scale = load_factor if load.factored else 1.0
        if isinstance(load, AreaLoad):
            region = domain.slab if load.region is None else shapely.Polygon(load.region).intersection(domain.slab)
            amount = load.value * region.area
        elif isinstance(load, LineLoad):
            amount = load.value * shapely.LineString(load.path).intersection(domain.slab).length
        else:
            amount = load.value if shapely.covers(domain.slab, shapely.Point(load.at)) else 0.0
        total += scale * amount
        force += scale * abs(amount)

    sd = triangle_sides(nodes, tri, domain, model)
    q = load_factor * sd.line_load[:, 0] + sd.line_load[:, 1]
    pts_load = point_loads_at_nodes(model, nodes, 1e-7 * domain.scale)
    in_mesh = np.zeros(len(nodes), bool)
    in_mesh[tri.ravel()] = True
    carried = (float(np.sum((load_factor * pf + ph) * area)) + float(np.sum(q * sd.length))
               + float(np.sum((load_factor * pts_load[:, 0] + pts_load[:, 1])[in_mesh])))
    f = np.linspace(0.0, 1.0, 5)
    k = len(sd.a)
    pts = nodes[sd.a][:, None] + f[None, :, None] * (nodes[sd.b] - nodes[sd.a])[:, None]   # (s, 5, 2)
    tri5 = np.repeat(sd.tri, 5)
    n5, t5 = np.repeat(sd.normal, 5, axis=0), np.repeat(sd.tangent, 5, axis=0)
    m5 = _mn(poly.value(tri5, pts.reshape(-1, 2)), n5).reshape(k, 5)
    v5 = _kirchhoff(poly, tri5, pts.reshape(-1, 2), n5, t5).reshape(k, 5)

    inner = np.flatnonzero(sd.partner > np.arange(k))
    o = sd.partner[inner]
    # The partner runs the other way: its point j is our point 4 - j.
    mj = [np.abs(m5[inner] - m5[o][:, ::-1]).ravel()]
    vj = [np.abs(v5[inner] + v5[o][:, ::-1] - (q[inner] + q[o])[:, None]).ravel()]
    zero_mn = np.isin(sd.kind, ZERO_MN_KINDS)
    mj.append(np.abs(m5[zero_mn]).ravel())
    free = np.isin(sd.kind, FREE_KINDS)
    vj.append(np.abs(v5[free] - q[free, None]).ravel())
    held = np.flatnonzero(np.isin(sd.kind, HOGGING_SUPPORT))
    cap_held = element_capacities(model, centroids)[sd.tri[held]]
    hog = normal_capacity((cap_held[:, 2], cap_held[:, 3]), model.capacity.bar_angle, sd.normal[held])
    mj.append(np.maximum(-sd.fixity[held, None] * hog[:, None] - m5[held], 0.0).ravel())
    mj.append(np.maximum(m5[held], 0.0).ravel())

    # Corner forces at nodes off the supports: sum of (m_nt arriving - m_nt leaving) + P = 0.
    supported = np.zeros(len(nodes), bool)
    sup = np.isin(sd.kind, SUPPORTED)
    supported[sd.a[sup]] = supported[sd.b[sup]] = True
    bearings = [sp.centre for sp in model.supports if sp.bearing]
    supported |= bearing_nodes(np.array(bearings, float).reshape(-1, 2), nodes, 1e-7 * domain.scale)
    arrive = _mnt(poly.value(sd.tri, nodes[sd.b]), sd.normal, sd.tangent)
    leave = _mnt(poly.value(sd.tri, nodes[sd.a]), sd.normal, sd.tangent)
    corner = np.zeros(len(nodes))
    np.add.at(corner, sd.b, arrive)
    np.add.at(corner, sd.a, -leave)
    corner += load_factor * pts_load[:, 0] + pts_load[:, 1]
    corner = np.abs(corner[in_mesh & ~supported])

    # A zero capacity (no top bars) is floored at CAPACITY_FLOOR of the largest: the solver meets
    # "m_1 >= 0" only to its tolerance, and a moment of -1e-12 kNm/m must not count as a failure.
    m_ref = float(max(*model.capacity.sagging, *model.capacity.hogging))
    raw_cap = element_capacities(model, centroids)
    cap = np.maximum(raw_cap, CAPACITY_FLOOR * m_ref)
    ctrl = control_values(field.moments)
    ratio_ctrl = yield_ratio(ctrl.reshape(-1, 3), np.repeat(cap, 6, axis=0), model.capacity.bar_angle).reshape(-1, 6)
    scaled = scaled_check_sides(sd, raw_cap)
    tau = np.flatnonzero(scaled >= 0)
    if tau.size:
        sag = yield_ratio(ctrl[tau].reshape(-1, 3), np.repeat(cap[tau], 6, axis=0), model.capacity.bar_angle,
                          hogging=False).reshape(-1, 6)
        hog = _scaled_ratio(ctrl[tau], sd.local[scaled[tau]], sd.normal[scaled[tau]], sd.tangent[scaled[tau]])
        ratio_ctrl[tau] = np.maximum(sag, (hog / np.minimum(cap[tau, 2], cap[tau, 3]))[:, None])
    bary = np.array([[a, b, 3 - a - b] for a in range(4) for b in range(4 - a)], float) / 3.0
    inside_pts = np.einsum("qv,tvd->tqd", bary, p).reshape(-1, 2)
    tq = np.repeat(np.arange(len(tri)), len(bary))
    ratio_pts = yield_ratio(poly.value(tq, inside_pts), cap[tq], model.capacity.bar_angle)

    def top(parts):
        return float(np.concatenate(parts).max(initial=0.0))

    p_ref = max(force / domain.slab.area, 1e-12)
    h_ref = float(np.median(sd.length))
    resid = dict(equilibrium=float(np.abs(eq).max()), moment_jump=top(mj), shear_jump=top(vj),
                 corner=top([corner]), load_total=abs(carried - total))
    relative = max(resid["equilibrium"] / p_ref, resid["moment_jump"] / m_ref,
                   resid["shear_jump"] * h_ref / m_ref, resid["corner"] / m_ref,
                   resid["load_total"] / max(force, 1e-12))
    return FieldCheck(**resid, relative=relative, yield_ratio=float(ratio_ctrl.max()),
                      yield_ratio_points=float(ratio_pts.max()))
