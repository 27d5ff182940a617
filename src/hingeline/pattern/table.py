"""The clean pattern's work equation region by region, as a hand calculation sets it out.

Each yield line's work m L |theta| splits exactly between the two regions it bounds: with
n the outward normal of region r along the line and g_r the slope of its plane, a sagging
line does m+ L (g_r . n) for r plus the same for its neighbour (n reversed), a hogging
line m- L (-g_r . n) each; a hinge along a support is the region's alone. So every region
has its own dissipation D_r (the "m theta times projected length" of the hand method) and
its own external work E_r (the loads on it times its mean deflection), and
load factor = (sum D_r - sum E_r of held loads) / sum E_r of scaled loads.

Figures are per unit largest deflection (delta_max = 1 m; only ratios matter), computed
on the pattern's certified field (CleanPattern.mechanism, its triangles assigned to the
regions), so the totals are the certified work equation.

Units: m, m2, kN, kNm (per m of largest deflection); slopes rad per m of deflection.
May import: numpy, shapely, `hingeline.model`, `hingeline.upper.certificate`, `hingeline.result`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from ..model import Model
from ..upper.certificate import hinges, plane_gradients, slab_region


@dataclass(frozen=True)
class RegionRow:
    """One region: index into CleanPattern.regions, area m2, axis text, largest deflection
    (largest of the pattern = 1), slope (rad per m), dissipation kNm, external work of the
    scaled and of the held loads kNm (all per m of the pattern's largest deflection)."""

    index: int
    area: float
    axis: str
    deflection: float
    slope: float
    dissipation: float
    scaled_work: float
    held_work: float


def _xy(p) -> str:
    x, y = (round(float(v), 3) + 0.0 for v in p)
    return f"({x:.3f}, {y:.3f})"


def _axis_text(reg, size: float) -> str:
    if reg.at_rest:
        return "at rest"
    if reg.axis_point is None:
        return "translates (no axis)"
    p, d = np.asarray(reg.axis_point), np.asarray(reg.axis_direction)
    # The axis as the chord where it meets the region's neighbourhood, else a point and bearing.
    line = shapely.LineString([p - 4 * size * d, p + 4 * size * d])
    touch = reg.polygon.buffer(1e-6 * size).intersection(line)
    ang = float(np.degrees(np.arctan2(d[1], d[0]))) % 180.0
    if not touch.is_empty and touch.length > 1e-6 * size:
        c = shapely.get_coordinates(touch)
        t = (c - p) @ d
        return f"{_xy(c[np.argmin(t)])} to {_xy(c[np.argmax(t)])}"
    if not touch.is_empty:
        return f"through {_xy(shapely.get_coordinates(touch)[0])}, at {ang:.1f} deg"
    return f"through {_xy(p)}, at {ang:.1f} deg (outside the region)"


def region_rows(model: Model, cp) -> tuple[list[RegionRow], dict]:
    """Rows of every region (pattern order) and the totals {dissipation, scaled, held,
    load_factor} of the clean pattern `cp` (hingeline.pattern.CleanPattern)."""
    mech = cp.mechanism
    V, T, w = mech.vertices, mech.triangles, mech.w
    wmax = float(np.abs(w).max(initial=0.0)) or 1.0
    w = w / wmax
    g, tri_area = plane_gradients(V, T, w)
    size = float(np.hypot(*np.ptp(V, axis=0)))
    cent = V[T].mean(axis=1)
    label = np.full(len(T), -1)
    for r, reg in enumerate(cp.regions):
        label[(label < 0) & shapely.contains_xy(reg.polygon.buffer(1e-9 * size), cent[:, 0], cent[:, 1])] = r
    # Dissipation: each hinge piece's work split between the regions on its two sides.
    a, b, theta, work = hinges(model, mech)
    work = work / wmax
    theta = theta / wmax
    d = b - a
    L = np.hypot(d[:, 0], d[:, 1])
    n = np.stack([-d[:, 1], d[:, 0]], axis=1) / np.maximum(L, 1e-300)[:, None]
    mid = 0.5 * (a + b)
    diss = np.zeros(len(cp.regions))
    step = 1e-6 * size
    for sign in (1.0, -1.0):
        p = mid + sign * step * n
        for r, reg in enumerate(cp.regions):
            if reg.at_rest:
                continue
            inside = shapely.contains_xy(reg.polygon, p[:, 0], p[:, 1]) & (np.abs(theta) > 0)
            if not inside.any():
                continue
            sel = label == r
            if not sel.any():
                continue
            gr = g[sel].mean(axis=0)
            # Outward normal of region r: from the region across the line.
            out = -sign * n[inside]
            share = (gr[None, :] * out).sum(1) / np.abs(theta[inside]) * np.sign(theta[inside])
            diss[r] += float(np.sum(work[inside] * share))
    # External work per region and load kind.
    slab = slab_region(model)
    scaled, held = np.zeros(len(cp.regions)), np.zeros(len(cp.regions))
    polys = shapely.polygons(V[T])
    for ld in model.loads:
        per = np.zeros(len(cp.regions))
        if hasattr(ld, "at"):
            at = np.asarray(ld.at, float)
            hit = np.flatnonzero(shapely.covers(polys, shapely.Point(at)))
            if hit.size:
                k = hit[0]
                per[label[k]] += ld.value * float(w[T[k, 0]] + (at - V[T[k, 0]]) @ g[k])
        elif hasattr(ld, "path"):
            pieces = shapely.intersection(polys, shapely.LineString(ld.path))
            for k in np.flatnonzero(shapely.length(pieces) > 0):
                for part in shapely.get_parts(pieces[k]):
                    c = np.asarray(part.coords)
                    if len(c) < 2:
                        continue
                    seg_mid = 0.5 * (c[:-1] + c[1:])
                    seg_len = np.hypot(*np.diff(c, axis=0).T)
                    wm = w[T[k, 0]] + (seg_mid - V[T[k, 0]]) @ g[k]
                    per[label[k]] += ld.value * float(np.sum(seg_len * wm))
        else:
            region = slab if ld.region is None else shapely.Polygon(ld.region).intersection(slab)
            pieces = shapely.intersection(polys, region)
            area = shapely.area(pieces)
            for k in np.flatnonzero(area > 0):
                c = np.asarray(pieces[k].centroid.coords[0])
                per[label[k]] += ld.value * area[k] * float(w[T[k, 0]] + (c - V[T[k, 0]]) @ g[k])
        if ld.factored:
            scaled += per
        else:
            held += per
    rows = []
    for r, reg in enumerate(cp.regions):
        sel = label == r
        dmax = float(w[np.unique(T[sel])].max(initial=0.0)) if sel.any() else 0.0
        slope = float(np.hypot(*g[sel].mean(axis=0))) if sel.any() else 0.0
        rows.append(RegionRow(r, float(tri_area[sel].sum()), _axis_text(reg, size), dmax,
                              0.0 if reg.at_rest else slope, float(diss[r]), float(scaled[r]), float(held[r])))
    total = {"dissipation": float(diss.sum()), "scaled": float(scaled.sum()), "held": float(held.sum())}
    total["load_factor"] = ((total["dissipation"] - total["held"]) / total["scaled"]
                            if total["scaled"] > 0 else float("nan"))
    return rows, total

