"""The [[load]] and [[case]] sections.

A load is "area" (over the slab or a region of it), "line" (along a path), "point", or
"self_weight" (unit weight x slab thickness, an area load over the whole slab). Every load has
a name, unique in the model ("load 1", ... when not given), and is scaled (multiplied by the
load factor: `scaled = true`, the default) or held at its value (`scaled = false`). An optional
partial factor `gamma` (> 0, default 1) multiplies the value before anything else. A [[case]]
names the loads solved together.

Units: kPa (area loads), kN/m (line loads), kN (point loads), kN/m^3 (unit weight), m
(regions, paths, points, thickness).
May import: numpy, shapely, `.types`, `.values`, `.polygons`.
"""
from __future__ import annotations

from typing import Any

import numpy as np
import shapely
from shapely.geometry import Polygon

from .polygons import Geometry, clean_polygon, counter_clockwise, where_is
from .types import AreaLoad, LineLoad, LoadCase, PointLoad
from .values import Invalid, check_keys, fmt, frozen, number, pair, points, pt, show, tables, words

# Keys allowed in a [[load]] table, per load type.
LOAD_KEYS = {
    "area": ("type", "value", "region", "scaled", "gamma", "name"),
    "line": ("type", "value", "path", "scaled", "gamma", "name"),
    "point": ("type", "value", "at", "scaled", "gamma", "name"),
    "self_weight": ("type", "unit_weight", "scaled", "gamma", "name"),
}
# The key that `scaled` replaced: "factored" reads, in design codes, as "multiplied by partial
# factors", the opposite of what it meant here; a file that still uses it is refused by name.
OLD_SCALED_KEY = "factored"
CASE_KEYS = ("name", "loads")
UNIT_WEIGHT = 25.0  # kN/m^3, reinforced concrete (common practice, no source)


def parse_loads(raw: Any, geo: Geometry, thickness: float | None = None) -> tuple[AreaLoad, ...]:
    """The [[load]] tables, checked against the slab `geo`; `thickness` (m) for self-weight."""
    hint = 'add at least one [[load]] table, e.g. type = "area" and value = <kPa>'
    if raw is None:
        raise Invalid(f"no [[load]] given; {hint}")
    if isinstance(raw, dict):
        raise Invalid("load must be a list of tables: write each load as [[load]] (double brackets)")
    if not isinstance(raw, (list, tuple)):
        raise Invalid(f"load must be a list of [[load]] tables, got {show(raw)}")
    if len(raw) == 0:
        raise Invalid(f"load is empty; {hint}")
    loads = []
    seen: dict[str, int] = {}
    for i, lt in enumerate(raw):
        where = f"load[{i + 1}]"
        if not isinstance(lt, dict):
            raise Invalid(f"{where} must be a table, got {show(lt)}")
        if "type" not in lt:
            raise Invalid(f"{where} has no type; add type = one of {words(LOAD_KEYS)}")
        kind = lt["type"]
        if not isinstance(kind, str) or kind not in LOAD_KEYS:
            raise Invalid(
                f"{where}.type = {show(kind)} is not a load type hingeline knows; "
                f"available load types: {words(LOAD_KEYS)}"
            )
        if OLD_SCALED_KEY in lt:
            raise Invalid(f"{where}.factored is no longer a key: write scaled = {str(lt[OLD_SCALED_KEY]).lower()} "
                          "instead (scaled = false: the load is held at its value while the others are "
                          "multiplied by the load factor; partial factors go in gamma = <factor>)")
        check_keys(lt, LOAD_KEYS[kind], f"{where} (type \"{kind}\")")
        if kind == "self_weight":
            load = _parse_self_weight(lt, where, thickness)
        else:
            load = _LOAD_PARSERS[kind](lt, where, geo, i)
        if load.name in seen:
            raise Invalid(
                f"{where} has the name \"{load.name}\", already used by load[{seen[load.name]}]; "
                "give each load its own name"
            )
        seen[load.name] = i + 1
        loads.append(load)
    if not any(ld.factored for ld in loads):
        raise Invalid(
            "every load has scaled = false, so there is nothing for the load factor to multiply; "
            "make at least one load scaled (scaled = true, the default)"
        )
    return tuple(loads)


def _scaled_gamma(t: dict, where: str, named: str = "") -> tuple[bool, float]:
    """(scaled, gamma) of a [[load]] table: whether the load factor multiplies the load, and
    its partial factor."""
    scaled = t.get("scaled", True)
    if not isinstance(scaled, bool):
        raise Invalid(f"{where}.scaled{named} must be true or false (no quotes), got {show(scaled)}")
    gamma = number(t.get("gamma", 1.0), f"{where}.gamma{named}", "")
    if gamma <= 0:
        raise Invalid(f"{where}.gamma{named} = {fmt(gamma)} must be > 0 (a partial factor such as 1.35 or 1.5)")
    return scaled, gamma


def _load_common(t: dict, where: str, index: int, unit: str, kind: str):
    """(name, named, design value (gamma applied), scaled, gamma) of a [[load]] table; named
    is the " (load "...")" suffix."""
    name = t.get("name", f"load {index + 1}")
    if not isinstance(name, str) or not name.strip():
        raise Invalid(f"{where}.name must be non-empty text in quotes, got {show(name)}")
    named = f" (load \"{name}\")" if "name" in t else ""
    if "value" not in t:
        raise Invalid(f"{where}{named} has no value; add value = <{unit}> (> 0, downward)")
    value = number(t["value"], f"{where}.value{named}", unit)
    if value <= 0:
        raise Invalid(f"{where}.value{named} is {fmt(value)} {unit}; {kind} must be > 0 {unit} (downward)")
    scaled, gamma = _scaled_gamma(t, where, named)
    return name, named, value * gamma, scaled, gamma


