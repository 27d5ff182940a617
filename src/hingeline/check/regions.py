"""Rigid regions of a hand-drawn pattern, their checks, and the mechanism they make.

Holds the evaluation of a pattern at given parameter values: each region's polygon
(with its holes, clipped to the slab: openings and the footprints of monolithic columns
and of walls cut out) and its plane w = c0 + c1 x + c2 y from its motion; the checks that
the regions cover the slab without overlap, fit together along shared boundaries and hold
w = 0 on supported edges, faces of those supports and at the centres of pinned columns
(ModelError naming the region or pair of regions);
the constrained triangulation of the slab with every region boundary as a segment; and
the resulting P1 deflection field (`pattern_mechanism`).

Units: m; w m, positive downward; plane slopes rad (m/m).
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.result`, `hingeline.errors`,
and `pattern_file` of this package.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from meshpy import triangle
from shapely.geometry import LineString, Polygon
from shapely.ops import unary_union

from ..errors import ModelError
from ..geometry.domain import merge_points, segment_distance
from ..model import Model
from ..result import Mechanism
from .pattern_file import Pattern, RegionSpec, fmt_params, with_values


@dataclass(frozen=True, eq=False)
class Layout:
    """Evaluated regions: names, clipped shapely geometry, planes (r, 3) as (c0, c1, c2)."""

    names: tuple[str, ...]
    shapes: tuple[Any, ...]
    planes: np.ndarray


def _plane(spec: RegionSpec, params: Mapping[str, float], scale: float) -> np.ndarray:
    where = f"region '{spec.name}'"
    if spec.motion == "axis":
        (a, b), (c, d) = [[e.value(params) for e in p] for p in spec.axis]
        px, py = (e.value(params) for e in spec.point)
        delta = spec.deflection.value(params)
        t = np.array([c - a, d - b])
        L = float(np.hypot(*t))
        if L <= 1e-9 * scale:
            raise ModelError(f"{where}.axis: the two points coincide; give two distinct points")
        n = np.array([-t[1], t[0]]) / L
        s = (px - a) * n[0] + (py - b) * n[1]
        if abs(s) <= 1e-9 * scale:
            raise ModelError(f"{where}.point: ({px:g}, {py:g}) lies on the axis; pick a point off it")
        k = delta / s
        return np.array([-k * (a * n[0] + b * n[1]), k * n[0], k * n[1]])
    P = np.array([[e.value(params) for e in p] for p in spec.deflections])
    A = np.column_stack([np.ones(3), P[:, :2]])
    area2 = abs((P[1, 0] - P[0, 0]) * (P[2, 1] - P[0, 1]) - (P[1, 1] - P[0, 1]) * (P[2, 0] - P[0, 0]))
    if area2 <= 1e-9 * scale**2:
        raise ModelError(f"{where}.deflections: the three points are collinear (or coincide); "
                         "give three points spanning a triangle")
    return np.linalg.solve(A, P[:, 2])


def _w(plane: np.ndarray, xy: np.ndarray) -> np.ndarray:
    xy = np.atleast_2d(xy)
    return plane[0] + plane[1] * xy[:, 0] + plane[2] * xy[:, 1]


def _xy(pt) -> str:
    return f"({pt[0]:.4g}, {pt[1]:.4g})"


def _polys(geom) -> list[Polygon]:
    if geom.is_empty:
        return []
    if isinstance(geom, Polygon):
        return [geom]
    return [g for g in getattr(geom, "geoms", []) if isinstance(g, Polygon) and not g.is_empty]


def edge_label(model: Model, k: int) -> str:
    """Edge k of the outline for messages, e.g. "simple edge (0, 0)-(2, 0)"."""
    o = model.slab.outline
    return f"{model.slab.edges[k]} edge {_xy(o[k])}-{_xy(o[(k + 1) % len(o)])}"


def _layout(model: Model, pattern: Pattern, params: Mapping[str, float]) -> Layout:
    """Evaluate the regions at `params` and check cover, compatibility and support conditions."""
    outline = model.slab.outline
    scale = float(np.hypot(*np.ptp(outline, axis=0)))
    tol_len = 1e-7 * scale
    slab = slab_polygon(model)
    tol_area = 1e-8 * slab.area
    names, shapes, planes, raw = [], [], [], []
    for spec in pattern.regions:
        names.append(spec.name)
        shapes.append(_region_shape(model, spec, params, slab, tol_area))
        raw.append(shapely.get_coordinates(shapes[-1]))
        planes.append(_plane(spec, params, scale))
    planes_a = np.array(planes)
    _check_cover(names, shapes, slab, tol_len, tol_area)
    wmax = max(float(np.abs(_w(planes_a[i], raw[i])).max()) for i in range(len(raw)))
    tol_w = 1e-8 * max(wmax, 1e-300)
    _check_supports(model, names, shapes, planes_a, raw, tol_len, tol_w)
    _check_fit(names, shapes, planes_a, raw, tol_len, tol_w)
    return Layout(tuple(names), tuple(shapes), planes_a)


def _region_shape(model: Model, spec: RegionSpec, params: Mapping[str, float], slab: Polygon,
                  tol_area: float) -> Polygon:
    """The region's polygon at `params`, clipped to the slab (openings cut out)."""
    where = f"region '{spec.name}'"
    pts = np.array([[e.value(params) for e in p] for p in spec.polygon])
    holes = [np.array([[e.value(params) for e in p] for p in ring]) for ring in spec.holes]
    poly = Polygon(pts, holes)
    # A region only has to have an area: gaps and overlaps below tol_area are round-off, but a
    # region drawn that small is meant (a raw mechanism on a fine mesh has regions of one tiny
    # triangle), and the work equation on its triangles is exact all the same.
    if not poly.is_valid or poly.area <= 1e-2 * tol_area:
        raise ModelError(f"{where}.polygon: not a simple polygon with positive area "
                         f"(at {fmt_params(params)}); list its corners once around, without crossings")
    outside = poly.difference(Polygon(model.slab.outline))
    if outside.area > tol_area:
        raise ModelError(f"{where}.polygon: extends outside the slab outline by {outside.area:.3g} m2 "
                         f"near {_xy(outside.representative_point().coords[0])}")
    clipped = poly if not poly.intersects(slab.boundary) or poly.within(slab) else poly.intersection(slab)
    if clipped.geom_type == "GeometryCollection":
        # Clipping along a face that meets the outline can leave stray points and lines.
        clipped = shapely.union_all([g for g in shapely.get_parts(clipped) if g.geom_type == "Polygon"])
    if clipped.area <= 1e-2 * tol_area:
        raise ModelError(f"{where}.polygon: lies wholly in an opening; remove the region")
    return clipped


