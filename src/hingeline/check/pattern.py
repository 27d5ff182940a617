"""Hand check of a drawn yield-line pattern: the work equation of a rigid-region mechanism.

An engineer draws a pattern as rigid regions (polygons), each moving as a plane
w = c0 + c1 x + c2 y (positive downward), given either by a rotation axis and one
point's deflection or by three points' deflections. This module reads such a
pattern file (hingeline's own TOML format, see docs/hand-check.md), checks that
the regions cover the slab, agree along their shared boundaries and hold w = 0 on
supported edges, then triangulates the slab with every region boundary as a
constraint and hands the resulting P1 field to `certificate.check_mechanism`
for the load factor. Free geometric parameters of the pattern can be optimised
(minimum load factor within their bounds, scipy.optimize).

Units: m, kNm/m, kPa; work kNm; rotations rad. The reported mechanism is scaled so
that the factored loads do 1 kNm of work (as for a solve).
"""
from __future__ import annotations

import ast
import logging
import math
import tomllib
from dataclasses import dataclass
from os import PathLike
from pathlib import Path
from typing import Any, Mapping

import numpy as np
import shapely
from meshpy import triangle
from shapely.geometry import LineString, Polygon
from shapely.ops import unary_union

from ..errors import ModelError
from ..geometry.domain import merge_points, segment_distance
from ..model import Model
from ..model.criterion import normal_capacity
from ..result import Mechanism
from ..upper.certificate import check_mechanism, work_per_load

log = logging.getLogger(__name__)

# --------------------------------------------------------------------------- expressions

_BINOPS = {ast.Add: lambda a, b: a + b, ast.Sub: lambda a, b: a - b,
           ast.Mult: lambda a, b: a * b, ast.Div: lambda a, b: a / b}


@dataclass(frozen=True, eq=False)
class Expr:
    """A coordinate or deflection: a number or an expression in the pattern's parameters.

    Allowed: numbers, parameter names, + - * / ( ) and unary minus. `where` names the item.
    """

    text: str
    tree: ast.AST
    where: str

    def value(self, params: Mapping[str, float]) -> float:
        try:
            v = _eval(self.tree, params)
        except ZeroDivisionError:
            raise ModelError(f"{self.where}: '{self.text}' divides by zero "
                             f"at {_fmt_params(params)}") from None
        if not math.isfinite(v):
            raise ModelError(f"{self.where}: '{self.text}' is not finite at {_fmt_params(params)}")
        return v


def _eval(node: ast.AST, params: Mapping[str, float]) -> float:
    if isinstance(node, ast.Expression):
        return _eval(node.body, params)
    if isinstance(node, ast.Constant):
        return float(node.value)
    if isinstance(node, ast.Name):
        return float(params[node.id])
    if isinstance(node, ast.UnaryOp):
        return -_eval(node.operand, params)
    if isinstance(node, ast.BinOp):
        return _BINOPS[type(node.op)](_eval(node.left, params), _eval(node.right, params))
    raise AssertionError(f"unchecked node {type(node).__name__}")  # pragma: no cover


def _check_tree(node: ast.AST, names: set[str], text: str, where: str) -> None:
    for n in ast.walk(node):
        if isinstance(n, (ast.Expression, ast.operator, ast.unaryop, ast.expr_context)):
            if isinstance(n, ast.operator) and type(n) not in _BINOPS:
                raise ModelError(f"{where}: '{text}' uses an operator that is not allowed; "
                                 "use only numbers, parameter names, + - * / ( ) and unary minus")
            if isinstance(n, ast.unaryop) and not isinstance(n, ast.USub):
                raise ModelError(f"{where}: '{text}': only unary minus is allowed")
            continue
        if isinstance(n, ast.Constant) and type(n.value) in (int, float):
            continue
        if isinstance(n, ast.Name):
            if n.id not in names:
                known = ", ".join(sorted(names)) or "none defined"
                raise ModelError(f"{where}: '{text}' uses '{n.id}', which is not a parameter "
                                 f"(parameters: {known}); define it under [parameters]")
            continue
        if isinstance(n, (ast.BinOp, ast.UnaryOp)):
            continue
        raise ModelError(f"{where}: '{text}' is not allowed; use only numbers, parameter names, "
                         "+ - * / ( ) and unary minus")


