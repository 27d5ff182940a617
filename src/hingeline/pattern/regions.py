"""Rigid regions of a mechanism: the planes a reviewer can read off a raw DLO result.

A mechanism (result.Mechanism) is a P1 deflection field on triangles. Each triangle moves
as a plane w = c0 + c1 x + c2 y. Two triangles sharing a side have the same w at its two
ends (the field is continuous), so their planes agree exactly when the slope jump normal
to the side vanishes; edge-adjacent triangles whose jump is at most PLANE_RTOL of the
largest slope of the mechanism form one rigid region (connected components of that
adjacency, scipy.sparse.csgraph). Triangles with w = 0 throughout (slope and w below the
same tolerance) are "at rest": every such component is kept, all marked at_rest.

Each region gets its polygon (shapely union of its triangles; holes where it surrounds an
opening, a support or another region), its plane (least squares through the w of its
vertices), its rotation axis (where the plane meets w = 0) and its largest deflection.
`thin_rings` then drops the polygon corners that are straight-through points of a boundary
(so a reviewer sees corners, not mesh vertices), the same points from every region.

Conventions: w m per kNm of factored-load work, positive downward (as the mechanism);
slopes rad (m/m). The axis runs along `direction` (unit vector) through `point` with the
region on its left: w grows to the left of the direction at the rate `slope`. A region
whose plane is level (slope at most PLANE_RTOL of the largest) but not at rest translates;
its axis is None. `axis_contact` says where the axis meets the region's closure: "line"
(the region turns about a supported edge or a line of its boundary), "point" (about a
corner or a column face) or "none" (the axis lies outside the region).

Units: m, rad. May import: numpy, scipy, shapely, `hingeline.result`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

from ..result import Mechanism

#: Slope jump (or level w) below this fraction of the mechanism's largest slope (or of its
#: largest |w|) is taken as none. The solver's own round-off leaves jumps near 1e-12 of the
#: largest slope inside a region, while the hinges it finds rotate by 1e-4 of it and more;
#: 1e-9 sits between the two and keeps a region's plane fit within 1e-9 of w_max, well
#: inside the 1e-8 the hand check allows between adjacent regions.
PLANE_RTOL = 1e-9

#: A polygon corner closer than this fraction of the slab's size to the line through its
#: two neighbours is a straight-through point of the boundary and is dropped.
STRAIGHT_RTOL = 1e-9


@dataclass(frozen=True, eq=False)
class Region:
    """One rigid region of the mechanism.

    polygon: shapely Polygon, m (holes where the region surrounds something else).
    plane: (c0, c1, c2), w = c0 + c1 x + c2 y, m per kNm, positive downward.
    at_rest: True when w = 0 throughout.
    axis_point, axis_direction: the rotation axis (see the module docstring); None when
        at rest or translating. slope: |grad w|, rad per kNm of factored work.
    axis_contact: "line", "point" or "none".
    max_deflection: largest w over the region (at a corner), m per kNm.
    triangles: indices of the mechanism's triangles in the region.
    """

    polygon: object
    plane: np.ndarray
    at_rest: bool
    axis_point: np.ndarray | None
    axis_direction: np.ndarray | None
    slope: float
    axis_contact: str
    max_deflection: float
    triangles: np.ndarray


def triangle_planes(mech: Mechanism) -> np.ndarray:
    """(t, 3) plane coefficients (c0, c1, c2) of every triangle of the P1 field."""
    V, T, w = mech.vertices, mech.triangles, mech.w
    A = np.concatenate([np.ones((len(T), 3, 1)), V[T]], axis=2)
    return np.linalg.solve(A, w[T][..., None])[..., 0]


def interior_sides(T: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sides shared by two triangles: (vertex pairs (s, 2), first triangle (s,), second (s,))."""
    e = np.concatenate([T[:, [0, 1]], T[:, [1, 2]], T[:, [2, 0]]])
    tri = np.tile(np.arange(len(T)), 3)
    key = np.sort(e, axis=1)
    order = np.lexsort((key[:, 1], key[:, 0]))
    key, tri = key[order], tri[order]
    first = np.flatnonzero(np.all(key[1:] == key[:-1], axis=1))
    return key[first], tri[first], tri[first + 1]