def _check_cover(names, shapes, slab: Polygon, tol_len: float, tol_area: float) -> None:
    """No two regions overlap and together they cover the slab (ModelError naming them)."""
    for i in range(len(shapes)):
        for j in range(i + 1, len(shapes)):
            ov = shapes[i].intersection(shapes[j])
            if ov.area > tol_area:
                raise ModelError(f"regions '{names[i]}' and '{names[j]}' overlap ({ov.area:.3g} m2 near "
                                 f"{_xy(ov.representative_point().coords[0])}); each point of the slab "
                                 "belongs to one region")
    gap = slab.difference(unary_union(shapes))
    if gap.area > tol_area:
        piece = max(_polys(gap), key=lambda g: g.area)
        nearby = [names[i] for i, s in enumerate(shapes) if s.distance(piece) <= 10 * tol_len]
        nxt = ("next to region(s) " + ", ".join(f"'{n}'" for n in nearby)) if nearby else "touching no region"
        raise ModelError(f"part of the slab is covered by no region: {gap.area:.3g} m2 near "
                         f"{_xy(piece.representative_point().coords[0])}, {nxt}; "
                         "the regions must cover the slab (openings excepted)")


def ground(model: Model) -> list:
    """Supports whose footprint is rigid ground: walls and monolithic columns."""
    return [sp for sp in model.supports if not sp.bearing]


