"""Mechanism stage: from line rotations to a deflection field and a list of yield lines.

The LP returns a rotation for each line. Here the active lines, together with the
boundaries of D and of the slab, are split where they cross and triangulated, so
that no hinge runs through a triangle. Each triangle is then a piece of one rigid
region; its plane is found by walking from the ground across triangle edges and
applying the slope jump of every hinge crossed:

    crossing line i (unit normal nu pointing into the new triangle, point x0 on it)
    w_new(x) = w_old(x) - theta_i nu . (x - x0)      (theta > 0 sagging).

The deflections at the vertices of the slab's triangles form the certificate
(result.Mechanism) that certificate.py re-checks on its own.

Units: m; w in m per kNm of factored-load work, positive downward.
"""
from __future__ import annotations

import logging
from collections import deque

import meshpy.triangle as triangle
import numpy as np
import shapely
from scipy import sparse
from scipy.sparse.linalg import spsolve

from ..errors import SolverError
from ..geometry.domain import HOGGING_SUPPORT, SUPPORTED, Domain, merge_points, segment_distance
from ..model.criterion import capacity_at
from ..result import Mechanism, YieldLines
from .candidates import INTERIOR, Candidates, crossings, inside_intervals, piece_edges

log = logging.getLogger(__name__)

ACTIVE = 1e-10  # |theta| below ACTIVE * max|theta| is taken as zero (solver noise)
COMPATIBLE_CHANGE = 1e-6  # largest change of a rotation, relative to the largest, to restore compatibility
RIDGE = 1e-10             # regularisation of that correction (B B^T has entries of order 1)


def active_lines(theta: np.ndarray) -> np.ndarray:
    """Indices of lines with a rotation above solver noise."""
    return np.flatnonzero(np.abs(theta) > ACTIVE * np.abs(theta).max())


def _arrangement(nodes, cand: Candidates, lines: np.ndarray, theta: np.ndarray, tol: float):
    """Split `lines` where they cross and where they pass within `tol` (m) of an end or a
    crossing of another line, so that no point of the arrangement lies closer than `tol` to a
    piece it does not end on (such a point would make a sliver triangle whose slopes amplify
    round-off). Points closer than `tol` are one point.

    Returns (points, pieces (k, 2) with no two joining the same points, rotation of each piece:
    the sum of the rotations of the lines running along it). Sagging rotation does not depend on
    the side it is seen from, so the rotations of nearly coincident lines simply add.
    """
    p, q = nodes[cand.a[lines]], nodes[cand.b[lines]]
    seg = np.stack([p, q], axis=1)
    i, t, _ = crossings(p, q, seg, tol)
    pts = np.concatenate([nodes, p[i] + t[:, None] * (q[i] - p[i])])
    reps, cluster = merge_points(pts, tol)
    n = len(nodes)
    ends = cluster[np.stack([cand.a[lines], cand.b[lines]], axis=1)]
    # Breakpoints per line: its two nodes (t = 0, 1), its crossings and the points it passes near
    # (ends and crossings of lines only: a node no line uses is left out of the arrangement).
    used = np.unique(np.concatenate([ends.ravel(), cluster[n + np.arange(len(i))]]))
    si, sp, st = _near_points(reps[used], p, q, tol, ends, used)
    li = np.concatenate([np.arange(len(lines)), i, si, np.arange(len(lines))])
    lt = np.concatenate([np.zeros(len(lines)), t, st, np.ones(len(lines))])
    lp = np.concatenate([ends[:, 0], cluster[n + np.arange(len(i))], sp, ends[:, 1]])
    # Each point once per line (a crossing may also be found as a near point).
    _, first = np.unique(li * len(reps) + lp, return_index=True)
    li, lt, lp = li[first], lt[first], lp[first]
    order = np.lexsort((lt, li))
    li, lp = li[order], lp[order]
    same = li[1:] == li[:-1]
    pieces = np.stack([lp[:-1][same], lp[1:][same]], axis=1)
    owner = lines[li[:-1][same]]
    pieces = np.searchsorted(used, np.sort(pieces, axis=1))
    # Nearly coincident lines (a node a rounding error off a line, as rounded coordinates make)
    # give the same piece twice: one facet carrying both rotations.
    unique, inverse = np.unique(pieces, axis=0, return_inverse=True)
    rotation = np.zeros(len(unique))
    np.add.at(rotation, inverse.ravel(), theta[owner])
    return reps[used], unique, rotation


