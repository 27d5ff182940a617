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

from ..errors import SolverError
from ..geometry.domain import HOGGING_SUPPORT, SUPPORTED, Domain, merge_points, segment_distance
from ..model.criterion import capacity_at
from ..result import Mechanism, YieldLines
from .candidates import INTERIOR, Candidates, crossings, inside_intervals, piece_edges

log = logging.getLogger(__name__)

ACTIVE = 1e-10  # |theta| below ACTIVE * max|theta| is taken as zero (solver noise)


def active_lines(theta: np.ndarray) -> np.ndarray:
    """Indices of lines with a rotation above solver noise."""
    return np.flatnonzero(np.abs(theta) > ACTIVE * np.abs(theta).max())


def _arrangement(nodes, cand: Candidates, lines: np.ndarray, tol: float):
    """Split `lines` where they cross; returns (points, pieces (k, 2), line of each piece)."""
    p, q = nodes[cand.a[lines]], nodes[cand.b[lines]]
    seg = np.stack([p, q], axis=1)
    i, t, _ = crossings(p, q, seg, tol)
    pts = np.concatenate([nodes, p[i] + t[:, None] * (q[i] - p[i])])
    reps, cluster = merge_points(pts, tol)
    n = len(nodes)
    # Breakpoints per line: its two nodes (t = 0, 1) and its crossings, in order along it.
    li = np.concatenate([np.arange(len(lines)), i, np.arange(len(lines))])
    lt = np.concatenate([np.zeros(len(lines)), t, np.ones(len(lines))])
    lp = np.concatenate([cand.a[lines], n + np.arange(len(i)), cand.b[lines]])
    order = np.lexsort((lt, li))
    li, lp = li[order], cluster[lp[order]]
    same = li[1:] == li[:-1]
    pieces = np.stack([lp[:-1][same], lp[1:][same]], axis=1)
    owner = lines[li[:-1][same]]
    keep = pieces[:, 0] != pieces[:, 1]
    return reps, pieces[keep], owner[keep]


def build_mechanism(nodes, cand: Candidates, theta: np.ndarray, domain: Domain):
    """Deflection field of the LP solution on a triangulation of the slab.

    Returns (Mechanism, mismatch, support_w): mismatch is the largest disagreement (m/kNm)
    between planes meeting at a vertex (how well the rotations are compatible), support_w
    the largest |w| found on a supported edge before it is set to exactly 0.
    """
    act = active_lines(theta)
    lines = np.union1d(act, np.flatnonzero(cand.kind != INTERIOR))
    pts, pieces, owner = _arrangement(nodes, cand, lines, domain.tol)

    info = triangle.MeshInfo()
    info.set_points(pts.tolist())
    info.set_facets(pieces.tolist(), facet_markers=(owner + 2).tolist())
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

    def crossed(plane, line, x0, toward):
        n = cand.normal[line]
        nu = n if np.dot(toward - x0, n) > 0 else -n
        th = theta[line]
        return plane + np.array([th * nu @ x0, -th * nu[0], -th * nu[1]])

    queue = deque()
    for k in range(len(T)):
        for j in range(3):
            if nbr[k, j] < 0:
                u, v = T[k, (j + 1) % 3], T[k, (j + 2) % 3]
                line = marker.get((min(u, v), max(u, v)), 0) - 2
                if line < 0:
                    raise SolverError("mechanism triangulation has a boundary edge that is not on D's boundary")
                planes[k] = crossed(np.zeros(3), line, V[u], cen[k])
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
            line = marker.get((min(u, v), max(u, v)), 0) - 2
            new = planes[k] if line < 0 else crossed(planes[k], line, V[u], cen[o])
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
