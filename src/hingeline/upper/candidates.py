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
# A segment passing within THROUGH * domain.tol of a third node runs through it: the mechanism
# stage merges points that close (upper/mechanism.py), so it would bend such a line at the node,
# a kink it cannot make compatible; the chain of shorter segments represents the line instead.
THROUGH = 10.0


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


def _blocked_rows(nodes: np.ndarray, rows: np.ndarray, rel_tol: float,
                  dist_tol: float) -> tuple[np.ndarray, np.ndarray]:
    """Pairs (row node, other node) seen from each node of `rows`: the other node lies behind a
    nearer node on the same ray (within rel_tol of the angle, or with the nearer node within
    dist_tol m of the segment). Returns (a, b) index arrays."""
    n, r = len(nodes), len(rows)
    dx = nodes[None, :, 0] - nodes[rows, 0][:, None]  # dx[k, b] = x_b - x_a, a = rows[k]
    dy = nodes[None, :, 1] - nodes[rows, 1][:, None]
    # Rotate the angle origin by an arbitrary amount so the +-pi wrap is unlikely to split a ray.
    ang = np.arctan2(dy, dx) + 0.3183098861837907
    ang = np.where(ang > np.pi, ang - 2 * np.pi, ang)
    ang[np.arange(r), rows] = np.inf
    order = np.argsort(ang, axis=1, kind="stable")
    del ang
    xs, ys = np.take_along_axis(dx, order, 1), np.take_along_axis(dy, order, 1)
    del dx, dy
    dists = np.hypot(xs, ys)
    cross = xs[:, 1:] * ys[:, :-1] - ys[:, 1:] * xs[:, :-1]
    dot = xs[:, 1:] * xs[:, :-1] + ys[:, 1:] * ys[:, :-1]
    # |cross| / the longer distance is how far the nearer node lies from the other's segment.
    near = np.maximum(rel_tol * np.minimum(dists[:, 1:], dists[:, :-1]), dist_tol)
    same = (np.abs(cross) <= near * np.maximum(dists[:, 1:], dists[:, :-1])) & (dot > 0)
    del xs, ys, cross, dot
    # Only rows that see two nodes on one ray can block anything.
    hit = np.flatnonzero(same.any(axis=1))
    if not hit.size:
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    new_group = np.ones((len(hit), n), bool)
    new_group[:, 1:] = ~same[hit]
    flat_new = new_group.ravel()
    starts = np.flatnonzero(flat_new)
    gid = np.cumsum(flat_new) - 1
    dh = dists[hit].ravel()
    gmin = np.minimum.reduceat(dh, starts)
    k, j = np.divmod(np.flatnonzero(dh > gmin[gid]), n)
    return rows[hit[k]], order[hit[k], j]


def blocked_keys(nodes: np.ndarray, rows_per_block: int | None = None, rel_tol: float = 1e-9,
                 dist_tol: float = 0.0) -> np.ndarray:
    """Sorted keys a * n + b (a < b) of the node pairs whose segment passes through a third
    node (within rel_tol of the angle seen from an end, or within dist_tol m), found from
    either end (few: nodes along straight boundaries). The rows are sorted by angle
    `rows_per_block` at a time (memory of order rows_per_block x nodes)."""
    n = len(nodes)
    step = n if rows_per_block is None else max(1, rows_per_block)
    keys = [np.zeros(0, np.int64)]
    for start in range(0, n, step):
        a, b = _blocked_rows(nodes, np.arange(start, min(n, start + step)), rel_tol, dist_tol)
        keys.append(np.minimum(a, b).astype(np.int64) * n + np.maximum(a, b))
    return np.unique(np.concatenate(keys))


