"""Mesh stage: well-spread nodes on D that respect every model boundary.

The mesh is only a source of nodes (and of the first set of candidate lines, its
edges): the yield lines themselves come from all node-to-node lines
(candidates.py). Every vertex of the outline, the openings, the fill strip and
the load patches is a node, and nodes are placed along those boundaries, so a
yield line can follow or end on any of them.

Units: m.
"""
from __future__ import annotations

from dataclasses import dataclass

import meshpy.triangle as triangle
import numpy as np
import shapely
from shapely.geometry import LineString

from ..errors import ModelError
from ..model import Model
from .domain import Domain, merge_points, segment_distance

# Nodes on the slab of one uniform mesh when analysis.nodes is given (and of the first mesh
# of adaptive refinement, START_NODES): the three sizes the tests and benchmarks use.
DEFAULT_NODES = 450
START_NODES = 150
# Nodes on the ring round each bearing point of a pinned column (see _bearing_rings).
BEARING_RING = 12
# Most nodes a mesh may have. Candidate lines grow with the square of the nodes: beyond the
# float32 copies kept for pricing (pricing.CACHE_BYTES) every round makes them again, and the
# LP rounds grow faster than the nodes (benchmarks/README.md: the 10,000-node floor). Element
# sizes far below this would exhaust memory in the mesher itself (1e-4 m on a 6 m slab went
# past 20 GB inside Triangle), so the estimate below is checked before meshing.
MAX_NODES = 20_000


@dataclass(frozen=True, eq=False)
class Mesh:
    """nodes: (n, 2) in m; triangles: (t, 3) node indices; edges: (e, 2) unique node pairs a < b."""

    nodes: np.ndarray
    triangles: np.ndarray
    edges: np.ndarray


def mesh_size_for(model: Model, nodes: int) -> float:
    """Element size (m) that puts about `nodes` nodes on the slab."""
    area = shapely.Polygon(model.slab.outline).area
    return float(np.sqrt(2.0 * area / (np.sqrt(3.0) * nodes)))


@dataclass(frozen=True, eq=False)
class SizeField:
    """A graded element size for adaptive refinement: at x the size is
    min(base, min_i (sizes_i + GRADE |x - points_i|)), m. points: (k, 2) m; sizes: (k,) m."""

    base: float
    points: np.ndarray
    sizes: np.ndarray

    def at(self, xy: np.ndarray) -> np.ndarray:
        """Element size (m) at the points xy (p, 2)."""
        xy = np.atleast_2d(np.asarray(xy, float))
        if not len(self.points):
            return np.full(len(xy), self.base)
        from scipy.spatial import cKDTree

        k = min(16, len(self.points))
        d, i = cKDTree(self.points).query(xy, k=k)
        d, i = d.reshape(len(xy), k), i.reshape(len(xy), k)
        return np.minimum(self.base, (self.sizes[i] + GRADE * d).min(axis=1))

    def refined(self, points: np.ndarray, factor: float) -> SizeField:
        """This field with `points` (p, 2) m given `factor` times the size found there now."""
        points = np.asarray(points, float).reshape(-1, 2)
        if not len(points):
            return self
        sizes = factor * self.at(points)
        return SizeField(self.base, np.concatenate([self.points, points]), np.concatenate([self.sizes, sizes]))


# Growth of the element size away from a refined point, m per m: 0.5 keeps neighbouring
# triangles within a factor of about 1.5 of each other.
GRADE = 0.5


def estimate_nodes(model: Model, size: float) -> float:
    """Nodes a mesh of element size `size` (m) will have, estimated before meshing from the
    area of the outline plus the fill strip beyond free edges: a mesh of equilateral triangles
    of side `size` has 2 / (sqrt(3) size^2) nodes per m2 (measured: 1068 nodes for an
    estimate of 1100 on the unit square, 9969 for 10796 on the floor of benchmarks/engine.py)."""
    outline = np.asarray(model.slab.outline, float)
    side = np.hypot(*(np.roll(outline, -1, axis=0) - outline).T)
    free = float(side[np.asarray(model.slab.edges) == "free"].sum())
    area = shapely.Polygon(outline).area + free * size
    return 2.0 * area / (np.sqrt(3.0) * size**2)


