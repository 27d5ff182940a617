"""Model stage: the slab as the user describes it (read from TOML, validated).

Units: lengths in m, moments in kNm/m, area loads in kPa (kN/m^2).
Sign conventions: loads positive downward; sagging = bottom bars in tension.
All arrays are float64; polygons are (k, 2) arrays of vertices without the
closing repeat, counter-clockwise after reading (edge labels re-ordered to match).
"""
from __future__ import annotations

import difflib
import math
import numbers
import tomllib
from dataclasses import dataclass, field
from os import PathLike
from pathlib import Path
from typing import Any

import numpy as np
import shapely
from shapely.geometry import Polygon
from shapely.ops import nearest_points

from ..errors import ModelError
from . import eurocode

EDGE_KINDS = ("simple", "continuous", "free")
RESOLUTIONS = ("coarse", "normal", "fine")


@dataclass(frozen=True, eq=False)
class Slab:
    """Slab geometry.

    outline: (n, 2) vertices in m, counter-clockwise.
    edges: n edge conditions; edge k runs from vertex k to vertex k+1 (mod n).
    openings: polygons (k, 2) in m, counter-clockwise, strictly inside the outline,
        not touching each other.
    thickness: m, or None when not given.
    """

    outline: np.ndarray
    edges: tuple[str, ...]
    openings: tuple[np.ndarray, ...] = ()
    thickness: float | None = None
    fixity: tuple[float, ...] = ()   # per edge, fraction of the hogging capacity mobilised on
                                     # continuous edges (1.0 each when empty)


@dataclass(frozen=True, eq=False)
class Capacity:
    """Plastic moment capacities per unit width, kNm/m (all >= 0).

    sagging: (m1, m2) of the bottom bars along bar directions 1 and 2.
    hogging: (m1', m2') of the top bars along bar directions 1 and 2.
    bar_angle: degrees from the x axis to bar direction 1 (direction 2 is 90 deg further).
    """

    sagging: tuple[float, float]
    hogging: tuple[float, float]
    bar_angle: float = 0.0
    layers: tuple = ()               # eurocode.LayerCapacity per bar layer, when given as bars
    warnings: tuple[str, ...] = ()   # EN 1992-1-1 5.6.2 checks of the bar schedule
    bars: tuple = ()                 # eurocode.BarLayer as given, when given as bars
    materials: object = None         # eurocode.Materials, when given as bars


@dataclass(frozen=True, eq=False)
class AreaLoad:
    """Uniform area load.

    value: kPa, > 0 (downward).
    region: (k, 2) polygon in m (counter-clockwise) or None for the whole slab
        (openings excluded).
    factored: True if scaled by the load factor, False if held constant.
    name: label used in messages and reports ("load 1", ... when not given).
    """

    value: float
    region: np.ndarray | None = None
    factored: bool = True
    name: str = ""


@dataclass(frozen=True, eq=False)
class LineLoad:
    """Uniform load along a polyline.

    value: kN/m of path length, > 0 (downward); path: (k, 2) vertices in m, k >= 2,
    lying on the slab; factored and name as for AreaLoad.
    """

    value: float
    path: np.ndarray
    factored: bool = True
    name: str = ""


@dataclass(frozen=True, eq=False)
class PointLoad:
    """Concentrated load: value in kN, > 0 (downward), at (2,) in m on the slab."""

    value: float
    at: np.ndarray
    factored: bool = True
    name: str = ""


@dataclass(frozen=True, eq=False)
class Analysis:
    """Solver settings.

    resolution: "coarse" | "normal" | "fine" (target node counts, see mesh.py).
    mesh_size: optional explicit target element size in m; overrides resolution.
    """

    resolution: str = "normal"
    mesh_size: float | None = None


@dataclass(frozen=True, eq=False)
class Model:
    """A complete, validated slab model."""

    slab: Slab
    capacity: Capacity
    loads: tuple[AreaLoad | LineLoad | PointLoad, ...]
    analysis: Analysis = field(default_factory=Analysis)
    title: str = ""
    zones: tuple["Zone", ...] = ()
    supports: tuple["Support", ...] = ()
    cases: tuple["LoadCase", ...] = ()


@dataclass(frozen=True)
class LoadCase:
    """A named selection of the model's loads (by load name), solved on its own."""

    name: str
    loads: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class Support:
    """A column or wall under the slab: its footprint (shapely Polygon, m, clipped to the
    outline) is rigid ground; connection "monolithic" (hinges round its faces mobilise the
    hogging capacity) or "pinned" (the slab rotates freely about its faces)."""

    polygon: Polygon
    connection: str
    name: str


@dataclass(frozen=True, eq=False)
class Zone:
    """A region of the slab with its own capacities (kNm/m), overriding the slab's there.

    polygon: (k, 2) counter-clockwise, within the outline, not overlapping other zones;
    sagging, hogging: (m1, m2) along the slab's bar directions; name for messages.
    """

    polygon: np.ndarray
    sagging: tuple[float, float]
    hogging: tuple[float, float]
    name: str = ""


# ---------------------------------------------------------------------------
# Reading and validation
#
# Message convention (used in every ModelError): items are named by their path
# in the file, list positions 1-based in file order -- "slab.opening[2]",
# "load[3].region", "slab.edges[4]", "capacity.sagging[2]". Vertices and edges
# are numbered 1-based in the order the user wrote them (before any
# re-orientation): "vertex 3 (7.2, 5.4)"; edge k runs from vertex k to vertex
# k+1 (the last edge back to vertex 1) and is written
# "edge 3 (vertex 3 (7.2, 0) to vertex 4 (7.2, 5.4))".
# ---------------------------------------------------------------------------

# Allowed keys of each table. To support a new section, add its keys here and
# a parser below, and call the parser from parse_model.
TOP_KEYS = ("title", "slab", "capacity", "load", "analysis", "zone", "column", "wall", "case")
CASE_KEYS = ("name", "loads")
COLUMN_KEYS = ("at", "size", "diameter", "connection", "name")
WALL_KEYS = ("path", "thickness", "connection", "name")
CONNECTIONS = ("monolithic", "pinned")
ZONE_KEYS = ("polygon", "sagging", "hogging", "name")
SLAB_KEYS = ("outline", "edges", "thickness", "opening")
OPENING_KEYS = ("polygon",)
CAPACITY_KEYS = ("sagging", "hogging", "bar_angle", "bars")
BARS_KEYS = ("concrete", "steel", "gamma_c", "gamma_s", "alpha_cc", "bottom_1", "bottom_2", "top_1", "top_2")
LAYER_KEYS = ("diameter", "spacing", "cover")
ANALYSIS_KEYS = ("resolution", "mesh_size")
# Keys allowed in a [[load]] table, per load type.
LOAD_KEYS = {
    "area": ("type", "value", "region", "factored", "name"),
    "line": ("type", "value", "path", "factored", "name"),
    "point": ("type", "value", "at", "factored", "name"),
    "self_weight": ("type", "unit_weight", "factored", "name"),
}
UNIT_WEIGHT = 25.0  # kN/m^3, reinforced concrete (common practice, no source)

