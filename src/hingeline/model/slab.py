"""The [slab] section: outline, edge conditions (with runs along an edge), thickness, openings.

An edge entry is a word ("simple", "continuous", "free"), a table {type, fixity}, or
{runs = [{type, fixity, to}, ...]} splitting one edge of the outline into runs. The outline is
turned counter-clockwise (first vertex kept first) and the edge conditions follow their edges.

Units: m (outline, openings, thickness, run ends), fixity a fraction 0 to 1.
May import: numpy, shapely, `.types`, `.values`, `.polygons`.
"""
from __future__ import annotations

from typing import Any

import numpy as np
from shapely.geometry import Polygon

from .polygons import REL_TOL, Geometry, check_strictly_inside, clean_polygon, counter_clockwise, meeting_point
from .types import EDGE_KINDS, Slab
from .values import Invalid, check_keys, edge_label, fmt, frozen, number, points, show, words

SLAB_KEYS = ("outline", "edges", "thickness", "opening")
OPENING_KEYS = ("polygon",)


def parse_slab(t: dict) -> tuple[Slab, Geometry]:
    """The [slab] table as a Slab, and its outline and openings as shapely polygons."""
    check_keys(t, SLAB_KEYS, "[slab]")
    if "outline" not in t:
        raise Invalid("[slab] has no outline; add outline = [[x1, y1], [x2, y2], ...] (m)")
    if "edges" not in t:
        raise Invalid(
            "[slab] has no edges; add edges = [...] with one of "
            f"{words(EDGE_KINDS)} per outline edge, or one word for all edges"
        )
    raw = points(t["outline"], "slab.outline")
    if len(raw):
        extent = float(np.max(np.ptp(raw, axis=0)))
    else:
        extent = 0.0
    tol = REL_TOL * extent if extent > 0 else REL_TOL
    outline_user = clean_polygon(raw, "slab.outline", tol)
    n = len(outline_user)
    dropped = len(raw) - n

    edges_raw = t["edges"]
    if isinstance(edges_raw, str):
        edges_user = [edges_raw] * n
        if edges_raw not in EDGE_KINDS:
            raise Invalid(
                f"slab.edges is \"{edges_raw}\", which is not an edge condition; "
                f"use one of {words(EDGE_KINDS)}"
            )
    elif isinstance(edges_raw, (list, tuple)):
        if len(edges_raw) != n:
            extra = " (the repeated closing vertex is not counted)" if dropped else ""
            raise Invalid(
                f"slab.edges has {len(edges_raw)} entries but slab.outline has {n} edges{extra}: "
                f"expected {n}, got {len(edges_raw)}; give one word per edge "
                "(edge k runs from vertex k to vertex k+1) or a single word for all edges"
            )
        outline_user, edges_user, fixity_user = _expand_edges(outline_user, list(edges_raw), tol)
    else:
        raise Invalid(
            f"slab.edges must be a list of words or one word, got {show(edges_raw)}; "
            f"use words from {words(EDGE_KINDS)}"
        )
    if isinstance(edges_raw, str):
        fixity_user = [1.0] * n
    outline, order = counter_clockwise(outline_user)
    edges = tuple(edges_user[k] for k in order)
    fixity = tuple(float(fixity_user[k]) for k in order)

    thickness = None
    if "thickness" in t:
        thickness = number(t["thickness"], "slab.thickness", "m")
        if thickness <= 0:
            raise Invalid(f"slab.thickness is {fmt(thickness)} m; give a thickness > 0 (m) or leave it out")

    outline_poly = Polygon(outline)
    openings, opening_polys = _parse_openings(t.get("opening", []), outline_poly, tol)
    slab = Slab(
        outline=frozen(outline),
        edges=edges,
        openings=tuple(frozen(o) for o in openings),
        thickness=thickness,
        fixity=fixity,
    )
    return slab, Geometry(outline_poly, opening_polys, tol)


