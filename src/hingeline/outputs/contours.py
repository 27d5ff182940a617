"""The mechanism's deflected shape and the lower bound's utilisation, drawn over the plan.

`plot_deflection`: filled, labelled contours of w / w_max in plan; `plot_deflection_3d`:
grey shaded surface, z axis pointing down so the slab sags on the page; `plot_utilisation`:
the yield ratio of the lower bound's moment field in plan, white where unstressed to dark
brown at yield (`utilisation_points` gives where it shades and what). The outline, openings,
supports, zones and scale bar are those of `plan`.

Units: axes in m; deflection normalised, w / max(w) (dimensionless, 0 on the supports, 1
where the slab deflects most); utilisation the yield ratio (dimensionless, 0..1).
May import: numpy, matplotlib (Figure and the Agg canvas only, never pyplot), `result`,
`lower` (for the utilisation plot, imported when it is drawn), `drawing` and `plan`.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.colors import ListedColormap
from matplotlib.tri import Triangulation

from ..result import Result, load_factor_text
from .drawing import EDGE_COLOUR, closed_ring, new_axes, plan_extent, plot_title
from .plan import (
    draw_openings,
    draw_outline,
    draw_supports,
    draw_zones,
    plan_handles,
    set_plan_limits,
)

#: Label of the colour bar of `plot_deflection` and of the z axis of `plot_deflection_3d`.
W_RATIO_LABEL = "w / w_max"

#: Contour levels of `plot_deflection` (w / w_max); every other one is labelled.
CONTOUR_LEVELS = np.linspace(0.0, 1.0, 11)

# contour fill: white (w = 0) to a slate blue-grey whose lightness still lets black
# labels read; lightness falls steadily, so the plan also reads in grey print
_SLATE = np.array([0.36, 0.45, 0.55])
CONTOUR_CMAP = ListedColormap(1.0 - np.linspace(0.0, 1.0, 256)[:, None] * (1.0 - _SLATE[None, :]),
                              name="hingeline_w_ratio")

#: Colour of the 3-D surface (light grey; matplotlib shades it by facet slope).
SURFACE_COLOUR = "0.82"

#: Label of the colour bar of `plot_utilisation`.
UTILISATION_LABEL = "utilisation (yield ratio)"

#: Text drawn by `plot_utilisation` when the result has no lower-bound field.
NO_LOWER_BOUND_TEXT = "no lower bound for this result"

# utilisation: white (unstressed) through pale amber to dark brown (at yield); the
# lightness falls steadily, so the shading also reads in grey print
_UTIL_ANCHORS = np.array([[1.0, 1.0, 1.0], [0.98, 0.86, 0.58], [0.85, 0.47, 0.16], [0.38, 0.12, 0.04]])
UTILISATION_CMAP = ListedColormap(
    np.stack([np.interp(np.linspace(0.0, 1.0, 256), np.linspace(0.0, 1.0, len(_UTIL_ANCHORS)), _UTIL_ANCHORS[:, c])
              for c in range(3)], axis=1), name="hingeline_utilisation")

# the 4 sub-triangles of a quadratic triangle's 6 node points (vertices 0-2, then the
# mid-points of sides (0,1), (1,2), (2,0)); counter-clockwise like the parent
_SUB_TRIANGLES = np.array([[0, 3, 5], [3, 1, 4], [5, 4, 2], [3, 4, 5]])


def _w_ratio(result: Result) -> tuple[Triangulation | None, np.ndarray]:
    """Triangulation of the mechanism and w / max(w) at its vertices (None if empty).

    The ratio is 1 at the largest deflection and 0 on the supports; when the
    mechanism has no positive deflection the ratio is all zeros.
    """
    mech = result.mechanism
    verts = np.asarray(mech.vertices, dtype=float).reshape(-1, 2)
    tris = np.asarray(mech.triangles, dtype=int).reshape(-1, 3)
    w = np.asarray(mech.w, dtype=float)
    if len(tris) == 0 or len(verts) == 0:
        return None, w
    w_max = float(np.max(w))
    ratio = w / w_max if w_max > 0 else np.zeros_like(w)
    return Triangulation(verts[:, 0], verts[:, 1], tris), ratio



def plot_deflection(result: Result, ax: Axes | None = None) -> Axes:
    """Plan of the mechanism's deflected shape as filled contours of w / w_max; return the Axes.

    result: a hingeline Result. ax: Axes to draw on; a new 7 x 5.5 in figure with an
    Agg canvas is made when None. The normalised deflection w / max(w) (0 on the
    supports, 1 where the slab deflects most; dimensionless) is filled in steps of
    0.1 from white to slate, with black contour lines labelled every 0.2; outline
    (edge conditions as in `plot_pattern`), hatched openings, a colour bar
    "w / w_max", a scale bar, equal aspect, axes in m. Never shows.
    """
    if ax is None:
        ax = new_axes()
    slab = result.model.slab
    outline, lo, hi, size = plan_extent(result)
    tri, ratio = _w_ratio(result)
    if tri is not None:
        extend = "min" if float(np.min(ratio)) < 0.0 else "neither"
        filled = ax.tricontourf(tri, ratio, levels=CONTOUR_LEVELS, cmap=CONTOUR_CMAP, extend=extend, zorder=1)
        lines = ax.tricontour(tri, ratio, levels=CONTOUR_LEVELS[1:-1], colors="black", linewidths=0.5,
                              zorder=2)
        labelled = [lv for lv in lines.levels if round(lv * 10) % 2 == 0]
        if labelled:
            ax.clabel(lines, levels=labelled, fmt="%.1f", fontsize=7, inline=True)
        cbar = ax.figure.colorbar(filled, ax=ax, shrink=0.8, pad=0.02, ticks=CONTOUR_LEVELS[::2])
        cbar.set_label(W_RATIO_LABEL, fontsize=8)
        cbar.ax.tick_params(labelsize=7)
    draw_openings(ax, slab.openings)
    draw_supports(ax, result.model)
    draw_outline(ax, outline, tuple(slab.edges), size)
    set_plan_limits(ax, lo, hi, size)
    ax.set_title(plot_title(result, "deflected shape of the mechanism, w / w_max"), fontsize=10)
    return ax


def plot_deflection_3d(result: Result, ax: Axes | None = None) -> Axes:
    """3-D view of the mechanism's deflected shape, w / w_max, sagging downward; return the Axes.

    result: a hingeline Result. ax: a 3-D Axes (projection="3d") to draw on; a new
    7 x 5.5 in figure with one is made when None. Raises ValueError for a 2-D Axes.
    Draws the mechanism's triangles as a light grey shaded surface at depth
    w / max(w) (dimensionless) below the plane of the supports: the z axis is
    labelled downward (0 at the supports, 1 at the largest deflection), so the slab
    sags on the page; the outline and opening edges are drawn at z = 0. x, y in m.
    Never shows.
    """
    if ax is None:
        ax = new_axes(projection="3d")
    elif getattr(ax, "name", "") != "3d":
        raise ValueError("plot_deflection_3d needs a 3-D Axes (add_subplot(projection='3d'))")
    slab = result.model.slab
    outline, lo, hi, size = plan_extent(result)
    tri, ratio = _w_ratio(result)
    # drawn at z = -w / w_max with an upward z axis (labelled as the downward
    # ratio), so the camera looks at the slab from above and it sags on the page.
    # Seen from above, nothing of the sagging surface can hide a line in the plane
    # z = 0, so the edges are simply drawn last (mplot3d's depth sort can bury them).
    ax.computed_zorder = False
    if tri is not None:
        ax.plot_trisurf(tri, -ratio, color=SURFACE_COLOUR, shade=True, edgecolor="0.5", linewidth=0.12,
                        antialiased=True, zorder=1)
    for poly in (outline, *[np.asarray(p, dtype=float) for p in slab.openings]):
        ring = closed_ring(poly)
        ax.plot(ring[:, 0], ring[:, 1], np.zeros(len(ring)), color=EDGE_COLOUR, linewidth=1.0,
                zorder=3)
    z_top = max(0.0, -float(np.min(ratio))) if ratio.size else 0.0
    ax.set_xlim(lo[0], hi[0])
    ax.set_ylim(lo[1], hi[1])
    ax.set_zlim(-1.0, z_top)
    span = hi - lo
    ax.set_box_aspect((float(span[0]) or 1.0, float(span[1]) or 1.0, 0.25 * size))
    ax.view_init(elev=38, azim=-58)
    ax.set_xlabel("x (m)", fontsize=8)
    ax.set_ylabel("y (m)", fontsize=8)
    ax.set_zlabel(f"{W_RATIO_LABEL} (downward)", fontsize=8)
    ax.set_zticks([-1.0, -0.5, 0.0], labels=["1.0", "0.5", "0"])
    ax.tick_params(labelsize=7)
    for axis in (ax.xaxis, ax.yaxis, ax.zaxis):
        axis.set_pane_color((1.0, 1.0, 1.0, 0.0))
    ax.set_title(plot_title(result, "deflected shape of the mechanism"), fontsize=10)
    return ax


def utilisation_points(result: Result) -> tuple[Triangulation, np.ndarray] | None:
    """Where `plot_utilisation` shades and what: (Triangulation, ratio) or None without a field.

    The 6 node points of every triangle of result.lower_bound.field (vertices, then the
    mid-points of sides (0,1), (1,2), (2,0)), each triangle kept separate (the field jumps
    between triangles) and split into 4 sub-triangles; ratio (6 t,) is the yield ratio
    (fieldcheck.yield_ratio, dimensionless) of the moments there against the capacities of
    the triangle's zone, clipped to 0..1 for display (inf, where a moment has no bars to
    resist it, shows as 1). Coordinates in m.
    """
    from ..lower import SIDES, element_capacities, yield_ratio

    lb = result.lower_bound
    field = None if lb is None else lb.field
    if field is None or len(field.triangles) == 0:
        return None
    p = np.asarray(field.nodes, dtype=float)[np.asarray(field.triangles, dtype=int)]   # (t, 3, 2)
    t = len(p)
    pts = np.concatenate([p, 0.5 * (p[:, SIDES[:, 0]] + p[:, SIDES[:, 1]])], axis=1)  # (t, 6, 2)
    cap = element_capacities(result.model, p.mean(axis=1))
    ratio = yield_ratio(np.asarray(field.moments, dtype=float).reshape(-1, 3), np.repeat(cap, 6, axis=0),
                        result.model.capacity.bar_angle)
    ratio = np.clip(np.nan_to_num(ratio, posinf=1.0), 0.0, 1.0)
    subs = (6 * np.arange(t)[:, None, None] + _SUB_TRIANGLES[None]).reshape(-1, 3)
    xy = pts.reshape(-1, 2)
    return Triangulation(xy[:, 0], xy[:, 1], subs), ratio


def _bounds_text(result: Result) -> str:
    """'lower bound 1.4557 · upper bound 1.4877 · gap 2.2 %', or why there is no lower bound."""
    lb = result.lower_bound
    upper = f"upper bound {load_factor_text(result.load_factor)}"
    if lb is None:
        return f"lower bound not computed · {upper}"
    if lb.load_factor is None:
        return f"no lower bound ({lb.reason or lb.status}) · {upper}"
    return f"lower bound {load_factor_text(lb.load_factor)} · {upper} · gap {100.0 * result.gap:.1f} %"


def plot_utilisation(result: Result, ax: Axes | None = None):
    """Plan of the lower-bound moment field's utilisation; return the Axes.

    result: a hingeline Result. ax: Axes to draw on; a new 7 x 5.5 in figure with an Agg
    canvas is made when None. Shades the yield ratio of result.lower_bound.field (see
    `utilisation_points`; 0 where the moments are zero, 1 where they reach the capacities)
    from white to dark brown, linear on 4 sub-triangles of each triangle, with a colour bar
    "utilisation (yield ratio)"; outline (edge conditions as in `plot_pattern`), hatched
    openings, columns and walls, zones, a legend of these, a scale bar, axes in m; the title
    gives the lower bound, the upper bound (the load factor) and their gap in per cent.
    Without a field (no lower bound asked for, or the solver found none) the plan is drawn
    with the centred text "no lower bound for this result". Never shows.
    """
    if ax is None:
        ax = new_axes()
    slab = result.model.slab
    outline, lo, hi, size = plan_extent(result)
    shaded = utilisation_points(result)
    if shaded is not None:
        tri, ratio = shaded
        # rasterised like the grey shading of plot_pattern: a vector gouraud mesh of every
        # sub-triangle would make the SVG of a fine mesh several MB
        mesh = ax.tripcolor(tri, ratio, shading="gouraud", cmap=UTILISATION_CMAP, vmin=0.0, vmax=1.0,
                            zorder=1, rasterized=True)
        cbar = ax.figure.colorbar(mesh, ax=ax, shrink=0.8, pad=0.02, ticks=np.linspace(0.0, 1.0, 6))
        cbar.set_label(UTILISATION_LABEL, fontsize=8)
        cbar.ax.tick_params(labelsize=7)
    else:
        centre = 0.5 * (lo + hi)
        lb = result.lower_bound
        why = "" if lb is None else (lb.reason or f"solver status: {lb.status}")
        ax.text(centre[0], centre[1], NO_LOWER_BOUND_TEXT + (f"\n({why})" if why else ""), ha="center",
                va="center", fontsize=11, wrap=True, zorder=8,
                bbox={"facecolor": "white", "edgecolor": "0.4", "boxstyle": "round,pad=0.5"})
    draw_openings(ax, slab.openings)
    draw_supports(ax, result.model)
    draw_zones(ax, result.model)
    draw_outline(ax, outline, tuple(slab.edges), size)
    set_plan_limits(ax, lo, hi, size)
    head = result.model.title.strip()
    lines = [head] if head else []
    lines += ["utilisation of the lower-bound moment field", _bounds_text(result)]
    ax.set_title("\n".join(lines), fontsize=10)
    handles = plan_handles(result.model, loads=False)
    if handles:
        ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.12), ncol=2, fontsize=7,
                  frameon=False, handlelength=3.2)
    return ax