_REL_TOL = 1e-9  # geometric tolerance relative to the outline's bounding-box size


class _Invalid(Exception):
    """Internal: a validation failure; parse_model prefixes the source and re-raises ModelError."""


def read_model(path: str | PathLike[str]) -> Model:
    """Read and validate a model from a TOML file (units m, kN, kNm/m, kPa).

    Raises ModelError naming the file when it is missing, unreadable, not UTF-8,
    not valid TOML (with the line/column tomllib reports) or not a valid model.
    """
    p = Path(path)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise ModelError(f"model file '{p}' not found; check the path and file name") from None
    except IsADirectoryError:
        raise ModelError(f"model file '{p}' is a directory; give the path of a .toml file") from None
    except OSError as exc:
        reason = exc.strerror or str(exc)
        raise ModelError(f"model file '{p}' cannot be read ({reason}); check that it exists and is readable") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ModelError(
            f"model file '{p}' is not UTF-8 text (bad byte at position {exc.start}); save it as UTF-8"
        ) from None
    return _from_text(text, str(p))


def model_from_toml(text: str, source: str = "model") -> Model:
    """Build and validate a model from TOML text; `source` prefixes error messages."""
    if not isinstance(text, str):
        raise ModelError(f"{source}: TOML text must be a string, got {type(text).__name__}")
    return _from_text(text, source)


def _from_text(text: str, source: str) -> Model:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ModelError(f"{source}: not valid TOML: {exc}; fix the syntax there") from None
    return parse_model(data, source)


def parse_model(data: dict, source: str = "model") -> Model:
    """Build and validate a Model from an already-parsed dict (the TOML structure).

    Polygons are returned counter-clockwise as read-only float64 (k, 2) arrays
    without a closing repeat; a clockwise outline is reversed (keeping its first
    vertex first) and its edge labels re-mapped to the same physical edges.
    Raises ModelError ("<source>: <item> ...; <what to do>") on the first problem.
    """
    try:
        return _parse(data)
    except _Invalid as exc:
        raise ModelError(f"{source}: {exc}") from None


def _parse(data: Any) -> Model:
    if not isinstance(data, dict):
        raise _Invalid(f"the model must be a table of sections, got {_type_name(data)}")
    _check_keys(data, TOP_KEYS, "the top level of the file")

    title = data.get("title", "")
    if not isinstance(title, str):
        raise _Invalid(f"title must be text in quotes, got {_show(title)}")

    slab_t = _required_table(data, "slab", "add a [slab] table with outline and edges")
    _check_keys(slab_t, SLAB_KEYS, "[slab]")
    slab, geo = _parse_slab(slab_t)

    cap_t = _required_table(data, "capacity", "add a [capacity] table with at least sagging = <kNm/m>")
    _check_keys(cap_t, CAPACITY_KEYS, "[capacity]")
    capacity = _parse_capacity(cap_t, slab.thickness)

    loads = _parse_loads(data.get("load"), geo, slab.thickness)

    if "analysis" in data:
        an_t = data["analysis"]
        if not isinstance(an_t, dict):
            raise _Invalid(f"analysis must be a table [analysis], got {_show(an_t)}")
        _check_keys(an_t, ANALYSIS_KEYS, "[analysis]")
        analysis = _parse_analysis(an_t)
    else:
        analysis = Analysis()

    zones = _parse_zones(data.get("zone", []), geo)
    supports = _parse_supports(data.get("column", []), data.get("wall", []), geo)
    if all(e == "free" for e in slab.edges) and not supports:
        raise _Invalid(
            "slab.edges: every edge is \"free\", so nothing supports the slab; "
            "make at least one edge \"simple\" or \"continuous\", or add a [[column]] or [[wall]]"
        )
    for i, ld in enumerate(loads):
        for sp in supports:
            if hasattr(ld, "at") and sp.polygon.buffer(-geo.tol).contains(shapely.Point(ld.at)):
                raise _Invalid(f"load[{i + 1}] (\"{ld.name}\") stands on {sp.name}: it goes straight into the "
                               "support and does no work on the slab; move it onto the slab or leave it out")
    cases = _parse_cases(data.get("case", []), loads)
    return Model(slab=slab, capacity=capacity, loads=loads, analysis=analysis, title=title, zones=zones,
                 supports=supports, cases=cases)


def _parse_cases(raw: Any, loads) -> tuple[LoadCase, ...]:
    if isinstance(raw, dict) or not isinstance(raw, (list, tuple)):
        raise _Invalid("case must be a list of tables: write each load case as [[case]] (double brackets)")
    by_name = {ld.name: ld for ld in loads}
    out, seen = [], set()
    for i, t in enumerate(raw):
        where = f"case[{i + 1}]"
        if not isinstance(t, dict):
            raise _Invalid(f"{where} must be a table, got {_show(t)}")
        _check_keys(t, CASE_KEYS, f"[[case]] {where}")
        name = t.get("name", f"case {i + 1}")
        if not isinstance(name, str) or not name.strip() or name in seen:
            raise _Invalid(f"{where}.name must be text in quotes, different for every case, got {_show(name)}")
        seen.add(name)
        names = t.get("loads")
        if not isinstance(names, list) or not names or not all(isinstance(n, str) for n in names):
            raise _Invalid(f"{where} (\"{name}\") needs loads = [\"load name\", ...]: the names of [[load]] tables")
        for n in names:
            if n not in by_name:
                raise _Invalid(f"{where} (\"{name}\") refers to load \"{n}\", which no [[load]] has as its name; "
                               f"loads are: {_words(by_name)}")
        if not any(by_name[n].factored for n in names):
            raise _Invalid(f"{where} (\"{name}\") has no factored load, so nothing for the load factor to scale")
        out.append(LoadCase(name, tuple(names)))
    return tuple(out)