def _expr(raw: Any, names: set[str], where: str) -> Expr:
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise ModelError(f"{where}: expected a number or an expression string, got {raw!r}")
    if isinstance(raw, (int, float)):
        if not math.isfinite(raw):
            raise ModelError(f"{where}: {raw!r} is not a finite number")
        return Expr(repr(raw), ast.Constant(float(raw)), where)
    try:
        tree = ast.parse(raw.strip(), mode="eval")
    except SyntaxError:
        raise ModelError(f"{where}: '{raw}' is not a valid expression") from None
    _check_tree(tree, names, raw, where)
    return Expr(raw, tree, where)


def _fmt_params(params: Mapping[str, float]) -> str:
    return ", ".join(f"{k} = {v:.6g}" for k, v in params.items()) or "(no parameters)"


# --------------------------------------------------------------------------- pattern file


@dataclass(frozen=True)
class Parameter:
    """A free geometric parameter: start value and bounds (units as used, usually m)."""

    name: str
    start: float
    min: float
    max: float


@dataclass(frozen=True, eq=False)
class RegionSpec:
    """One rigid region as read: polygon (expressions, m) and its motion.

    motion "axis": w = 0 on the line through axis[0], axis[1]; w = deflection at point.
    motion "points": w given at three non-collinear points (x, y, w).
    """

    name: str
    polygon: tuple[tuple[Expr, Expr], ...]
    motion: str
    axis: tuple[tuple[Expr, Expr], tuple[Expr, Expr]] | None = None
    point: tuple[Expr, Expr] | None = None
    deflection: Expr | None = None
    deflections: tuple[tuple[Expr, Expr, Expr], ...] | None = None


@dataclass(frozen=True, eq=False)
class Pattern:
    """A hand-drawn mechanism: free parameters and rigid regions. `source` prefixes messages."""

    parameters: tuple[Parameter, ...]
    regions: tuple[RegionSpec, ...]
    source: str = "pattern"

    def start_values(self) -> dict[str, float]:
        return {p.name: p.start for p in self.parameters}


def read_pattern(path: str | PathLike[str]) -> Pattern:
    """Read and validate a pattern file (TOML, see docs/hand-check.md); ModelError on bad input."""
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8")
    except FileNotFoundError:
        raise ModelError(f"pattern file '{p}' not found; check the path and file name") from None
    except IsADirectoryError:
        raise ModelError(f"pattern file '{p}' is a directory; give the path of a .toml file") from None
    except OSError as exc:
        raise ModelError(f"pattern file '{p}' cannot be read ({exc.strerror or exc})") from None
    except UnicodeDecodeError as exc:
        raise ModelError(f"pattern file '{p}' is not UTF-8 text (bad byte at position {exc.start})") from None
    return pattern_from_toml(text, source=str(p))


