"""The clean pattern as a hand-pattern file (docs/hand-check.md) that `hingeline check` reads.

Each rigid region becomes one [[region]] table: its polygon (corners, m; `holes` where it
surrounds another region), and its motion. A turning region is given by its rotation axis
(two points on the line w = 0), its corner of largest deflection and that deflection; a
region at rest or one that translates by three corners and their deflections. Holes that
hold only openings or supports are left out: the check cuts those out of a region drawn
across them.

Deflections are written scaled so that the largest is 1 (the work equation is homogeneous
in w, so only their ratios matter; the check scales the field so that the scaled loads do
1 kNm of work). Every number is written with repr, so the file reads back bit for bit and
the check of the file is the check of the pattern as found.

Units: coordinates m; deflections dimensionless ratios (written as m, as the format asks).
May import: numpy, shapely, `hingeline.model`, and `regions` of this package.
"""
from __future__ import annotations

import numpy as np
import shapely

from ..model import Model
from ..check.regions import ground
from .regions import Region


def _num(x: float) -> str:
    v = float(x)
    return repr(v + 0.0)           # + 0.0 turns -0.0 into 0.0


def _pt(p) -> str:
    return "[" + ", ".join(_num(v) for v in p) + "]"


def _pts(ring) -> str:
    return "[" + ", ".join(_pt(p) for p in ring) + "]"


def _quote(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"').replace("\n", " ") + '"'


def region_names(regions: list[Region]) -> list[str]:
    """Names used in the file, the energy table and result.json: "R1", ... for moving
    regions (largest deflection first), "rest 1", ... for regions at rest."""
    names, moving, rest = [], 0, 0
    for reg in regions:
        if reg.at_rest:
            rest += 1
            names.append(f"rest {rest}")
        else:
            moving += 1
            names.append(f"R{moving}")
    return names


def _filled(model: Model) -> object:
    """Openings and support footprints: holes made only of these need not be written."""
    parts = [shapely.Polygon(o) for o in model.slab.openings] + [sp.polygon for sp in ground(model)]
    return shapely.union_all(parts) if parts else shapely.Polygon()


def _spread_corners(ring: np.ndarray) -> np.ndarray:
    """Three corners of a ring spanning a large triangle (for a plane given by points)."""
    a = 0
    b = int(np.argmax(np.hypot(*(ring - ring[a]).T)))
    d = ring[b] - ring[a]
    c = int(np.argmax(np.abs(d[0] * (ring[:, 1] - ring[a, 1]) - d[1] * (ring[:, 0] - ring[a, 0]))))
    return ring[[a, b, c]]


def hand_pattern_text(model: Model, regions: list[Region], rings: list[list[np.ndarray]],
                      load_factor: float | None = None) -> str:
    """The TOML text of the pattern: one [[region]] per region, with `rings` (exterior
    first, per region) as the polygons to write."""
    size = float(np.hypot(*np.ptp(np.asarray(model.slab.outline), axis=0)))
    wmax = max((reg.max_deflection for reg in regions), default=0.0) or 1.0
    filled = _filled(model)
    tol_area = 1e-8 * size**2
    names = region_names(regions)
    out = [f"# Yield-line pattern of the mechanism hingeline found for: {model.title or '(untitled)'}",
           "# Rigid regions: R1, R2, ... move (largest deflection first), 'rest' regions stay put.",
           "# Deflections are scaled so that the largest is 1; only their ratios matter.",
           "# Check: hingeline check MODEL.toml hand-pattern.toml --fixed --no-compare"]
    if load_factor is not None:
        out.append(f"# Load factor of this pattern (work equation): {load_factor:.8g}")
    out.append(f"title = {_quote('Pattern of ' + (model.title or 'the model'))}")
    for reg, reg_rings, name in zip(regions, rings, names):
        out += ["", "[[region]]", f"name = {_quote(name)}", f"polygon = {_pts(reg_rings[0])}"]
        holes = [h for h in reg_rings[1:] if shapely.Polygon(h).difference(filled).area > tol_area]
        if holes:
            out.append("holes = [" + ", ".join(_pts(h) for h in holes) + "]")
        plane = reg.plane / wmax
        if reg.axis_point is None:
            corners = _spread_corners(reg_rings[0])
            w = np.zeros(3) if reg.at_rest else plane[0] + corners @ plane[1:]
            out.append("deflections = [" + ", ".join(_pt([*p, wi]) for p, wi in zip(corners, w)) + "]")
            continue
        ring = reg_rings[0]
        wr = plane[0] + ring @ plane[1:]
        k = int(np.argmax(wr))
        p0 = reg.axis_point
        out += [f"axis = [{_pt(p0)}, {_pt(p0 + size * reg.axis_direction)}]",
                f"point = {_pt(ring[k])}",
                f"deflection = {_num(wr[k])}"]
    return "\n".join(out) + "\n"
