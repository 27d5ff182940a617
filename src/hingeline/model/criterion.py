"""Moment capacity normal to a line (Johansen's stepped yield criterion).

For bars of capacity m1 along e1 = (cos a, sin a) and m2 along e2 = (-sin a, cos a),
a yield line with unit normal n mobilises m_n = m1 (n.e1)^2 + m2 (n.e2)^2 per metre
(kNm/m). Johansen's criterion: the bars yield in their own direction, and their
moments project onto the line with the square of the direction cosine.
"""
from __future__ import annotations

import numpy as np
import shapely


def normal_capacity(pair: tuple[float, float], bar_angle_deg: float, normal: np.ndarray) -> np.ndarray:
    """Capacity in kNm/m for unit normals `normal` (k, 2), bars (m1, m2) at `bar_angle_deg`;
    m1 and m2 may be numbers or (k,) arrays (one capacity pair per normal)."""
    a = np.radians(bar_angle_deg)
    c1 = normal[:, 0] * np.cos(a) + normal[:, 1] * np.sin(a)
    return pair[0] * c1**2 + pair[1] * (1.0 - c1**2)


def capacity_at(model, points: np.ndarray, normal: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    """Sagging and hogging capacity (kNm/m) normal to `normal` (k, 2) at `points` (k, 2).

    Inside a [[zone]] the zone's capacities apply; on a zone boundary (within tol, m) the
    weaker of the zone and the slab (each line on a boundary uses the weaker side); elsewhere
    the slab's.
    """
    cap = model.capacity
    plus = normal_capacity(cap.sagging, cap.bar_angle, normal)
    minus = normal_capacity(cap.hogging, cap.bar_angle, normal)
    if not model.zones:
        return plus, minus
    pts = shapely.points(points)
    # Where a zone boundary runs along the slab's own boundary there is no other side.
    slab_edge = shapely.dwithin(shapely.Polygon(model.slab.outline, list(model.slab.openings)).boundary, pts, tol)
    for zone in model.zones:
        poly = shapely.Polygon(zone.polygon)
        near = shapely.dwithin(poly.boundary, pts, tol)
        inside = (shapely.contains_xy(poly, points[:, 0], points[:, 1]) & ~near) | (near & slab_edge)
        near &= ~slab_edge
        zp = normal_capacity(zone.sagging, cap.bar_angle, normal)
        zm = normal_capacity(zone.hogging, cap.bar_angle, normal)
        plus = np.where(inside, zp, np.where(near, np.minimum(plus, zp), plus))
        minus = np.where(inside, zm, np.where(near, np.minimum(minus, zm), minus))
    return plus, minus
