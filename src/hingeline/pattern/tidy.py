"""After the geometry optimisation: points that meet merged, vanished regions dropped,
straight-through points removed, and the planes projected exactly onto the compatibility
conditions of the final geometry.

Units: m; w dimensionless.
May import: numpy, shapely, `hingeline.model`, `layout`, `problem` and `regions` of this package.
"""
from __future__ import annotations

import logging

import numpy as np
import shapely

from ..model import Model
from ..upper.certificate import slab_region
from .layout import Layout, layout_of, signed_area
from .problem import PatternProblem, boundary_segments, segment_projection

log = logging.getLogger(__name__)

#: Largest misfit of the planes at a shared point after `make_compatible`, as a fraction of the
#: largest w (the hand check refuses 1e-8).
RESTORE_TOL = 1e-10
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


TIDY_SETTINGS = ((MERGE_RTOL, SLIVER_RTOL, BEND_MAX), (1e-4, 1e-7, 0.005), (1e-6, 1e-10, 0.0))


def tidy(model: Model, lay: Layout, P: np.ndarray, C: np.ndarray, size: float,
         merge: float = MERGE_RTOL, sliver: float = SLIVER_RTOL, bend: float = BEND_MAX) -> Layout | None:
    """Merge points that meet (closer than `merge` of the size), drop regions and rings that
    vanished (area below `sliver` of the slab's), drop points inside the slab joining two
    regions only where the line turns by at most `bend` rad, and make the planes and points
    exactly compatible (`make_compatible`)."""
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
            if len(idx) < 3 or abs(signed_area(P2[idx])) <= 1e-12 * slab_area:
                if j == 0:
                    new = []
                    break
                continue
            new.append(idx)
        if not new:
            continue
        if abs(signed_area(P2[new[0]])) <= sliver * slab_area and len(new) == 1:
            slivers.append(new)
        else:
            kept.append((new, r))
    if not kept:
        return None
    kept = _absorb(kept, slivers, P2, size)
    # Points inside the slab that no longer join three regions are bends of a line between
    # two planes (which is straight) or corners of a vanished sliver: they go when the turn
    # there is small.
    free = ~on_boundary(model, P2, size)
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
                and abs(signed_area(P2[new[0]])) > sliver * slab_area]
    rings_xy = [[P2[idx] for idx in new] for new, _ in kept]
    planes = [C[r] for _, r in kept]
    rest = [lay.at_rest[r] for _, r in kept]
    out = layout_of(rings_xy, np.array(planes), np.array(rest), size)
    prob = PatternProblem(model, out, size)
    return make_compatible(prob, out)


def make_compatible(prob: PatternProblem, lay: Layout, unfolded: bool = False) -> Layout | None:
    """The layout made exactly compatible by alternating projections: the planes projected
    onto the compatible motions of the current points, then each movable point put where its
    regions' planes meet (least squares), until the planes fit to RESTORE_TOL of the largest
    w (the hand check allows 1e-8). With `unfolded`, None as soon as a region's exterior
    turns over (such a layout is refused anyway, and the projections are what costs)."""
    P = lay.points.copy()
    cur = lay
    for it in range(60):
        if unfolded and it and min(signed_area(P[rr[0]]) for rr in lay.rings) <= 0:
            log.info("simplified pattern: a region turns over while the planes are made to fit")
            return None
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


def _place_points(prob: PatternProblem, P: np.ndarray, C: np.ndarray) -> np.ndarray:
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


def on_boundary(model: Model, P: np.ndarray, size: float) -> np.ndarray:
    """Points on the outline, an opening or a support face."""
    d, _ = segment_projection(P, boundary_segments(model))
    return (d <= 1e-7 * size).any(axis=1)


def _fixed_points(model: Model, P: np.ndarray, size: float) -> np.ndarray:
    """Points at a corner of the outline, an opening or a support."""
    c = boundary_segments(model)[:, 0]
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


def _project(prob: PatternProblem, lay: Layout, rtol: float = 1e-10) -> np.ndarray | None:
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
    # U is not needed; without it the SVD of a tall matrix costs a fraction of the full one.
    _, sv, vt = np.linalg.svd(As, full_matrices=As.shape[0] < As.shape[1])
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


