"""Independent re-check of a mechanism: the certificate behind every load factor.

Given only the model and a P1 deflection field (vertices, triangles, w), this
recomputes the work equation without any of the solver's lines or coefficients:

- internal work: for every triangle edge, the jump of the slope normal to the edge
  between its two triangles (or between a triangle and the ground on a supported
  edge) times the edge length times the capacity normal to the edge, sagging or
  hogging by the sign of the jump (free edges and opening edges cost nothing;
  simply supported edges cost nothing; continuous edges cost their hogging capacity);
- external work: the exact integral of each area load over the P1 field (each
  triangle clipped to the load's polygon, the linear w integrated over the piece);
- supports: |w| on supported edges and faces and at the bearing points of pinned columns
  (their centres: a pinned column holds the slab there only, its footprint is slab);
- load factor = (internal - held-load work) / scaled-load work.

Units: m, kNm/m, kPa; work in kNm. w positive downward; theta > 0 sagging.
"""
from __future__ import annotations

import math

import numpy as np
import shapely

from ..errors import SolverError
from ..geometry.domain import segment_distance
from ..model import Model
from ..model.criterion import capacity_at
from ..result import CertificateCheck, Mechanism
from .candidates import crossings, split_pieces

#: Relative agreement required between a load factor and its re-check by the work equation.
CERTIFICATE_RTOL = 1e-6


def plane_gradients(V, T, w):
    """Slopes (t, 2) of the P1 field on each triangle and the triangles' areas (t,), m2."""
    P = V[T]
    d1, d2 = P[:, 1] - P[:, 0], P[:, 2] - P[:, 0]
    det = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
    w1, w2 = w[T[:, 1]] - w[T[:, 0]], w[T[:, 2]] - w[T[:, 0]]
    gx = (w1 * d2[:, 1] - w2 * d1[:, 1]) / det
    gy = (d1[:, 0] * w2 - d2[:, 0] * w1) / det
    return np.stack([gx, gy], axis=1), 0.5 * np.abs(det)


def supported_edge_segments(model: Model) -> tuple[np.ndarray, np.ndarray]:
    """Supported outline edges and faces of columns and walls (s, 2, 2), and the share of the
    hogging capacity each mobilises (s,): the fixity of a continuous edge, 1 at a monolithic
    support, 0 where the slab rotates freely."""
    outline = model.slab.outline
    fixity = model.slab.fixity or (1.0,) * len(outline)
    ks = [k for k, kind in enumerate(model.slab.edges) if kind != "free"]
    edges = [np.array([[outline[k], outline[(k + 1) % len(outline)]] for k in ks]).reshape(-1, 2, 2)]
    hog = [np.array([fixity[k] if model.slab.edges[k] == "continuous" else 0.0 for k in ks])]
    for sp in model.supports:
        if sp.bearing:
            continue
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            ring = np.asarray(part.exterior.coords)
            edges.append(np.stack([ring[:-1], ring[1:]], axis=1))
            hog.append(np.full(len(ring) - 1, 1.0 if sp.connection == "monolithic" else 0.0))
    return np.concatenate(edges), np.concatenate(hog)


def slab_region(model: Model):
    """The slab as a shapely polygon: outline less openings and the footprints of supports
    held as ground (a pinned column's footprint is slab)."""
    slab = shapely.Polygon(model.slab.outline, list(model.slab.openings))
    for sp in model.supports:
        if not sp.bearing:
            slab = slab.difference(sp.polygon)
    return slab


def _zone_edges(model: Model) -> np.ndarray:
    out = [np.stack([z.polygon, np.roll(z.polygon, -1, axis=0)], axis=1) for z in model.zones]
    return np.concatenate(out) if out else np.zeros((0, 2, 2))


def _tolerance(model: Model) -> float:
    return 1e-8 * float(np.hypot(*np.ptp(model.slab.outline, axis=0)))


def internal_work(model: Model, mech: Mechanism) -> float:
    """Plastic work of the field's slope jumps, kNm."""
    return float(hinges(model, mech)[3].sum())


