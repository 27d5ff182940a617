"""A clean pattern's layout for the geometry optimisation: shared corner points, regions as
rings of point indices, planes, regions at rest; built from the regions read off a
mechanism (`layout_of`) and turned back into regions (`layout_regions`).

Units: m; planes w = c0 + c1 x + c2 y with w dimensionless.
May import: numpy, shapely, `regions` of this package.
"""
from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np
import shapely

from .regions import PLANE_RTOL, Region, moving_region

log = logging.getLogger(__name__)


@dataclass(frozen=True)
class Layout:
    """A pattern's topology and values for the optimiser.

    points (p, 2) m; rings: per region, rings of point indices (exterior CCW first, holes CW);
    planes (r, 3) in model coordinates, w dimensionless; at_rest (r,) bool."""

    points: np.ndarray
    rings: tuple[tuple[np.ndarray, ...], ...]
    planes: np.ndarray
    at_rest: np.ndarray


def signed_area(P: np.ndarray) -> float:
    x, y = P[:, 0], P[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def layout_of(rings_xy, planes, at_rest, size: float) -> Layout:
    """Points shared between rings identified (to 1e-9 of the size); ring sides split at
    points lying on them; rings oriented (exterior CCW, holes CW)."""
    allp = np.concatenate([r for rr in rings_xy for r in rr])
    tol = 1e-9 * size
    key = np.round(allp / tol).astype(np.int64)
    _, first, inv = np.unique(key, axis=0, return_index=True, return_inverse=True)
    points = allp[first]
    inv = inv.ravel()
    rings, k = [], 0
    for rr in rings_xy:
        out = []
        for j, r in enumerate(rr):
            idx = inv[k:k + len(r)]
            k += len(r)
            if (signed_area(points[idx]) > 0) != (j == 0):
                idx = idx[::-1]
            out.append(idx)
        rings.append(out)
    rings = _split_sides(points, rings, 1e-7 * size)
    return Layout(points, tuple(tuple(r) for r in rings), np.asarray(planes, float), np.asarray(at_rest, bool))


def _split_sides(points, rings, tol):
    """Each ring side a-b with other points lying on it gets them inserted, in order."""
    out = []
    for rr in rings:
        new_rr = []
        for ring in rr:
            seq = []
            for a, b in zip(ring, np.roll(ring, -1)):
                seq.append(a)
                pa, pb = points[a], points[b]
                d = pb - pa
                L2 = float(d @ d)
                t = ((points - pa) @ d) / L2
                off = np.abs((points[:, 0] - pa[0]) * d[1] - (points[:, 1] - pa[1]) * d[0]) / np.sqrt(L2)
                on = np.flatnonzero((off <= tol) & (t > 1e-9) & (t < 1 - 1e-9))
                on = on[(on != a) & (on != b)]
                seq.extend(on[np.argsort(t[on])].tolist())
            new_rr.append(np.array(seq, int))
        out.append(new_rr)
    return out




def layout_regions(lay: Layout, size: float) -> tuple[list[Region], list[list[np.ndarray]]]:
    """Regions (regions.Region, planes scaled so the largest w is 1) and their rings (m) of a
    layout, moving regions first (largest deflection first), then those at rest."""
    P = lay.points
    slopes = np.hypot(lay.planes[:, 1], lay.planes[:, 2])
    gmax = float(slopes.max(initial=0.0))
    out = []
    for r, rr in enumerate(lay.rings):
        rings = [P[ring] for ring in rr]
        poly = shapely.Polygon(rings[0], rings[1:])
        if lay.at_rest[r]:
            reg = Region(poly, np.zeros(3), True, None, None, 0.0, "none", 0.0, np.zeros(0, int))
        else:
            reg = moving_region(poly, lay.planes[r], np.zeros(0, int), np.concatenate(rings), gmax,
                                PLANE_RTOL, size)
        out.append((reg, rings))
    out.sort(key=lambda item: (item[0].at_rest, -item[0].max_deflection))
    return [reg for reg, _ in out], [rings for _, rings in out]


def layout_junctions(lay: Layout, min_regions: int = 5) -> np.ndarray:
    """Points (k, 2) m where at least `min_regions` regions meet (candidate fan apexes)."""
    count = np.zeros(len(lay.points), int)
    for rr in lay.rings:
        for i in np.unique(np.concatenate(rr)):
            count[i] += 1
    return lay.points[count >= min_regions]
