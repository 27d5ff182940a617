"""The clean pattern as a DXF drawing (ezdxf), in the model's coordinates, metres.

`pattern_dxf(model, pattern)` returns the bytes of OUTDIR/pattern.dxf: the slab outline,
its openings, its edges by support condition, the columns and walls, and the clean yield
lines (hingeline.pattern), sagging and hogging on layers of their own, each numbered as
in result.json's `pattern.lines`. One layer per kind of thing (LAYERS), so a reviewer can
switch them on and off or copy the lines into a drawing of the building.

Units: m (the drawing's $INSUNITS is metres, 1:1 with the model's coordinates).
May import: ezdxf, numpy, `hingeline.model`, `hingeline.pattern`.
"""
from __future__ import annotations

import io

import ezdxf
import numpy as np
from ezdxf import units
from ezdxf.enums import TextEntityAlignment

from ..model import Model

#: Layer names and their colours (AutoCAD colour index): one layer per kind of entity.
LAYERS = {
    "hl-slab-outline": 7,
    "hl-slab-openings": 8,
    "hl-edge-simple": 5,
    "hl-edge-continuous": 4,
    "hl-edge-free": 9,
    "hl-columns": 30,
    "hl-walls": 32,
    "hl-yield-sagging": 1,
    "hl-yield-hogging": 3,
    "hl-yield-numbers": 2,
}

#: Layer of each edge condition of the outline.
EDGE_LAYER = {"simple": "hl-edge-simple", "continuous": "hl-edge-continuous", "free": "hl-edge-free"}


def _closed(doc_space, ring, layer: str) -> None:
    doc_space.add_lwpolyline([tuple(map(float, p)) for p in ring], close=True, dxfattribs={"layer": layer})


def pattern_dxf(model: Model, pattern) -> bytes:
    """The DXF file (ASCII, R2010, UTF-8) of `pattern` (a hingeline.pattern.CleanPattern)."""
    doc = ezdxf.new("R2010", setup=False)
    doc.units = units.M
    doc.header["$MEASUREMENT"] = 1           # metric
    for name, colour in LAYERS.items():
        doc.layers.add(name, color=colour)
    msp = doc.modelspace()

    outline = np.asarray(model.slab.outline, float)
    _closed(msp, outline, "hl-slab-outline")
    for hole in model.slab.openings:
        _closed(msp, np.asarray(hole, float), "hl-slab-openings")
    # Each outline edge once more on the layer of its support condition, so the conditions
    # show without a legend.
    for k, kind in enumerate(model.slab.edges):
        p, q = outline[k], outline[(k + 1) % len(outline)]
        msp.add_line(tuple(p), tuple(q), dxfattribs={"layer": EDGE_LAYER[kind]})
    for sp in model.supports:
        layer = "hl-walls" if sp.kind == "wall" else "hl-columns"
        for part in getattr(sp.physical, "geoms", [sp.physical]):
            _closed(msp, np.asarray(part.exterior.coords)[:-1], layer)

    size = float(np.hypot(*np.ptp(outline, axis=0)))
    height = 0.015 * size                    # text height, m: legible on a plot of the slab
    for ln in pattern.lines:
        layer = "hl-yield-sagging" if ln.sense == "sagging" else "hl-yield-hogging"
        msp.add_line(ln.start, ln.end, dxfattribs={"layer": layer})
        mid = 0.5 * (np.asarray(ln.start) + np.asarray(ln.end))
        text = msp.add_text(str(ln.number), height=height, dxfattribs={"layer": "hl-yield-numbers"})
        text.set_placement(tuple(map(float, mid)), align=TextEntityAlignment.MIDDLE_CENTER)

    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue().encode("utf-8")