def pattern_from_toml(text: str, source: str = "pattern") -> Pattern:
    """Build and validate a pattern from TOML text; `source` prefixes error messages."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ModelError(f"{source}: not valid TOML ({exc})") from None
    try:
        return _parse_pattern(data, source)
    except ModelError as exc:
        raise ModelError(f"{source}: {exc}") from None


def _number(raw: Any, where: str) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float)) or not math.isfinite(raw):
        raise ModelError(f"{where}: expected a finite number, got {raw!r}")
    return float(raw)


def _point(raw: Any, names: set[str], where: str, n: int = 2) -> tuple[Expr, ...]:
    if not isinstance(raw, list) or len(raw) != n:
        shape = "[x, y]" if n == 2 else "[x, y, w]"
        raise ModelError(f"{where}: expected {shape}, got {raw!r}")
    return tuple(_expr(v, names, f"{where}[{i}]") for i, v in enumerate(raw))


def _parse_pattern(data: dict, source: str) -> Pattern:
    unknown = set(data) - {"parameters", "region", "title"}
    if unknown:
        raise ModelError(f"unknown key(s) {sorted(unknown)}; expected [parameters] and [[region]] tables")
    params: list[Parameter] = []
    raw_params = data.get("parameters", {})
    if not isinstance(raw_params, dict):
        raise ModelError("[parameters] must be a table of name = {start, min, max}")
    for name, spec in raw_params.items():
        where = f"parameters.{name}"
        if not name.isidentifier():
            raise ModelError(f"{where}: a parameter name must be a plain identifier (letters, digits, _)")
        if not isinstance(spec, dict) or set(spec) != {"start", "min", "max"}:
            raise ModelError(f"{where}: expected {{start = ..., min = ..., max = ...}}, got {spec!r}")
        lo, hi, start = (_number(spec[k], f"{where}.{k}") for k in ("min", "max", "start"))
        if not lo < hi:
            raise ModelError(f"{where}: min ({lo:g}) must be below max ({hi:g})")
        if not lo <= start <= hi:
            raise ModelError(f"{where}: start ({start:g}) must lie within min .. max ({lo:g} .. {hi:g})")
        params.append(Parameter(name, start, lo, hi))
    names = {p.name for p in params}

    raw_regions = data.get("region")
    if not isinstance(raw_regions, list) or not raw_regions:
        raise ModelError("no [[region]] tables; a pattern needs at least one rigid region")
    regions: list[RegionSpec] = []
    seen: set[str] = set()
    for k, r in enumerate(raw_regions):
        if not isinstance(r, dict):
            raise ModelError(f"region[{k + 1}]: must be a table")
        name = r.get("name", f"region {k + 1}")
        if not isinstance(name, str) or not name.strip():
            raise ModelError(f"region[{k + 1}].name: expected a non-empty string")
        where = f"region '{name}'"
        if name in seen:
            raise ModelError(f"{where}: the name is used twice; give each region its own name")
        seen.add(name)
        allowed = {"name", "polygon", "axis", "point", "deflection", "deflections"}
        extra = set(r) - allowed
        if extra:
            raise ModelError(f"{where}: unknown key(s) {sorted(extra)}; allowed: {sorted(allowed)}")
        poly = r.get("polygon")
        if not isinstance(poly, list) or len(poly) < 3:
            raise ModelError(f"{where}.polygon: expected a list of at least 3 [x, y] points")
        polygon = tuple(_point(v, names, f"{where}.polygon[{i}]") for i, v in enumerate(poly))
        has_axis = any(key in r for key in ("axis", "point", "deflection"))
        if has_axis and "deflections" in r:
            raise ModelError(f"{where}: give either axis/point/deflection or deflections, not both")
        if "deflections" in r:
            d = r["deflections"]
            if not isinstance(d, list) or len(d) != 3:
                raise ModelError(f"{where}.deflections: expected three [x, y, w] points")
            pts = tuple(_point(v, names, f"{where}.deflections[{i}]", 3) for i, v in enumerate(d))
            regions.append(RegionSpec(name, polygon, "points", deflections=pts))
        elif has_axis:
            missing = [key for key in ("axis", "point", "deflection") if key not in r]
            if missing:
                raise ModelError(f"{where}: motion by axis needs axis, point and deflection; missing {missing}")
            ax = r["axis"]
            if not isinstance(ax, list) or len(ax) != 2:
                raise ModelError(f"{where}.axis: expected two points [[x, y], [x, y]]")
            axis = tuple(_point(v, names, f"{where}.axis[{i}]") for i, v in enumerate(ax))
            regions.append(RegionSpec(name, polygon, "axis", axis=axis,
                                      point=_point(r["point"], names, f"{where}.point"),
                                      deflection=_expr(r["deflection"], names, f"{where}.deflection")))
        else:
            raise ModelError(f"{where}: no motion; give axis, point and deflection, or deflections")
    return Pattern(tuple(params), tuple(regions), source)


# --------------------------------------------------------------------------- geometry of a pattern


@dataclass(frozen=True, eq=False)
class _Layout:
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


def _edge_label(model: Model, k: int) -> str:
    o = model.slab.outline
    return f"{model.slab.edges[k]} edge {_xy(o[k])}-{_xy(o[(k + 1) % len(o)])}"


def _layout(model: Model, pattern: Pattern, params: Mapping[str, float]) -> _Layout:
    """Evaluate the regions at `params` and check cover, compatibility and support conditions."""
    outline = model.slab.outline
    scale = float(np.hypot(*np.ptp(outline, axis=0)))
    tol_len = 1e-7 * scale
    filled = Polygon(outline)
    slab = Polygon(outline, list(model.slab.openings))
    tol_area = 1e-8 * slab.area
    names, shapes, planes, raw = [], [], [], []
    for spec in pattern.regions:
        where = f"region '{spec.name}'"
        pts = np.array([[e.value(params) for e in p] for p in spec.polygon])
        poly = Polygon(pts)
        if not poly.is_valid or poly.area <= tol_area:
            raise ModelError(f"{where}.polygon: not a simple polygon with positive area "
                             f"(at {_fmt_params(params)}); list its corners once around, without crossings")
        outside = poly.difference(filled)
        if outside.area > tol_area:
            raise ModelError(f"{where}.polygon: extends outside the slab outline by {outside.area:.3g} m2 "
                             f"near {_xy(outside.representative_point().coords[0])}")
        clipped = poly if not poly.intersects(slab.boundary) or poly.within(slab) else poly.intersection(slab)
        if clipped.area <= tol_area:
            raise ModelError(f"{where}.polygon: lies wholly in an opening; remove the region")
        names.append(spec.name)
        shapes.append(clipped)
        raw.append(shapely.get_coordinates(clipped))
        planes.append(_plane(spec, params, scale))
    planes_a = np.array(planes)

    # Overlaps and cover.
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

    wmax = max(float(np.abs(_w(planes_a[i], raw[i])).max()) for i in range(len(raw)))
    tol_w = 1e-8 * max(wmax, 1e-300)

    # Supported edges hold w = 0: region corners on the edge and edge ends on the region.
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
                        f"{_edge_label(model, k)}; a supported edge holds w = 0, so the region must "
                        "rotate about that edge (or not touch it)")

    # Compatibility: wherever two regions touch, their planes agree (at the shared boundary's
    # end points, which are corners of one region lying on the other's boundary).
    # Pairs sharing a boundary line first, then pairs touching at a point only.
    pairs = [(i, j) for i in range(len(shapes)) for j in range(i + 1, len(shapes))
             if shapes[i].distance(shapes[j]) <= tol_len]
    shared = {(i, j): shapes[i].boundary.intersection(shapes[j].boundary).length for i, j in pairs}
    for i, j in sorted(pairs, key=lambda ij: shared[ij] <= tol_len):
        if True:
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
    return _Layout(tuple(names), tuple(shapes), planes_a)


def _triangulate(model: Model, lay: _Layout) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
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


# --------------------------------------------------------------------------- work equation


@dataclass(frozen=True)
class BoundaryWork:
    """Internal work along one region boundary or one supported edge.

    between: label ("north | south" or "east on continuous edge (..)-(..)");
    length: m of hinge; rotation: rad, length-weighted mean of the signed rotation
    (> 0 sagging, < 0 hogging); work: kNm (of the normalised mechanism).
    """

    between: str
    kind: str               # "hinge" (between regions), "simple" or "continuous" (supported edge)
    length: float
    rotation: float
    work: float


@dataclass(frozen=True, eq=False)
class HandCheck:
    """Work equation of a hand-drawn pattern (mechanism scaled so factored loads do 1 kNm).

    load_factor: (internal - held) / factored. parameters: values used (optimised when
    optimised is True). internal, held: kNm. work_per_load: (load name, kNm) in model
    order. boundaries: internal work by region boundary and supported edge (they sum
    to `internal`). mechanism: the P1 field checked. evaluations: work equations solved.
    """

    load_factor: float
    parameters: dict[str, float]
    internal: float
    held: float
    work_per_load: tuple[tuple[str, float], ...]
    boundaries: tuple[BoundaryWork, ...]
    mechanism: Mechanism
    optimised: bool
    evaluations: int
    max_support_w: float
    bounds: dict[str, tuple[float, float]]


def pattern_mechanism(model: Model, pattern: Pattern, params: Mapping[str, float] | None = None) -> Mechanism:
    """The pattern's P1 deflection field at `params` (default: start values), unscaled (w as drawn, m)."""
    V, T, region, lay = _field(model, pattern, params)
    return _mechanism(V, T, region, lay)