def model_for_case(model: Model, case: LoadCase) -> Model:
    """The model with only the loads of `case` (and no cases)."""
    from dataclasses import replace

    return replace(model, loads=tuple(ld for ld in model.loads if ld.name in case.loads), cases=())


def _parse_supports(columns: Any, walls: Any, geo: "_Geometry") -> tuple["Support", ...]:
    """Columns and walls under the slab as footprint polygons (m)."""
    out = []
    for key, raw in (("column", columns), ("wall", walls)):
        if isinstance(raw, dict) or not isinstance(raw, (list, tuple)):
            raise _Invalid(f"{key} must be a list of tables: write each as [[{key}]] (double brackets)")
        for i, t in enumerate(raw):
            where = f"{key}[{i + 1}]"
            if not isinstance(t, dict):
                raise _Invalid(f"{where} must be a table, got {_show(t)}")
            _check_keys(t, COLUMN_KEYS if key == "column" else WALL_KEYS, f"[[{key}]] {where}")
            name = t.get("name", where)
            if not isinstance(name, str) or not name.strip():
                raise _Invalid(f"{where}.name must be non-empty text in quotes, got {_show(name)}")
            connection = t.get("connection", "monolithic")
            if connection not in CONNECTIONS:
                raise _Invalid(f"{where}.connection = {_show(connection)}; use one of {_words(CONNECTIONS)}")
            if key == "column":
                footprint, centre = _column_footprint(t, where)
                if not geo.outline.buffer(geo.tol).covers(shapely.Point(centre)):
                    raise _Invalid(f"{where} at {_pt(centre)} stands outside slab.outline; move it under the slab")
            else:
                if "path" not in t:
                    raise _Invalid(f"{where} has no path; add path = [[x1, y1], [x2, y2], ...] (m)")
                path = _points(t["path"], f"{where}.path")
                if len(path) < 2:
                    raise _Invalid(f"{where}.path needs at least two points")
                width = _number(t.get("thickness", 0.2), f"{where}.thickness", "m")
                if width <= 0:
                    raise _Invalid(f"{where}.thickness = {_fmt(width)} m must be > 0")
                line = shapely.LineString(path)
                if not geo.outline.buffer(geo.tol).covers(line):
                    raise _Invalid(f"{where}.path leaves slab.outline (near {_pt(_where_is(line.difference(geo.outline)))}); "
                                   "a wall must lie under the slab: trim its path")
                footprint = line.buffer(width / 2, cap_style="flat", join_style="mitre")
            for j, op in enumerate(geo.openings):
                if footprint.intersection(op).area > geo.area_tol:
                    raise _Invalid(f"{where} lies partly under slab.opening[{j + 1}]; move it or the opening")
            part = footprint.intersection(geo.outline)
            if part.area <= geo.area_tol:
                raise _Invalid(f"{where} does not meet the slab; move it under the slab")
            out.append(Support(polygon=part, connection=connection, name=name))
    for a in range(len(out)):
        for b in range(a + 1, len(out)):
            if out[a].polygon.intersection(out[b].polygon).area > geo.area_tol:
                raise _Invalid(f"{out[a].name} and {out[b].name} overlap; supports must stand apart")
    return tuple(out)


def _column_footprint(t: dict, where: str):
    if "at" not in t:
        raise _Invalid(f"{where} has no at; add at = [x, y] (m), the column's centre")
    centre = _points([t["at"]], f"{where}.at")[0]
    if ("size" in t) == ("diameter" in t):
        raise _Invalid(f"{where}: give either size = [bx, by] (m, rectangular) or diameter = <m> (round)")
    if "size" in t:
        size = _points([t["size"]], f"{where}.size")[0]
        if min(size) <= 0:
            raise _Invalid(f"{where}.size must be two lengths > 0 (m)")
        bx, by = size / 2
        poly = shapely.box(centre[0] - bx, centre[1] - by, centre[0] + bx, centre[1] + by)
    else:
        dia = _number(t["diameter"], f"{where}.diameter", "m")
        if dia <= 0:
            raise _Invalid(f"{where}.diameter must be > 0 (m)")
        # Inscribed 16-gon: a slightly smaller support is the safe side for an upper bound.
        ang = np.arange(16) * 2 * np.pi / 16
        poly = Polygon(np.c_[centre[0] + dia / 2 * np.cos(ang), centre[1] + dia / 2 * np.sin(ang)])
    return poly, centre


def _parse_zones(raw: Any, geo: "_Geometry") -> tuple[Zone, ...]:
    if isinstance(raw, dict) or not isinstance(raw, (list, tuple)):
        raise _Invalid("zone must be a list of tables: write each zone as [[zone]] (double brackets)")
    zones, polys = [], []
    for i, zt in enumerate(raw):
        where = f"zone[{i + 1}]"
        if not isinstance(zt, dict):
            raise _Invalid(f"{where} must be a table, got {_show(zt)}")
        _check_keys(zt, ZONE_KEYS, f"[[zone]] {where}")
        name = zt.get("name", f"zone {i + 1}")
        if not isinstance(name, str) or not name.strip():
            raise _Invalid(f"{where}.name must be non-empty text in quotes, got {_show(name)}")
        for key in ("polygon", "sagging"):
            if key not in zt:
                raise _Invalid(f"{where} has no {key}; a zone needs polygon = [[x, y], ...] (m) and "
                               "sagging = <kNm/m> (hogging optional, default 0)")
        pts = _clean_polygon(_points(zt["polygon"], f"{where}.polygon"), f"{where}.polygon", geo.tol)
        poly = Polygon(pts)
        outside = poly.difference(geo.outline)
        if outside.area > geo.area_tol:
            raise _Invalid(f"{where}.polygon leaves slab.outline ({_fmt(outside.area)} m^2 outside, near "
                           f"{_pt(_where_is(outside))}); trim the zone to the slab")
        for j, other in enumerate(polys):
            common = poly.intersection(other)
            if common.area > geo.area_tol:
                raise _Invalid(f"{where} overlaps zone[{j + 1}] ({_fmt(common.area)} m^2 in common, near "
                               f"{_pt(_where_is(common))}); zones must not overlap")
        sagging = _moment_pair(zt["sagging"], f"{where}.sagging")
        hogging = _moment_pair(zt.get("hogging", 0.0), f"{where}.hogging")
        polys.append(poly)
        ccw, _ = _ccw(pts)
        zones.append(Zone(polygon=_frozen(ccw), sagging=sagging, hogging=hogging, name=name))
    return tuple(zones)


