"""Polygons of the model file: validity, orientation, and where two shapes meet.

Holds `Geometry` (the validated outline and openings as shapely polygons, with the
tolerances every section is checked against), `clean_polygon` (a simple polygon from the
user's vertices, or an error naming the vertex or edges at fault), `counter_clockwise`,
`check_strictly_inside`, and the points quoted in messages.

Units: m (lengths, tolerances), m^2 (area tolerance).
May import: numpy, shapely, `.values`.
"""
from __future__ import annotations

import numpy as np
import shapely
from shapely.geometry import Polygon
from shapely.ops import nearest_points

from .values import Invalid, edge_label, pt

REL_TOL = 1e-9  # geometric tolerance relative to the outline's bounding-box size


class Geometry:
    """Validated slab geometry as shapely polygons, with the tolerances used."""

    def __init__(self, outline: Polygon, openings: list[Polygon], tol: float):
        self.outline = outline
        self.openings = openings
        self.tol = tol  # m
        size = tol / REL_TOL
        self.area_tol = tol * size  # m^2


def clean_polygon(pts: np.ndarray, where: str, tol: float) -> np.ndarray:
    """Validate a simple polygon given in the user's order; return it without the closing repeat.

    Checks, in this order: at least 3 distinct vertices, no repeated consecutive
    vertices, non-zero area, no self-intersection (edges crossing, touching or
    folding back). Vertex/edge numbers in messages follow the user's order.
    """
    if len(pts) >= 2 and np.hypot(*(pts[-1] - pts[0])) <= tol:
        pts = pts[:-1]
    n = len(pts)
    if n:
        d = np.hypot(*(pts[:, None, :] - pts[None, :, :]).transpose(2, 0, 1))
        repeats = np.tril(d <= tol, k=-1).any(axis=1)
        distinct = int(n - repeats.sum())
    else:
        distinct = 0
    if distinct < 3:
        raise Invalid(
            f"{where} has {distinct} distinct vertices; a polygon needs at least 3 "
            "(give [[x1, y1], [x2, y2], [x3, y3], ...] in m)"
        )
    nxt = np.roll(pts, -1, axis=0)
    same = np.hypot(*(nxt - pts).T) <= tol
    if same.any():
        k = int(np.argmax(same))
        k2 = (k + 1) % n
        raise Invalid(
            f"{where}: vertex {k + 1} {pt(pts[k])} and vertex {k2 + 1} {pt(pts[k2])} are the same point "
            "(repeated consecutive vertex); remove one of them"
        )
    extent = float(np.max(np.ptp(pts, axis=0)))
    hull_area = shapely.MultiPoint(pts).convex_hull.area
    if hull_area <= tol * extent:
        raise Invalid(
            f"{where} has zero area (all its vertices lie on one line, e.g. vertex 1 {pt(pts[0])}); "
            "give the corners of a polygon with area"
        )
    hit = _self_intersection(pts, tol)
    if hit is not None:
        i, j, at = hit
        raise Invalid(
            f"{where} intersects itself: {edge_label(pts, i)} and {edge_label(pts, j)} "
            f"cross or touch at {pt(at)}; list the vertices in order once around the boundary "
            "so that no two edges meet except at their shared vertex"
        )
    poly = Polygon(pts)
    if not poly.is_valid:  # safety net: should not happen after the checks above
        raise Invalid(f"{where} is not a valid polygon ({shapely.is_valid_reason(poly)}); check its vertices")
    return pts


