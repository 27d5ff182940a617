"""Geometry optimisation of a clean pattern: junctions moved to lower the load factor.

The clean pattern's regions are polygons whose corners ("points") are shared: where three
or more regions meet (junctions), where a yield line meets the slab's boundary, and where
a line bends. Every point is a variable: free inside the slab, sliding along the edge of
the outline, an opening or a support face it lies on, fixed at a corner of those. Every
moving region's plane w = c0 + c1 x + c2 y is a variable too; regions at rest stay at rest.

The problem (as in He and Gilbert, "Automatic rationalization of yield-line patterns
identified using discontinuity layout optimization", Int. J. Solids Struct., 2016, which
solves it by sequential linear programming with move limits) is

    minimise   internal work (points, planes)
    subject to compatibility: at every point, every region holding it has the same w,
               w = 0 where the point lies on a supported edge or face, or on a region at
               rest, and at the centre of a pinned column within a region;
               external work of the scaled loads = its value at the start;
               no triangle of a region's fixed triangulation turns over.

It is solved here by SLSQP (scipy.optimize), a sequential quadratic programme whose
linearised steps play the part of the SLP steps, with bounds on the points as move limits
and a wall-clock budget. Points that meet are then merged, regions that have vanished are
dropped, straight-through points are dropped, and the planes are projected exactly onto
the compatibility conditions of the final geometry (least-squares change of the planes).
The result is only a candidate: `optimise_pattern` in `hingeline.pattern` writes it as a
hand-pattern file and certifies it by the hand check's work equation; it is shown only when
that certified load factor is below the unoptimised pattern's.

Units: m, kNm; w dimensionless inside (the start pattern scaled so its largest w is 1).
May import: numpy, scipy, shapely, `hingeline.model`, `hingeline.upper.certificate`,
`hingeline.check.regions`, and `regions` of this package.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass

import numpy as np
import shapely

from ..check.regions import ground
from ..model import Model
from ..model.criterion import capacity_at
from ..upper.certificate import _supported_edges, slab_region
from .regions import PLANE_RTOL, Region, moving_region

log = logging.getLogger(__name__)

#: Smallest relative fall of the internal work (at unit load work) worth certifying.
MIN_GAIN = 1e-5
#: Largest misfit of the planes at a shared point after `_restore`, as a fraction of the
#: largest w (the hand check refuses 1e-8).
RESTORE_TOL = 1e-10
#: Iteration limits: the result depends on these, not on the machine's speed.
SLSQP_MAX_ITER = 60
SLP_MAX_STEPS = 10
#: Wall-clock safety limit of one optimisation, s (reached only on a slow machine; the
#: iteration limits above normally end it first, so results are reproducible).
TIME_BUDGET = 3.0
#: Points closer than this fraction of the slab's size after optimisation are merged.
MERGE_RTOL = 1e-3
#: A region (or ring) with less than this fraction of the slab's area after merging has vanished.
SLIVER_RTOL = 1e-4
#: A point inside the slab joining only two regions is dropped when the line turns there by
#: at most this angle (rad): the boundary of two planes is straight.
BEND_MAX = 0.05
#: The geometry is taken as nearly compatible (and made so) when the smallest singular value
#: of its compatibility rows is at most this fraction of the largest.
NEAR_RTOL = 1e-3
#: Problems with more variables than this are solved by SLP (sparse LPs) rather than SLSQP
#: (dense, cubic in the number of variables).
SLSQP_MAX_VARS = 250
#: Cost of a unit violation of a linearised equality in the SLP steps (objective ~ 1).
SLP_PENALTY = 100.0
#: Largest move of a point in one run, as a fraction of the slab's size (the move limit).
MOVE_LIMIT = 0.35


@dataclass(frozen=True)
class Layout:
    """A pattern's topology and values for the optimiser.

    points (p, 2) m; rings: per region, rings of point indices (exterior CCW first, holes CW);
    planes (r, 3) in model coordinates, w dimensionless; at_rest (r,) bool."""

    points: np.ndarray
    rings: tuple[tuple[np.ndarray, ...], ...]
    planes: np.ndarray
    at_rest: np.ndarray


def _signed_area(P: np.ndarray) -> float:
    x, y = P[:, 0], P[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def layout_of(rings_xy, planes, at_rest, size: float) -> Layout:
    """Points shared between rings identified (to 1e-9 of the size); ring sides split at
    points lying on them; rings oriented (exterior CCW, holes CW)."""
    allp = np.concatenate([r for rr in rings_xy for r in rr])
    tol = 1e-9 * size
    key = np.round(allp / tol).astype(np.int64)
    _, first, inv = np.unique(key, axis=0, return_index=True, return_inverse=True)
    points = allp[first]
    inv = inv.ravel()
    rings, k = [], 0
    for rr in rings_xy:
        out = []
        for j, r in enumerate(rr):
            idx = inv[k:k + len(r)]
            k += len(r)
            if (_signed_area(points[idx]) > 0) != (j == 0):
                idx = idx[::-1]
            out.append(idx)
        rings.append(out)
    rings = _split_sides(points, rings, 1e-7 * size)
    return Layout(points, tuple(tuple(r) for r in rings), np.asarray(planes, float), np.asarray(at_rest, bool))


def _split_sides(points, rings, tol):
    """Each ring side a-b with other points lying on it gets them inserted, in order."""
    out = []
    for rr in rings:
        new_rr = []
        for ring in rr:
            seq = []
            for a, b in zip(ring, np.roll(ring, -1)):
                seq.append(a)
                pa, pb = points[a], points[b]
                d = pb - pa
                L2 = float(d @ d)
                t = ((points - pa) @ d) / L2
                off = np.abs((points[:, 0] - pa[0]) * d[1] - (points[:, 1] - pa[1]) * d[0]) / np.sqrt(L2)
                on = np.flatnonzero((off <= tol) & (t > 1e-9) & (t < 1 - 1e-9))
                on = on[(on != a) & (on != b)]
                seq.extend(on[np.argsort(t[on])].tolist())
            new_rr.append(np.array(seq, int))
        out.append(new_rr)
    return out


class _Problem:
    """The optimisation problem of one layout (see the module docstring)."""

    def __init__(self, model: Model, lay: Layout, size: float):
        self.model, self.lay, self.size = model, lay, size
        P = lay.points
        tol = 1e-7 * size
        self.origin = P.min(axis=0)
        # Boundary segments: outline, openings, ground supports' faces.
        segs = [np.stack([model.slab.outline, np.roll(model.slab.outline, -1, axis=0)], axis=1)]
        segs += [np.stack([np.asarray(h), np.roll(np.asarray(h), -1, axis=0)], axis=1) for h in model.slab.openings]
        for sp in ground(model):
            for part in getattr(sp.polygon, "geoms", [sp.polygon]):
                ring = np.asarray(part.exterior.coords)
                segs.append(np.stack([ring[:-1], ring[1:]], axis=1))
        segs = np.concatenate(segs)
        dist, t = _seg_dist(P, segs)
        on = dist <= tol
        end = on & ((t <= 1e-9) | (t >= 1 - 1e-9))
        self.kind = np.zeros(len(P), int)            # 0 free, 1 sliding, 2 fixed
        self.seg = np.full(len(P), -1)
        self.segs = segs
        for i in range(len(P)):
            if end[i].any() or on[i].sum() >= 2:
                self.kind[i] = 2
            elif on[i].any():
                self.kind[i] = 1
                self.seg[i] = int(np.flatnonzero(on[i])[0])
        self.t0 = np.where(self.kind == 1, t[np.arange(len(P)), np.maximum(self.seg, 0)], 0.0)
        sup, share = _supported_edges(model)
        sd, _ = _seg_dist(P, sup)
        self.grounded = (sd <= tol).any(axis=1)
        self.moving = np.flatnonzero(~lay.at_rest)
        self.nfree = int((self.kind == 0).sum())
        self.nslide = int((self.kind == 1).sum())
        # Regions holding each point.
        holders: list[set] = [set() for _ in P]
        for r, rr in enumerate(lay.rings):
            for ring in rr:
                for i in ring:
                    holders[i].add(r)
        self.holders = holders
        rows = []                                    # (point or -1, region a, region b or -1, xy)
        for i, hs in enumerate(holders):
            mv = sorted(h for h in hs if not lay.at_rest[h])
            if not mv:
                continue
            zero = self.grounded[i] or any(lay.at_rest[h] for h in hs)
            if zero:
                rows += [(i, a, -1) for a in mv]
            else:
                rows += [(i, mv[0], b) for b in mv[1:]]
        self.rows = np.array(rows, int).reshape(-1, 3)
        # Pinned columns' centres: w = 0 in the region holding them.
        pins = []
        for sp in model.supports:
            if not sp.bearing:
                continue
            for r, rr in enumerate(lay.rings):
                poly = shapely.Polygon(P[rr[0]], [P[h] for h in rr[1:]])
                if not lay.at_rest[r] and poly.buffer(tol).covers(shapely.Point(sp.centre)):
                    pins.append((r, *sp.centre))
        self.pins = np.array(pins, float).reshape(-1, 3)
        # Sides: interior (region left, region right) once each, boundary with hogging share.
        owner = {}
        for r, rr in enumerate(lay.rings):
            for ring in rr:
                for a, b in zip(ring, np.roll(ring, -1)):
                    owner[(int(a), int(b))] = r
        inner, outer = [], []
        for (a, b), r in owner.items():
            s = owner.get((b, a))
            if s is None:
                pa, pb = P[a], P[b]
                da, _ = _seg_dist(pa[None], sup)
                db, _ = _seg_dist(pb[None], sup)
                both = (da[0] <= tol) & (db[0] <= tol)
                f = float(share[both].max(initial=0.0))
                if f > 0:
                    outer.append((a, b, r, f))
            elif r < s:
                inner.append((a, b, r, s))
        self.inner = np.array(inner, int).reshape(-1, 4)
        self.outer_ab = np.array([o[:3] for o in outer], int).reshape(-1, 3)
        self.outer_f = np.array([o[3] for o in outer], float)
        # Fixed triangulation of each region (point indices).
        tris, treg = [], []
        for r, rr in enumerate(lay.rings):
            poly = shapely.Polygon(P[rr[0]], [P[h] for h in rr[1:]])
            idx = np.concatenate(rr)
            for tri in shapely.get_parts(shapely.constrained_delaunay_triangles(poly)):
                c = np.asarray(tri.exterior.coords)[:3]
                d = np.hypot(*(P[idx][None, :, :] - c[:, None, :]).transpose(2, 0, 1))
                k = idx[np.argmin(d, axis=1)]
                if _signed_area(P[k]) < 0:
                    k = k[::-1]
                tris.append(k)
                treg.append(r)
        self.tris = np.array(tris, int).reshape(-1, 3)
        self.treg = np.array(treg, int)
        self.area0 = np.array([_signed_area(P[k]) for k in self.tris])
        self.point_tris = [np.flatnonzero((self.tris == i).any(axis=1)) for i in range(len(P))]
        # Loads: a load over the whole slab is integrated exactly per triangle; others by
        # clipping triangles with the load's polygon; point and line loads located.
        slab = slab_region(model)
        self.loads = []
        for ld in model.loads:
            if not ld.factored:
                continue
            if hasattr(ld, "at"):
                self.loads.append(("point", ld.value, np.asarray(ld.at, float)))
            elif hasattr(ld, "path"):
                self.loads.append(("line", ld.value, shapely.LineString(ld.path)))
            elif ld.region is None:
                self.loads.append(("all", ld.value, None))
            else:
                self.loads.append(("patch", ld.value, shapely.Polygon(ld.region).intersection(slab)))
        covered = float(sum(self.area0))
        if abs(covered - slab.area) > 1e-6 * slab.area:
            self.loads = [("patch", v, slab) if k == "all" else (k, v, g) for k, v, g in self.loads]
        self.held = [ld for ld in model.loads if not ld.factored]
        # Capacities (m1, m2 along the bars) per side, sagging and hogging, at the start midpoints.
        self.cap = {}
        a1 = np.radians(model.capacity.bar_angle)
        self.e1 = np.array([np.cos(a1), np.sin(a1)])
        e2 = np.array([-self.e1[1], self.e1[0]])
        for key, sides in (("inner", self.inner[:, :2]), ("outer", self.outer_ab[:, :2])):
            mid = 0.5 * (P[sides[:, 0]] + P[sides[:, 1]]) if len(sides) else np.zeros((0, 2))
            k = len(mid)
            p1, m1 = capacity_at(model, mid, np.tile(self.e1, (k, 1)), tol)
            p2, m2 = capacity_at(model, mid, np.tile(e2, (k, 1)), tol)
            self.cap[key] = (p1, p2, m1, m2)
        # Derivative of the points with respect to the variables: free points move by `size`
        # per unit variable, sliding points along their segment.
        nf, ns = self.nfree, self.nslide
        self.nvar = 2 * nf + ns + 3 * len(self.moving)
        self.dP = np.zeros((len(P), 2, self.nvar))
        fi = np.flatnonzero(self.kind == 0)
        self.dP[fi, 0, 2 * np.arange(nf)] = size
        self.dP[fi, 1, 2 * np.arange(nf) + 1] = size
        si = np.flatnonzero(self.kind == 1)
        d = self.segs[self.seg[si], 1] - self.segs[self.seg[si], 0]
        self.dP[si, :, 2 * nf + np.arange(ns)] = d
        self.cidx = {int(r): 2 * nf + ns + 3 * k for k, r in enumerate(self.moving)}

    # -- variables ---------------------------------------------------------------------
    def pack(self, P, C) -> np.ndarray:
        free = (P[self.kind == 0] - self.origin) / self.size
        return np.concatenate([free.ravel(), self.t0[self.kind == 1], (C[self.moving] * self._cscale()).ravel()])

    def _cscale(self):
        return np.array([1.0, self.size, self.size])

    def unpack(self, z):
        P = self.lay.points.copy()
        nf, ns = self.nfree, self.nslide
        P[self.kind == 0] = self.origin + self.size * z[:2 * nf].reshape(-1, 2)
        t = z[2 * nf:2 * nf + ns]
        s = self.segs[self.seg[self.kind == 1]]
        P[self.kind == 1] = s[:, 0] + t[:, None] * (s[:, 1] - s[:, 0])
        C = self.lay.planes.copy()
        C[self.moving] = z[2 * nf + ns:].reshape(-1, 3) / self._cscale()
        return P, C

    def bounds(self, z0):
        nf, ns = self.nfree, self.nslide
        lo = np.full(len(z0), -np.inf)
        hi = np.full(len(z0), np.inf)
        lo[:2 * nf] = np.maximum(z0[:2 * nf] - MOVE_LIMIT, -1e-9)
        hi[:2 * nf] = z0[:2 * nf] + MOVE_LIMIT
        lo[2 * nf:2 * nf + ns] = 0.0
        hi[2 * nf:2 * nf + ns] = 1.0
        return list(zip(lo, hi))

    # -- functions ---------------------------------------------------------------------
    def _cplane(self, r, grad, vec):
        """Add vec (k, 3) (derivatives by c0, c1, c2 of region r (k,)) to grad (k, nvar)."""
        for j in range(3):
            cols = np.array([self.cidx.get(int(x), -1) for x in r]) + j
            ok = cols >= j
            grad[np.flatnonzero(ok), cols[ok]] += vec[ok, j] / self._cscale()[j]

    def _sides(self, P, a, b, dg, caps, hog_only):
        """Work of sides a -> b with slope jump dg (k, 2) and its derivatives by u = perp(b - a)
        and by dg. Sign convention: theta L = dg . u (> 0 sagging)."""
        d = P[b] - P[a]
        u = np.stack([-d[:, 1], d[:, 0]], axis=1)
        L = np.maximum(np.hypot(u[:, 0], u[:, 1]), 1e-300)
        c = (u @ self.e1) / L
        p1, p2, m1, m2 = caps
        tl = (dg * u).sum(1)
        sag = tl > 0
        if hog_only:
            sag = np.zeros(len(tl), bool)
            tl = np.minimum(tl, 0.0)
        a1, a2 = np.where(sag, p1, m1), np.where(sag, p2, m2)
        m = a2 + (a1 - a2) * c**2
        sign = np.where(sag, 1.0, -1.0) * (tl != 0)
        work = m * np.abs(tl)
        dm_du = (2 * (a1 - a2) * c / L)[:, None] * (self.e1[None, :] - c[:, None] * u / L[:, None])
        dW_du = dm_du * np.abs(tl)[:, None] + (m * sign)[:, None] * dg
        dW_dg = (m * sign)[:, None] * u
        return work, dW_du, dW_dg

    def side_lin(self, P, C):
        """Every side's theta L (k,), its derivatives (k, nvar), its sagging and hogging
        capacities (k,) at the current directions, and its weight (hogging share on supports;
        sides on supports count hogging only)."""
        rows, J, mp, mm, wt = [], [], [], [], []
        parts = []
        if len(self.inner):
            a, b, r, s = self.inner.T
            parts.append((a, b, r, s, C[s, 1:] - C[r, 1:], self.cap["inner"], False, np.ones(len(a))))
        if len(self.outer_ab):
            a, b, r = self.outer_ab.T
            parts.append((a, b, r, None, -C[r, 1:], self.cap["outer"], True, self.outer_f))
        for a, b, r, s, dg, caps, ho, f in parts:
            d = P[b] - P[a]
            u = np.stack([-d[:, 1], d[:, 0]], axis=1)
            L = np.maximum(np.hypot(u[:, 0], u[:, 1]), 1e-300)
            c = (u @ self.e1) / L
            p1, p2, m1, m2 = caps
            tl = (dg * u).sum(1)
            dPb = np.stack([dg[:, 1], -dg[:, 0]], axis=1)
            Jk = np.einsum("kj,kjv->kv", dPb, self.dP[b]) - np.einsum("kj,kjv->kv", dPb, self.dP[a])
            z = np.zeros((len(a), 1))
            if s is not None:
                self._cplane(s, Jk, np.hstack([z, u]))
            self._cplane(r, Jk, np.hstack([z, -u]))
            rows.append(tl)
            J.append(Jk)
            mp.append(np.zeros(len(a)) if ho else p2 + (p1 - p2) * c**2)
            mm.append(m2 + (m1 - m2) * c**2)
            wt.append(f)
        if not rows:
            return np.zeros(0), np.zeros((0, self.nvar)), np.zeros(0), np.zeros(0), np.zeros(0)
        return (np.concatenate(rows), np.vstack(J), np.concatenate(mp), np.concatenate(mm),
                np.concatenate(wt))

    def internal(self, P, C, want_grad=False):
        total = 0.0
        grad = np.zeros(self.nvar) if want_grad else None
        parts = []
        if len(self.inner):
            a, b, r, s = self.inner.T
            parts.append((a, b, r, s, C[s, 1:] - C[r, 1:], self.cap["inner"], False, np.ones(len(a))))
        if len(self.outer_ab):
            a, b, r = self.outer_ab.T
            # Ground on the right: dg = 0 - g_r; hogging (theta L < 0) does work, at the share.
            parts.append((a, b, r, None, -C[r, 1:], self.cap["outer"], True, self.outer_f))
        for a, b, r, s, dg, caps, hog, f in parts:
            work, dW_du, dW_dg = self._sides(P, a, b, dg, caps, hog)
            total += float(np.sum(f * work))
            if want_grad:
                dW_du, dW_dg = f[:, None] * dW_du, f[:, None] * dW_dg
                # u = (-(yb - ya), xb - xa)
                dPb = np.stack([dW_du[:, 1], -dW_du[:, 0]], axis=1)
                grad += np.einsum("kj,kjv->v", dPb, self.dP[b]) - np.einsum("kj,kjv->v", dPb, self.dP[a])
                g = np.zeros((len(a), self.nvar))
                z = np.zeros((len(a), 1))
                if s is not None:
                    self._cplane(s, g, np.hstack([z, dW_dg]))
                self._cplane(r, g, np.hstack([z, -dW_dg]))
                grad += g.sum(0)
        return (total, grad) if want_grad else total

    def moments(self, P, tris=None) -> np.ndarray:
        """(t, 3) load moments of the triangles `tris` (default all): sum over the factored
        loads of value x (measure, measure x, measure y) of the part of the triangle loaded,
        so that the external work is sum_t plane_t . M_t."""
        idx = np.arange(len(self.tris)) if tris is None else tris
        T = P[self.tris[idx]]
        M = np.zeros((len(idx), 3))
        polys = None
        for kind, value, geom in self.loads:
            if kind == "all":
                area = 0.5 * ((T[:, 1, 0] - T[:, 0, 0]) * (T[:, 2, 1] - T[:, 0, 1])
                              - (T[:, 1, 1] - T[:, 0, 1]) * (T[:, 2, 0] - T[:, 0, 0]))
                c = T.mean(axis=1)
                M += value * np.column_stack([area, area * c[:, 0], area * c[:, 1]])
                continue
            if polys is None:
                polys = shapely.polygons(T)
            if kind == "patch":
                pieces = shapely.intersection(polys, geom)
                area = shapely.area(pieces)
                hit = area > 0
                c = np.zeros((len(T), 2))
                if hit.any():
                    c[hit] = shapely.get_coordinates(shapely.centroid(pieces[hit]))
                M += value * np.column_stack([area, area * c[:, 0], area * c[:, 1]])
            elif kind == "point":
                inside = np.flatnonzero(shapely.covers(polys, shapely.Point(geom)))
                if inside.size:
                    # Shared by the triangles it touches (one w there when compatible).
                    M[inside] += value / inside.size * np.array([1.0, *geom])
            else:
                pieces = shapely.intersection(polys, geom)
                length = shapely.length(pieces)
                hit = length > 0
                c = np.zeros((len(T), 2))
                if hit.any():
                    c[hit] = [_line_mid(g) for g in pieces[hit]]
                M += value * np.column_stack([length, length * c[:, 0], length * c[:, 1]])
        return M

    def external(self, P, C) -> float:
        return float(np.sum(C[self.treg] * self.moments(P)))

    def external_grad(self, P, C) -> np.ndarray:
        """Derivatives of `external` by the variables: exact for the planes (the moments), by
        finite differences of the moments of the triangles round each moving point."""
        M = self.moments(P)
        grad = np.zeros(self.nvar)
        for r in self.moving:
            sel = self.treg == r
            grad[self.cidx[int(r)]:self.cidx[int(r)] + 3] += M[sel].sum(0) / self._cscale()
        pl = C[self.treg]
        h = 1e-7 * self.size
        npt = 2 * self.nfree + self.nslide
        for v in range(npt):
            pts = np.flatnonzero(self.dP[:, :, v].any(axis=1))
            if not pts.size:
                continue
            tris = self.point_tris[pts[0]]
            step = self.dP[pts[0], :, v]
            hv = h / max(float(np.hypot(*step)), 1e-300)
            P2 = P.copy()
            P2[pts[0]] += hv * step
            dM = self.moments(P2, tris) - M[tris]
            grad[v] = float(np.sum(pl[tris] * dM)) / hv
        return grad

    def compat(self, P, C) -> np.ndarray:
        out = []
        if len(self.rows):
            i, a, b = self.rows.T
            wa = C[a, 0] + (C[a, 1:] * P[i]).sum(1)
            wb = np.where(b >= 0, C[np.maximum(b, 0), 0] + (C[np.maximum(b, 0), 1:] * P[i]).sum(1), 0.0)
            out.append(wa - wb)
        if len(self.pins):
            r = self.pins[:, 0].astype(int)
            out.append(C[r, 0] + (C[r, 1:] * self.pins[:, 1:]).sum(1))
        return np.concatenate(out) if out else np.zeros(0)

    def compat_jac(self, P, C) -> np.ndarray:
        out = []
        if len(self.rows):
            i, a, b = self.rows.T
            k = len(i)
            J = np.zeros((k, self.nvar))
            bb = np.maximum(b, 0)
            dgrad = C[a, 1:] - np.where((b >= 0)[:, None], C[bb, 1:], 0.0)
            J += np.einsum("kj,kjv->kv", dgrad, self.dP[i])
            v = np.column_stack([np.ones(k), P[i]])
            self._cplane(a, J, v)
            sel = np.flatnonzero(b >= 0)
            if sel.size:
                Jb = np.zeros((sel.size, self.nvar))
                self._cplane(b[sel], Jb, -v[sel])
                J[sel] += Jb
            out.append(J)
        if len(self.pins):
            r = self.pins[:, 0].astype(int)
            J = np.zeros((len(r), self.nvar))
            self._cplane(r, J, np.column_stack([np.ones(len(r)), self.pins[:, 1:]]))
            out.append(J)
        return np.vstack(out) if out else np.zeros((0, self.nvar))

    def areas_jac(self, P) -> np.ndarray:
        T = self.tris
        X, Y = P[T, 0], P[T, 1]
        dx = 0.5 * (np.roll(Y, -1, axis=1) - np.roll(Y, 1, axis=1))
        dy = 0.5 * (np.roll(X, 1, axis=1) - np.roll(X, -1, axis=1))
        J = np.zeros((len(T), self.nvar))
        for k in range(3):
            J += dx[:, k, None] * self.dP[T[:, k], 0] + dy[:, k, None] * self.dP[T[:, k], 1]
        return J / self.size**2

    def areas(self, P) -> np.ndarray:
        T = P[self.tris]
        return 0.5 * ((T[:, 1, 0] - T[:, 0, 0]) * (T[:, 2, 1] - T[:, 0, 1])
                      - (T[:, 1, 1] - T[:, 0, 1]) * (T[:, 2, 0] - T[:, 0, 0])) / self.size**2


def _line_mid(g) -> tuple[float, float]:
    """Length-weighted mean point of a (multi)line: w is linear on each straight piece."""
    parts = shapely.get_parts(g)
    tot, acc = 0.0, np.zeros(2)
    for p in parts:
        c = np.asarray(p.coords)
        if len(c) < 2:
            continue
        L = np.hypot(*np.diff(c, axis=0).T)
        acc += ((c[:-1] + c[1:]) * 0.5 * L[:, None]).sum(0)
        tot += float(L.sum())
    return tuple(acc / tot) if tot > 0 else (0.0, 0.0)


def _seg_dist(P: np.ndarray, segs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Distances (p, s) of points to segments and the parameter of the nearest point."""
    a, b = segs[:, 0], segs[:, 1]
    d = b - a
    L2 = np.maximum((d**2).sum(1), 1e-300)
    t = (((P[:, None, :] - a[None]) * d[None]).sum(2)) / L2[None]
    tc = np.clip(t, 0.0, 1.0)
    q = a[None] + tc[..., None] * d[None]
    return np.hypot(*(P[:, None, :] - q).transpose(2, 0, 1)), t