def _with_values(pattern, given) -> dict:
    """The pattern's start values updated with `given` (name -> value); unknown names refused."""
    values = pattern.start_values()
    if given is not None:
        unknown = set(given) - set(values)
        if unknown:
            raise ModelError(f"{pattern.source}: unknown parameter(s) {sorted(unknown)}")
        values.update({k: float(v) for k, v in given.items()})
    return values


def _field(model, pattern, params):
    values = _with_values(pattern, params)
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


def _mechanism(V, T, region, lay) -> Mechanism:
    w = np.zeros(len(V))
    w[T.ravel()] = _tri_w(V, T, region, lay).ravel()
    return Mechanism(V, T, w)


def _boundaries(model: Model, mech: Mechanism, region: np.ndarray, lay: _Layout,
                scale: float) -> list[BoundaryWork]:
    """Internal work grouped by region pair and by (region, supported edge), kNm, of the
    region planes times `scale` (the normalisation of `mech`)."""
    V, T = mech.vertices, mech.triangles
    g = scale * lay.planes[region][:, 1:]
    cap = model.capacity
    e = np.concatenate([T[:, [0, 1]], T[:, [1, 2]], T[:, [2, 0]]])
    opp = np.concatenate([T[:, 2], T[:, 0], T[:, 1]])
    tri = np.tile(np.arange(len(T)), 3)
    key = np.sort(e, axis=1)
    order = np.lexsort((key[:, 1], key[:, 0]))
    key, e, opp, tri = key[order], e[order], opp[order], tri[order]
    dup = np.all(key[1:] == key[:-1], axis=1)
    first = np.flatnonzero(dup)
    single = np.ones(len(key), bool)
    single[first] = single[first + 1] = False
    rows: dict[str, list[float]] = {}

    def geometry(a, b, o):
        t = V[b] - V[a]
        L = np.hypot(t[:, 0], t[:, 1])
        n = np.stack([-t[:, 1], t[:, 0]], axis=1) / L[:, None]
        n *= np.sign(((V[o] - V[a]) * n).sum(1))[:, None]
        return L, n

    kinds: dict[str, str] = {}

    def add(label, L, theta, work, kind="hinge"):
        kinds[label] = kind
        r = rows.setdefault(label, [0.0, 0.0, 0.0])
        r[0] += float(L)
        r[1] += float(L * theta)
        r[2] += float(work)

    r1, r2 = region[tri[first]], region[tri[first + 1]]
    cross = first[r1 != r2]
    if cross.size:
        a, b = e[cross, 0], e[cross, 1]
        L, nu = geometry(a, b, opp[cross + 1])            # from triangle 1 into triangle 2
        theta = -((g[tri[cross + 1]] - g[tri[cross]]) * nu).sum(1)
        mp = normal_capacity(cap.sagging, cap.bar_angle, nu)
        mm = normal_capacity(cap.hogging, cap.bar_angle, nu)
        work = L * np.where(theta > 0, mp * theta, -mm * theta)
        for k in range(len(cross)):
            i, j = sorted((region[tri[cross[k]]], region[tri[cross[k] + 1]]))
            add(f"{lay.names[i]} | {lay.names[j]}", L[k], theta[k], work[k])

    outline = model.slab.outline
    scale = float(np.hypot(*np.ptp(outline, axis=0)))
    idx = np.flatnonzero(single)
    for k, kind in enumerate(model.slab.edges):
        if kind == "free":
            continue
        edge = np.array([[outline[k], outline[(k + 1) % len(outline)]]])
        a, b = e[idx, 0], e[idx, 1]
        on = (segment_distance(V[a], edge)[:, 0] <= 1e-8 * scale) & (segment_distance(V[b], edge)[:, 0] <= 1e-8 * scale)
        sel = idx[on]
        if not sel.size:
            continue
        L, nu = geometry(e[sel, 0], e[sel, 1], opp[sel])     # into the slab
        theta = -(g[tri[sel]] * nu).sum(1)
        if kind == "continuous":
            mm = normal_capacity(cap.hogging, cap.bar_angle, nu)
            work = L * np.where(theta < 0, -mm * theta, 0.0)
        else:
            work = np.zeros(len(sel))
        for m in range(len(sel)):
            add(f"{lay.names[region[tri[sel[m]]]]} on {_edge_label(model, k)}", L[m], theta[m], work[m], kind)
    return [BoundaryWork(lbl, kinds[lbl], v[0], v[1] / v[0] if v[0] > 0 else 0.0, v[2]) for lbl, v in rows.items()]