def slab_polygon(model: Model):
    """The slab a pattern covers: the outline less openings and the footprints of columns
    and walls (ground, like the outside of a supported edge), pinned columns excepted (the
    slab rotates over them)."""
    slab = Polygon(model.slab.outline, list(model.slab.openings))
    for sp in ground(model):
        slab = slab.difference(sp.polygon)
    return slab


def supported_edges(model: Model) -> list[tuple[str, np.ndarray]]:
    """(label, edge (1, 2, 2) m) of every supported outline edge and every face of a wall or
    monolithic column: each holds w = 0 (a pinned column holds its centre only)."""
    outline = model.slab.outline
    n_out = len(outline)
    out = [(edge_label(model, k), np.array([[outline[k], outline[(k + 1) % n_out]]]))
           for k, kind in enumerate(model.slab.edges) if kind != "free"]
    for sp in ground(model):
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            ring = np.asarray(part.exterior.coords)
            out += [(f"face {_xy(p)}-{_xy(q)} of {sp.name}", np.array([[p, q]])) for p, q in zip(ring[:-1], ring[1:])]
    return out


def _check_supports(model: Model, names, shapes, planes_a, raw, tol_len: float, tol_w: float) -> None:
    """Supported edges hold w = 0: region corners on the edge and edge ends on the region."""
    for label, edge in supported_edges(model):
        for i, s in enumerate(shapes):
            cand = np.concatenate([raw[i], edge[0]])
            on_edge = segment_distance(cand, edge)[:, 0] <= tol_len
            on_region = shapely.distance(shapely.points(cand), s) <= tol_len
            for pt in cand[on_edge & on_region]:
                wi = _w(planes_a[i], pt)[0]
                if abs(wi) > tol_w:
                    raise ModelError(
                        f"region '{names[i]}': w = {wi:.6g} m at {_xy(pt)} on the supported "
                        f"{label}; a supported edge holds w = 0, so the region must "
                        "rotate about that edge (or not touch it)")
    # A pinned column holds its centre at w = 0 (and nothing else): a region on it must pass
    # through w = 0 there.
    for sp in model.supports:
        if not sp.bearing:
            continue
        for i, s in enumerate(shapes):
            if shapely.distance(shapely.Point(sp.centre), s) <= tol_len:
                wi = _w(planes_a[i], sp.centre)[0]
                if abs(wi) > tol_w:
                    raise ModelError(
                        f"region '{names[i]}': w = {wi:.6g} m at {_xy(sp.centre)}, the centre of the pinned "
                        f"{sp.name}; a pinned column holds w = 0 there, so the region must pass through it "
                        "at zero deflection (or not touch it)")


def _check_fit(names, shapes, planes_a, raw, tol_len: float, tol_w: float) -> None:
    """Wherever two regions touch, their planes agree (ModelError naming the pair)."""
    # Planes agree along a shared boundary if they agree at its end points, which are corners
    # of one region lying on the other's boundary. Pairs sharing a boundary line are checked
    # first, then pairs touching at a point only.
    pairs = [(i, j) for i in range(len(shapes)) for j in range(i + 1, len(shapes))
             if shapes[i].distance(shapes[j]) <= tol_len]
    shared = {(i, j): shapes[i].boundary.intersection(shapes[j].boundary).length for i, j in pairs}
    for i, j in sorted(pairs, key=lambda ij: shared[ij] <= tol_len):
        cand = np.concatenate([raw[i], raw[j]])
        touch = shapely.distance(shapely.points(cand), shapes[i].boundary) <= tol_len
        touch &= shapely.distance(shapely.points(cand), shapes[j].boundary) <= tol_len
        for pt in cand[touch]:
            wi, wj = _w(planes_a[i], pt)[0], _w(planes_a[j], pt)[0]
            if abs(wi - wj) > tol_w:
                raise ModelError(
                    f"regions '{names[i]}' and '{names[j]}' do not fit together at {_xy(pt)}: "
                    f"w = {wi:.6g} m in '{names[i]}' but {wj:.6g} m in '{names[j]}'; "
                    "adjacent regions must have the same deflection along their shared boundary")