def _parse_openings(raw: Any, outline: Polygon, tol: float) -> tuple[list[np.ndarray], list[Polygon]]:
    """[[slab.opening]] tables: counter-clockwise polygons (m) strictly inside the outline, apart."""
    if isinstance(raw, dict):
        raise Invalid("slab.opening must be a list of tables: write each opening as [[slab.opening]] (double brackets)")
    if not isinstance(raw, (list, tuple)):
        raise Invalid(f"slab.opening must be a list of [[slab.opening]] tables, got {show(raw)}")
    openings: list[np.ndarray] = []
    opening_polys: list[Polygon] = []
    for i, ot in enumerate(raw):
        where = f"slab.opening[{i + 1}]"
        if not isinstance(ot, dict):
            raise Invalid(f"{where} must be a table with a polygon, got {show(ot)}")
        check_keys(ot, OPENING_KEYS, where)
        if "polygon" not in ot:
            raise Invalid(f"{where} has no polygon; add polygon = [[x1, y1], [x2, y2], ...] (m)")
        user = clean_polygon(points(ot["polygon"], f"{where}.polygon"), where, tol)
        check_strictly_inside(user, outline, where, tol)
        poly = Polygon(user)
        for j, other in enumerate(opening_polys):
            if poly.distance(other) <= tol:
                at = meeting_point(poly, other)
                raise Invalid(
                    f"slab.opening[{j + 1}] and {where} overlap or touch near {at}; "
                    "keep openings apart or merge them into one opening polygon"
                )
        ccw, _ = counter_clockwise(user)
        openings.append(ccw)
        opening_polys.append(poly)
    return openings, opening_polys


def _edge_kind_and_fixity(t: Any, where: str) -> tuple[str, float]:
    """A word, or a table {type = "continuous", fixity = f} (0 <= f <= 1)."""
    if isinstance(t, str):
        if t not in EDGE_KINDS:
            raise Invalid(f"{where} = {show(t)} is not an edge condition; use one of {words(EDGE_KINDS)}")
        return t, 1.0
    if not isinstance(t, dict):
        raise Invalid(f"{where} must be a word ({words(EDGE_KINDS)}) or a table, got {show(t)}")
    check_keys(t, ("type", "fixity"), where)
    kind, fixity = _edge_kind_and_fixity(t.get("type"), f"{where}.type")[0], 1.0
    if "fixity" in t:
        fixity = number(t["fixity"], f"{where}.fixity", "")
        if kind != "continuous" or not 0.0 <= fixity <= 1.0:
            raise Invalid(f"{where}.fixity = {fmt(fixity)}: a fixity (fraction of the hogging capacity "
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
        where = f"slab.edges[{k + 1}] ({edge_label(outline, k)})"
        pts.append(a)
        if not (isinstance(entry, dict) and "runs" in entry):
            kind, f = _edge_kind_and_fixity(entry, where)
            kinds.append(kind)
            fix.append(f)
            continue
        check_keys(entry, ("runs",), where)
        runs = entry["runs"]
        if not isinstance(runs, list) or len(runs) < 2:
            raise Invalid(f"{where}.runs must list at least two runs, e.g. [{{type = \"free\", to = 2.0}}, "
                          "{type = \"simple\"}]")
        length = float(np.hypot(*(b - a)))
        last = 0.0
        for j, run in enumerate(runs):
            rwhere = f"{where}.runs[{j + 1}]"
            if not isinstance(run, dict):
                raise Invalid(f"{rwhere} must be a table {{type = ..., to = <m>}}")
            check_keys(run, ("type", "fixity", "to"), rwhere)
            kind, f = _edge_kind_and_fixity({k2: v for k2, v in run.items() if k2 != "to"}, rwhere)
            kinds.append(kind)
            fix.append(f)
            if j == len(runs) - 1:
                if "to" in run:
                    raise Invalid(f"{rwhere}: the last run goes to the end of the edge; leave out to")
                break
            if "to" not in run:
                raise Invalid(f"{rwhere} has no to; give the distance (m) from the edge's first vertex "
                              "where this run ends")
            to = number(run["to"], f"{rwhere}.to", "m")
            if not last + tol < to < length - tol:
                raise Invalid(f"{rwhere}.to = {fmt(to)} m must lie between {fmt(last)} and the edge length "
                              f"{fmt(length)} m, increasing from run to run")
            last = to
            pts.append(a + (b - a) * (to / length))
    return np.array(pts), kinds, fix
