"""Simplification of a clean pattern before its optimisation (the merge step of He and
Gilbert's rationalisation, Int. J. Solids Struct., 2016): small regions joined to the
neighbour whose plane is closest, the boundaries between the merged regions drawn straight
from junction to junction, and the planes made compatible again.

A fine mesh reads a fan or a curved yield line as many narrow regions; each costs lines and
labels, and together they carry little of the work. Joining a region to a neighbour makes the
pattern a different mechanism, so its load factor may rise (or, once its junctions are moved,
fall): the result is only a candidate, certified by the hand check like any optimised pattern
(`hingeline.pattern.optimise_pattern`).

Units: m; w dimensionless (as in `layout`).
May import: numpy, shapely, `hingeline.model`, `layout`, `problem`, `tidy` of this package.
"""
from __future__ import annotations

import logging

import numpy as np
import shapely

from ..model import Model
from .layout import Layout, layout_of, signed_area
from .problem import PatternProblem
from .tidy import make_compatible, on_boundary

log = logging.getLogger(__name__)

#: Regions below these fractions of the slab's area are joined to a neighbour, one candidate
#: per fraction, coarsest (fewest lines) first (common practice, no source).
MERGE_AREAS = (2e-2, 1e-2, 5e-3, 1e-3)
#: A simplified pattern may be shown with a certified load factor up to this fraction above
#: the raw mechanism's (clearly marked, the raw mechanism's load factor staying the answer):
#: a handful of lines 0.1 % above is what a reviewer can check; dozens below are not
#: (common practice, no source).
RISE_MAX = 1e-3
#: ... and only when it has at most this share of the lines of the best pattern that is not
#: above the raw mechanism (common practice, no source).
ABOVE_LINES = 0.5
#: A corner of a boundary where the ring turns by less than this (rad) is straight-through.
STRAIGHT_TURN = 1e-6


def _sides(ring: np.ndarray) -> set[tuple[int, int]]:
    return {(int(min(a, b)), int(max(a, b))) for a, b in zip(ring, np.roll(ring, -1))}


def _region_area(P: np.ndarray, rr) -> float:
    return abs(signed_area(P[rr[0]])) - sum(abs(signed_area(P[h])) for h in rr[1:])


def merge_groups(lay: Layout, slab_area: float, frac: float) -> np.ndarray:
    """Group of every region (r,): each moving region smaller than `frac` of `slab_area`,
    smallest first, joins the neighbouring group (sharing a side) whose plane differs least
    from its own over its corners (root mean square); a group keeps the plane of its largest
    member. Regions at rest never join, nor take others in."""
    P = lay.points
    n = len(lay.rings)
    area = np.array([_region_area(P, rr) for rr in lay.rings])
    sides = [set().union(*(_sides(r) for r in rr)) for rr in lay.rings]
    group = np.arange(n)
    lead = np.arange(n)                              # largest member of each group
    for r in np.argsort(area):
        if lay.at_rest[r] or area[r] >= frac * slab_area:
            continue
        g = group[r]
        if lead[g] != r:
            continue                                 # already holds a larger member
        pts = P[np.unique(np.concatenate(lay.rings[r]))]
        best, best_d = -1, np.inf
        for s in range(n):
            h = group[s]
            if h == g or lay.at_rest[s] or not (sides[r] & sides[s]):
                continue
            d = lay.planes[lead[h]] - lay.planes[r]
            dist = float(np.sqrt(np.mean((d[0] + pts @ d[1:]) ** 2)))
            if dist < best_d:
                best, best_d = h, dist
        if best < 0:
            continue
        group[group == g] = best
        if area[lead[g]] > area[lead[best]]:
            lead[best] = lead[g]
    return np.array([lead[g] for g in group])


def simplify_layout(model: Model, lay: Layout, size: float, group: np.ndarray) -> Layout | None:
    """`lay` with its regions merged by `group` (`merge_groups`: the group of each region), the
    points inside the slab that then join only two regions dropped (the boundary of two
    planes is a straight line), and planes and points made compatible (tidy.make_compatible);
    None when nothing merges or the result is not a valid pattern."""
    if np.all(group == np.arange(len(group))):
        return None
    P = lay.points
    rings_xy, planes, rest = [], [], []
    for g in np.unique(group):
        members = np.flatnonzero(group == g)
        try:
            poly = shapely.make_valid(shapely.union_all([shapely.Polygon(P[rr[0]], [P[h] for h in rr[1:]])
                                                         for rr in (lay.rings[m] for m in members)]))
        except shapely.errors.GEOSException as exc:
            log.info("simplified pattern: merged region %d: %s", g, exc)
            return None
        if poly.geom_type != "Polygon":
            log.info("simplified pattern: merged region %d is not one polygon", g)
            return None
        poly = shapely.geometry.polygon.orient(poly, 1.0)
        rings_xy.append([np.asarray(r.coords)[:-1] for r in (poly.exterior, *poly.interiors)])
        planes.append(lay.planes[g])
        rest.append(bool(lay.at_rest[g]))
    out = layout_of(rings_xy, np.array(planes), np.array(rest), size)
    out = _straighten(model, out, size)
    if out is None:
        return None
    out = make_compatible(PatternProblem(model, out, size), out, unfolded=True)
    if out is None or not _simple(out, float(sum(_region_area(P, rr) for rr in lay.rings))):
        return None
    return out


def _simple(lay: Layout, area: float) -> bool:
    """Every region a simple polygon, none turned over, together covering `area` (m2, the
    pattern's before) once: moving points to where the planes meet may fold a region over."""
    total = 0.0
    for rr in lay.rings:
        poly = shapely.Polygon(lay.points[rr[0]], [lay.points[h] for h in rr[1:]])
        if not poly.is_valid or signed_area(lay.points[rr[0]]) <= 0:
            log.info("simplified pattern: a region folds over once the planes are made to fit")
            return False
        total += poly.area
    return abs(total - area) <= 1e-6 * area


def _straighten(model: Model, lay: Layout, size: float) -> Layout | None:
    """Points inside the slab held by at most two regions dropped, and points on the boundary
    held by one region where its ring runs straight on (what is left of a merged fan's apex);
    None if a ring then collapses or a polygon stops being simple."""
    P = lay.points
    holders = np.zeros(len(P), int)
    turn = np.zeros(len(P))
    for rr in lay.rings:
        for ring in rr:
            u, v = P[ring] - P[np.roll(ring, 1)], P[np.roll(ring, -1)] - P[ring]
            np.maximum.at(turn, ring, np.abs(np.arctan2(u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0], (u * v).sum(1))))
        for i in np.unique(np.concatenate(rr)):
            holders[i] += 1
    edge = on_boundary(model, P, size)
    drop = ((holders <= 2) & ~edge) | ((holders == 1) & edge & (turn <= STRAIGHT_TURN))
    rings_xy = []
    for rr in lay.rings:
        kept = [lay.points[ring[~drop[ring]]] for ring in rr]
        if len(kept[0]) < 3:
            return None
        kept = [k for k in kept if len(k) >= 3]
        poly = shapely.Polygon(kept[0], kept[1:])
        if not poly.is_valid or poly.area <= 0:
            log.info("simplified pattern: a straightened region is not a simple polygon")
            return None
        rings_xy.append(kept)
    return layout_of(rings_xy, lay.planes, lay.at_rest, size)