def check_node_budget(model: Model, size: float, option: str) -> None:
    """Refuse, before meshing, an element size that would give more than MAX_NODES nodes.
    option: how the user set the size, for the message (e.g. "--mesh-size")."""
    if not (np.isfinite(size) and size > 0):
        raise ModelError(f"{option} must be a positive number of m, got {size!r}")
    estimate = estimate_nodes(model, size)
    if estimate > MAX_NODES:
        raise ModelError(
            f"{option} = {size:.4g} m would mesh the slab with about {estimate:,.0f} nodes, more than "
            f"the {MAX_NODES:,} that hingeline handles; use a larger {option} (at least "
            f"{size * np.sqrt(estimate / MAX_NODES):.3g} m) or fewer nodes")


def _linework(domain: Domain, model: Model):
    lines = [LineString(np.vstack([r, r[:1]])) for r in domain.rings]
    lines += [LineString(e) for e in domain.edges]
    extra_points = []
    for zone in model.zones:
        lines.append(LineString(np.vstack([zone.polygon, zone.polygon[:1]])).intersection(domain.slab))
    for load in model.loads:
        if getattr(load, "region", None) is not None:
            ring = LineString(np.vstack([load.region, load.region[:1]]))
            lines.append(ring.intersection(domain.slab))
        elif hasattr(load, "path"):
            lines.append(LineString(load.path))
        elif hasattr(load, "at"):
            extra_points.append(np.asarray(load.at, float))
    # Bearing points of pinned columns are nodes too: w = 0 is imposed there, and the fans
    # of a mechanism rotating over a bearing centre on it.
    extra_points += list(domain.bearings)
    # Node the linework: split every piece where it meets another, drop repeats.
    noded = shapely.union_all(lines)
    segs = []
    for geom in getattr(noded, "geoms", [noded]):
        if geom.is_empty or geom.geom_type not in ("LineString", "LinearRing"):
            continue
        c = np.asarray(geom.coords)
        segs.append(np.stack([c[:-1], c[1:]], axis=1))
    segs = np.concatenate(segs)
    # Point-load positions are nodes, so that fans of yield lines can centre on them.
    allp = np.concatenate([segs.reshape(-1, 2), np.reshape(extra_points, (-1, 2))])
    pts, inv = merge_points(allp, domain.tol * 10)
    facets = inv[: 2 * len(segs)].reshape(-1, 2)
    facets = facets[facets[:, 0] != facets[:, 1]]
    facets = _split_at_points(pts, facets, domain.tol * 10)
    facets = np.unique(np.sort(facets, axis=1), axis=0)
    return pts, facets


def _split_at_points(pts: np.ndarray, facets: np.ndarray, tol: float) -> np.ndarray:
    """Split every facet at the nodes lying on it (within tol, m) but not at its ends.

    GEOS leaves such a node unsplit when it sits a rounding error off the segment (seen where
    a fill strip ends on a supported edge at a re-entrant corner); Triangle then meets a node
    on a facet and loops for ever printing "Internal error in insertvertex()"."""
    d = segment_distance(pts, pts[facets])                              # (n, f)
    own = np.arange(len(pts))[:, None]
    d[(own == facets[None, :, 0]) | (own == facets[None, :, 1])] = np.inf
    hit_p, hit_f = np.nonzero(d <= tol)
    if not hit_p.size:
        return facets
    keep = np.ones(len(facets), bool)
    keep[hit_f] = False
    pieces = [facets[keep]]
    for f in np.unique(hit_f):
        a, b = facets[f]
        on = hit_p[hit_f == f]
        t = (pts[on] - pts[a]) @ (pts[b] - pts[a])
        chain = np.concatenate([[a], on[np.argsort(t)], [b]])
        pieces.append(np.stack([chain[:-1], chain[1:]], axis=1))
    return np.concatenate(pieces)