def _compatible(points, pieces, rotation):
    """Rotations of the pieces made compatible at every point of the arrangement (the sum of
    rotation times unit vector away from the point vanishes), by the smallest change.

    The LP meets compatibility only to its feasibility tolerance, and bending a line through a
    point it passes near adds a kink of up to the merging distance; either leaves planes that
    disagree around a point, and a sliver triangle there would turn the disagreement into a
    slope jump. The change is refused (rotations returned as they are) if it exceeds
    COMPATIBLE_CHANGE of the largest rotation."""
    d = points[pieces[:, 1]] - points[pieces[:, 0]]
    d /= np.hypot(d[:, 0], d[:, 1])[:, None]
    k = np.arange(len(pieces))
    rows = np.concatenate([2 * pieces[:, 0], 2 * pieces[:, 0] + 1, 2 * pieces[:, 1], 2 * pieces[:, 1] + 1])
    vals = np.concatenate([d[:, 0], d[:, 1], -d[:, 0], -d[:, 1]])
    B = sparse.csr_matrix((vals, (rows, np.tile(k, 4))), shape=(2 * len(points), len(pieces)))
    residual = B @ rotation
    big = np.abs(rotation).max(initial=0.0)
    if not np.abs(residual).max(initial=0.0) > 0:
        return rotation
    # Smallest change: change = -B^T y with (B B^T) y = residual. B B^T is singular where all
    # pieces at a point are (nearly) in line; a small ridge keeps y bounded there, leaving
    # what cannot be corrected (a kink's residual along such a point's normal) as it is.
    BBt = (B @ B.T).tocsc() + RIDGE * sparse.identity(B.shape[0], format="csc")
    change = -(B.T @ spsolve(BBt, residual))
    if not np.all(np.isfinite(change)) or np.abs(change).max() > COMPATIBLE_CHANGE * big:
        log.info("compatibility correction of %.1e (of the largest rotation) refused",
                 np.abs(change).max() / big)
        return rotation
    return rotation + change


def _near_points(points, p, q, tol, ends, index):
    """(line, point, t) for every point within tol (m) of the inside of segment p -> q that
    is not one of the segment's own end points `ends` (c, 2); points are numbered by `index`
    (their numbers in `ends`), t runs along p -> q."""
    tree = shapely.STRtree(shapely.points(points))
    j, k = tree.query(shapely.linestrings(np.stack([p, q], axis=1)), predicate="dwithin", distance=tol)
    d = q[j] - p[j]
    t = ((points[k] - p[j]) * d).sum(1) / (d**2).sum(1)
    keep = (t > 0) & (t < 1) & (index[k] != ends[j, 0]) & (index[k] != ends[j, 1])
    return j[keep], index[k[keep]], t[keep]