def label_triangles(mech: Mechanism, rtol: float = PLANE_RTOL) -> tuple[np.ndarray, np.ndarray, float]:
    """Region label of every triangle (t,), whether each label is at rest (r,) and the
    largest slope of the mechanism (rad per kNm).

    Labels number the connected components of "shares a side with no slope jump"; at-rest
    triangles only join at-rest neighbours, and moving ones only moving neighbours."""
    V, T, w = mech.vertices, mech.triangles, mech.w
    planes = triangle_planes(mech)
    g = planes[:, 1:]
    gmax = float(np.hypot(g[:, 0], g[:, 1]).max(initial=0.0))
    wmax = float(np.abs(w).max(initial=0.0))
    rest = (np.hypot(g[:, 0], g[:, 1]) <= rtol * gmax) & (np.abs(w[T]).max(axis=1) <= rtol * wmax)
    sides, t1, t2 = interior_sides(T)
    # The jump across a side is all in its normal component (w is continuous along it).
    d = V[sides[:, 1]] - V[sides[:, 0]]
    n = np.stack([-d[:, 1], d[:, 0]], axis=1) / np.hypot(d[:, 0], d[:, 1])[:, None]
    jump = np.abs(((g[t2] - g[t1]) * n).sum(axis=1))
    same = (jump <= rtol * gmax) & (rest[t1] == rest[t2])
    graph = coo_matrix((np.ones(int(same.sum())), (t1[same], t2[same])), shape=(len(T), len(T)))
    _, label = connected_components(graph, directed=False)
    at_rest = np.zeros(label.max() + 1, bool)
    at_rest[label[rest]] = True
    return label, at_rest, gmax


def find_regions(mech: Mechanism, rtol: float = PLANE_RTOL) -> list[Region]:
    """The rigid regions of `mech`, moving ones first (largest deflection first), then at rest."""
    V, T, w = mech.vertices, mech.triangles, mech.w
    label, at_rest, gmax = label_triangles(mech, rtol)
    tris = shapely.polygons(V[T])
    size = float(np.hypot(*np.ptp(V, axis=0)))
    out = []
    for r in range(len(at_rest)):
        sel = np.flatnonzero(label == r)
        poly = shapely.union_all(tris[sel])
        # Union of triangles sharing exact vertices is one polygon; normalise its orientation.
        poly = shapely.geometry.polygon.orient(poly, 1.0) if poly.geom_type == "Polygon" else poly
        if at_rest[r]:
            out.append(Region(poly, np.zeros(3), True, None, None, 0.0, "none", 0.0, sel))
            continue
        vid = np.unique(T[sel])
        A = np.column_stack([np.ones(len(vid)), V[vid]])
        plane = np.linalg.lstsq(A, w[vid], rcond=None)[0]
        out.append(moving_region(poly, plane, sel, V[vid], gmax, rtol, size))
    out.sort(key=lambda reg: (reg.at_rest, -reg.max_deflection))
    return out


def moving_region(poly, plane, sel, pts, gmax, rtol, size) -> Region:
    """A moving region with its axis (see module docstring)."""
    g = plane[1:]
    slope = float(np.hypot(*g))
    wmax = float((plane[0] + pts @ g).max())
    if slope <= rtol * gmax:
        return Region(poly, plane, False, None, None, slope, "none", wmax, sel)
    direction = np.array([g[1], -g[0]]) / slope        # region (w > 0) on the left
    # Foot of the perpendicular from the region's centroid onto the line w = 0.
    c = np.asarray(poly.centroid.coords[0])
    point = c - (plane[0] + c @ g) * g / slope**2
    reach = 4.0 * size + float(np.hypot(*(point - c)))
    axis = shapely.LineString([point - reach * direction, point + reach * direction])
    touch = poly.buffer(STRAIGHT_RTOL * size).intersection(axis)
    contact = "line" if touch.length > 1e-6 * size else ("point" if not touch.is_empty else "none")
    return Region(poly, plane, False, point, direction, slope, contact, wmax, sel)


def _rings(poly) -> list[np.ndarray]:
    """Rings of a polygon (exterior first), each (k, 2) without the closing repeat."""
    return [np.asarray(r.coords)[:-1] for r in (poly.exterior, *poly.interiors)]


def thin_rings(regions: list[Region], size: float) -> list[list[np.ndarray]]:
    """Each region's rings with straight-through corners dropped (one list per region).

    A corner is dropped only if it is straight-through in every ring it appears in, so two
    regions sharing a boundary keep the same corners on it (their polygons stay fitted)."""
    rings = [_rings(reg.polygon) for reg in regions]
    keep: dict[tuple[float, float], bool] = {}
    tol = STRAIGHT_RTOL * size
    for region_rings in rings:
        for ring in region_rings:
            prev, nxt = np.roll(ring, 1, axis=0), np.roll(ring, -1, axis=0)
            d = nxt - prev
            off = np.abs(d[:, 0] * (ring[:, 1] - prev[:, 1]) - d[:, 1] * (ring[:, 0] - prev[:, 0]))
            off /= np.maximum(np.hypot(d[:, 0], d[:, 1]), 1e-300)
            # A corner is straight-through if it lies on the chord between its neighbours.
            between = ((ring - prev) * d).sum(axis=1) > 0
            straight = (off <= tol) & between & (((nxt - ring) * d).sum(axis=1) > 0)
            for p, s in zip(map(tuple, ring), straight):
                keep[p] = keep.get(p, False) or not s
    return [[ring[[keep[tuple(p)] for p in ring]] for ring in region_rings] for region_rings in rings]
