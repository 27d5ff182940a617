"""External work of area loads written in terms of line rotations.

A mechanism is a continuous, piecewise-plane deflection w on D, zero with zero
slope outside D. Along any vertical line, w_yy is a sum of Dirac spikes of
strength -theta_i |n_y,i| where the line crosses yield line i. For a load
density p and any phi with phi_yy = p, integrating by parts twice along each
vertical line (the ends lie in rigid ground) gives

    integral of p w dA = integral of phi w_yy dA = sum_i theta_i f_i,
    f_i = - integral over line i of phi n_y^2 ds.

For a polygonal patch P of intensity q, write its indicator as a signed sum of
the regions below its edges (+1 under edges running in -x, -1 under edges in +x);
then phi = sum over edges e of -q s_e / 2 * [x in e] * max(y - y_e(x), 0)^2,
which is a quadratic of the line parameter piece by piece, so f_i is integrated
in closed form. Reference: Gilbert, He, Smith, Le, Proc. R. Soc. A 470 (2014)
20140071 (discontinuity layout optimisation for slabs); the integration by parts
is our own route to the same work terms.

Units: q in kPa, lengths m, f in kN (work per unit rotation, kNm/rad).
"""
from __future__ import annotations

import numpy as np
import shapely
from scipy import sparse
from shapely.geometry import Polygon
from shapely.geometry.polygon import orient


def polygon_edges(poly) -> np.ndarray:
    """Directed edges (e, 2, 2) of a shapely (Multi)Polygon, outer rings CCW and holes CW."""
    out = []
    for part in getattr(poly, "geoms", [poly]):
        if part.is_empty:
            continue
        part = orient(part, 1.0)
        for ring in [part.exterior, *part.interiors]:
            c = np.asarray(ring.coords)
            out.append(np.stack([c[:-1], c[1:]], axis=1))
    return np.concatenate(out) if out else np.zeros((0, 2, 2))


def _above(p, q, dx, length, x1, y1, x2, y2):
    """Where lines p -> q run above the (non-vertical) segment (x1, y1)-(x2, y2) within its x-range.

    Returns (sel, span, ha, hb): the lines concerned, the parameter length (t units) of the
    part above, and the height h = y_line - y_segment at its two ends (h is linear in t)."""
    xmin, xmax = min(x1, x2), max(x1, x2)
    # A line nowhere above the segment's lowest point has no part above it (its term is 0).
    sel = np.flatnonzero((np.abs(dx) > 1e-15 * length) & (np.maximum(p[:, 0], q[:, 0]) > xmin)
                         & (np.minimum(p[:, 0], q[:, 0]) < xmax) & (np.maximum(p[:, 1], q[:, 1]) > min(y1, y2)))
    pa, qa, d = p[sel], q[sel], dx[sel]
    ta = np.clip((xmin - pa[:, 0]) / d, 0.0, 1.0)
    tb = np.clip((xmax - pa[:, 0]) / d, 0.0, 1.0)
    lo, hi = np.minimum(ta, tb), np.maximum(ta, tb)
    slope = (y2 - y1) / (x2 - x1)
    h0 = pa[:, 1] - (y1 + (pa[:, 0] - x1) * slope)
    h1 = (qa[:, 1] - pa[:, 1]) - d * slope
    with np.errstate(divide="ignore", invalid="ignore"):
        root = -h0 / h1
    lo2 = np.where(h1 > 0, np.maximum(lo, root), lo)
    hi2 = np.where(h1 < 0, np.minimum(hi, root), hi)
    hi2 = np.where((h1 == 0) & (h0 <= 0), lo2, hi2)
    span = np.maximum(hi2 - lo2, 0.0)
    return sel, span, h0 + h1 * lo2, h0 + h1 * hi2