def build_mechanism(nodes, cand: Candidates, theta: np.ndarray, domain: Domain):
    """Deflection field of the LP solution on a triangulation of the slab.

    Returns (Mechanism, mismatch, support_w): mismatch is the largest disagreement (m/kNm)
    between planes meeting at a vertex (how well the rotations are compatible), support_w
    the largest |w| found on a supported edge before it is set to exactly 0.
    """
    act = active_lines(theta)
    lines = np.union1d(act, np.flatnonzero(cand.kind != INTERIOR))
    # Points closer than 1e-8 of D's size are one point, and lines passing that close to a point
    # run through it: the pieces move by no more than that, while slivers thinner than it
    # would turn the round-off of w into slope jumps that the certificate prices.
    pts, pieces, rotation = _arrangement(nodes, cand, lines, theta, 10 * domain.tol)
    rotation = _compatible(pts, pieces, rotation)

    info = triangle.MeshInfo()
    info.set_points(pts.tolist())
    info.set_facets(pieces.tolist(), facet_markers=(np.arange(len(pieces)) + 2).tolist())
    tm = triangle.build(info, quality_meshing=False, generate_faces=True,
                        generate_neighbor_lists=True)
    V = np.array(tm.points, float)
    T = np.array(tm.elements, np.int64)
    nbr = np.array(tm.neighbors, np.int64)
    marker = {}
    for (u, v), m in zip(tm.faces, tm.face_markers):
        marker[(min(u, v), max(u, v))] = m

    cen = V[T].mean(axis=1)
    planes = np.full((len(T), 3), np.nan)  # w = c0 + c1 x + c2 y

    def crossed(plane, piece, u, v, toward):
        # The normal of the triangle edge itself (not of the LP line, which may lie a snap
        # distance away): the jump then vanishes all along the edge, so w stays continuous.
        x0, e = V[u], V[v] - V[u]
        n = np.array([-e[1], e[0]]) / np.hypot(*e)
        nu = n if np.dot(toward - x0, n) > 0 else -n
        th = rotation[piece]
        return plane + np.array([th * nu @ x0, -th * nu[0], -th * nu[1]])

    queue = deque()
    for k in range(len(T)):
        for j in range(3):
            if nbr[k, j] < 0:
                u, v = T[k, (j + 1) % 3], T[k, (j + 2) % 3]
                piece = marker.get((min(u, v), max(u, v)), 0) - 2
                if piece < 0:
                    raise SolverError("mechanism triangulation has a boundary edge that is not on D's boundary")
                planes[k] = crossed(np.zeros(3), piece, u, v, cen[k])
                queue.append(k)
                break
    mismatch = 0.0
    while queue:
        k = queue.popleft()
        for j in range(3):
            o = nbr[k, j]
            if o < 0:
                continue
            u, v = T[k, (j + 1) % 3], T[k, (j + 2) % 3]
            piece = marker.get((min(u, v), max(u, v)), 0) - 2
            new = planes[k] if piece < 0 else crossed(planes[k], piece, u, v, cen[o])
            if np.isnan(planes[o, 0]):
                planes[o] = new
                queue.append(o)
            else:
                d = np.abs((planes[o] - new) @ np.array([1.0, *V[u]]))
                mismatch = max(mismatch, d)
    if np.isnan(planes).any():
        raise SolverError("mechanism triangulation is not connected to the ground")

    in_slab = shapely.contains_xy(domain.slab, cen[:, 0], cen[:, 1])
    Ts = T[in_slab]
    used, Tn = np.unique(Ts, return_inverse=True)
    Tn = Tn.reshape(-1, 3)
    wsum = np.zeros(len(V))
    cnt = np.zeros(len(V))
    for j in range(3):
        val = planes[in_slab, 0] + planes[in_slab, 1] * V[Ts[:, j], 0] + planes[in_slab, 2] * V[Ts[:, j], 1]
        np.add.at(wsum, Ts[:, j], val)
        np.add.at(cnt, Ts[:, j], 1)
    w = (wsum / np.maximum(cnt, 1))[used]
    # Ground is exactly flat: vertices on supported edges carry w = 0 by construction.
    Vs = V[used]
    on_support = _on_supported(Vs, domain)
    support_w = float(np.abs(w[on_support]).max(initial=0.0))
    w[on_support] = 0.0
    return Mechanism(Vs, Tn, w), mismatch, support_w


def _on_supported(points, domain: Domain) -> np.ndarray:
    sup = np.isin(domain.edge_kind, SUPPORTED)
    return (segment_distance(points, domain.edges[sup]) <= 10 * domain.tol).any(axis=1)


def yield_lines(nodes, cand: Candidates, theta: np.ndarray, domain: Domain, model) -> YieldLines:
    """Active hinges inside the slab or along continuous edges, with their work (kNm).

    Rotations about simply supported edges are not yield lines (nothing yields) and are left out."""
    act = active_lines(theta)
    act = act[np.isin(cand.kind[act], (INTERIOR, *HOGGING_SUPPORT))]
    p, q = nodes[cand.a[act]], nodes[cand.b[act]]
    interior = cand.kind[act] == INTERIOR
    i, t0, t1 = inside_intervals(p[interior], q[interior], piece_edges(domain, model), domain.slab, domain.tol)
    idx_int = np.flatnonzero(interior)[i]
    idx_bnd = np.flatnonzero(~interior)
    idx = np.concatenate([idx_int, idx_bnd])
    ta = np.concatenate([t0, np.zeros(len(idx_bnd))])
    tb = np.concatenate([t1, np.ones(len(idx_bnd))])
    line = act[idx]
    d = q[idx] - p[idx]
    th = theta[line]
    mid = p[idx] + (0.5 * (ta + tb))[:, None] * d
    m_plus, m_minus = capacity_at(model, mid, cand.normal[line], 10 * domain.tol)
    piece = (tb - ta) * cand.length[line]
    work = np.where(th > 0, m_plus, m_minus) * piece * np.abs(th)
    # Hinges along supports: the line's own cost (fixity included); uplift there is free.
    support = cand.kind[line] != INTERIOR
    work[support] = np.where(th[support] < 0, cand.cost_minus[line[support]] * np.abs(th[support]), 0.0)
    return YieldLines(
        start=p[idx] + ta[:, None] * d,
        end=p[idx] + tb[:, None] * d,
        rotation=np.abs(th),
        sagging=th > 0,
        dissipation=work,
        at_support=cand.kind[line] != INTERIOR,
    )