class _UseSLP(Exception):
    pass


def _slp(f, fjac, eq, eqjac, ineq, ineqjac, z0, bounds, prob, deadline) -> np.ndarray:
    """Sequential linear programming with move limits (He and Gilbert 2016): each step
    minimises the linearised internal work subject to the linearised constraints (elastic:
    violations cost PENALTY) within a box of half-width `delta` round the current point (HiGHS
    via scipy.optimize.linprog); a step is kept when the merit f + PENALTY |eq|_1 falls,
    and the box grows, else it shrinks."""
    from scipy import sparse
    from scipy.optimize import linprog

    n = len(z0)
    npt = 2 * prob.nfree + prob.nslide
    lo = np.array([b[0] for b in bounds])
    hi = np.array([b[1] for b in bounds])
    scale_c = max(float(np.abs(z0[npt:]).max(initial=1.0)), 1.0)
    delta = np.concatenate([np.full(npt, 0.02), np.full(n - npt, 0.2 * scale_c)])
    dmin = 1e-7

    def merit(z):
        return f(z) + SLP_PENALTY * (float(np.abs(eq(z)).sum()) + float(np.maximum(-ineq(z), 0.0).sum()))

    z = z0.copy()
    mz = merit(z)
    i0 = prob.internal(*prob.unpack(z0))
    for _ in range(SLP_MAX_STEPS):
        if time.monotonic() > deadline or delta[:npt].max(initial=dmin) <= dmin:
            break
        P, C = prob.unpack(z)
        c, J = eq(z), eqjac(z)
        a, A = ineq(z), ineqjac(z)
        tl, Jt, mp, mm, wt = prob.side_lin(P, C)
        k, m = len(tl), len(c)
        na = len(a)
        # x = [dz (n), sag (k), hog (k), s+ (m), s- (m), s_area (na)]: sag - hog = tl + Jt dz
        cost = np.concatenate([np.zeros(n), wt * mp / i0, wt * mm / i0, np.full(2 * m + na, SLP_PENALTY)])
        Z = sparse.csr_matrix
        A_eq = sparse.vstack([
            sparse.hstack([Z(J), Z((m, 2 * k)), sparse.identity(m), -sparse.identity(m), Z((m, na))]),
            sparse.hstack([Z(Jt), -sparse.identity(k), sparse.identity(k), Z((k, 2 * m + na))])]).tocsr()
        b_eq = np.concatenate([-c, -tl])
        A_ub = sparse.hstack([Z(-A), Z((na, 2 * k + 2 * m)), -sparse.identity(na)]).tocsr()
        dlo = np.maximum(-delta, lo - z)
        dhi = np.minimum(delta, hi - z)
        extra = 2 * k + 2 * m + na
        bnd = np.concatenate([np.column_stack([dlo, dhi]),
                              np.column_stack([np.zeros(extra), np.full(extra, np.inf)])])
        res = linprog(cost, A_ub=A_ub, b_ub=a, A_eq=A_eq, b_eq=b_eq, bounds=bnd, method="highs")
        if res.status != 0:
            log.debug("slp: LP status %d (%s)", res.status, res.message)
            delta *= 0.5
            continue
        dz = res.x[:n]
        predicted = mz - float(res.fun)
        zn = _correct(eq, J, z + dz, lo, hi)
        mn = merit(zn)
        log.debug("slp: merit %.9g predicted %.3g actual %.3g delta %.3g f %.6g->%.6g lin %.6g eq %.3g lin %.3g", mz, predicted, mz - mn, delta[:npt].max(initial=0), f(z), f(zn), float(res.x[n:n + 2 * k] @ cost[n:n + 2 * k]), np.abs(eq(zn)).sum(), np.abs(c + J @ dz).sum())
        if predicted > 1e-12 and mn < mz - 0.1 * predicted:
            z, mz = zn, mn
            delta = np.minimum(delta * 1.5, np.concatenate([np.full(npt, 0.1), np.full(n - npt, scale_c)]))
        else:
            delta *= 0.5
    return z