def _bearing_rings(domain: Domain, pts: np.ndarray, facets: np.ndarray, size: float) -> np.ndarray:
    """Nodes (k, 2), m, on a ring of radius size / 2 round every bearing point, BEARING_RING per
    ring, keeping those inside the slab and clear (a quarter of the radius) of the linework.

    The slab falls round a point support through a fan centred on it, and the lower bound
    carries the reaction by the corner forces of the triangles round its node: both need many
    directions there. Measured on a 16-gon (simply supported, central pinned column, "coarse"):
    without the ring the load factor was 8.9 % above the plateau mechanism and the lower bound
    16.8 % below it; with 8 / 12 / 16 / 24 nodes, +2.7 / +1.1 / +0.7 / +0.3 % and
    -5.8 / -2.8 / -10.4 / -10.9 % (past 12 the wedges get thinner and the lower bound loses)."""
    if not len(domain.bearings):
        return np.zeros((0, 2))
    rho = 0.5 * size
    ang = 2 * np.pi * np.arange(BEARING_RING) / BEARING_RING
    ring = (domain.bearings[:, None, :] + rho * np.stack([np.cos(ang), np.sin(ang)], axis=1)[None]).reshape(-1, 2)
    ok = shapely.contains_xy(domain.slab, ring[:, 0], ring[:, 1])
    # Not inside another bearing's ring (columns standing closer than the element size).
    own = np.repeat(np.arange(len(domain.bearings)), BEARING_RING)
    d = np.hypot(*(ring[:, None, :] - domain.bearings[None]).transpose(2, 0, 1))
    d[np.arange(len(ring)), own] = np.inf
    ok &= d.min(axis=1) > rho
    ok &= segment_distance(ring, pts[facets]).min(axis=1, initial=np.inf) > 0.25 * rho
    ok &= np.hypot(*(ring[:, None, :] - pts[None]).transpose(2, 0, 1)).min(axis=1, initial=np.inf) > 0.25 * rho
    return ring[ok]


def mesh_domain(domain: Domain, model: Model, size: float, field: SizeField | None = None) -> Mesh:
    """Quality triangulation of D with elements of about `size` (m), or, given `field`,
    of about field.at(x) (m) near each point x (adaptive refinement)."""
    pts, facets = _linework(domain, model)
    pts = np.concatenate([pts, _bearing_rings(domain, pts, facets, size)])
    info = triangle.MeshInfo()
    info.set_points(pts.tolist())
    info.set_facets(facets.tolist())
    # Footprints held as ground (walls, monolithic columns) lie outside D: holes of the mesh.
    holes = [part.representative_point().coords[0] for sp in model.supports if not sp.bearing
             for part in getattr(sp.polygon, "geoms", [sp.polygon])]
    if holes:
        info.set_holes(holes)
    # Triangle's quality meshes come out finer than the area bound; the factor was set so that
    # the unit square gets about TARGET_NODES nodes (measured: about 150 / 451 / 1068).
    max_area = 0.5 * np.sqrt(3.0) / 4.0 * size**2 * 3.4
    refine = None if field is None or not len(field.points) else _area_rule(field)
    mesh = triangle.build(info, max_volume=max_area, min_angle=28.0, generate_faces=False, refinement_func=refine)
    nodes = np.array(mesh.points, float)
    tris = np.array(mesh.elements, np.int64)
    e = np.concatenate([tris[:, [0, 1]], tris[:, [1, 2]], tris[:, [2, 0]]])
    edges = np.unique(np.sort(e, axis=1), axis=0)
    return Mesh(nodes, tris, edges)


def _area_rule(field: SizeField):
    """Triangle's refinement test for `field`: a triangle is split while its area exceeds that
    of the uniform rule (mesh_domain) for the size at its centroid."""
    from scipy.spatial import cKDTree

    tree, k = cKDTree(field.points), min(16, len(field.points))

    def too_big(vertices, area):
        c = np.mean(np.asarray(vertices, float), axis=0)
        d, i = tree.query(c, k=k)
        h = min(field.base, float(np.min(field.sizes[i] + GRADE * d)))
        return area > 0.5 * np.sqrt(3.0) / 4.0 * h**2 * 3.4
    return too_big