# --- sections ---------------------------------------------------------------


class _Geometry:
    """Validated slab geometry as shapely polygons, with the tolerances used."""

    def __init__(self, outline: Polygon, openings: list[Polygon], tol: float):
        self.outline = outline
        self.openings = openings
        self.tol = tol  # m
        size = tol / _REL_TOL
        self.area_tol = tol * size  # m^2


def _parse_slab(t: dict) -> tuple[Slab, _Geometry]:
    if "outline" not in t:
        raise _Invalid("[slab] has no outline; add outline = [[x1, y1], [x2, y2], ...] (m)")
    if "edges" not in t:
        raise _Invalid(
            "[slab] has no edges; add edges = [...] with one of "
            f"{_words(EDGE_KINDS)} per outline edge, or one word for all edges"
        )
    raw = _points(t["outline"], "slab.outline")
    if len(raw):
        extent = float(np.max(np.ptp(raw, axis=0)))
    else:
        extent = 0.0
    tol = _REL_TOL * extent if extent > 0 else _REL_TOL
    outline_user = _clean_polygon(raw, "slab.outline", tol)
    n = len(outline_user)
    dropped = len(raw) - n

    edges_raw = t["edges"]
    if isinstance(edges_raw, str):
        edges_user = [edges_raw] * n
        if edges_raw not in EDGE_KINDS:
            raise _Invalid(
                f"slab.edges is \"{edges_raw}\", which is not an edge condition; "
                f"use one of {_words(EDGE_KINDS)}"
            )
    elif isinstance(edges_raw, (list, tuple)):
        if len(edges_raw) != n:
            extra = " (the repeated closing vertex is not counted)" if dropped else ""
            raise _Invalid(
                f"slab.edges has {len(edges_raw)} entries but slab.outline has {n} edges{extra}: "
                f"expected {n}, got {len(edges_raw)}; give one word per edge "
                "(edge k runs from vertex k to vertex k+1) or a single word for all edges"
            )
        outline_user, edges_user, fixity_user = _expand_edges(outline_user, list(edges_raw), tol)
    else:
        raise _Invalid(
            f"slab.edges must be a list of words or one word, got {_show(edges_raw)}; "
            f"use words from {_words(EDGE_KINDS)}"
        )
    if isinstance(edges_raw, str):
        fixity_user = [1.0] * n
    outline, order = _ccw(outline_user)
    edges = tuple(edges_user[k] for k in order)
    fixity = tuple(float(fixity_user[k]) for k in order)

    thickness = None
    if "thickness" in t:
        thickness = _number(t["thickness"], "slab.thickness", "m")
        if thickness <= 0:
            raise _Invalid(f"slab.thickness is {_fmt(thickness)} m; give a thickness > 0 (m) or leave it out")

    outline_poly = Polygon(outline)
    openings_raw = t.get("opening", [])
    if isinstance(openings_raw, dict):
        raise _Invalid("slab.opening must be a list of tables: write each opening as [[slab.opening]] (double brackets)")
    if not isinstance(openings_raw, (list, tuple)):
        raise _Invalid(f"slab.opening must be a list of [[slab.opening]] tables, got {_show(openings_raw)}")
    openings: list[np.ndarray] = []
    opening_polys: list[Polygon] = []
    for i, ot in enumerate(openings_raw):
        where = f"slab.opening[{i + 1}]"
        if not isinstance(ot, dict):
            raise _Invalid(f"{where} must be a table with a polygon, got {_show(ot)}")
        _check_keys(ot, OPENING_KEYS, where)
        if "polygon" not in ot:
            raise _Invalid(f"{where} has no polygon; add polygon = [[x1, y1], [x2, y2], ...] (m)")
        user = _clean_polygon(_points(ot["polygon"], f"{where}.polygon"), where, tol)
        _check_strictly_inside(user, outline_poly, where, tol)
        poly = Polygon(user)
        for j, other in enumerate(opening_polys):
            if poly.distance(other) <= tol:
                at = _meeting_point(poly, other)
                raise _Invalid(
                    f"slab.opening[{j + 1}] and {where} overlap or touch near {at}; "
                    "keep openings apart or merge them into one opening polygon"
                )
        ccw, _ = _ccw(user)
        openings.append(ccw)
        opening_polys.append(poly)

    slab = Slab(
        outline=_frozen(outline),
        edges=edges,
        openings=tuple(_frozen(o) for o in openings),
        thickness=thickness,
        fixity=fixity,
    )
    return slab, _Geometry(outline_poly, opening_polys, tol)


def _edge_kind_and_fixity(t: Any, where: str) -> tuple[str, float]:
    """A word, or a table {type = "continuous", fixity = f} (0 <= f <= 1)."""
    if isinstance(t, str):
        if t not in EDGE_KINDS:
            raise _Invalid(f"{where} = {_show(t)} is not an edge condition; use one of {_words(EDGE_KINDS)}")
        return t, 1.0
    if not isinstance(t, dict):
        raise _Invalid(f"{where} must be a word ({_words(EDGE_KINDS)}) or a table, got {_show(t)}")
    _check_keys(t, ("type", "fixity"), where)
    kind, fixity = _edge_kind_and_fixity(t.get("type"), f"{where}.type")[0], 1.0
    if "fixity" in t:
        fixity = _number(t["fixity"], f"{where}.fixity", "")
        if kind != "continuous" or not 0.0 <= fixity <= 1.0:
            raise _Invalid(f"{where}.fixity = {_fmt(fixity)}: a fixity (fraction of the hogging capacity "
                           "mobilised, 0 to 1) belongs to a \"continuous\" edge")
    return kind, fixity