def _correct(eq, J, z, lo, hi, steps: int = 4) -> np.ndarray:
    """Second-order correction of an SLP step: minimum-norm steps back onto the equalities
    with the step's Jacobian J (compatibility is bilinear in points and planes, so a step
    leaves a residual of the order of its square)."""
    A = J @ J.T
    A[np.diag_indices_from(A)] += 1e-12 * max(float(np.trace(A)) / max(len(A), 1), 1e-300)
    try:
        cho = np.linalg.cholesky(A)
    except np.linalg.LinAlgError:
        return z
    for _ in range(steps):
        c = eq(z)
        if np.abs(c).max(initial=0.0) < 1e-13:
            break
        y = np.linalg.solve(cho.T, np.linalg.solve(cho, -c))
        z = np.clip(z + J.T @ y, lo, hi)
    return z


def optimise_layout(model: Model, lay: Layout, size: float, budget: float = TIME_BUDGET,
                    method: str = "auto") -> tuple[np.ndarray, np.ndarray] | None:
    """Points and planes of the layout moved to lower the internal work at unit external
    work (see the module docstring; `tidy` then merges and cleans them); None when the
    optimiser finds nothing to gain."""
    from scipy.optimize import minimize

    prob = _Problem(model, lay, size)
    if not prob.loads:
        return None
    z0 = prob.pack(lay.points, lay.planes)
    e0 = prob.external(lay.points, lay.planes)
    if not e0 > 0:
        return None
    i0 = prob.internal(lay.points, lay.planes)
    start = time.monotonic()

    def f(z):
        return prob.internal(*prob.unpack(z)) / i0

    def fjac(z):
        return prob.internal(*prob.unpack(z), want_grad=True)[1] / i0

    def eq(z):
        P, C = prob.unpack(z)
        return np.concatenate([prob.compat(P, C), [prob.external(P, C) / e0 - 1.0]])

    def eqjac(z):
        P, C = prob.unpack(z)
        return np.vstack([prob.compat_jac(P, C), prob.external_grad(P, C)[None, :] / e0])

    def ineq(z):
        P, _ = prob.unpack(z)
        return prob.areas(P) * np.sign(prob.area0) + 1e-12

    def ineqjac(z):
        P, _ = prob.unpack(z)
        return prob.areas_jac(P) * np.sign(prob.area0)[:, None]

    best = [z0, 1.0]

    def callback(zk):
        val = f(zk)
        if val < best[1] and np.abs(eq(zk)).max() < 1e-6:
            best[0], best[1] = zk.copy(), val
        if time.monotonic() - start > budget:
            raise StopIteration

    if method == "auto":
        method = "slsqp" if prob.nvar <= SLSQP_MAX_VARS else "slp"
    try:
        if method == "slp":
            raise _UseSLP
        res = minimize(f, z0, jac=fjac, method="SLSQP", bounds=prob.bounds(z0),
                       constraints=[{"type": "eq", "fun": eq, "jac": eqjac},
                                    {"type": "ineq", "fun": ineq, "jac": ineqjac}],
                       callback=callback, options={"maxiter": SLSQP_MAX_ITER, "ftol": 1e-10})
        z = res.x
    except _UseSLP:
        z = _slp(f, fjac, eq, eqjac, ineq, ineqjac, z0, prob.bounds(z0), prob, start + budget)
        callback_free = f(z)
        if callback_free < best[1] and np.abs(eq(z)).max() < 1e-6:
            best[0], best[1] = z.copy(), callback_free
    except (ValueError, np.linalg.LinAlgError) as exc:   # pragma: no cover - solver refused
        log.info("pattern optimisation stopped: %s", exc)
        z = best[0]
    if not np.all(np.isfinite(z)) or np.abs(eq(z)).max() > 1e-5 or f(z) > best[1]:
        z = best[0]
    log.info("pattern optimisation: internal work %.6g of the start at unit load work (%.2f s)",
             f(z), time.monotonic() - start)
    if f(z) >= 1.0 - MIN_GAIN:
        return None        # too little to gain for a certification (and a busier pattern)
    P, C = prob.unpack(z)
    return P, C