def pairs_in_rows(n: int, start: int, stop: int, blocked: np.ndarray) -> np.ndarray:
    """Node pairs (a, b), start <= a < stop, a < b, whose segment passes through no third node,
    in order of a then b; blocked: sorted keys from blocked_keys. (p, 2) int array."""
    rows = np.arange(start, stop)
    mask = np.arange(n)[None, :] > rows[:, None]
    lo, hi = np.searchsorted(blocked, [start * n, stop * n])
    k, b = np.divmod(blocked[lo:hi], n)
    mask[k - start, b] = False
    k, b = np.nonzero(mask)
    return np.stack([rows[k], b], axis=1)


def visible_pairs(nodes: np.ndarray, rel_tol: float = 1e-9, dist_tol: float = 0.0) -> np.ndarray:
    """Node pairs (a < b) whose segment passes through no third node; (p, 2) int array."""
    n = len(nodes)
    return pairs_in_rows(n, 0, n, blocked_keys(nodes, rel_tol=rel_tol, dist_tol=dist_tol))


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
    return _pieces(len(p), i, t)


def _pieces(c: int, i: np.ndarray, t: np.ndarray):
    """split_pieces of c lines from their crossings (line index i, parameter t)."""
    li = np.concatenate([np.arange(c), i, np.arange(c)])
    lt = np.concatenate([np.zeros(c), t, np.ones(c)])
    order = np.lexsort((lt, li))
    li, lt = li[order], lt[order]
    same = li[1:] == li[:-1]
    i0, t0, t1 = li[:-1][same], lt[:-1][same], lt[1:][same]
    keep = t1 > t0
    return i0[keep], t0[keep], t1[keep]


def inside_intervals(p: np.ndarray, q: np.ndarray, edges: np.ndarray, polygon, tol: float, deep=None):
    """Pieces of segments p->q lying inside `polygon`; `edges` holds at least the polygon's
    boundary (further edges only split the pieces further, e.g. at zone boundaries).
    deep: optional (c,) bool, lines with an end well inside the polygon (away from `edges`):
    when such a line crosses no edge it lies inside as a whole, without a point test.


    Returns (line index, t0, t1) for every inside piece (parameters along p->q).
    """
    i, t, _ = crossings(p, q, edges, tol)
    whole = np.zeros(len(p), bool)
    if deep is not None:
        whole = deep.copy()
        whole[i] = False
    rest = np.flatnonzero(~whole)
    pos = np.full(len(p), -1)
    pos[rest] = np.arange(len(rest))
    sel = pos[i] >= 0
    i0, t0, t1 = _pieces(len(rest), pos[i[sel]], t[sel])
    mid = p[rest[i0]] + 0.5 * (t0 + t1)[:, None] * (q[rest[i0]] - p[rest[i0]])
    inside = shapely.contains_xy(polygon, mid[:, 0], mid[:, 1])
    w = np.flatnonzero(whole)
    i0 = np.concatenate([rest[i0[inside]], w])
    t0 = np.concatenate([t0[inside], np.zeros(len(w))])
    t1 = np.concatenate([t1[inside], np.ones(len(w))])
    order = np.argsort(i0, kind="stable")
    return i0[order], t0[order], t1[order]


def piece_edges(domain: Domain, model: Model) -> np.ndarray:
    """Edges (e, 2, 2) where a line's capacity may change: the slab boundary and zone boundaries."""
    zone_edges = [np.stack([z.polygon, np.roll(z.polygon, -1, axis=0)], axis=1) for z in model.zones]
    return np.concatenate([domain.edges, *zone_edges])


