"""Section 1 of the calculation record: the model as the page prints it.

`model_tables(model)` returns the slab, its edges and openings, the moment capacities
(and the bar schedule behind them), the loads, the columns and walls and the
reinforcement zones as dicts and lists of already-formatted strings, for the template
templates/_model.html.j2. No HTML is written here.

Units: lengths m, areas m², moments kNm/m, loads kPa (area), kN/m (line), kN (point),
bar areas mm²/m, depths mm, angles degrees.
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


def _load_row(ld) -> dict:
    if hasattr(ld, "at"):
        where, unit = "point " + xy(ld.at), "kN"
    elif hasattr(ld, "path"):
        where, unit = "line " + _points(ld.path), "kN/m"
    else:
        where = "whole slab" if ld.region is None else "region " + _points(ld.region)
        unit = "kPa"
    return {"name": ld.name, "value": f"{ld.value:.3f}", "unit": unit, "where": where,
            "factored": bool(ld.factored)}


def _support_row(sp) -> dict:
    ring = np.asarray(sp.polygon.exterior.coords)[:-1] if hasattr(sp.polygon, "exterior") else []
    return {"name": sp.name, "connection": str(sp.connection), "footprint": _points(ring)}


def model_tables(model: Model) -> dict:
    """Page data of section 1 (see the module docstring)."""
    s, c = model.slab, model.capacity
    n = len(s.outline)
    edges = []
    for k in range(n):
        a, b = s.outline[k], s.outline[(k + 1) % n]
        edges.append({"number": k + 1, "start": xy(a), "end": xy(b),
                      "length": f"{float(np.hypot(*(b - a))):.3f}", "condition": str(s.edges[k])})
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
        "layers": [{"name": lc.name, "area": f"{lc.area:.0f}", "d": f"{lc.d:.1f}", "x": f"{lc.x:.1f}",
                    "xu_d": f"{lc.xu_d:.3f}", "moment": f"{lc.moment:.2f}"} for lc in (c.layers or ())],
        "bar_angle": f"{c.bar_angle:.2f}",
        "loads": [_load_row(ld) for ld in model.loads],
        "supports": [_support_row(sp) for sp in model.supports],
        "zones": [{"name": z.name, "sagging": f"{z.sagging[0]:.3f} / {z.sagging[1]:.3f}",
                   "hogging": f"{z.hogging[0]:.3f} / {z.hogging[1]:.3f}", "polygon": _points(z.polygon)}
                  for z in model.zones],
    }
