"""Section 1 of the calculation record: the model as the page prints it.

`model_tables(model)` returns the slab, its edges (numbered as in the model file, runs of an
edge with their extent, continuous edges with their fixity) and openings, the moment
capacities (and the bar schedule behind them: grades, partial factors, each layer's
diameter, spacing and cover), the loads with the unit of each type, the load cases, the
columns and walls and the reinforcement zones as dicts and lists of already-formatted
strings, for the template templates/_model.html.j2. `method_items(model)` says which
paragraphs of the method section (templates/_method.html.j2) apply to the model.
`load_unit(load)` is the unit of a load's value. No HTML is written here.

Units: lengths m, areas m², moments kNm/m, loads kPa (area, self-weight), kN/m (line),
kN (point), unit weights kN/m³, bar diameters, spacings and covers mm, bar areas mm²/m,
depths mm, angles degrees.
May import: `model`.
"""
from __future__ import annotations

import numpy as np

from ..model import Model


def xy(p) -> str:
    """A point as printed: (x, y) to the mm."""
    return f"({float(p[0]):.3f}, {float(p[1]):.3f})"


def _points(ps) -> str:
    return ", ".join(xy(p) for p in ps)


def poly_area(p) -> float:
    """Area of a simple polygon given as (n, 2) vertices, m²."""
    p = np.asarray(p, float)
    x, y = p[:, 0], p[:, 1]
    return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


def load_unit(ld) -> str:
    """Unit of a load's value: kN (point), kN/m (line), kPa (area, self-weight included)."""
    if hasattr(ld, "at"):
        return "kN"
    if hasattr(ld, "path"):
        return "kN/m"
    return "kPa"


def _load_row(ld, thickness: float | None) -> dict:
    if hasattr(ld, "at"):
        where = "point " + xy(ld.at)
    elif hasattr(ld, "path"):
        where = "line " + _points(ld.path)
    else:
        where = "whole slab" if ld.region is None else "region " + _points(ld.region)
        if getattr(ld, "unit_weight", None) is not None and thickness:
            where += f" (self-weight: {ld.unit_weight:.3f} kN/m³ × {thickness:.3f} m)"
    return {"name": ld.name, "value": f"{ld.value:.3f}", "unit": load_unit(ld), "where": where,
            "gamma": f"{getattr(ld, 'gamma', 1.0):.3g}", "factored": bool(ld.factored)}


def _condition(kind: str, fixity: float) -> str:
    """An edge condition as printed: "continuous, fixity 0.6" when only part of the hogging
    capacity is mobilised along it, else the word."""
    if kind == "continuous" and fixity < 1.0:
        return f"continuous, fixity {fixity:g}"
    return kind


def _edge_rows(slab) -> list[dict]:
    """One row per edge (or run of an edge) in the order of the model file: the file's edge
    number, the run's extent along it, its ends (in the file's direction), length, condition."""
    n = len(slab.outline)
    fixity = slab.fixity or (1.0,) * n
    rows = []
    for k in range(n):
        a, b = slab.outline[k], slab.outline[(k + 1) % n]
        length = float(np.hypot(*(b - a)))
        o = slab.origin[k] if slab.origin else None
        if o is not None and o.reversed:
            a, b = b, a
        if o is None or o.runs == 1:
            number, extent = (k + 1 if o is None else o.edge), f"whole edge, {length:.3f} m"
            key = (number, 0.0)
        else:
            number = o.edge
            extent = f"run {{}} of {o.runs}: {o.start:.3f} to {o.end:.3f} m"
            key = (number, o.start)
        rows.append({"key": key, "number": number, "extent": extent, "start": xy(a), "end": xy(b),
                     "length": f"{length:.3f}", "condition": _condition(str(slab.edges[k]), float(fixity[k]))})
    rows.sort(key=lambda r: r.pop("key"))
    run = 0
    for i, r in enumerate(rows):
        run = run + 1 if i and rows[i - 1]["number"] == r["number"] else 1
        r["extent"] = r["extent"].format(run) if "{}" in r["extent"] else r["extent"]
    return rows