def _shared_edge(on: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Index of an edge holding both nodes a and b, or -1 (on: (n, e) node-on-edge table)."""
    out = np.full(len(a), -1)
    both_on = np.flatnonzero(on.any(axis=1)[a] & on.any(axis=1)[b])
    for start in range(0, len(both_on), 200_000):
        sl = both_on[start:start + 200_000]
        both = on[a[sl]] & on[b[sl]]
        out[sl] = np.where(both.any(1), both.argmax(1), -1)
    return out


@dataclass(frozen=True, eq=False)
class LineContext:
    """What the admissibility and cost of a node-to-node line need, per node and per model,
    computed once (see line_context); lines_for_pairs then works on any batch of pairs.

    on_slab_edge: (n, e) nodes lying on each slab boundary piece (domain.edges);
    on_d_edge: (n, k) nodes on each piece of D's rings (d_edges, (k, 2, 2) m);
    deep_region, deep_slab: (n,) nodes inside D / the slab and farther than DEEP * tol from
    their boundaries (a line from such a node that crosses no boundary lies inside as a whole).
    """

    nodes: np.ndarray
    domain: Domain
    model: Model
    d_edges: np.ndarray
    on_slab_edge: np.ndarray
    on_d_edge: np.ndarray
    simple_region: bool
    deep_region: np.ndarray
    deep_slab: np.ndarray


DEEP = 1000.0  # in units of domain.tol: a node this far inside needs no point-in-polygon test


def line_context(nodes: np.ndarray, domain: Domain, model: Model) -> LineContext:
    tol = domain.tol
    d_edges = np.concatenate([np.stack([r, np.roll(r, -1, axis=0)], axis=1) for r in domain.rings])
    simple_region = (isinstance(domain.region, shapely.Polygon) and not domain.region.interiors
                     and domain.region.convex_hull.area <= domain.region.area * (1 + 1e-12))
    pts = shapely.points(nodes)

    def deep(poly):
        return shapely.contains(poly, pts) & (shapely.distance(poly.boundary, pts) > DEEP * tol)

    return LineContext(nodes, domain, model, d_edges, segment_distance(nodes, domain.edges) <= 10 * tol,
                       segment_distance(nodes, d_edges) <= 10 * tol, simple_region,
                       deep(domain.region), deep(domain.slab))


def build_candidates(nodes: np.ndarray, domain: Domain, model: Model) -> Candidates:
    """All admissible node-to-node lines with their costs."""
    return lines_for_pairs(line_context(nodes, domain, model), visible_pairs(nodes, dist_tol=THROUGH * domain.tol))


def lines_for_pairs(ctx: LineContext, pairs: np.ndarray) -> Candidates:
    """The admissible ones among the node pairs (p, 2) (a < b, passing through no third node),
    with their costs, in the order given."""
    domain, model, nodes = ctx.domain, ctx.model, ctx.nodes
    tol = domain.tol
    a, b = pairs[:, 0], pairs[:, 1]
    p, q = nodes[a], nodes[b]

    # Lines on the slab boundary or on the boundary of D.
    slab_edge = _shared_edge(ctx.on_slab_edge, a, b)
    on_d = _shared_edge(ctx.on_d_edge, a, b) >= 0
    kind = np.full(len(a), INTERIOR)
    kind[on_d] = MARGIN
    kind[slab_edge >= 0] = domain.edge_kind[slab_edge[slab_edge >= 0]]

    # Lines must stay inside D: interior ones cross none of its rings and have their midpoint
    # inside; boundary ones have their midpoint on D (a slab edge under a column is not).
    if not ctx.simple_region:
        interior = kind == INTERIOR
        ok = interior.copy()
        i, _, _ = crossings(p[interior], q[interior], ctx.d_edges, tol)
        ok[np.flatnonzero(interior)[i]] = False
        # A line from a node well inside D that crosses no ring of D lies inside D.
        test = np.flatnonzero(ok & ~(ctx.deep_region[a] | ctx.deep_region[b]))
        mid = 0.5 * (p[test] + q[test])
        ok[test] = shapely.contains_xy(domain.region, mid[:, 0], mid[:, 1])
        bnd = np.flatnonzero(~interior)
        mid = 0.5 * (p[bnd] + q[bnd])
        ok[bnd] = shapely.dwithin(domain.region, shapely.points(mid), 10 * tol)
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
            deep = ctx.deep_slab[a[interior]] | ctx.deep_slab[b[interior]]
            i, t0, t1 = inside_intervals(p[interior], q[interior], domain.edges, domain.slab, tol, deep)
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
