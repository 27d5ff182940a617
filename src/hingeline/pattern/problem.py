"""The geometry optimisation's problem: internal work, external work, compatibility and
orientation of a layout as functions of its points and planes, with their derivatives
(see `optimise.py` for the problem statement).

Units: m, kNm; w dimensionless (the start pattern scaled so its largest w is 1).
May import: numpy, shapely, `hingeline.model`, `hingeline.upper.certificate`,
`hingeline.check.regions`, `layout` and `regions` of this package.
"""
from __future__ import annotations

import logging

import numpy as np
import shapely

from ..check.regions import ground
from ..model import Model
from ..model.criterion import capacity_at
from ..upper.certificate import slab_region, supported_edge_segments
from .layout import Layout, signed_area

log = logging.getLogger(__name__)

#: Largest move of a point in one run, as a fraction of the slab's size (the move limit).
MOVE_LIMIT = 0.35


class PatternProblem:
    """The optimisation problem of one layout (see the module docstring)."""

    def __init__(self, model: Model, lay: Layout, size: float):
        self.model, self.lay, self.size = model, lay, size
        P = lay.points
        tol = 1e-7 * size
        self.origin = P.min(axis=0)
        segs = boundary_segments(model)
        dist, t = segment_projection(P, segs)
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
        sup, share = supported_edge_segments(model)
        sd, _ = segment_projection(P, sup)
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
                da, _ = segment_projection(pa[None], sup)
                db, _ = segment_projection(pb[None], sup)
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
                if signed_area(P[k]) < 0:
                    k = k[::-1]
                tris.append(k)
                treg.append(r)
        self.tris = np.array(tris, int).reshape(-1, 3)
        self.treg = np.array(treg, int)
        self.area0 = np.array([signed_area(P[k]) for k in self.tris])
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

    def _side_frame(self, P, a, b):
        """Of sides a -> b: u = perp(b - a) (k, 2), its length L (k,) and the cosine c (k,) of
        its angle to the bars' first direction."""
        d = P[b] - P[a]
        u = np.stack([-d[:, 1], d[:, 0]], axis=1)
        L = np.maximum(np.hypot(u[:, 0], u[:, 1]), 1e-300)
        return u, L, (u @ self.e1) / L

    def _sides(self, P, a, b, dg, caps, hog_only):
        """Work of sides a -> b with slope jump dg (k, 2) and its derivatives by u = perp(b - a)
        and by dg. Sign convention: theta L = dg . u (> 0 sagging)."""
        u, L, c = self._side_frame(P, a, b)
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

    def _side_groups(self, C):
        """The two groups of sides, each as (a, b, right region r, left region s or None, slope
        jump dg across them, capacities, hogging only, weight): sides between two regions,
        then sides on ground (on the right: dg = 0 - g_r; only hogging, theta L < 0, does
        work there, at the support's share)."""
        groups = []
        if len(self.inner):
            a, b, r, s = self.inner.T
            groups.append((a, b, r, s, C[s, 1:] - C[r, 1:], self.cap["inner"], False, np.ones(len(a))))
        if len(self.outer_ab):
            a, b, r = self.outer_ab.T
            groups.append((a, b, r, None, -C[r, 1:], self.cap["outer"], True, self.outer_f))
        return groups

    def side_lin(self, P, C):
        """Every side's theta L (k,), its derivatives (k, nvar), its sagging and hogging
        capacities (k,) at the current directions, and its weight (hogging share on supports;
        sides on supports count hogging only)."""
        rows, J, mp, mm, wt = [], [], [], [], []
        for a, b, r, s, dg, caps, ho, f in self._side_groups(C):
            u, L, c = self._side_frame(P, a, b)
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
        for a, b, r, s, dg, caps, hog, f in self._side_groups(C):
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


def boundary_segments(model: Model) -> np.ndarray:
    """Segments (s, 2, 2), m, of the outline, the openings and the faces of ground supports;
    their start points are every corner of those rings."""
    rings = [np.asarray(model.slab.outline, float)] + [np.asarray(h, float) for h in model.slab.openings]
    rings += [np.asarray(part.exterior.coords, float)[:-1]
              for sp in ground(model) for part in getattr(sp.polygon, "geoms", [sp.polygon])]
    return np.concatenate([np.stack([r, np.roll(r, -1, axis=0)], axis=1) for r in rings])


def segment_projection(P: np.ndarray, segs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Distances (p, s) of points to segments and the parameter of the nearest point."""
    a, b = segs[:, 0], segs[:, 1]
    d = b - a
    L2 = np.maximum((d**2).sum(1), 1e-300)
    t = (((P[:, None, :] - a[None]) * d[None]).sum(2)) / L2[None]
    tc = np.clip(t, 0.0, 1.0)
    q = a[None] + tc[..., None] * d[None]
    return np.hypot(*(P[:, None, :] - q).transpose(2, 0, 1)), t