def area_load_work(p: np.ndarray, q: np.ndarray, edges: np.ndarray, intensity: float) -> np.ndarray:
    """Work coefficients f (c,) in kN of a uniform load `intensity` (kPa) on the polygon
    with directed `edges`, for lines p -> q (c, 2)."""
    f = np.zeros(len(p))
    dx = q[:, 0] - p[:, 0]
    length = np.hypot(dx, q[:, 1] - p[:, 1])
    ny2 = (dx / length) ** 2
    for (x1, y1), (x2, y2) in edges:
        if x1 == x2:
            continue
        sign = 1.0 if x2 < x1 else -1.0
        sel, span, ha, hb = _above(p, q, dx, length, x1, y1, x2, y2)
        integral = span * (ha * ha + ha * hb + hb * hb) / 3.0  # exact for linear h
        # f = -int phi n_y^2 ds with phi = -q s/2 max(h,0)^2 on this edge's strip.
        f[sel] += 0.5 * intensity * sign * ny2[sel] * length[sel] * integral
    return f


def point_load_work(p: np.ndarray, q: np.ndarray, at: np.ndarray, force: float) -> np.ndarray:
    """Work coefficients f (c,) in kNm/rad of a point load `force` (kN) at `at` (m).

    Here phi = P delta(x - c_x) max(y - c_y, 0), so f_i = -P |n_y,i| (y_i(c_x) - c_y) over the
    lines crossed by the vertical ray upward from c: the deflection at c is minus the sum of
    rotation times distance from c over the lines between c and the ground. The ray is taken
    an infinitesimal step to the right of c, so a line counts when x_min <= c_x < x_max.
    """
    f = np.zeros(len(p))
    x0, x1 = np.minimum(p[:, 0], q[:, 0]), np.maximum(p[:, 0], q[:, 0])
    sel = np.flatnonzero((x0 <= at[0]) & (at[0] < x1))
    if sel.size:
        pa, qa = p[sel], q[sel]
        t = (at[0] - pa[:, 0]) / (qa[:, 0] - pa[:, 0])
        y = pa[:, 1] + t * (qa[:, 1] - pa[:, 1])
        d = qa - pa
        ny = np.abs(d[:, 0]) / np.hypot(d[:, 0], d[:, 1])
        f[sel] = -force * ny * np.maximum(y - at[1], 0.0)
    return f


def island_rows(p: np.ndarray, q: np.ndarray, islands) -> sparse.csr_matrix:
    """Coefficients (c, 3k) of the conditions that k islands of ground stay at rest.

    For a point c inside an island, the deflection and slope follow from the lines crossed by
    the vertical ray upward from c to the outer ground (as for a point load):
        w(c) = -sum theta_i |n_y,i| (y_i(c_x) - c_y),   grad w(c) = sum theta_i nu_i,
    nu_i the unit normal of line i pointing up. Rows 3j, 3j+1, 3j+2: w, w_x, w_y of island j.
    """
    rows, cols, vals = [], [], []
    x0, x1 = np.minimum(p[:, 0], q[:, 0]), np.maximum(p[:, 0], q[:, 0])
    for j, ring in enumerate(islands):
        c = np.asarray(shapely.Polygon(ring).representative_point().coords[0])
        sel = np.flatnonzero((x0 <= c[0]) & (c[0] < x1))
        t = (c[0] - p[sel, 0]) / (q[sel, 0] - p[sel, 0])
        y = p[sel, 1] + t * (q[sel, 1] - p[sel, 1])
        sel, y = sel[y > c[1]], y[y > c[1]]
        d = q[sel] - p[sel]
        L = np.hypot(d[:, 0], d[:, 1])
        nu = np.stack([-d[:, 1], d[:, 0]], axis=1) / L[:, None]
        nu *= np.sign(nu[:, 1])[:, None]
        for r, v in ((3 * j, -nu[:, 1] * (y - c[1])), (3 * j + 1, nu[:, 0]), (3 * j + 2, nu[:, 1])):
            rows.append(sel)
            cols.append(np.full(len(sel), r))
            vals.append(v)
    if not rows:
        return sparse.csr_matrix((len(p), 0))
    return sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                             shape=(len(p), 3 * len(islands)))