def hinges(model: Model, mech: Mechanism) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Every interior triangle edge of the field and every edge on a support, as (start
    (h, 2) m, end (h, 2) m, theta (h,) rad, > 0 sagging, plastic work (h,) kNm)."""
    V, T, w = mech.vertices, mech.triangles, mech.w
    g, _ = plane_gradients(V, T, w)
    ntri = len(T)
    e = np.concatenate([T[:, [0, 1]], T[:, [1, 2]], T[:, [2, 0]]])
    opp = np.concatenate([T[:, 2], T[:, 0], T[:, 1]])
    tri = np.tile(np.arange(ntri), 3)
    key = np.sort(e, axis=1)
    order = np.lexsort((key[:, 1], key[:, 0]))
    key, e, opp, tri = key[order], e[order], opp[order], tri[order]
    dup = np.all(key[1:] == key[:-1], axis=1)
    first = np.flatnonzero(dup)          # interior edges: entries first, first + 1
    single = np.ones(len(key), bool)
    single[first] = single[first + 1] = False

    def geometry(a, b):
        """Lengths (m), sagging and hogging capacities normal to the edges at their midpoints
        (kNm/m; zones apply, the weaker side on a zone boundary), unit normals."""
        t = V[b] - V[a]
        L = np.hypot(t[:, 0], t[:, 1])
        n = np.stack([-t[:, 1], t[:, 0]], axis=1) / L[:, None]
        # Split edges where they cross a zone boundary; price each piece at its midpoint.
        e, t0, t1 = split_pieces(V[a], V[b], _zone_edges(model), _tolerance(model))
        k = len(a)
        mid = V[a][e] + (0.5 * (t0 + t1))[:, None] * t[e]
        cp, cm = capacity_at(model, mid, n[e], _tolerance(model))
        mp, mm = np.zeros(k), np.zeros(k)
        np.add.at(mp, e, cp * (t1 - t0))
        np.add.at(mm, e, cm * (t1 - t0))
        return L, mp, mm, n

    # Interior edges: theta = -(g2 - g1) . nu, nu the unit normal from triangle 1 into triangle 2.
    a, b = e[first, 0], e[first, 1]
    L, mp, mm, n = geometry(a, b)
    side = np.sign(((V[opp[first + 1]] - V[a]) * n).sum(1))
    nu = n * side[:, None]
    theta = -((g[tri[first + 1]] - g[tri[first]]) * nu).sum(1)
    out = [(V[a], V[b], theta, L * np.where(theta > 0, mp * theta, -mm * theta))]

    # Boundary edges: supported ones hinge against the flat ground (w = 0, zero slope).
    idx = np.flatnonzero(single)
    a, b = e[idx, 0], e[idx, 1]
    sup_edges, share = supported_edge_segments(model)
    tol = _tolerance(model)
    on = (segment_distance(V[a], sup_edges) <= tol) & (segment_distance(V[b], sup_edges) <= tol)
    factor = (on * share[None, :]).max(axis=1, initial=0.0)
    sup = on.any(axis=1)
    if sup.any():
        a, b, idx = a[sup], b[sup], idx[sup]
        L, mp, mm, n = geometry(a, b)
        mm = mm * factor[sup]
        side = np.sign(((V[opp[idx]] - V[a]) * n).sum(1))
        nu = n * side[:, None]           # into the slab
        theta = -(g[tri[idx]] * nu).sum(1)
        # Uplift next to a support (theta > 0) is taken as free (conservative).
        out.append((V[a], V[b], theta, L * np.where(theta < 0, -mm * theta, 0.0)))
    return tuple(np.concatenate(parts) for parts in zip(*out))


def load_work(model: Model, mech: Mechanism) -> tuple[float, float]:
    """(factored, held) work of the area loads on the field, kNm (exact for P1)."""
    works = work_per_load(model, mech)
    factored = sum(wk for wk, load in zip(works, model.loads) if load.factored)
    held = sum(wk for wk, load in zip(works, model.loads) if not load.factored)
    return factored, held


def work_per_load(model: Model, mech: Mechanism) -> list[float]:
    """Work of each load of model.loads on the field, kNm (exact for P1), in model order."""
    V, T, w = mech.vertices, mech.triangles, mech.w
    g, tri_area = plane_gradients(V, T, w)
    polys = shapely.polygons(V[T])
    tol = 0.1 * _tolerance(model)
    slab = slab_region(model)
    tri_centroid = V[T].mean(axis=1)
    works = []
    for load in model.loads:
        if hasattr(load, "at"):
            works.append(load.value * float(_field_at(V, T, w, g, np.asarray(load.at, float)[None, :])[0]))
            continue
        if hasattr(load, "path"):
            works.append(load.value * _path_integral(V, T, w, g, np.asarray(load.path, float)))
            continue
        region = slab if load.region is None else shapely.Polygon(load.region).intersection(slab)
        # Triangles inside the region (to round-off: vertices on a boundary are computed
        # crossings) are taken whole; GEOS overlay was seen to return a MultiPoint for such a
        # triangle with a vertex 1e-16 m outside a free edge. Only cut triangles are clipped.
        inside = shapely.covers(region.buffer(tol), polys)
        area = np.where(inside, tri_area, 0.0)
        c = tri_centroid.copy()
        cut = np.flatnonzero(~inside & shapely.intersects(region, polys))
        if cut.size:
            pieces = shapely.intersection(polys[cut], region)
            area[cut] = shapely.area(pieces)
            hit = area[cut] > 0
            c[cut[hit]] = shapely.get_coordinates(shapely.centroid(pieces[hit]))
        if abs(area.sum() - region.area) > 1e-9 * region.area:
            raise SolverError(f"certificate check: load '{load.name}': the mechanism's triangles cover {area.sum():.9g} m2 "
                             f"of its {region.area:.9g} m2")
        wc = w[T[:, 0]] + ((c - V[T[:, 0]]) * g).sum(1)
        works.append(load.value * float(np.sum(area * wc)))
    return works


def _field_at(V, T, w, g, pts: np.ndarray) -> np.ndarray:
    """w of the P1 field at points (k, 2) lying on the triangulation (any containing triangle)."""
    P = V[T]
    out = np.full(len(pts), np.nan)
    d1, d2 = P[:, 1] - P[:, 0], P[:, 2] - P[:, 0]
    det = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
    for k, c in enumerate(pts):
        r = c - P[:, 0]
        b1 = (r[:, 0] * d2[:, 1] - r[:, 1] * d2[:, 0]) / det
        b2 = (d1[:, 0] * r[:, 1] - d1[:, 1] * r[:, 0]) / det
        bary = np.minimum(np.minimum(b1, b2), 1 - b1 - b2)
        j = int(np.argmax(bary))
        if bary[j] < -1e-9:
            raise SolverError(f"certificate check: point {c.tolist()} lies outside the mechanism's triangles")
        out[k] = w[T[j, 0]] + r[j] @ g[j]
    return out


def _path_integral(V, T, w, g, path: np.ndarray) -> float:
    """Integral of the P1 field along a polyline (m * w): exact, the path is split at every
    triangle edge it crosses and w is linear on each piece."""
    e = np.concatenate([T[:, [0, 1]], T[:, [1, 2]], T[:, [2, 0]]])
    e = np.unique(np.sort(e, axis=1), axis=0)
    edges = V[e]
    total = 0.0
    for a, b in zip(path[:-1], path[1:]):
        _, t, _ = crossings(a[None, :], b[None, :], edges, 1e-12 * float(np.ptp(V).max()))
        t = np.unique(np.concatenate([[0.0, 1.0], t]))
        mids = a + 0.5 * (t[:-1] + t[1:])[:, None] * (b - a)
        total += float(np.sum(_field_at(V, T, w, g, mids) * np.diff(t))) * float(np.hypot(*(b - a)))
    return total


def check_mechanism(model: Model, mech: Mechanism) -> CertificateCheck:
    """Recompute the load factor of `mech` from the field alone (see module docstring)."""
    internal = internal_work(model, mech)
    factored, held = load_work(model, mech)
    sup_edges, _ = supported_edge_segments(model)
    on_sup = (segment_distance(mech.vertices, sup_edges) <= _tolerance(model)).any(axis=1)
    max_w = float(np.abs(mech.w[on_sup]).max(initial=0.0))
    bearings = np.array([sp.centre for sp in model.supports if sp.bearing], float).reshape(-1, 2)
    if len(bearings):
        g, _ = plane_gradients(mech.vertices, mech.triangles, mech.w)
        max_w = max(max_w, float(np.abs(_field_at(mech.vertices, mech.triangles, mech.w, g, bearings)).max()))
    lf = (internal - held) / factored if factored > 0 else float("nan")
    return CertificateCheck(lf, internal, factored, held, max_w)


def certificate_agrees(load_factor: float, check: CertificateCheck, w_max: float,
                       rtol: float = CERTIFICATE_RTOL) -> bool:
    """The one test of agreement between a load factor and the re-check of its mechanism
    (w_max: largest |w| of the mechanism, m/kNm): the re-checked load factor equals it within
    rtol of its size, the scaled loads do unit work on the field within rtol, and |w| on
    the supports is at most rtol times w_max. All three are ratios, so no unit enters."""
    lf, chk = float(load_factor), check
    if not (math.isfinite(lf) and math.isfinite(chk.load_factor) and math.isfinite(chk.factored)):
        return False
    return (abs(chk.load_factor - lf) <= rtol * abs(lf) and abs(chk.factored - 1.0) <= rtol
            and chk.max_support_w <= rtol * w_max)
