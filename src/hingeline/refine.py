"""Adaptive refinement: where the next mesh needs smaller elements.

After each mesh is solved, the bracket between the two bounds is lost along the mechanism's
active yield lines, and the two bounds say exactly where: the mechanism's internal work less
the work the lower bound's moments do on its rotations is the gap (times the scaled-load
work), made of non-negative parts (m_p - m_n) |theta| ds along the lines (`gap_parts`).
More nodes where that is large give the DLO upper bound more directions there (it can only
bend along node-to-node lines) and the moment field more freedom to redistribute. Features
where moments concentrate (re-entrant corners, openings, columns, point loads) are refined
too. `refinement_points` returns those places; solve.py gives them
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
from .lower import normal_moments
from .model import Model
from .model.criterion import capacity_at
from .result import LowerBound, YieldLines

#: Element size at a marked place, as a fraction of the size it had. Measured (2 cores, one
#: run each): clamped square to a 0.7 % gap, 0.4 gave 149 / 230 / 431 / 780 nodes and 42.954
#: (gap 0.37 %) in 17.9 s, 0.5 gave 149 / 203 / 290 / 457 nodes and 43.038 (0.63 %) in 9.1 s,
#: 0.6 six meshes up to 557 nodes and 42.996 (0.49 %) in 15.8 s; the podium deck to 3 %,
#: 5.3 / 5.6 / 9.8 s (two steps with 0.4 and 0.5, three with 0.6).
REFINE_FACTOR = 0.5
#: Share of the bound gap (see gap_parts) whose places along the yield lines are refined.
GAP_SHARE = 0.8
#: A stepping of the bracket below this factor of the previous one counts as narrowing it.
NARROWING = 0.95


def _along(lines: YieldLines, field: SizeField, ends: bool = True) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Points (p, 2) along every active yield line, about half the local element size apart,
    the line each is on (p,) and the length each stands for (p,): both ends and the points
    between (trapezoidal rule), or with ends=False the mid-points of the pieces between
    (mid-point rule: no point at a node, where the moments of the triangles around it differ)."""
    a, b = np.asarray(lines.start, float), np.asarray(lines.end, float)
    length = np.hypot(*(b - a).T)
    pieces = np.maximum(1, np.ceil(length / (0.5 * field.at(0.5 * (a + b)))).astype(int))
    count = pieces + 1 if ends else pieces
    i = np.repeat(np.arange(len(a)), count)
    first = np.cumsum(count) - count
    k = np.arange(len(i)) - first[i]                  # place of each point on its line
    t = k / pieces[i] if ends else (k + 0.5) / pieces[i]
    ds = (length / pieces)[i]
    if ends:
        ds[first] *= 0.5
        ds[first + pieces] *= 0.5
    return a[i] + t[:, None] * (b - a)[i], i, ds


def line_points(lines: YieldLines, field: SizeField) -> np.ndarray:
    """Points (p, 2) along every active yield line, about half the local element size apart
    (both ends included)."""
    if not len(lines):
        return np.zeros((0, 2))
    return _along(lines, field)[0]


def gap_parts(model: Model, domain: Domain, lines: YieldLines, lower: LowerBound,
              field: SizeField) -> tuple[np.ndarray, np.ndarray]:
    """Where the bracket is lost, by the bound gap's own split: points (p, 2) along the
    lines (mid-points of pieces about half the element size long) and, at each, the
    mechanism's internal work less the work of the lower bound's moments on its rotations,
    (m_p - m_n) |theta| ds (kNm; m_p the line's capacity for the sign of its rotation, m_n
    the field's normal moment, sagging positive, ds the length the point stands for). Each part is >= 0 because the field is inside the yield
    criterion; summed, they are (upper - lower) times the scaled-load work, by virtual work
    (the field is in equilibrium with the lower bound's loads, the rotations are a mechanism)
    up to the mid-point rule along the lines. Lines in the fill (openings, beyond free
    edges) have no strength and lose nothing."""
    if not len(lines):
        return np.zeros((0, 2)), np.zeros(0)
    pts, i, ds = _along(lines, field, ends=False)
    t = (np.asarray(lines.end, float) - np.asarray(lines.start, float))[i]
    normal = np.stack([-t[:, 1], t[:, 0]], axis=1) / np.hypot(*t.T)[:, None]
    plus, minus = capacity_at(model, pts, normal, domain.tol)
    m_n = normal_moments(lower.field, pts, normal, domain.tol)
    outside = np.isnan(m_n)
    m_n = np.where(outside, 0.0, m_n)
    lost = np.where(np.asarray(lines.sagging, bool)[i], plus - m_n, minus + m_n)
    return pts, np.where(outside, 0.0, lost) * np.asarray(lines.rotation, float)[i] * ds


def gap_points(model: Model, domain: Domain, lines: YieldLines, lower: LowerBound | None,
               field: SizeField) -> np.ndarray:
    """The points of `gap_parts` that hold GAP_SHARE of the gap, largest parts first (all of
    `line_points` when there is no lower-bound field)."""
    if lower is None or lower.field is None or not len(lower.field.triangles):
        return line_points(lines, field)
    pts, lost = gap_parts(model, domain, lines, lower, field)
    lost = np.maximum(lost, 0.0)
    total = lost.sum()
    if not total > 0:
        return pts
    order = np.argsort(-lost)
    keep = np.searchsorted(np.cumsum(lost[order]), GAP_SHARE * total) + 1
    return pts[order[:keep]]


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
    """Every place (p, 2) the next mesh refines: where the yield lines lose the gap, and features."""
    return np.concatenate([gap_points(model, domain, lines, lower, field), feature_points(model, domain)])


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


__all__ = ["NARROWING", "REFINE_FACTOR", "carried_lines", "feature_points",
           "gap_parts", "gap_points", "line_points", "lines_onto", "refinement_points"]