def _triangulate(model: Model, lay: Layout) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Constrained triangulation of the slab with every region boundary as a segment.

    Returns vertices (n, 2) m, triangles (t, 3) counter-clockwise, region of each triangle (t,).
    """
    outline = model.slab.outline
    scale = float(np.hypot(*np.ptp(outline, axis=0)))
    lines = [LineString(np.vstack([outline, outline[:1]]))]
    lines += [LineString(np.vstack([h, h[:1]])) for h in model.slab.openings]
    # Columns and walls are ground: their faces bound the slab, their footprints are holes.
    feet = [part for sp in ground(model) for part in getattr(sp.polygon, "geoms", [sp.polygon])]
    lines += [part.exterior for part in feet]
    for s in lay.shapes:
        for p in _polys(s):
            lines.append(p.exterior)
            lines.extend(p.interiors)
    noded = unary_union(lines)
    segs = []
    for g in getattr(noded, "geoms", [noded]):
        c = np.asarray(g.coords)[:, :2]
        segs.append(np.stack([c[:-1], c[1:]], axis=1))
    segs = np.concatenate(segs)
    pts, inv = merge_points(segs.reshape(-1, 2), 1e-9 * scale)
    facets = inv.reshape(-1, 2)
    facets = np.unique(np.sort(facets[facets[:, 0] != facets[:, 1]], axis=1), axis=0)
    facets = _split_near(pts, facets, 1e-9 * scale)
    info = triangle.MeshInfo()
    info.set_points(pts.tolist())
    info.set_facets(facets.tolist())
    holes = [Polygon(h).representative_point().coords[0] for h in model.slab.openings]
    holes += [part.representative_point().coords[0] for part in feet]
    if holes:
        info.set_holes([list(h) for h in holes])
    mesh = triangle.build(info, quality_meshing=False, generate_faces=False)
    V = np.array(mesh.points, float)
    T = np.array(mesh.elements, np.int64)
    P = V[T]
    det = (P[:, 1, 0] - P[:, 0, 0]) * (P[:, 2, 1] - P[:, 0, 1]) - (P[:, 1, 1] - P[:, 0, 1]) * (P[:, 2, 0] - P[:, 0, 0])
    T = np.where((det < 0)[:, None], T[:, [0, 2, 1]], T)
    c = V[T].mean(axis=1)
    region = np.full(len(T), -1)
    for i, s in enumerate(lay.shapes):
        region[(region < 0) & shapely.contains_xy(s, c[:, 0], c[:, 1])] = i
    keep = shapely.contains_xy(slab_polygon(model), c[:, 0], c[:, 1])
    if np.any(keep & (region < 0)):  # pragma: no cover - the cover check forbids this
        raise ModelError("internal: a triangle of the slab lies in no region")
    T, region = T[keep], region[keep]
    used = np.unique(T)
    remap = np.full(len(V), -1)
    remap[used] = np.arange(len(used))
    return V[used], remap[T], region


def _split_near(pts: np.ndarray, facets: np.ndarray, tol: float) -> np.ndarray:
    """Facets split at every point within `tol` (m) of their inside.

    Two boundaries that run together to round-off (a region's side along the outline, say)
    are noded only where GEOS happens to see them cross; a point of one left a hair off the
    other would make a sliver triangle lying in no region. Splitting there makes them one."""
    tree = shapely.STRtree(shapely.points(pts))
    segs = shapely.linestrings(pts[facets])
    f, k = tree.query(segs, predicate="dwithin", distance=tol)
    keep = (k != facets[f, 0]) & (k != facets[f, 1])
    if not keep.any():
        return facets
    f, k = f[keep], k[keep]
    a, b = pts[facets[f, 0]], pts[facets[f, 1]]
    t = ((pts[k] - a) * (b - a)).sum(1) / ((b - a) ** 2).sum(1)
    # Each facet becomes the chain through its own ends and the points near it, in order.
    fi = np.concatenate([f, np.arange(len(facets)), np.arange(len(facets))])
    ti = np.concatenate([t, np.zeros(len(facets)), np.ones(len(facets))])
    pi = np.concatenate([k, facets[:, 0], facets[:, 1]])
    order = np.lexsort((ti, fi))
    fi, pi = fi[order], pi[order]
    same = fi[1:] == fi[:-1]
    out = np.stack([pi[:-1][same], pi[1:][same]], axis=1)
    out = out[out[:, 0] != out[:, 1]]
    return np.unique(np.sort(out, axis=1), axis=0)


def pattern_mechanism(model: Model, pattern: Pattern, params: Mapping[str, float] | None = None) -> Mechanism:
    """The pattern's P1 deflection field at `params` (default: start values), unscaled (w as drawn, m)."""
    V, T, region, lay = field(model, pattern, params)
    return p1_mechanism(V, T, region, lay)


def field(model: Model, pattern: Pattern, params: Mapping[str, float] | None
          ) -> tuple[np.ndarray, np.ndarray, np.ndarray, Layout]:
    """The checked pattern at `params` (default: start values), triangulated.

    Returns vertices (n, 2) m, triangles (t, 3), region of each triangle (t,) and the layout;
    ModelError, prefixed with the pattern's source, for a pattern that fails a check.
    """
    values = with_values(pattern, params)
    try:
        lay = _layout(model, pattern, values)
    except ModelError as exc:
        raise ModelError(f"{pattern.source}: {exc}") from None
    V, T, region = _triangulate(model, lay)
    _check_vertices(V, T, region, lay, pattern.source)
    return V, T, region, lay


def _check_vertices(V, T, region, lay, source) -> None:
    """Every vertex of the triangulation gets one w from all regions around it (else ModelError)."""
    wv = _tri_w(V, T, region, lay).ravel()
    idx, reg = T.ravel(), np.repeat(region, 3)
    lo = np.full(len(V), np.inf)
    hi = np.full(len(V), -np.inf)
    np.minimum.at(lo, idx, wv)
    np.maximum.at(hi, idx, wv)
    tol = 1e-8 * max(float(np.abs(wv).max()), 1e-300)
    bad = np.flatnonzero(hi - lo > tol)
    if bad.size:
        v = bad[np.argmax((hi - lo)[bad])]
        at = idx == v
        r_lo, r_hi = reg[at][np.argmin(wv[at])], reg[at][np.argmax(wv[at])]
        raise ModelError(f"{source}: regions '{lay.names[r_lo]}' and '{lay.names[r_hi]}' do not fit together "
                         f"at {_xy(V[v])}: w = {lo[v]:.6g} m and {hi[v]:.6g} m; adjacent regions must have "
                         "the same deflection along their shared boundary")


def _tri_w(V, T, region, lay) -> np.ndarray:
    """w (t, 3) at each triangle's corners from its region's plane, m."""
    pl = lay.planes[region]
    P = V[T]
    return pl[:, None, 0] + pl[:, None, 1] * P[..., 0] + pl[:, None, 2] * P[..., 1]


def p1_mechanism(V, T, region, lay) -> Mechanism:
    """The P1 field of the triangulated pattern: w at each vertex from its region's plane, m."""
    w = np.zeros(len(V))
    w[T.ravel()] = _tri_w(V, T, region, lay).ravel()
    return Mechanism(V, T, w)