def _load_factor(model: Model, pattern: Pattern, values: Mapping[str, float]) -> float:
    V, T, region, lay = _field(model, pattern, values)
    mech = _mechanism(V, T, region, lay)
    chk = check_mechanism(model, mech)
    if not chk.factored > 0:
        raise ModelError(f"{pattern.source}: the factored loads do no positive work on this pattern "
                         f"(at {_fmt_params(values)}); w is positive downward - check the signs of the deflections")
    return chk.load_factor


def check_pattern(model: Model, pattern: Pattern, optimise: bool = True,
                  values: Mapping[str, float] | None = None) -> HandCheck:
    """Work equation of `pattern` on `model`.

    With optimise (and parameters), the load factor is minimised over the parameters within
    their bounds, starting from `values` (default: start values); otherwise it is evaluated at
    `values`. Raises ModelError naming the region (or pair of regions) for a pattern that does
    not cover the slab, does not fit together, or moves on a supported edge.
    """
    params = _with_values(pattern, values)
    names = [p.name for p in pattern.parameters]
    evaluations = 1
    lf0 = _load_factor(model, pattern, params)     # errors at the start point are the user's
    did_optimise = bool(optimise and names)
    if did_optimise:
        from scipy.optimize import minimize, minimize_scalar

        penalty = 1e6 * (1.0 + abs(lf0))
        count = [0]

        def f(x) -> float:
            count[0] += 1
            try:
                lf = _load_factor(model, pattern, dict(zip(names, np.atleast_1d(x).tolist())))
            except ModelError:
                return penalty       # invalid geometry at this trial point: steer away
            return lf if math.isfinite(lf) else penalty

        lo = np.array([p.min for p in pattern.parameters])
        hi = np.array([p.max for p in pattern.parameters])
        x0 = np.array([params[n] for n in names])
        if len(names) == 1:
            res = minimize_scalar(f, bounds=(lo[0], hi[0]), method="bounded",
                                  options={"xatol": 1e-10 * (hi[0] - lo[0]), "maxiter": 500})
            best = np.array([res.x])
            fbest = float(res.fun)
        else:
            res = minimize(f, x0, method="Nelder-Mead", bounds=list(zip(lo, hi)),
                           options={"xatol": 1e-9 * float(np.max(hi - lo)), "fatol": 1e-12 * abs(lf0),
                                    "maxiter": 4000, "adaptive": True})
            best, fbest = np.asarray(res.x), float(res.fun)
        evaluations += count[0]
        if fbest < lf0:
            params = dict(zip(names, best.tolist()))
        log.info("pattern parameters optimised in %d work equations: %s", count[0], _fmt_params(params))

    V, T, region, lay = _field(model, pattern, params)
    mech = _mechanism(V, T, region, lay)
    factored = sum(wk for wk, ld in zip(work_per_load(model, mech), model.loads) if ld.factored)
    if not factored > 0:
        raise ModelError(f"{pattern.source}: the factored loads do no positive work on this pattern "
                         "(w is positive downward); check the signs of the deflections")
    mech = Mechanism(mech.vertices, mech.triangles, mech.w / factored)
    chk = check_mechanism(model, mech)
    per_load = tuple((ld.name, wk) for ld, wk in zip(model.loads, work_per_load(model, mech)))
    return HandCheck(
        load_factor=chk.load_factor, parameters=params, internal=chk.internal, held=chk.held,
        work_per_load=per_load, boundaries=tuple(_boundaries(model, mech, region, lay, 1.0 / factored)),
        mechanism=mech, optimised=did_optimise, evaluations=evaluations,
        max_support_w=chk.max_support_w,
        bounds={p.name: (p.min, p.max) for p in pattern.parameters},
    )