def _on_slab(geom, what: str, geo: Geometry) -> None:
    """Refuse a point or path that leaves the outline or enters an opening."""
    if not geo.outline.buffer(geo.tol).covers(geom):
        raise Invalid(f"{what} lies outside slab.outline (near {pt(where_is(geom.difference(geo.outline) or geom))}); "
                      "move it onto the slab")
    for j, op in enumerate(geo.openings):
        if op.buffer(-geo.tol).intersects(geom):
            raise Invalid(f"{what} lies on slab.opening[{j + 1}]; an opening carries no load: move the load "
                          "onto the slab")


def _parse_self_weight(t: dict, where: str, thickness: float | None) -> AreaLoad:
    """Self-weight as a uniform area load: unit weight (kN/m^3) x slab.thickness (m)."""
    if thickness is None:
        raise Invalid(f"{where} (type \"self_weight\") needs the slab thickness: add thickness = <m> to [slab]")
    unit_weight = number(t.get("unit_weight", UNIT_WEIGHT), f"{where}.unit_weight", "kN/m^3")
    if unit_weight <= 0:
        raise Invalid(f"{where}.unit_weight = {fmt(unit_weight)} kN/m^3 must be > 0")
    name = t.get("name", "self weight")
    if not isinstance(name, str) or not name.strip():
        raise Invalid(f"{where}.name must be non-empty text in quotes, got {show(name)}")
    scaled, gamma = _scaled_gamma(t, where)
    return AreaLoad(value=unit_weight * thickness * gamma, region=None, factored=scaled, name=name, gamma=gamma)


def _parse_point_load(t: dict, where: str, geo: Geometry, index: int) -> PointLoad:
    name, named, value, scaled, gamma = _load_common(t, where, index, "kN", "a point load")
    if "at" not in t:
        raise Invalid(f"{where}{named} has no at; add at = [x, y] (m)")
    at = pair(t["at"], f"{where}.at{named}")
    _on_slab(shapely.Point(at), f"{where}.at{named} = {pt(at)}", geo)
    return PointLoad(value=value, at=frozen(np.array(at, float)), factored=scaled, name=name, gamma=gamma)


def _parse_line_load(t: dict, where: str, geo: Geometry, index: int) -> LineLoad:
    name, named, value, scaled, gamma = _load_common(t, where, index, "kN/m", "a line load")
    if "path" not in t:
        raise Invalid(f"{where}{named} has no path; add path = [[x1, y1], [x2, y2], ...] (m)")
    path = points(t["path"], f"{where}.path{named}")
    if len(path) < 2 or np.any(np.hypot(*np.diff(path, axis=0).T) <= geo.tol):
        raise Invalid(f"{where}.path{named} needs at least two points, each apart from the one before it")
    _on_slab(shapely.LineString(path), f"{where}.path{named}", geo)
    return LineLoad(value=value, path=frozen(np.array(path, float)), factored=scaled, name=name, gamma=gamma)


def _parse_area_load(t: dict, where: str, geo: Geometry, index: int) -> AreaLoad:
    name, named, value, scaled, gamma = _load_common(t, where, index, "kPa", "an area load")
    region = None
    if "region" in t:
        rwhere = f"{where}.region{named}"
        user = clean_polygon(points(t["region"], rwhere), rwhere, geo.tol)
        poly = Polygon(user)
        inside = poly.intersection(geo.outline).area
        if inside <= geo.area_tol:
            raise Invalid(f"{rwhere} lies wholly outside slab.outline; move the region onto the slab")
        outside = poly.difference(geo.outline)
        if outside.area > geo.area_tol:
            raise Invalid(
                f"{rwhere} lies partly outside slab.outline ({fmt(outside.area)} m^2 outside, "
                f"near {pt(where_is(outside))}); trim the region to the slab"
            )
        for j, op in enumerate(geo.openings):
            common = poly.intersection(op)
            if common.area > geo.area_tol:
                raise Invalid(
                    f"{rwhere} overlaps slab.opening[{j + 1}] ({fmt(common.area)} m^2 in common, near "
                    f"{pt(where_is(common))}); cut the opening out of the region "
                    "(split it into polygons that avoid the opening)"
                )
        region, _ = counter_clockwise(user)
        region = frozen(region)
    return AreaLoad(value=value, region=region, factored=scaled, name=name, gamma=gamma)


_LOAD_PARSERS = {"area": _parse_area_load, "line": _parse_line_load, "point": _parse_point_load}


def parse_cases(raw: Any, loads) -> tuple[LoadCase, ...]:
    """The [[case]] tables: each names loads of `loads` by name, at least one of them scaled."""
    by_name = {ld.name: ld for ld in loads}
    out, seen = [], set()
    for i, where, t in tables(raw, "case", "each load case", CASE_KEYS):
        name = t.get("name", f"case {i + 1}")
        if not isinstance(name, str) or not name.strip() or name in seen:
            raise Invalid(f"{where}.name must be text in quotes, different for every case, got {show(name)}")
        seen.add(name)
        names = t.get("loads")
        if not isinstance(names, list) or not names or not all(isinstance(n, str) for n in names):
            raise Invalid(f"{where} (\"{name}\") needs loads = [\"load name\", ...]: the names of [[load]] tables")
        for n in names:
            if n not in by_name:
                raise Invalid(f"{where} (\"{name}\") refers to load \"{n}\", which no [[load]] has as its name; "
                              f"loads are: {words(by_name)}")
        if not any(by_name[n].factored for n in names):
            raise Invalid(f"{where} (\"{name}\") has no scaled load, so nothing for the load factor to multiply")
        out.append(LoadCase(name, tuple(names)))
    return tuple(out)
