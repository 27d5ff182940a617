"""Candidate lines: every straight node-to-node segment that may become a yield line.

Discontinuity layout optimisation takes as potential yield lines all segments
between two nodes that stay inside D and pass through no third node (a segment
through a node is already represented by the chain of shorter segments). For
each candidate this module gives its geometry and its plastic cost per unit
rotation, kNm/rad: the capacity normal to the line times the length of the line
that lies in the slab (fill costs nothing).

Sign convention: a rotation theta > 0 is sagging (bottom bars yield), theta < 0
hogging. Lines lying on the slab boundary take the cost of that boundary:
simply supported edges, free edges and opening edges cost nothing; continuous
edges cost the hogging capacity (uplift next to a support is taken as free).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from ..geometry.domain import HOGGING_SUPPORT, MARGIN, Domain, segment_distance
from ..model import Model
from ..model.criterion import capacity_at, normal_capacity

INTERIOR = -1


@dataclass(frozen=True, eq=False)
class Candidates:
    """Arrays over c candidate lines, each running from node a to node b (a < b).

    length: m; tangent: (c, 2) unit vector a -> b; normal: (c, 2) tangent turned +90 deg.
    kind: INTERIOR, or the boundary kind code (geometry.FREE, SIMPLE, CONTINUOUS,
        OPENING, MARGIN, FACE_*) for lines lying on a boundary of the slab or of D.
    cost_plus, cost_minus: kNm per rad of sagging / hogging rotation.
    """

    a: np.ndarray
    b: np.ndarray
    length: np.ndarray
    tangent: np.ndarray
    normal: np.ndarray
    kind: np.ndarray
    cost_plus: np.ndarray
    cost_minus: np.ndarray

    def __len__(self) -> int:
        return len(self.a)


def visible_pairs(nodes: np.ndarray, rel_tol: float = 1e-9) -> np.ndarray:
    """Node pairs (a < b) whose segment passes through no third node; (p, 2) int array."""
    n = len(nodes)
    d = nodes[None, :, :] - nodes[:, None, :]  # d[a, b] = x_b - x_a
    dist = np.hypot(d[..., 0], d[..., 1])
    # Rotate the angle origin by an arbitrary amount so the +-pi wrap is unlikely to split a ray.
    ang = np.arctan2(d[..., 1], d[..., 0]) + 0.3183098861837907
    ang = np.where(ang > np.pi, ang - 2 * np.pi, ang)
    ang[np.arange(n), np.arange(n)] = np.inf
    order = np.argsort(ang, axis=1, kind="stable")
    rows = np.arange(n)[:, None]
    ds, dists = d[rows, order], dist[rows, order]
    cross = ds[:, 1:, 0] * ds[:, :-1, 1] - ds[:, 1:, 1] * ds[:, :-1, 0]
    dot = (ds[:, 1:] * ds[:, :-1]).sum(-1)
    same = (np.abs(cross) <= rel_tol * dists[:, 1:] * dists[:, :-1]) & (dot > 0)
    new_group = np.ones((n, n), bool)
    new_group[:, 1:] = ~same
    flat_new = new_group.ravel()
    starts = np.flatnonzero(flat_new)
    gid = np.cumsum(flat_new) - 1
    gmin = np.minimum.reduceat(dists.ravel(), starts)
    blocked_sorted = dists.ravel() > gmin[gid]
    blocked = np.empty((n, n), bool)
    blocked[np.repeat(np.arange(n), n), order.ravel()] = blocked_sorted
    keep = ~blocked & ~blocked.T
    a, b = np.nonzero(np.triu(keep, 1))
    return np.stack([a, b], axis=1)


def crossings(p: np.ndarray, q: np.ndarray, edges: np.ndarray, tol: float):
    """Proper crossings of segments p->q (c, 2) with edges (e, 2, 2).

    Returns (line index, t along p->q, edge index) of every crossing strictly
    inside the segment (t in (0, 1) beyond `tol` m) and within the edge or at its ends.
    """
    out_i, out_t, out_e = [], [], []
    lo, hi = np.minimum(p, q), np.maximum(p, q)
    pq = q - p
    length = np.hypot(pq[:, 0], pq[:, 1])
    for k, (r, s) in enumerate(edges):
        elo, ehi = np.minimum(r, s) - tol, np.maximum(r, s) + tol
        sel = np.flatnonzero((hi[:, 0] >= elo[0]) & (lo[:, 0] <= ehi[0]) & (hi[:, 1] >= elo[1]) & (lo[:, 1] <= ehi[1]))
        if sel.size == 0:
            continue
        rs = s - r
        d = pq[sel]
        denom = d[:, 0] * rs[1] - d[:, 1] * rs[0]
        rp = r - p[sel]
        with np.errstate(divide="ignore", invalid="ignore"):
            t = (rp[:, 0] * rs[1] - rp[:, 1] * rs[0]) / denom
            u = (rp[:, 0] * d[:, 1] - rp[:, 1] * d[:, 0]) / denom
        elen = np.hypot(*rs)
        tt = tol / length[sel]
        ok = (np.abs(denom) > 1e-12 * length[sel] * elen) & (t > tt) & (t < 1 - tt) & (u >= -tol / elen) & (u <= 1 + tol / elen)
        out_i.append(sel[ok])
        out_t.append(t[ok])
        out_e.append(np.full(ok.sum(), k))
    if not out_i:
        z = np.zeros(0)
        return z.astype(int), z, z.astype(int)
    return np.concatenate(out_i), np.concatenate(out_t), np.concatenate(out_e)


def split_pieces(p: np.ndarray, q: np.ndarray, edges: np.ndarray, tol: float):
    """Segments p->q cut where they cross `edges`: (line index, t0, t1) of every piece,
    in order along each line (parameters along p->q)."""
    i, t, _ = crossings(p, q, edges, tol)
    c = len(p)
    li = np.concatenate([np.arange(c), i, np.arange(c)])
    lt = np.concatenate([np.zeros(c), t, np.ones(c)])
    order = np.lexsort((lt, li))
    li, lt = li[order], lt[order]
    same = li[1:] == li[:-1]
    i0, t0, t1 = li[:-1][same], lt[:-1][same], lt[1:][same]
    keep = t1 > t0
    return i0[keep], t0[keep], t1[keep]


def inside_intervals(p: np.ndarray, q: np.ndarray, edges: np.ndarray, polygon, tol: float):
    """Pieces of segments p->q lying inside `polygon`; `edges` holds at least the polygon's
    boundary (further edges only split the pieces further, e.g. at zone boundaries).

    Returns (line index, t0, t1) for every inside piece (parameters along p->q).
    """
    i0, t0, t1 = split_pieces(p, q, edges, tol)
    mid = p[i0] + 0.5 * (t0 + t1)[:, None] * (q[i0] - p[i0])
    inside = shapely.contains_xy(polygon, mid[:, 0], mid[:, 1])
    return i0[inside], t0[inside], t1[inside]


def piece_edges(domain: Domain, model: Model) -> np.ndarray:
    """Edges (e, 2, 2) where a line's capacity may change: the slab boundary and zone boundaries."""
    zone_edges = [np.stack([z.polygon, np.roll(z.polygon, -1, axis=0)], axis=1) for z in model.zones]
    return np.concatenate([domain.edges, *zone_edges])