def _expand_edges(outline: np.ndarray, entries: list, tol: float):
    """Outline with extra vertices where an edge is split into runs, its edge words and
    fixities. An entry is a word, {type, fixity}, or {runs = [{type, fixity, to}, ...]} with
    `to` the distance (m) from the edge's first vertex where each run but the last ends."""
    pts, kinds, fix = [], [], []
    n = len(outline)
    for k, entry in enumerate(entries):
        a, b = outline[k], outline[(k + 1) % n]
        where = f"slab.edges[{k + 1}] ({_edge_label(outline, k)})"
        pts.append(a)
        if not (isinstance(entry, dict) and "runs" in entry):
            kind, f = _edge_kind_and_fixity(entry, where)
            kinds.append(kind)
            fix.append(f)
            continue
        _check_keys(entry, ("runs",), where)
        runs = entry["runs"]
        if not isinstance(runs, list) or len(runs) < 2:
            raise _Invalid(f"{where}.runs must list at least two runs, e.g. [{{type = \"free\", to = 2.0}}, "
                           "{type = \"simple\"}]")
        length = float(np.hypot(*(b - a)))
        last = 0.0
        for j, run in enumerate(runs):
            rwhere = f"{where}.runs[{j + 1}]"
            if not isinstance(run, dict):
                raise _Invalid(f"{rwhere} must be a table {{type = ..., to = <m>}}")
            _check_keys(run, ("type", "fixity", "to"), rwhere)
            kind, f = _edge_kind_and_fixity({k2: v for k2, v in run.items() if k2 != "to"}, rwhere)
            kinds.append(kind)
            fix.append(f)
            if j == len(runs) - 1:
                if "to" in run:
                    raise _Invalid(f"{rwhere}: the last run goes to the end of the edge; leave out to")
                break
            if "to" not in run:
                raise _Invalid(f"{rwhere} has no to; give the distance (m) from the edge's first vertex "
                               "where this run ends")
            to = _number(run["to"], f"{rwhere}.to", "m")
            if not last + tol < to < length - tol:
                raise _Invalid(f"{rwhere}.to = {_fmt(to)} m must lie between {_fmt(last)} and the edge length "
                               f"{_fmt(length)} m, increasing from run to run")
            last = to
            pts.append(a + (b - a) * (to / length))
    return np.array(pts), kinds, fix


def _parse_capacity(t: dict, thickness: float | None) -> Capacity:
    bar_angle = _number(t.get("bar_angle", 0.0), "capacity.bar_angle", "degrees")
    if "bars" in t:
        if "sagging" in t or "hogging" in t:
            raise _Invalid("[capacity] gives both bars and sagging/hogging; give one of them "
                           "(bars computes the capacities by EN 1992-1-1)")
        return _parse_bars(t["bars"], thickness, bar_angle)
    if "sagging" not in t:
        raise _Invalid(
            "[capacity] has no sagging; add sagging = <kNm/m> (bottom bars, one number or a pair "
            "for bar directions 1 and 2), or a [capacity.bars] bar schedule"
        )
    sagging = _moment_pair(t["sagging"], "capacity.sagging")
    hogging = _moment_pair(t.get("hogging", 0.0), "capacity.hogging")
    if max(sagging + hogging) <= 0:
        raise _Invalid(
            "[capacity]: no positive capacity (sagging and hogging are all 0); "
            "give the moment capacity of the bottom bars in capacity.sagging (kNm/m)"
        )
    return Capacity(sagging=sagging, hogging=hogging, bar_angle=bar_angle)


def _parse_bars(t: Any, thickness: float | None, bar_angle: float) -> Capacity:
    """Capacities from a bar schedule (EN 1992-1-1, see eurocode.py)."""
    if not isinstance(t, dict):
        raise _Invalid(f"capacity.bars must be a table [capacity.bars], got {_show(t)}")
    _check_keys(t, BARS_KEYS, "[capacity.bars]")
    if thickness is None:
        raise _Invalid("[capacity.bars] needs the slab thickness: add thickness = <m> to [slab]")
    for key, table in (("concrete", eurocode.CONCRETE), ("steel", eurocode.STEEL)):
        if key not in t:
            raise _Invalid(f"[capacity.bars] has no {key}; add {key} = one of {_words(table)}")
        if t[key] not in table:
            raise _Invalid(f"capacity.bars.{key} = {_show(t[key])} is not a known grade; use one of {_words(table)}")
    factors = {k: _number(t.get(k, d), f"capacity.bars.{k}", "") for k, d in
               (("gamma_c", 1.5), ("gamma_s", 1.15), ("alpha_cc", 1.0))}
    for k, v in factors.items():
        if v <= 0:
            raise _Invalid(f"capacity.bars.{k} = {_fmt(v)} must be > 0")
    mat = eurocode.Materials(t["concrete"], t["steel"], **factors)
    layers, bars = {}, []
    try:
        for name in eurocode.LAYERS:
            if name not in t:
                continue
            lt = t[name]
            where = f"capacity.bars.{name}"
            if not isinstance(lt, dict):
                raise _Invalid(f"{where} must be a table {{diameter = <mm>, spacing = <mm>, cover = <mm>}}")
            _check_keys(lt, LAYER_KEYS, f"{where}")
            vals = {}
            for k in LAYER_KEYS:
                if k not in lt:
                    raise _Invalid(f"{where} has no {k}; give diameter, spacing and cover in mm")
                vals[k] = _number(lt[k], f"{where}.{k}", "mm")
                if vals[k] <= 0 and k != "cover":
                    raise _Invalid(f"{where}.{k} = {_fmt(vals[k])} mm must be > 0")
                if vals[k] < 0:
                    raise _Invalid(f"{where}.{k} = {_fmt(vals[k])} mm must not be negative")
            bars.append(eurocode.BarLayer(name, **vals))
            layers[name] = eurocode.layer_capacity(bars[-1], thickness * 1000.0, mat)
    except ModelError as exc:
        raise _Invalid(str(exc)) from None
    if "bottom_1" not in layers and "bottom_2" not in layers:
        raise _Invalid("[capacity.bars] has no bottom bars; give bottom_1 and/or bottom_2")

    def moment(name):
        return layers[name].moment if name in layers else 0.0

    return Capacity(sagging=(moment("bottom_1"), moment("bottom_2")),
                    hogging=(moment("top_1"), moment("top_2")), bar_angle=bar_angle,
                    layers=tuple(layers.values()), warnings=tuple(eurocode.schedule_warnings(layers, mat)),
                    bars=tuple(bars), materials=mat)


