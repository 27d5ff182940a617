"""Rigid regions of a hand-drawn pattern, their checks, and the mechanism they make.

Holds the evaluation of a pattern at given parameter values: each region's polygon
(clipped to the slab) and its plane w = c0 + c1 x + c2 y from its motion; the checks
that the regions cover the slab without overlap, fit together along shared boundaries
and hold w = 0 on supported edges (ModelError naming the region or pair of regions);
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
    slab = Polygon(outline, list(model.slab.openings))
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
    poly = Polygon(pts)
    if not poly.is_valid or poly.area <= tol_area:
        raise ModelError(f"{where}.polygon: not a simple polygon with positive area "
                         f"(at {fmt_params(params)}); list its corners once around, without crossings")
    outside = poly.difference(Polygon(model.slab.outline))
    if outside.area > tol_area:
        raise ModelError(f"{where}.polygon: extends outside the slab outline by {outside.area:.3g} m2 "
                         f"near {_xy(outside.representative_point().coords[0])}")
    clipped = poly if not poly.intersects(slab.boundary) or poly.within(slab) else poly.intersection(slab)
    if clipped.area <= tol_area:
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


def _check_supports(model: Model, names, shapes, planes_a, raw, tol_len: float, tol_w: float) -> None:
    """Supported edges hold w = 0: region corners on the edge and edge ends on the region."""
    outline = model.slab.outline
    n_out = len(outline)
    for k, kind in enumerate(model.slab.edges):
        if kind == "free":
            continue
        edge = np.array([[outline[k], outline[(k + 1) % n_out]]])
        for i, s in enumerate(shapes):
            cand = np.concatenate([raw[i], edge[0]])
            on_edge = segment_distance(cand, edge)[:, 0] <= tol_len
            on_region = shapely.distance(shapely.points(cand), s) <= tol_len
            for pt in cand[on_edge & on_region]:
                wi = _w(planes_a[i], pt)[0]
                if abs(wi) > tol_w:
                    raise ModelError(
                        f"region '{names[i]}': w = {wi:.6g} m at {_xy(pt)} on the supported "
                        f"{edge_label(model, k)}; a supported edge holds w = 0, so the region must "
                        "rotate about that edge (or not touch it)")


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
    info = triangle.MeshInfo()
    info.set_points(pts.tolist())
    info.set_facets(facets.tolist())
    holes = [Polygon(h).representative_point().coords[0] for h in model.slab.openings]
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
    slab = Polygon(outline, list(model.slab.openings))
    keep = shapely.contains_xy(slab, c[:, 0], c[:, 1])
    if np.any(keep & (region < 0)):  # pragma: no cover - the cover check forbids this
        raise ModelError("internal: a triangle of the slab lies in no region")
    T, region = T[keep], region[keep]
    used = np.unique(T)
    remap = np.full(len(V), -1)
    remap[used] = np.arange(len(used))
    return V[used], remap[T], region


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