def _materials(c) -> list[tuple[str, str]]:
    """The bar schedule's grades and partial factors, when the capacities come from bars."""
    m = c.materials
    if m is None:
        return []
    return [("concrete", m.concrete), ("steel", m.steel), ("γ_c", f"{m.gamma_c:.2f}"), ("γ_s", f"{m.gamma_s:.2f}"),
            ("α_cc", f"{m.alpha_cc:.2f}")]


def _layer_rows(c) -> list[dict]:
    """Each layer of bars as given (diameter, spacing, cover, mm) and its capacity."""
    given = {b.name: b for b in (c.bars or ())}
    rows = []
    for lc in c.layers or ():
        b = given.get(lc.name)
        rows.append({"name": lc.name, "diameter": "–" if b is None else f"{b.diameter:g}",
                     "spacing": "–" if b is None else f"{b.spacing:g}", "cover": "–" if b is None else f"{b.cover:g}",
                     "area": f"{lc.area:.0f}", "d": f"{lc.d:.1f}", "x": f"{lc.x:.1f}", "xu_d": f"{lc.xu_d:.3f}",
                     "moment": f"{lc.moment:.2f}"})
    return rows


def method_items(model: Model) -> dict[str, bool]:
    """Which paragraphs of the method section the model needs: continuous edges (or partly
    fixed ones), free edges or openings, line loads, point loads, columns and walls, zones."""
    edges = set(model.slab.edges)
    return {"continuous": "continuous" in edges, "free": "free" in edges or bool(model.slab.openings),
            "patches": any(getattr(ld, "region", None) is not None for ld in model.loads),
            "line_loads": any(hasattr(ld, "path") for ld in model.loads),
            "point_loads": any(hasattr(ld, "at") for ld in model.loads),
            "held": any(not ld.factored for ld in model.loads),
            "gamma": any(getattr(ld, "gamma", 1.0) != 1.0 for ld in model.loads),
            "columns": bool(model.supports),
            "pinned_columns": any(sp.bearing for sp in model.supports),
            "zones": bool(model.zones)}


def _support_row(sp) -> dict:
    ring = np.asarray(sp.physical.exterior.coords)[:-1] if hasattr(sp.physical, "exterior") else []
    return {"name": sp.name, "connection": str(sp.connection), "footprint": _points(ring)}


def model_tables(model: Model) -> dict:
    """Page data of section 1 (see the module docstring)."""
    s, c = model.slab, model.capacity
    edges = _edge_rows(s)
    area = poly_area(s.outline) - sum(poly_area(o) for o in s.openings)
    return {
        "title": model.title or "(untitled)",
        "thickness": "%.3f m" % s.thickness if s.thickness else "not given",
        "area": f"{area:.3f}",
        "edges": edges,
        "openings": [{"number": k + 1, "vertices": _points(o), "area": f"{poly_area(o):.3f}"}
                     for k, o in enumerate(s.openings)],
        "sagging": [f"{c.sagging[0]:.3f}", f"{c.sagging[1]:.3f}"],
        "hogging": [f"{c.hogging[0]:.3f}", f"{c.hogging[1]:.3f}"],
        "materials": _materials(c),
        "layers": _layer_rows(c),
        "bar_angle": f"{c.bar_angle:.2f}",
        "loads": [_load_row(ld, s.thickness) for ld in model.loads],
        "cases": [{"name": case.name, "loads": ", ".join(case.loads)} for case in model.cases],
        "supports": [_support_row(sp) for sp in model.supports],
        "zones": [{"name": z.name, "sagging": f"{z.sagging[0]:.3f} / {z.sagging[1]:.3f}",
                   "hogging": f"{z.hogging[0]:.3f} / {z.hogging[1]:.3f}", "polygon": _points(z.polygon)}
                  for z in model.zones],
    }
