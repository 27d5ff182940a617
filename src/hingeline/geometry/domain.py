"""Geometry stage: the analysis domain D around the slab.

The mechanism is sought on a region D whose whole boundary is supported ground
(w = 0, no slope), so that every hinge field on D can be integrated from the
ground and external work can be written in terms of rotations alone (see
loadwork.py). D is the slab outline with its openings filled, plus a strip of
"fill" beyond every free edge. Fill carries no load and has no strength: hinge
lines cost nothing where they run through it, so the slab next to an opening or
a free edge can move as it likes, while the field stays single-valued.

Units: m.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
from scipy.spatial import cKDTree
from shapely.geometry import LineString, Polygon

from ..errors import ModelError
from ..model import Model

# Segment kinds of the slab boundary (codes used across the pipeline).
FREE, SIMPLE, CONTINUOUS, OPENING, MARGIN, FACE_MONOLITHIC, FACE_PINNED = 0, 1, 2, 3, 4, 5, 6
SUPPORTED = (SIMPLE, CONTINUOUS, FACE_MONOLITHIC, FACE_PINNED)   # w = 0 along these
HOGGING_SUPPORT = (CONTINUOUS, FACE_MONOLITHIC)                  # hinges there cost the hogging capacity
KIND_CODES = {"free": FREE, "simple": SIMPLE, "continuous": CONTINUOUS}


@dataclass(frozen=True, eq=False)
class Domain:
    """The analysis domain and the slab inside it.

    rings: every boundary ring of D as a (k, 2) array (outer rings and the rings round
        islands of ground, i.e. monolithic columns and walls standing inside the slab).
    islands: the island rings; each needs its own conditions in the LP (w and slope 0).
    bearings: (k, 2) centres of pinned columns, m: points of the slab held at w = 0 only
        (their footprints stay slab).
    slab: shapely Polygon of the slab (outline with openings as holes, less the footprints
        of the supports held as ground).
    region: shapely Polygon of D.
    edges: (e, 2, 2) straight pieces of the slab boundary (outline and openings).
    edge_kind: (e,) kind code of each piece (FREE, SIMPLE, CONTINUOUS, OPENING, FACE_*);
        faces of columns and walls come first.
    edge_label: (e,) text naming the piece for messages ("edge 2", "opening 1").
    margin: width of the fill strip beyond free edges, m (0 if none).
    scale: a length of the model (bounding-box diagonal), m, for tolerances.
    """

    rings: tuple[np.ndarray, ...]
    islands: tuple[np.ndarray, ...]
    slab: Polygon
    region: Polygon
    edges: np.ndarray
    edge_kind: np.ndarray
    edge_label: tuple[str, ...]
    edge_fixity: np.ndarray     # (e,) share of the hogging capacity mobilised on continuous edges
    margin: float
    scale: float
    bearings: np.ndarray

    @property
    def tol(self) -> float:
        """Geometric tolerance, m."""
        return 1e-9 * self.scale


def segment_distance(points: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """(n, e) distances in m from points (n, 2) to segments edges (e, 2, 2)."""
    r, s = edges[:, 0], edges[:, 1]
    rs = s - r
    u = ((points[:, None, :] - r[None]) * rs[None]).sum(-1) / (rs**2).sum(1)
    foot = r[None] + np.clip(u, 0.0, 1.0)[..., None] * rs[None]
    return np.hypot(*(points[:, None, :] - foot).transpose(2, 0, 1))


def merge_points(points: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    """Cluster points closer than tol (m); returns (one point per cluster, cluster of each point)."""
    pairs = cKDTree(points).query_pairs(tol, output_type="ndarray")
    n = len(points)
    graph = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(n, n))
    _, cluster = connected_components(graph, directed=False)
    _, first = np.unique(cluster, return_index=True)
    return points[first], cluster


def _closed_edges(poly: np.ndarray) -> np.ndarray:
    return np.stack([poly, np.roll(poly, -1, axis=0)], axis=1)


def build_domain(model: Model, margin: float) -> Domain:
    """Build D for `model` with a fill strip of width `margin` (m) beyond free edges.

    The strip is narrowed where it would reach a supported edge or enclose ground.
    """
    slab = model.slab
    outline = np.asarray(slab.outline, float)
    kinds = np.array([KIND_CODES[e] for e in slab.edges])
    outer = Polygon(outline)
    slab_poly = Polygon(outline, [np.asarray(o, float) for o in slab.openings])
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    scale = float(np.hypot(*(hi - lo)))

    edges, edge_kind, labels, fixity = [], [], [], []
    # A pinned column is a bearing point, not ground: its footprint stays slab, so the slab can
    # rotate over the centre in any direction (holding the footprint flat would be unsafe).
    ground = [sp for sp in model.supports if not sp.bearing]
    bearing = [sp for sp in model.supports if sp.bearing]
    footprint = shapely.union_all([sp.polygon for sp in ground]) if ground else None
    for sp in ground:
        for ring in _rings(sp.polygon):
            edges.append(_closed_edges(ring))
            edge_kind.append(np.full(len(ring), FACE_MONOLITHIC if sp.connection == "monolithic" else FACE_PINNED))
            labels += [sp.name] * len(ring)
            fixity.append(np.ones(len(ring)))
    edges.append(_closed_edges(outline))
    edge_kind.append(kinds)
    fixity.append(np.asarray(slab.fixity or (1.0,) * len(outline), float))
    labels += [f"edge {k + 1}" for k in range(len(outline))]
    for j, op in enumerate(slab.openings):
        op = np.asarray(op, float)
        edges.append(_closed_edges(op))
        edge_kind.append(np.full(len(op), OPENING))
        fixity.append(np.ones(len(op)))
        labels += [f"opening {j + 1}"] * len(op)
    edges = np.concatenate(edges)
    edge_kind = np.concatenate(edge_kind)
    fixity = np.concatenate(fixity)

    if not np.any(kinds == FREE):
        region = outer
        used = 0.0
    else:
        region, used = _with_margin(outer, outline, kinds, margin, scale)
    islands = []
    if footprint is not None:
        region = region.difference(footprint)
        slab_poly = slab_poly.difference(footprint)
        islands = [r for part in getattr(region, "geoms", [region]) for r in _rings(part)[1:]]
    bearings = np.array([sp.centre for sp in bearing], float).reshape(-1, 2)
    return Domain(tuple(_rings(region)), tuple(islands), slab_poly, region, edges, edge_kind,
                  tuple(labels), fixity, used, scale, bearings)


def _rings(poly) -> list[np.ndarray]:
    """Vertex arrays (no closing repeat) of every ring of a (Multi)Polygon: for each part its
    exterior (counter-clockwise) then its holes."""
    out = []
    for part in getattr(poly, "geoms", [poly]):
        part = shapely.geometry.polygon.orient(part, 1.0)
        out += [np.asarray(r.coords)[:-1] for r in [part.exterior, *part.interiors]]
    return out


def _free_runs(outline: np.ndarray, kinds: np.ndarray) -> list[np.ndarray]:
    """Chains of consecutive free edges as vertex arrays (wrapping round the outline)."""
    n = len(outline)
    free = kinds == FREE
    if free.all():
        return [np.vstack([outline, outline[:1]])]
    start = int(np.argmin(free))  # a supported edge: runs cannot wrap past it
    runs, current = [], []
    for step in range(1, n + 1):
        k = (start + step) % n
        if free[k]:
            if not current:
                current = [outline[k]]
            current.append(outline[(k + 1) % n])
        elif current:
            runs.append(np.array(current))
            current = []
    if current:
        runs.append(np.array(current))
    return runs


def _trimmed(strip, run, outline, width):
    """Cut the strip of a free run back to the bisector of the outside angle at each end
    that meets a supported edge, so that the strip never covers that edge."""
    if np.allclose(run[0], run[-1]):
        return strip
    n = len(outline)
    for end, inner in ((run[0], run[1]), (run[-1], run[-2])):
        k = int(np.argmin(np.hypot(*(outline - end).T)))
        # The supported neighbour is the outline vertex next to `end` that is not on the run.
        nb = outline[(k - 1) % n] if np.allclose(outline[(k + 1) % n], inner) else outline[(k + 1) % n]
        e_free = (inner - end) / np.hypot(*(inner - end))
        e_sup = (nb - end) / np.hypot(*(nb - end))
        # Outside-angle bisector: between e_free and e_sup on the side away from the slab.
        bis = e_free + e_sup
        if np.hypot(*bis) < 1e-12:
            bis = np.array([-e_free[1], e_free[0]])
        bis /= np.hypot(*bis)
        if Polygon(outline).contains(shapely.Point(end + 1e-6 * width * bis)):
            bis = -bis
        wedge = Polygon([end, end + 4 * width * bis, end + 4 * width * e_sup])
        if wedge.area > 0:
            strip = strip.difference(wedge)
    return strip


def _with_margin(outer, outline, kinds, margin, scale):
    tol = 1e-9 * scale
    supported = [LineString(outline[[k, (k + 1) % len(outline)]]) for k in np.flatnonzero(kinds != FREE)]
    # Points along every free edge (ends excluded: they may meet a support) must lie inside D,
    # or the ground would hold a free edge and the load factor could come out too high.
    free_pts = [outline[k] + f * (outline[(k + 1) % len(outline)] - outline[k])
                for k in np.flatnonzero(kinds == FREE) for f in (0.02, 0.25, 0.5, 0.75, 0.98)]
    runs = _free_runs(outline, kinds)
    width = margin
    for _ in range(8):
        # Outline is counter-clockwise, so the outside lies to the right: negative single-sided buffer.
        if np.all(kinds == FREE):  # slab on columns or walls alone: a strip all round
            strips = [outer.buffer(width, join_style="bevel")]
        else:
            strips = [_trimmed(LineString(r).buffer(-width, single_sided=True, join_style="bevel"), r, outline, width)
                      for r in runs]
        region = shapely.union_all([outer, *strips]).buffer(0)
        ok = (
            isinstance(region, Polygon)
            and len(region.interiors) == 0
            and all(region.exterior.distance(s.interpolate(f, normalized=True)) <= 10 * tol
                    for s in supported for f in (0.0, 0.25, 0.5, 0.75, 1.0))
            and all(region.exterior.distance(shapely.Point(p)) > 10 * tol for p in free_pts)
        )
        if ok:
            return shapely.geometry.polygon.orient(region, 1.0), width
        width *= 0.5
    raise ModelError(
        "could not place the fill strip beyond the free edges: a free edge lies too close to a "
        "supported edge facing it; check the edge conditions of the outline"
    )