def bearing_rows(p: np.ndarray, q: np.ndarray, bearings: np.ndarray) -> sparse.csr_matrix:
    """Coefficients (c, k) of the conditions w = 0 at k bearing points (k, 2) in m, the centres
    of pinned columns: one row each, w(c) as for a point load (point_load_work with a unit
    force; it is minus w(c)). No slope is held, so the slab may rotate over the point."""
    cols = [sparse.csr_matrix(point_load_work(p, q, c, 1.0)[:, None]) for c in np.asarray(bearings, float)]
    return sparse.hstack(cols, format="csr") if cols else sparse.csr_matrix((len(p), 0))


def line_load_work(p: np.ndarray, q: np.ndarray, path: np.ndarray, intensity: float) -> np.ndarray:
    """Work coefficients f (c,) in kNm/rad of a load `intensity` (kN/m) along the polyline `path`.

    A piece of path from (x1, y1) to (x2, y2) carries intensity * length / |x2 - x1| per unit
    x, so phi = that * max(y - y_path(x), 0): linear along a line piece by piece, integrated
    in closed form. A vertical piece acts like a column of point loads (see point_load_work).
    """
    f = np.zeros(len(p))
    dx = q[:, 0] - p[:, 0]
    length = np.hypot(dx, q[:, 1] - p[:, 1])
    ny = np.abs(dx) / length
    for (x1, y1), (x2, y2) in zip(path[:-1], path[1:]):
        seg = np.hypot(x2 - x1, y2 - y1)
        if abs(x2 - x1) <= 1e-12 * seg:
            # phi = w delta(x - x0) psi(y), psi = integral from ya to min(y, yb) of (y - s) ds.
            ya, yb = min(y1, y2), max(y1, y2)
            x0 = x1
            lo, hi = np.minimum(p[:, 0], q[:, 0]), np.maximum(p[:, 0], q[:, 0])
            sel = np.flatnonzero((lo <= x0) & (x0 < hi))
            if sel.size:
                t = (x0 - p[sel, 0]) / dx[sel]
                y = p[sel, 1] + t * (q[sel, 1] - p[sel, 1])
                psi = np.where(y <= ya, 0.0, np.where(y <= yb, 0.5 * (y - ya) ** 2, (yb - ya) * (y - 0.5 * (ya + yb))))
                f[sel] -= intensity * ny[sel] * psi
            continue
        density = intensity * seg / abs(x2 - x1)  # kN per m of x
        sel, span, ha, hb = _above(p, q, dx, length, x1, y1, x2, y2)
        integral = span * 0.5 * (ha + hb)  # exact for linear h >= 0
        f[sel] -= density * ny[sel] ** 2 * length[sel] * integral
    return f


def load_coefficients(model, slab: Polygon, p: np.ndarray, q: np.ndarray):
    """(f, g, total): work coefficients (c,) of the factored and held loads, kNm/rad, and the
    total factored force in kN."""
    f, g = np.zeros(len(p)), np.zeros(len(p))
    total = 0.0
    for load in model.loads:
        if hasattr(load, "at"):
            coef, force = point_load_work(p, q, np.asarray(load.at, float), load.value), load.value
        elif hasattr(load, "path"):
            path = np.asarray(load.path, float)
            coef = line_load_work(p, q, path, load.value)
            force = load.value * float(np.sum(np.hypot(*np.diff(path, axis=0).T)))
        else:
            region = slab if load.region is None else shapely.Polygon(load.region).intersection(slab)
            coef, force = area_load_work(p, q, polygon_edges(region), load.value), load.value * region.area
        if load.factored:
            f += coef
            total += force
        else:
            g += coef
    return f, g, total