#: (merge, sliver, bend) settings of `tidy`, tried in turn until one is certified.
TIDY_SETTINGS = ((MERGE_RTOL, SLIVER_RTOL, BEND_MAX), (1e-4, 1e-7, 0.005), (1e-6, 1e-10, 0.0))


def tidy(model: Model, lay: Layout, P: np.ndarray, C: np.ndarray, size: float,
         merge: float = MERGE_RTOL, sliver: float = SLIVER_RTOL, bend: float = BEND_MAX) -> Layout | None:
    """Merge points that meet (closer than `merge` of the size), drop regions and rings that
    vanished (area below `sliver` of the slab's), drop points inside the slab joining two
    regions only where the line turns by at most `bend` rad, and make the planes and points
    exactly compatible (`_restore`)."""
    tol = merge * size
    n = len(P)
    parent = np.arange(n)

    def find(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for i in range(n):
        for j in range(i + 1, n):
            if np.hypot(*(P[i] - P[j])) <= tol:
                parent[find(j)] = find(i)
    root = np.array([find(i) for i in range(n)])
    # A merged point takes the position of a fixed member if any (corners stay put).
    fixed = _fixed_points(model, lay.points, size)
    P2 = P.copy()
    for r in np.unique(root):
        members = np.flatnonzero(root == r)
        fx = members[fixed[members]]
        P2[r] = lay.points[fx[0]] if fx.size else P[members].mean(axis=0)
    slab_area = float(slab_region(model).area)
    kept: list[tuple[list[np.ndarray], int]] = []
    slivers: list[list[np.ndarray]] = []
    for r, rr in enumerate(lay.rings):
        new = []
        for j, ring in enumerate(rr):
            idx = _despike(root[ring])
            # A ring that closed up has vanished; a sliver left of a region joins a neighbour.
            if len(idx) < 3 or abs(_signed_area(P2[idx])) <= 1e-12 * slab_area:
                if j == 0:
                    new = []
                    break
                continue
            new.append(idx)
        if not new:
            continue
        if abs(_signed_area(P2[new[0]])) <= sliver * slab_area and len(new) == 1:
            slivers.append(new)
        else:
            kept.append((new, r))
    if not kept:
        return None
    kept = _absorb(kept, slivers, P2, size)
    # Points inside the slab that no longer join three regions are bends of a line between
    # two planes (which is straight) or corners of a vanished sliver: they go when the turn
    # there is small.
    free = ~_on_boundary(model, P2, size)
    for _ in range(3):
        holders = np.zeros(len(P2), int)
        for new, _r in kept:
            for i in np.unique(np.concatenate(new)):
                holders[i] += 1
        turn = np.zeros(len(P2))
        for new, _r in kept:
            for idx in new:
                a, b, c = P2[np.roll(idx, 1)], P2[idx], P2[np.roll(idx, -1)]
                u, v = b - a, c - b
                ang = np.abs(np.arctan2(u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0], (u * v).sum(1)))
                np.maximum.at(turn, idx, ang)
        drop = free & (holders <= 2) & (turn <= bend)
        if not drop.any():
            break
        kept = [([idx[~drop[idx]] for idx in new if (~drop[idx]).sum() >= 3], r) for new, r in kept]
        kept = [(new, r) for new, r in kept if new and len(new[0]) >= 3
                and abs(_signed_area(P2[new[0]])) > sliver * slab_area]
    rings_xy = [[P2[idx] for idx in new] for new, _ in kept]
    planes = [C[r] for _, r in kept]
    rest = [lay.at_rest[r] for _, r in kept]
    out = layout_of(rings_xy, np.array(planes), np.array(rest), size)
    prob = _Problem(model, out, size)
    return _restore(prob, out)


