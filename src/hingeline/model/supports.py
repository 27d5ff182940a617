"""The [[column]], [[wall]] and [[zone]] sections: supports under the slab and regions of it
with their own capacities.

A column is a rectangle (size) or a circle (diameter, taken as the inscribed 16-gon) round its
centre; a wall is a path widened by its thickness. Each footprint is clipped to the outline
and must keep clear of openings and of the other supports. A zone is a polygon within the
outline, apart from the other zones, with its own sagging and hogging capacities.

Units: m (positions, sizes, thicknesses, polygons), m^2 (overlaps), kNm/m (zone capacities).
May import: numpy, shapely, `.types`, `.values`, `.polygons`.
"""
from __future__ import annotations

from typing import Any

import numpy as np
import shapely
from shapely.geometry import Polygon

from .polygons import Geometry, clean_polygon, counter_clockwise, where_is
from .types import Support, Zone
from .values import Invalid, fmt, frozen, moment_pair, number, pair, points, pt, show, tables, words

COLUMN_KEYS = ("at", "size", "diameter", "connection", "name")
WALL_KEYS = ("path", "thickness", "connection", "name")
CONNECTIONS = ("monolithic", "pinned")
ZONE_KEYS = ("polygon", "sagging", "hogging", "name")


#: Half-width of the strip a pinned wall holds when its bearing line is its path, as a
#: fraction of the wall's thickness (the strip is ground: it needs some width).
STRIP = 1e-3


def parse_supports(columns: Any, walls: Any, geo: Geometry, slab_thickness: float | None = None
                   ) -> tuple[Support, ...]:
    """Columns and walls under the slab as footprint polygons (m).

    A pinned wall holds the slab along its bearing line, not over its footprint: a footprint
    held flat would shorten the span to the clear span between faces, which overstates the
    collapse load (a 6 m span on a 0.3 m wall: 8 m / 5.85^2 against 8 m / 6^2, +5 %). EN
    1992-1-1 5.3.2.2 places the support of an effective span min(h/2, t/2) inside the face
    (h the slab's thickness, t the wall's), so the wall holds the strip of its path widened
    by max(t - h, 0) / 2 each side, at least STRIP * t (its path alone without slab.thickness).
    """
    out = []
    for key, raw in (("column", columns), ("wall", walls)):
        for _, where, t in tables(raw, key, "each", COLUMN_KEYS if key == "column" else WALL_KEYS):
            name = t.get("name", where)
            if not isinstance(name, str) or not name.strip():
                raise Invalid(f"{where}.name must be non-empty text in quotes, got {show(name)}")
            connection = t.get("connection", "monolithic")
            if connection not in CONNECTIONS:
                raise Invalid(f"{where}.connection = {show(connection)}; use one of {words(CONNECTIONS)}")
            centre = None
            if key == "column":
                footprint, centre = _column_footprint(t, where)
                if not geo.outline.buffer(geo.tol).covers(shapely.Point(centre)):
                    raise Invalid(f"{where} at {pt(centre)} stands outside slab.outline; move it under the slab")
                centre = frozen(centre)
            else:
                footprint, path, width = _wall_footprint(t, where, geo)
            for j, op in enumerate(geo.openings):
                if footprint.intersection(op).area > geo.area_tol:
                    raise Invalid(f"{where} lies partly under slab.opening[{j + 1}]; move it or the opening")
            part = footprint.intersection(geo.outline)
            if part.area <= geo.area_tol:
                raise Invalid(f"{where} does not meet the slab; move it under the slab")
            held, whole = part, None
            if key == "wall" and connection == "pinned":
                inset = width / 2 if slab_thickness is None else min(slab_thickness, width) / 2
                half = max(width / 2 - inset, STRIP * width)
                held = path.buffer(half, cap_style="flat", join_style="mitre").intersection(geo.outline)
                whole = part
            out.append(Support(polygon=held, connection=connection, name=name, centre=centre, kind=key,
                               footprint=whole))
    for a in range(len(out)):
        for b in range(a + 1, len(out)):
            if out[a].physical.intersection(out[b].physical).area > geo.area_tol:
                raise Invalid(f"{out[a].name} and {out[b].name} overlap; supports must stand apart")
    return tuple(out)