def _parse_loads(raw: Any, geo: _Geometry, thickness: float | None = None) -> tuple[AreaLoad, ...]:
    hint = 'add at least one [[load]] table, e.g. type = "area" and value = <kPa>'
    if raw is None:
        raise _Invalid(f"no [[load]] given; {hint}")
    if isinstance(raw, dict):
        raise _Invalid("load must be a list of tables: write each load as [[load]] (double brackets)")
    if not isinstance(raw, (list, tuple)):
        raise _Invalid(f"load must be a list of [[load]] tables, got {_show(raw)}")
    if len(raw) == 0:
        raise _Invalid(f"load is empty; {hint}")
    loads = []
    seen: dict[str, int] = {}
    for i, lt in enumerate(raw):
        where = f"load[{i + 1}]"
        if not isinstance(lt, dict):
            raise _Invalid(f"{where} must be a table, got {_show(lt)}")
        if "type" not in lt:
            raise _Invalid(f"{where} has no type; add type = one of {_words(LOAD_KEYS)}")
        kind = lt["type"]
        if not isinstance(kind, str) or kind not in LOAD_KEYS:
            raise _Invalid(
                f"{where}.type = {_show(kind)} is not a load type hingeline knows; "
                f"available load types: {_words(LOAD_KEYS)}"
            )
        _check_keys(lt, LOAD_KEYS[kind], f"{where} (type \"{kind}\")")
        if kind == "self_weight":
            load = _parse_self_weight(lt, where, i, thickness)
        else:
            load = _LOAD_PARSERS[kind](lt, where, geo, i)
        if load.name in seen:
            raise _Invalid(
                f"{where} has the name \"{load.name}\", already used by load[{seen[load.name]}]; "
                "give each load its own name"
            )
        seen[load.name] = i + 1
        loads.append(load)
    if not any(ld.factored for ld in loads):
        raise _Invalid(
            "every load has factored = false, so there is nothing for the load factor to scale; "
            "make at least one load factored (factored = true, the default)"
        )
    return tuple(loads)


def _load_common(t: dict, where: str, index: int, unit: str, kind: str):
    """(name, named, value, factored) of a [[load]] table; named is the " (load "...")" suffix."""
    name = t.get("name", f"load {index + 1}")
    if not isinstance(name, str) or not name.strip():
        raise _Invalid(f"{where}.name must be non-empty text in quotes, got {_show(name)}")
    named = f" (load \"{name}\")" if "name" in t else ""
    if "value" not in t:
        raise _Invalid(f"{where}{named} has no value; add value = <{unit}> (> 0, downward)")
    value = _number(t["value"], f"{where}.value{named}", unit)
    if value <= 0:
        raise _Invalid(f"{where}.value{named} is {_fmt(value)} {unit}; {kind} must be > 0 {unit} (downward)")
    factored = t.get("factored", True)
    if not isinstance(factored, bool):
        raise _Invalid(f"{where}.factored{named} must be true or false (no quotes), got {_show(factored)}")
    return name, named, value, factored


def _on_slab(geom, what: str, geo: _Geometry) -> None:
    """Refuse a point or path that leaves the outline or enters an opening."""
    if not geo.outline.buffer(geo.tol).covers(geom):
        raise _Invalid(f"{what} lies outside slab.outline (near {_pt(_where_is(geom.difference(geo.outline) or geom))}); "
                       "move it onto the slab")
    for j, op in enumerate(geo.openings):
        if op.buffer(-geo.tol).intersects(geom):
            raise _Invalid(f"{what} lies on slab.opening[{j + 1}]; an opening carries no load: move the load "
                           "onto the slab")


def _parse_self_weight(t: dict, where: str, index: int, thickness: float | None) -> AreaLoad:
    """Self-weight as a uniform area load: unit weight (kN/m^3) x slab.thickness (m)."""
    if thickness is None:
        raise _Invalid(f"{where} (type \"self_weight\") needs the slab thickness: add thickness = <m> to [slab]")
    gamma = _number(t.get("unit_weight", UNIT_WEIGHT), f"{where}.unit_weight", "kN/m^3")
    if gamma <= 0:
        raise _Invalid(f"{where}.unit_weight = {_fmt(gamma)} kN/m^3 must be > 0")
    name = t.get("name", "self weight")
    if not isinstance(name, str) or not name.strip():
        raise _Invalid(f"{where}.name must be non-empty text in quotes, got {_show(name)}")
    factored = t.get("factored", True)
    if not isinstance(factored, bool):
        raise _Invalid(f"{where}.factored must be true or false (no quotes), got {_show(factored)}")
    return AreaLoad(value=gamma * thickness, region=None, factored=factored, name=name)


def _parse_point_load(t: dict, where: str, geo: _Geometry, index: int) -> PointLoad:
    name, named, value, factored = _load_common(t, where, index, "kN", "a point load")
    if "at" not in t:
        raise _Invalid(f"{where}{named} has no at; add at = [x, y] (m)")
    at = _points([t["at"]], f"{where}.at{named}")[0]
    _on_slab(shapely.Point(at), f"{where}.at{named} = {_pt(at)}", geo)
    return PointLoad(value=value, at=_frozen(np.array(at, float)), factored=factored, name=name)


def _parse_line_load(t: dict, where: str, geo: _Geometry, index: int) -> LineLoad:
    name, named, value, factored = _load_common(t, where, index, "kN/m", "a line load")
    if "path" not in t:
        raise _Invalid(f"{where}{named} has no path; add path = [[x1, y1], [x2, y2], ...] (m)")
    path = _points(t["path"], f"{where}.path{named}")
    if len(path) < 2 or np.any(np.hypot(*np.diff(path, axis=0).T) <= geo.tol):
        raise _Invalid(f"{where}.path{named} needs at least two points, each apart from the one before it")
    _on_slab(shapely.LineString(path), f"{where}.path{named}", geo)
    return LineLoad(value=value, path=_frozen(np.array(path, float)), factored=factored, name=name)


def _parse_area_load(t: dict, where: str, geo: _Geometry, index: int) -> AreaLoad:
    name, named, value, factored = _load_common(t, where, index, "kPa", "an area load")
    region = None
    if "region" in t:
        rwhere = f"{where}.region{named}"
        user = _clean_polygon(_points(t["region"], rwhere), rwhere, geo.tol)
        poly = Polygon(user)
        inside = poly.intersection(geo.outline).area
        if inside <= geo.area_tol:
            raise _Invalid(f"{rwhere} lies wholly outside slab.outline; move the region onto the slab")
        outside = poly.difference(geo.outline)
        if outside.area > geo.area_tol:
            raise _Invalid(
                f"{rwhere} lies partly outside slab.outline ({_fmt(outside.area)} m^2 outside, "
                f"near {_pt(_where_is(outside))}); trim the region to the slab"
            )
        for j, op in enumerate(geo.openings):
            common = poly.intersection(op)
            if common.area > geo.area_tol:
                raise _Invalid(
                    f"{rwhere} overlaps slab.opening[{j + 1}] ({_fmt(common.area)} m^2 in common, near "
                    f"{_pt(_where_is(common))}); cut the opening out of the region "
                    "(split it into polygons that avoid the opening)"
                )
        region, _ = _ccw(user)
        region = _frozen(region)
    return AreaLoad(value=value, region=region, factored=factored, name=name)