def _restore(prob: _Problem, lay: Layout) -> Layout | None:
    """The layout made exactly compatible by alternating projections: the planes projected
    onto the compatible motions of the current points, then each movable point put where its
    regions' planes meet (least squares), until the planes fit to RESTORE_TOL of the largest
    w (the hand check allows 1e-8)."""
    P = lay.points.copy()
    cur = lay
    for it in range(60):
        planes = _project(prob, cur, rtol=1e-12 if it > 40 else 1e-7)
        if planes is None:
            return None
        cur = Layout(P, lay.rings, planes, lay.at_rest)
        res = np.abs(prob.compat(P, planes)).max(initial=0.0)
        if res <= RESTORE_TOL:
            return cur
        P = _place_points(prob, P, planes)
        cur = Layout(P, lay.rings, planes, lay.at_rest)
    log.info("optimised pattern: the planes could not be made to fit (residual %.3g)", res)
    return None


def _place_points(prob: _Problem, P: np.ndarray, C: np.ndarray) -> np.ndarray:
    """Each free or sliding point moved to the least-squares meeting point of its rows."""
    P = P.copy()
    if not len(prob.rows):
        return P
    for i in np.flatnonzero(prob.kind < 2):
        sel = prob.rows[:, 0] == i
        if not sel.any():
            continue
        _, a, b = prob.rows[sel].T
        Cb = np.where((b >= 0)[:, None], C[np.maximum(b, 0)], 0.0)
        D = C[a] - Cb                        # D0 + D1 x + D2 y = 0
        if prob.kind[i] == 0:
            A, rhs = D[:, 1:], -D[:, 0]
            if np.linalg.matrix_rank(A, tol=1e-9 * max(np.abs(A).max(), 1e-300)) < 2:
                continue
            P[i] = np.linalg.lstsq(A, rhs, rcond=None)[0]
        else:
            s0, s1 = prob.segs[prob.seg[i]]
            d = s1 - s0
            A = D[:, 1:] @ d
            rhs = -(D[:, 0] + D[:, 1:] @ s0)
            if np.abs(A).max() <= 1e-9 * max(np.abs(D[:, 1:]).max(), 1e-300):
                continue
            t = float(np.clip((A @ rhs) / (A @ A), 0.0, 1.0))
            P[i] = s0 + t * d
    return P