def _column_footprint(t: dict, where: str):
    """(footprint polygon, centre (2,)) of a [[column]], m."""
    if "at" not in t:
        raise Invalid(f"{where} has no at; add at = [x, y] (m), the column's centre")
    centre = pair(t["at"], f"{where}.at")
    if ("size" in t) == ("diameter" in t):
        raise Invalid(f"{where}: give either size = [bx, by] (m, rectangular) or diameter = <m> (round)")
    if "size" in t:
        size = pair(t["size"], f"{where}.size", "[bx, by] (m; a square column of side b: [b, b])")
        if min(size) <= 0:
            raise Invalid(f"{where}.size must be two lengths > 0 (m)")
        bx, by = size / 2
        poly = shapely.box(centre[0] - bx, centre[1] - by, centre[0] + bx, centre[1] + by)
    else:
        dia = number(t["diameter"], f"{where}.diameter", "m")
        if dia <= 0:
            raise Invalid(f"{where}.diameter must be > 0 (m)")
        # Inscribed 16-gon: a slightly smaller support is the safe side for an upper bound.
        ang = np.arange(16) * 2 * np.pi / 16
        poly = Polygon(np.c_[centre[0] + dia / 2 * np.cos(ang), centre[1] + dia / 2 * np.sin(ang)])
    return poly, centre


def _wall_footprint(t: dict, where: str, geo: Geometry):
    """(footprint polygon, path LineString, thickness) of a [[wall]], m: its path, under the
    slab, widened by its thickness."""
    if "path" not in t:
        raise Invalid(f"{where} has no path; add path = [[x1, y1], [x2, y2], ...] (m)")
    path = points(t["path"], f"{where}.path")
    if len(path) < 2:
        raise Invalid(f"{where}.path needs at least two points")
    width = number(t.get("thickness", 0.2), f"{where}.thickness", "m")
    if width <= 0:
        raise Invalid(f"{where}.thickness = {fmt(width)} m must be > 0")
    line = shapely.LineString(path)
    if not geo.outline.buffer(geo.tol).covers(line):
        raise Invalid(f"{where}.path leaves slab.outline (near {pt(where_is(line.difference(geo.outline)))}); "
                      "a wall must lie under the slab: trim its path")
    return line.buffer(width / 2, cap_style="flat", join_style="mitre"), line, width


def parse_zones(raw: Any, geo: Geometry) -> tuple[Zone, ...]:
    """The [[zone]] tables: counter-clockwise polygons (m) within the outline, not overlapping."""
    zones, polys = [], []
    for i, where, zt in tables(raw, "zone", "each zone", ZONE_KEYS):
        name = zt.get("name", f"zone {i + 1}")
        if not isinstance(name, str) or not name.strip():
            raise Invalid(f"{where}.name must be non-empty text in quotes, got {show(name)}")
        for key in ("polygon", "sagging"):
            if key not in zt:
                raise Invalid(f"{where} has no {key}; a zone needs polygon = [[x, y], ...] (m) and "
                              "sagging = <kNm/m> (hogging optional, default 0)")
        pts = clean_polygon(points(zt["polygon"], f"{where}.polygon"), f"{where}.polygon", geo.tol)
        poly = Polygon(pts)
        outside = poly.difference(geo.outline)
        if outside.area > geo.area_tol:
            raise Invalid(f"{where}.polygon leaves slab.outline ({fmt(outside.area)} m^2 outside, near "
                          f"{pt(where_is(outside))}); trim the zone to the slab")
        for j, other in enumerate(polys):
            common = poly.intersection(other)
            if common.area > geo.area_tol:
                raise Invalid(f"{where} overlaps zone[{j + 1}] ({fmt(common.area)} m^2 in common, near "
                              f"{pt(where_is(common))}); zones must not overlap")
        sagging = moment_pair(zt["sagging"], f"{where}.sagging")
        hogging = moment_pair(zt.get("hogging", 0.0), f"{where}.hogging")
        polys.append(poly)
        ccw, _ = counter_clockwise(pts)
        zones.append(Zone(polygon=frozen(ccw), sagging=sagging, hogging=hogging, name=name))
    return tuple(zones)