def _shared_edge(on: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Index of an edge holding both nodes a and b, or -1."""
    out = np.full(len(a), -1)
    for start in range(0, len(a), 200_000):
        sl = slice(start, start + 200_000)
        both = on[a[sl]] & on[b[sl]]
        has = both.any(1)
        out[sl] = np.where(has, both.argmax(1), -1)
    return out


def build_candidates(nodes: np.ndarray, domain: Domain, model: Model) -> Candidates:
    """All admissible node-to-node lines with their costs."""
    tol = domain.tol
    pairs = visible_pairs(nodes)
    a, b = pairs[:, 0], pairs[:, 1]
    p, q = nodes[a], nodes[b]

    # Lines on the slab boundary or on the boundary of D.
    slab_edge = _shared_edge(segment_distance(nodes, domain.edges) <= 10 * tol, a, b)
    d_edges = np.concatenate([np.stack([r, np.roll(r, -1, axis=0)], axis=1) for r in domain.rings])
    on_d = _shared_edge(segment_distance(nodes, d_edges) <= 10 * tol, a, b) >= 0
    kind = np.full(len(a), INTERIOR)
    kind[on_d] = MARGIN
    kind[slab_edge >= 0] = domain.edge_kind[slab_edge[slab_edge >= 0]]

    # Lines must stay inside D: interior ones cross none of its rings and have their midpoint
    # inside; boundary ones have their midpoint on D (a slab edge under a column is not).
    simple_region = (isinstance(domain.region, shapely.Polygon) and not domain.region.interiors
                     and domain.region.convex_hull.area <= domain.region.area * (1 + 1e-12))
    if not simple_region:
        ok = np.ones(len(a), bool)
        interior = np.flatnonzero(kind == INTERIOR)
        i, _, _ = crossings(p[interior], q[interior], d_edges, tol)
        ok[interior[i]] = False
        mid = 0.5 * (p + q)
        inside = shapely.contains_xy(domain.region, mid[:, 0], mid[:, 1])
        near = shapely.dwithin(domain.region, shapely.points(mid), 10 * tol)
        ok &= np.where(kind == INTERIOR, inside, near)
        a, b, p, q, kind, slab_edge = a[ok], b[ok], p[ok], q[ok], kind[ok], slab_edge[ok]

    vec = q - p
    length = np.hypot(vec[:, 0], vec[:, 1])
    tangent = vec / length[:, None]
    normal = np.stack([-tangent[:, 1], tangent[:, 0]], axis=1)

    interior = np.flatnonzero(kind == INTERIOR)
    cost_plus = np.zeros(len(a))
    cost_minus = np.zeros(len(a))
    has_fill = domain.margin > 0 or len(model.slab.openings) > 0
    if model.zones:
        # Pieces between crossings of the slab boundary and of zone boundaries, each priced at
        # its midpoint (zone, slab, or the weaker of both on a zone boundary).
        i, t0, t1 = inside_intervals(p[interior], q[interior], piece_edges(domain, model), domain.slab, tol)
        li = interior[i]
        mid = p[li] + 0.5 * (t0 + t1)[:, None] * (q[li] - p[li])
        mp, mm = capacity_at(model, mid, normal[li], 10 * tol)
        piece = (t1 - t0) * length[li]
        np.add.at(cost_plus, li, mp * piece)
        np.add.at(cost_minus, li, mm * piece)
    else:
        slab_length = np.zeros(len(a))  # m of each line inside the slab (fill costs nothing)
        if has_fill:
            i, t0, t1 = inside_intervals(p[interior], q[interior], domain.edges, domain.slab, tol)
            np.add.at(slab_length, interior[i], (t1 - t0) * length[interior[i]])
        else:
            slab_length[interior] = length[interior]
        cap = model.capacity
        cost_plus = normal_capacity(cap.sagging, cap.bar_angle, normal) * slab_length
        cost_minus = normal_capacity(cap.hogging, cap.bar_angle, normal) * slab_length
    # Hinges along continuous edges and monolithic column/wall faces mobilise the hogging
    # capacity; the other sense (slab lifting next to the support) is free, as on every support.
    cont = np.flatnonzero(np.isin(kind, HOGGING_SUPPORT))
    _, m_minus = capacity_at(model, 0.5 * (p[cont] + q[cont]), normal[cont], 10 * tol)
    cost_minus[cont] = m_minus * length[cont] * domain.edge_fixity[slab_edge[cont]]
    return Candidates(a, b, length, tangent, normal, kind, cost_plus, cost_minus)