def _despike(idx: np.ndarray) -> np.ndarray:
    """A ring of point indices without repeats in a row and without spikes (a, b, a)."""
    idx = np.asarray(idx)
    while True:
        idx = idx[np.r_[True, idx[1:] != idx[:-1]]]
        if len(idx) > 1 and idx[0] == idx[-1]:
            idx = idx[:-1]
        if len(idx) < 3:
            return idx
        spike = np.flatnonzero(np.roll(idx, 1) == np.roll(idx, -1))
        if not spike.size:
            return idx
        k = int(spike[0])
        idx = np.delete(idx, [k, (k + 1) % len(idx)] if k + 1 < len(idx) else [k, 0])


def _absorb(kept, slivers, P, size):
    """Each sliver (rings of point indices) joined to the kept region it shares the most
    boundary with (polygon union), so that no gap is left where it was."""
    def sides(idx):
        return {tuple(sorted((int(a), int(b)))) for a, b in zip(idx, np.roll(idx, -1))}

    for sl in slivers:
        mine = sides(sl[0])
        best, shared = -1, 0
        for k, (new, _r) in enumerate(kept):
            n = sum(len(mine & sides(idx)) for idx in new)
            if n > shared:
                best, shared = k, n
        if best < 0:
            continue
        new, r = kept[best]
        poly = shapely.Polygon(P[new[0]], [P[h] for h in new[1:]]).union(shapely.Polygon(P[sl[0]]))
        poly = shapely.make_valid(poly)
        if poly.geom_type != "Polygon":
            continue
        poly = shapely.geometry.polygon.orient(poly, 1.0)

        def to_idx(ring):
            c = np.asarray(ring.coords)[:-1]
            d = np.hypot(*(c[:, None, :] - P[None]).transpose(2, 0, 1))
            idx = np.argmin(d, axis=1)
            return idx[np.r_[True, idx[1:] != idx[:-1]]]

        rings = [to_idx(poly.exterior)] + [to_idx(h) for h in poly.interiors]
        if all(len(x) >= 3 for x in rings):
            kept[best] = (rings, r)
    return kept


