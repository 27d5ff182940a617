"""Adaptive refinement: where the next mesh needs smaller elements.

After each mesh is solved, the bracket between the two bounds is lost where the mechanism
hinges (its active yield lines and fans: the DLO upper bound can only bend along node-to-node
lines, so more nodes there give it more directions), where the lower bound's moment field is
at its limit (yield ratio near 1: the field is stuck there and finer elements let it
redistribute), and at the features where moments concentrate (re-entrant corners, openings,
columns, point loads). `refinement_points` returns those places; solve.py gives them
REFINE_FACTOR times the element size they have now (geometry/mesh.py SizeField) and meshes
again. Lines that were active on one mesh are mapped to the nearest nodes of the next
(`carried_lines`) and put in its first LP; `lines_onto` does the same for lines given by
their end points (a study hands them from one variant to the next).

Units: whatever the arrays are in (solve.py works in dimensionless units).
May import: `hingeline.geometry`, `hingeline.lower`, `hingeline.model`, `hingeline.result`.
"""
from __future__ import annotations

import numpy as np
import shapely
from scipy.spatial import cKDTree

from .geometry.domain import Domain
from .geometry.mesh import SizeField
from .lower import element_capacities, yield_ratio
from .model import Model
from .result import LowerBound, YieldLines

#: Element size at a marked place, as a fraction of the size it had. Measured (2 shared cores):
#: clamped square to a 1.2 % gap, 0.6 gave 149 / 273 / 469 / 867 nodes and 43.093 in 31 s,
#: 0.5 gave 149 / 357 / 858 nodes and 43.072 in 26 s; the demo to 3 %, 3.3 s either way;
#: the podium deck to 3 %, 36 s with 0.6 (three steps) and 17 s with 0.5 (two).
REFINE_FACTOR = 0.5
#: A lower-bound triangle is "at its limit" when its largest yield ratio at the six node
#: points of its field is at least this.
AT_LIMIT = 0.98
#: At most this share of the lower bound's triangles is marked (those with the largest
#: ratios): where the whole field is at its limit, the yield lines pick the places.
LIMIT_SHARE = 0.25
#: A stepping of the bracket below this factor of the previous one counts as narrowing it.
NARROWING = 0.95


def line_points(lines: YieldLines, field: SizeField) -> np.ndarray:
    """Points (p, 2) along every active yield line, about half the local element size apart
    (both ends included)."""
    if not len(lines):
        return np.zeros((0, 2))
    a, b = np.asarray(lines.start, float), np.asarray(lines.end, float)
    h = field.at(0.5 * (a + b))
    n = np.maximum(2, np.ceil(np.hypot(*(b - a).T) / (0.5 * h)).astype(int) + 1)
    t = np.concatenate([np.linspace(0.0, 1.0, k) for k in n])
    i = np.repeat(np.arange(len(a)), n)
    return a[i] + t[:, None] * (b - a)[i]


def limit_points(model: Model, lower: LowerBound | None) -> np.ndarray:
    """Centroids (p, 2) of the lower bound's triangles at their limit (see AT_LIMIT and
    LIMIT_SHARE); none without a field."""
    field = None if lower is None else lower.field
    if field is None or not len(field.triangles):
        return np.zeros((0, 2))
    p = np.asarray(field.nodes, float)[np.asarray(field.triangles, int)]
    cap = element_capacities(model, p.mean(axis=1))
    ratio = yield_ratio(np.asarray(field.moments, float).reshape(-1, 3), np.repeat(cap, 6, axis=0),
                        model.capacity.bar_angle).reshape(-1, 6)
    worst = np.nan_to_num(ratio, posinf=1.0).max(axis=1)
    scale = float(worst.max(initial=0.0))
    if scale <= 0:
        return np.zeros((0, 2))
    hot = np.flatnonzero(worst >= AT_LIMIT * scale)
    keep = max(1, int(LIMIT_SHARE * len(worst)))
    if len(hot) > keep:
        hot = hot[np.argsort(-worst[hot])[:keep]]
    return p[hot].mean(axis=1)


def feature_points(model: Model, domain: Domain) -> np.ndarray:
    """Re-entrant corners of the outline, corners of openings and of column and wall
    footprints, bearing points of pinned columns, and point loads (p, 2)."""
    out = [np.zeros((0, 2))]
    outline = np.asarray(model.slab.outline, float)
    prev, nxt = np.roll(outline, 1, axis=0), np.roll(outline, -1, axis=0)
    a, b = outline - prev, nxt - outline
    cross = a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]
    out.append(outline[cross < 0])            # counter-clockwise outline: a right turn is re-entrant
    for opening in model.slab.openings:
        out.append(np.asarray(opening, float))
    for sp in model.supports:
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            out.append(np.asarray(part.exterior.coords, float)[:-1])
    out.append(np.asarray(domain.bearings, float).reshape(-1, 2))
    out += [np.asarray(ld.at, float).reshape(1, 2) for ld in model.loads if hasattr(ld, "at")]
    pts = np.concatenate(out)
    if not len(pts):
        return pts
    inside = shapely.intersects_xy(domain.region.buffer(domain.tol), pts[:, 0], pts[:, 1])
    return pts[inside]


def refinement_points(model: Model, domain: Domain, lines: YieldLines, lower: LowerBound | None,
                      field: SizeField) -> np.ndarray:
    """Every place (p, 2) the next mesh refines: yield lines, lower-bound limit, features."""
    return np.concatenate([line_points(lines, field), limit_points(model, lower), feature_points(model, domain)])


def carried_lines(old_nodes: np.ndarray, pairs: np.ndarray, new_nodes: np.ndarray) -> np.ndarray:
    """Node pairs (c, 2), a < b, of `new_nodes` nearest to the ends of the lines `pairs` of
    `old_nodes`; lines whose two ends fall on one node are dropped."""
    return lines_onto(np.asarray(old_nodes)[np.asarray(pairs, np.int64).reshape(-1, 2)], new_nodes)


def lines_onto(ends: np.ndarray, new_nodes: np.ndarray) -> np.ndarray:
    """Node pairs (c, 2), a < b, of `new_nodes` nearest to the end points `ends` (k, 2, 2) of
    lines (of another mesh, or of a similar model's mesh); lines whose two ends fall on one
    node are dropped. Whether a pair is an admissible line is left to the LP's candidates."""
    ends = np.asarray(ends, float).reshape(-1, 2, 2)
    if not len(ends):
        return np.zeros((0, 2), np.int64)
    _, near = cKDTree(new_nodes).query(ends.reshape(-1, 2))
    mapped = np.sort(near.reshape(-1, 2), axis=1)
    mapped = mapped[mapped[:, 0] != mapped[:, 1]]
    return np.unique(mapped, axis=0).astype(np.int64)


__all__ = ["NARROWING", "REFINE_FACTOR", "carried_lines", "feature_points", "limit_points",
           "line_points", "lines_onto", "refinement_points"]