_LOAD_PARSERS = {"area": _parse_area_load, "line": _parse_line_load, "point": _parse_point_load}


def _parse_analysis(t: dict) -> Analysis:
    resolution = t.get("resolution", "normal")
    if not isinstance(resolution, str) or resolution not in RESOLUTIONS:
        raise _Invalid(
            f"analysis.resolution = {_show(resolution)} is not a resolution; use one of {_words(RESOLUTIONS)}"
        )
    mesh_size = None
    if "mesh_size" in t:
        mesh_size = _number(t["mesh_size"], "analysis.mesh_size", "m")
        if mesh_size <= 0:
            raise _Invalid(
                f"analysis.mesh_size is {_fmt(mesh_size)} m; give an element size > 0 (m) or leave it out"
            )
    return Analysis(resolution=resolution, mesh_size=mesh_size)


# --- basic values -----------------------------------------------------------


def _check_keys(table: dict, allowed: tuple[str, ...], where: str) -> None:
    for key in table:
        if key not in allowed:
            close = difflib.get_close_matches(str(key), allowed, n=1)
            hint = f" (did you mean '{close[0]}'?)" if close else ""
            raise _Invalid(
                f"unknown key '{key}' in {where}{hint}; allowed keys: {', '.join(allowed)}"
            )


def _required_table(data: dict, key: str, todo: str) -> dict:
    if key not in data:
        raise _Invalid(f"no [{key}] table; {todo}")
    t = data[key]
    if not isinstance(t, dict):
        raise _Invalid(f"{key} must be a table [{key}], got {_show(t)}; {todo}")
    return t


def _is_number(x: Any) -> bool:
    return isinstance(x, numbers.Real) and not isinstance(x, (bool, np.bool_))


def _number(x: Any, where: str, unit: str) -> float:
    if not _is_number(x):
        raise _Invalid(f"{where} must be a number ({unit}), got {_show(x)}")
    v = float(x)
    if not math.isfinite(v):
        raise _Invalid(f"{where} is {v}; give a finite number ({unit})")
    return v


def _moment_pair(x: Any, where: str) -> tuple[float, float]:
    if isinstance(x, (list, tuple, np.ndarray)):
        if len(x) != 2:
            raise _Invalid(
                f"{where} has {len(x)} values; give one number (same in both bar directions) "
                "or a pair [direction 1, direction 2] (kNm/m)"
            )
        pair = tuple(_number(v, f"{where}[{k + 1}]", "kNm/m") for k, v in enumerate(x))
        names = [f"{where}[1]", f"{where}[2]"]
    else:
        v = _number(x, where, "kNm/m")
        pair = (v, v)
        names = [where, where]
    for name, v in zip(names, pair):
        if v < 0:
            raise _Invalid(f"{name} is {_fmt(v)} kNm/m; moment capacities must be >= 0 (0 = no bars)")
    return pair  # type: ignore[return-value]


def _points(x: Any, where: str) -> np.ndarray:
    """A list of [x, y] pairs as an (m, 2) float64 array (no geometric checks)."""
    if isinstance(x, np.ndarray):
        x = x.tolist()
    if not isinstance(x, (list, tuple)):
        raise _Invalid(f"{where} must be a list of [x, y] points (m), got {_show(x)}")
    out = np.empty((len(x), 2))
    for k, p in enumerate(x):
        if not isinstance(p, (list, tuple)) or len(p) != 2 or not all(_is_number(c) for c in p):
            raise _Invalid(f"{where} vertex {k + 1} must be a pair of numbers [x, y] (m), got {_show(p)}")
        if not all(math.isfinite(float(c)) for c in p):
            raise _Invalid(f"{where} vertex {k + 1} is {_show(p)}; coordinates must be finite numbers (m)")
        out[k] = (float(p[0]), float(p[1]))
    return out


# --- polygons ---------------------------------------------------------------


def _clean_polygon(pts: np.ndarray, where: str, tol: float) -> np.ndarray:
    """Validate a simple polygon given in the user's order; return it without the closing repeat.

    Checks, in this order: at least 3 distinct vertices, no repeated consecutive
    vertices, non-zero area, no self-intersection (edges crossing, touching or
    folding back). Vertex/edge numbers in messages follow the user's order.
    """
    if len(pts) >= 2 and np.hypot(*(pts[-1] - pts[0])) <= tol:
        pts = pts[:-1]
    n = len(pts)
    if n:
        d = np.hypot(*(pts[:, None, :] - pts[None, :, :]).transpose(2, 0, 1))
        repeats = np.tril(d <= tol, k=-1).any(axis=1)
        distinct = int(n - repeats.sum())
    else:
        distinct = 0
    if distinct < 3:
        raise _Invalid(
            f"{where} has {distinct} distinct vertices; a polygon needs at least 3 "
            "(give [[x1, y1], [x2, y2], [x3, y3], ...] in m)"
        )
    nxt = np.roll(pts, -1, axis=0)
    same = np.hypot(*(nxt - pts).T) <= tol
    if same.any():
        k = int(np.argmax(same))
        k2 = (k + 1) % n
        raise _Invalid(
            f"{where}: vertex {k + 1} {_pt(pts[k])} and vertex {k2 + 1} {_pt(pts[k2])} are the same point "
            "(repeated consecutive vertex); remove one of them"
        )
    extent = float(np.max(np.ptp(pts, axis=0)))
    hull_area = shapely.MultiPoint(pts).convex_hull.area
    if hull_area <= tol * extent:
        raise _Invalid(
            f"{where} has zero area (all its vertices lie on one line, e.g. vertex 1 {_pt(pts[0])}); "
            "give the corners of a polygon with area"
        )
    hit = _self_intersection(pts, tol)
    if hit is not None:
        i, j, at = hit
        raise _Invalid(
            f"{where} intersects itself: {_edge_label(pts, i)} and {_edge_label(pts, j)} "
            f"cross or touch at {_pt(at)}; list the vertices in order once around the boundary "
            "so that no two edges meet except at their shared vertex"
        )
    poly = Polygon(pts)
    if not poly.is_valid:  # safety net: should not happen after the checks above
        raise _Invalid(f"{where} is not a valid polygon ({shapely.is_valid_reason(poly)}); check its vertices")
    return pts