def _on_boundary(model: Model, P: np.ndarray, size: float) -> np.ndarray:
    """Points on the outline, an opening or a support face."""
    segs = [np.stack([model.slab.outline, np.roll(model.slab.outline, -1, axis=0)], axis=1)]
    segs += [np.stack([np.asarray(h), np.roll(np.asarray(h), -1, axis=0)], axis=1) for h in model.slab.openings]
    for sp in ground(model):
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            ring = np.asarray(part.exterior.coords)
            segs.append(np.stack([ring[:-1], ring[1:]], axis=1))
    d, _ = _seg_dist(P, np.concatenate(segs))
    return (d <= 1e-7 * size).any(axis=1)


def _fixed_points(model: Model, P: np.ndarray, size: float) -> np.ndarray:
    corners = [np.asarray(model.slab.outline)] + [np.asarray(h) for h in model.slab.openings]
    for sp in ground(model):
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            corners.append(np.asarray(part.exterior.coords))
    c = np.concatenate(corners)
    d = np.hypot(*(P[:, None, :] - c[None]).transpose(2, 0, 1))
    return (d <= 1e-7 * size).any(axis=1)


def _thin(rings_xy, size):
    tol = 1e-9 * size
    keep: dict[tuple[float, float], bool] = {}
    for rr in rings_xy:
        for ring in rr:
            prev, nxt = np.roll(ring, 1, axis=0), np.roll(ring, -1, axis=0)
            d = nxt - prev
            off = np.abs(d[:, 0] * (ring[:, 1] - prev[:, 1]) - d[:, 1] * (ring[:, 0] - prev[:, 0]))
            off /= np.maximum(np.hypot(d[:, 0], d[:, 1]), 1e-300)
            straight = (off <= tol) & (((ring - prev) * d).sum(1) > 0) & (((nxt - ring) * d).sum(1) > 0)
            for p, s in zip(map(tuple, ring), straight):
                keep[p] = keep.get(p, False) or not s
    return [[ring[[keep[tuple(p)] for p in ring]] for ring in rr] for rr in rings_xy]