def _self_intersection(pts: np.ndarray, tol: float) -> tuple[int, int, np.ndarray] | None:
    """First pair of edges (i, j), i < j, 0-based, that cross, touch or overlap, with a point; else None.

    Edge k runs from vertex k to vertex k+1. A pair meets when an end of one edge comes within
    `tol` (m) of the other, or when they cross; of two edges that share a vertex only the far
    ends count (a fold-back puts one on the other edge). The point is where they cross, or the
    end nearest the other edge.
    """
    n = len(pts)
    a = pts
    b = np.roll(pts, -1, axis=0)  # edge k: a[k] -> b[k]
    # Shapely's tree finds the pairs of edges that come near each other; the margin over
    # `tol` covers rounding, so that every pair the test below refuses is among them.
    edges = shapely.linestrings(np.stack([a, b], axis=1))
    near = 2.0 * tol + 64.0 * np.finfo(float).eps * float(np.max(np.abs(pts)))
    i, j = shapely.STRtree(edges).query(edges, predicate="dwithin", distance=near)
    i, j = i[i < j], j[i < j]
    order = np.lexsort((j, i))
    i, j = i[order], j[order]
    # The test itself is kept in plain arithmetic: GEOS's distances and crossing points differ
    # from it in the last digits, which changes the point, even the pair, a message quotes.
    adjacent = (j == i + 1) | ((i == 0) & (j == n - 1))
    cand = np.stack(
        [
            _point_segment_distance(a[j], a[i], b[i]),
            _point_segment_distance(b[j], a[i], b[i]),
            _point_segment_distance(a[i], a[j], b[j]),
            _point_segment_distance(b[i], a[j], b[j]),
        ]
    )
    ends = np.stack([a[j], b[j], a[i], b[i]])
    # Shared vertex of adjacent pairs: j == i+1 shares b[i] == a[j]; (0, n-1) shares a[0] == b[n-1].
    shared = np.zeros_like(cand, dtype=bool)
    shared[0] = j == i + 1  # a[j] is the shared vertex
    shared[3] = j == i + 1  # b[i] is the shared vertex
    wrap = (i == 0) & (j == n - 1)
    shared[1] = wrap  # b[j] = a[0]
    shared[2] = wrap  # a[i] = b[n-1]
    cand = np.where(shared, np.inf, cand)
    touch = (cand <= tol).any(axis=0)
    ui = b[i] - a[i]
    uj = b[j] - a[j]
    c1 = _cross(ui, a[j] - a[i])
    c2 = _cross(ui, b[j] - a[i])
    c3 = _cross(uj, a[i] - a[j])
    c4 = _cross(uj, b[i] - a[j])
    proper = (c1 * c2 < 0) & (c3 * c4 < 0) & ~adjacent
    bad = touch | proper
    if not bad.any():
        return None
    k = int(np.argmax(bad))
    if proper[k]:
        t = c3[k] / (c3[k] - c4[k])
        at = a[i[k]] + t * ui[k]
    else:
        at = ends[int(np.argmin(cand[:, k])), k]
    return int(i[k]), int(j[k]), at


def _point_segment_distance(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Distance (m) from points p to segments a-b; arrays (..., 2)."""
    d = b - a
    L2 = np.einsum("...i,...i->...", d, d)
    t = np.einsum("...i,...i->...", p - a, d) / np.where(L2 > 0, L2, 1.0)
    t = np.clip(t, 0.0, 1.0)
    return np.linalg.norm(p - (a + t[..., None] * d), axis=-1)


def _cross(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def counter_clockwise(pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Counter-clockwise copy of a simple polygon and the edge map.

    Returns (ccw, order): edge k of `ccw` (vertex k -> k+1) is edge order[k] of `pts`.
    A clockwise polygon is reversed keeping its first vertex first.
    """
    n = len(pts)
    # GEOS's orientation test is exact; a sum of cross products (the signed area) loses a small
    # polygon far from the origin to rounding (a 30 mm opening at 5000 km comes out clockwise).
    if shapely.is_ccw(shapely.linearrings(pts)):
        return pts.copy(), np.arange(n)
    idx = (-np.arange(n)) % n  # new vertex j = old vertex -j
    order = (-np.arange(n) - 1) % n  # new edge j (old -j -> old -j-1) = old edge -j-1
    return pts[idx].copy(), order


def check_strictly_inside(pts: np.ndarray, outline: Polygon, where: str, tol: float) -> None:
    """Refuse a polygon (m) that is not inside `outline` clear of its boundary by more than `tol`."""
    poly = Polygon(pts)
    boundary = outline.exterior
    if outline.contains(poly) and boundary.distance(poly) > tol:
        return
    todo = (
        "move it inside the slab, clear of the outline (an opening at the slab edge "
        "is modelled by changing slab.outline instead)"
    )
    x, y = pts[:, 0], pts[:, 1]
    dist = shapely.distance(shapely.points(x, y), boundary)
    on = dist <= tol
    if on.any():
        k = int(np.argmax(on))
        raise Invalid(
            f"{where} is not strictly inside slab.outline: its vertex {k + 1} {pt(pts[k])} "
            f"lies on the outline; {todo}"
        )
    outside = ~shapely.contains_xy(outline, x, y)
    if outside.any():
        k = int(np.argmax(outside))
        raise Invalid(
            f"{where} is not strictly inside slab.outline: its vertex {k + 1} {pt(pts[k])} "
            f"lies outside the outline; {todo}"
        )
    at = meeting_point(poly.exterior, boundary)
    raise Invalid(f"{where} is not strictly inside slab.outline: its boundary meets the outline near {at}; {todo}")


def meeting_point(g1, g2) -> str:
    """A point (formatted) where two geometries meet, or their nearest points when apart."""
    common = g1.intersection(g2)
    if not common.is_empty:
        return pt(where_is(common))
    p, _ = nearest_points(g1, g2)
    return pt((p.x, p.y))


def where_is(geom) -> tuple[float, float]:
    """A point (m) inside or on `geom`, to quote in a message."""
    p = geom.representative_point()
    return (p.x, p.y)