def _self_intersection(pts: np.ndarray, tol: float) -> tuple[int, int, np.ndarray] | None:
    """First pair of edges (i, j), i < j, 0-based, that cross, touch or overlap, with a point; else None."""
    n = len(pts)
    a = pts
    b = np.roll(pts, -1, axis=0)  # edge k: a[k] -> b[k]
    i, j = np.triu_indices(n, k=1)
    adjacent = (j == i + 1) | ((i == 0) & (j == n - 1))
    # Endpoint-to-segment distances. For adjacent edges only the far endpoints
    # count (they share one vertex): a fold-back puts one on the other edge.
    cand = np.stack(
        [
            _point_segment_distance(a[j], a[i], b[i]),
            _point_segment_distance(b[j], a[i], b[i]),
            _point_segment_distance(a[i], a[j], b[j]),
            _point_segment_distance(b[i], a[j], b[j]),
        ]
    )
    pts4 = np.stack([a[j], b[j], a[i], b[i]])
    # Shared vertex of adjacent pairs: j == i+1 shares b[i] == a[j]; (0, n-1) shares a[0] == b[n-1].
    shared = np.zeros_like(cand, dtype=bool)
    shared[0] = j == i + 1  # a[j] is the shared vertex
    shared[3] = j == i + 1  # b[i] is the shared vertex
    wrap = (i == 0) & (j == n - 1)
    shared[1] = wrap  # b[j] = a[0]
    shared[2] = wrap  # a[i] = b[n-1]
    cand = np.where(shared, np.inf, cand)
    touch = (cand <= tol).any(axis=0)
    ui = b[i] - a[i]
    uj = b[j] - a[j]
    c1 = _cross(ui, a[j] - a[i])
    c2 = _cross(ui, b[j] - a[i])
    c3 = _cross(uj, a[i] - a[j])
    c4 = _cross(uj, b[i] - a[j])
    proper = (c1 * c2 < 0) & (c3 * c4 < 0) & ~adjacent
    bad = touch | proper
    if not bad.any():
        return None
    k = int(np.argmax(bad))
    if proper[k]:
        t = c3[k] / (c3[k] - c4[k])
        at = a[i[k]] + t * ui[k]
    else:
        at = pts4[int(np.argmin(cand[:, k])), k]
    return int(i[k]), int(j[k]), at


def _point_segment_distance(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Distance (m) from points p to segments a-b; arrays (..., 2)."""
    d = b - a
    L2 = np.einsum("...i,...i->...", d, d)
    t = np.einsum("...i,...i->...", p - a, d) / np.where(L2 > 0, L2, 1.0)
    t = np.clip(t, 0.0, 1.0)
    return np.linalg.norm(p - (a + t[..., None] * d), axis=-1)


def _cross(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _ccw(pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Counter-clockwise copy of a simple polygon and the edge map.

    Returns (ccw, order): edge k of `ccw` (vertex k -> k+1) is edge order[k] of `pts`.
    A clockwise polygon is reversed keeping its first vertex first.
    """
    n = len(pts)
    x, y = pts[:, 0], pts[:, 1]
    signed = 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))
    if signed > 0:
        return pts.copy(), np.arange(n)
    idx = (-np.arange(n)) % n  # new vertex j = old vertex -j
    order = (-np.arange(n) - 1) % n  # new edge j (old -j -> old -j-1) = old edge -j-1
    return pts[idx].copy(), order


def _check_strictly_inside(pts: np.ndarray, outline: Polygon, where: str, tol: float) -> None:
    poly = Polygon(pts)
    boundary = outline.exterior
    if outline.contains(poly) and boundary.distance(poly) > tol:
        return
    todo = (
        "move it inside the slab, clear of the outline (an opening at the slab edge "
        "is modelled by changing slab.outline instead)"
    )
    x, y = pts[:, 0], pts[:, 1]
    dist = shapely.distance(shapely.points(x, y), boundary)
    on = dist <= tol
    if on.any():
        k = int(np.argmax(on))
        raise _Invalid(
            f"{where} is not strictly inside slab.outline: its vertex {k + 1} {_pt(pts[k])} "
            f"lies on the outline; {todo}"
        )
    outside = ~shapely.contains_xy(outline, x, y)
    if outside.any():
        k = int(np.argmax(outside))
        raise _Invalid(
            f"{where} is not strictly inside slab.outline: its vertex {k + 1} {_pt(pts[k])} "
            f"lies outside the outline; {todo}"
        )
    at = _meeting_point(poly.exterior, boundary)
    raise _Invalid(f"{where} is not strictly inside slab.outline: its boundary meets the outline near {at}; {todo}")


def _meeting_point(g1, g2) -> str:
    """A point (formatted) where two geometries meet, or their nearest points when apart."""
    common = g1.intersection(g2)
    if not common.is_empty:
        return _pt(_where_is(common))
    p, _ = nearest_points(g1, g2)
    return _pt((p.x, p.y))


def _where_is(geom) -> tuple[float, float]:
    p = geom.representative_point()
    return (p.x, p.y)


def _frozen(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a, dtype=np.float64)
    a.flags.writeable = False
    return a


# --- message helpers --------------------------------------------------------


def _fmt(v: float) -> str:
    return f"{v:.6g}"


def _pt(p) -> str:
    return f"({_fmt(float(p[0]))}, {_fmt(float(p[1]))})"


def _edge_label(pts: np.ndarray, k: int) -> str:
    """'edge k (vertex k (x, y) to vertex k+1 (x, y))', 1-based, k given 0-based."""
    n = len(pts)
    k2 = (k + 1) % n
    return f"edge {k + 1} (vertex {k + 1} {_pt(pts[k])} to vertex {k2 + 1} {_pt(pts[k2])})"


def _words(words) -> str:
    return ", ".join(f'"{w}"' for w in words)


def _type_name(x: Any) -> str:
    if isinstance(x, str):
        return "text"
    if isinstance(x, bool):
        return "true/false"
    if isinstance(x, dict):
        return "a table"
    if isinstance(x, (list, tuple)):
        return "a list"
    return type(x).__name__


def _show(x: Any) -> str:
    """Short description of a bad value for messages."""
    if isinstance(x, str):
        s = f'"{x}" (text)'
    elif isinstance(x, bool):
        s = f"{str(x).lower()} (true/false)"
    elif isinstance(x, dict):
        s = "a table"
    else:
        s = repr(x)
    return s if len(s) <= 60 else s[:57] + "..."