def _project(prob: _Problem, lay: Layout, rtol: float = 1e-10) -> np.ndarray | None:
    """Planes closest to `lay.planes` (least squares) meeting the compatibility rows exactly
    at the fixed geometry; None when only w = 0 would."""
    mv = prob.moving
    col = {int(r): k for k, r in enumerate(mv)}
    P = lay.points
    rows = []
    for i, a, b in prob.rows:
        row = np.zeros(3 * len(mv))
        row[3 * col[a]:3 * col[a] + 3] = [1.0, *P[i]]
        if b >= 0:
            row[3 * col[b]:3 * col[b] + 3] -= [1.0, *P[i]]
        rows.append(row)
    for r, x, y in prob.pins:
        row = np.zeros(3 * len(mv))
        row[3 * col[int(r)]:3 * col[int(r)] + 3] = [1.0, x, y]
        rows.append(row)
    c0 = lay.planes[mv].ravel()
    if not rows:
        return lay.planes
    A = np.array(rows)
    # Scale columns so that the plane coefficients weigh alike (c0 ~ w, c1, c2 ~ w / size).
    s = np.tile([1.0, 1.0 / prob.size, 1.0 / prob.size], len(mv))
    As = A * s
    _, sv, vt = np.linalg.svd(As)
    rank = int(np.sum(sv > rtol * sv[0]))
    if rank == As.shape[1] and sv[-1] <= NEAR_RTOL * sv[0]:
        rank -= 1          # nearly compatible: the closest motion, and the points follow it
    null = vt[rank:].T
    if null.shape[1] == 0:
        log.info("optimised pattern: no compatible motion of the final geometry")
        return None
    y = null @ (null.T @ (c0 / s))
    c = y * s
    out = lay.planes.copy()
    out[mv] = c.reshape(-1, 3)
    wmax = max(float(np.abs(out[r, 0] + P[np.concatenate(rr)] @ out[r, 1:]).max())
               for r, rr in enumerate(lay.rings))
    if not wmax > 0:
        return None
    return out / wmax


def layout_regions(lay: Layout, size: float) -> tuple[list[Region], list[list[np.ndarray]]]:
    """Regions (regions.Region, planes scaled so the largest w is 1) and their rings (m) of a
    layout, moving regions first (largest deflection first), then those at rest."""
    P = lay.points
    slopes = np.hypot(lay.planes[:, 1], lay.planes[:, 2])
    gmax = float(slopes.max(initial=0.0))
    out = []
    for r, rr in enumerate(lay.rings):
        rings = [P[ring] for ring in rr]
        poly = shapely.Polygon(rings[0], rings[1:])
        if lay.at_rest[r]:
            reg = Region(poly, np.zeros(3), True, None, None, 0.0, "none", 0.0, np.zeros(0, int))
        else:
            reg = moving_region(poly, lay.planes[r], np.zeros(0, int), np.concatenate(rings), gmax,
                                PLANE_RTOL, size)
        out.append((reg, rings))
    out.sort(key=lambda item: (item[0].at_rest, -item[0].max_deflection))
    return [reg for reg, _ in out], [rings for _, rings in out]


def layout_junctions(lay: Layout, min_regions: int = 5) -> np.ndarray:
    """Points (k, 2) m where at least `min_regions` regions meet (candidate fan apexes)."""
    count = np.zeros(len(lay.points), int)
    for rr in lay.rings:
        for i in np.unique(np.concatenate(rr)):
            count[i] += 1
    return lay.points[count >= min_regions]
