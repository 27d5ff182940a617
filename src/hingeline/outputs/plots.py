"""Plan plot of a Result: slab, supports, yield lines and the mechanism's deflection.

Visual language (readable in black and white):
- simple edge: solid line with short square ticks on the outside of the slab;
- continuous edge: heavy line with slanted, hatch-like ticks on the outside;
- free edge (and every opening edge): thin dashed line; openings are shown hatched;
- sagging yield line: solid, dark red; hogging yield line: dash-dot, dark blue;
  line weight grows with the line's rotation;
- rigid regions shaded light-to-mid grey by the normalised deflection w of the
  mechanism, with a colour bar;
- a scale bar (alternating black and white blocks, length a round number of m)
  below the slab's lower-left corner.

Also the mechanism's deflected shape on its own: `plot_deflection` (filled,
labelled contours of w / w_max in plan) and `plot_deflection_3d` (grey shaded
surface, z axis pointing down so the slab sags on the page); and the lower bound's
moment field: `plot_utilisation` (its yield ratio in plan, white where unstressed
to dark brown at yield).

Only the Agg backend is used (no pyplot, no display). Axes are in m.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.collections import LineCollection
from matplotlib.colors import ListedColormap
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Polygon, Rectangle
from matplotlib.tri import Triangulation

from ..result import LOAD_FACTOR_DIGITS, Result, load_factor_text

SAGGING_COLOUR = "#8c1c13"
HOGGING_COLOUR = "#1b3f8b"
SAGGING_STYLE = "solid"
HOGGING_STYLE = (0, (7, 2, 1.5, 2))  # dash-dot
EDGE_COLOUR = "black"
MIN_LINE_WIDTH = 0.8   # points, for the smallest rotation
MAX_LINE_WIDTH = 3.2   # points, for the largest rotation

#: Label of the colour bar.
DEFLECTION_LABEL = "normalised deflection"

# light grey scale: white for w = 0 to mid grey for the largest w
DEFLECTION_CMAP = ListedColormap(np.linspace(1.0, 0.55, 256)[:, None].repeat(3, axis=1), name="hingeline_w")

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

#: Gid and label prefix of the scale bar artists.
SCALE_BAR_GID = "scale bar"


#: Default figure size, inches (fits an A4 page with margins).
FIGURE_SIZE = (7.0, 5.5)

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


def _new_axes(projection: str | None = None) -> Axes:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=FIGURE_SIZE, layout="constrained")
    FigureCanvasAgg(fig)
    return fig.add_subplot(projection=projection)


def scale_bar_length(size: float) -> float:
    """A round scale-bar length (m) for a slab whose larger plan dimension is `size` m.

    The largest of 1, 2 or 5 times a power of ten not above a fifth of the size
    (e.g. 1 m for a 6 m slab, 2 m for 12 m, 5 m for 30 m, 0.5 m for 3 m).
    """
    target = max(float(size), 1e-9) / 5.0
    exp = np.floor(np.log10(target))
    for step in (5.0, 2.0, 1.0):
        length = step * 10.0 ** exp
        if length <= target * (1 + 1e-12):
            return float(length)
    return float(10.0 ** exp)  # pragma: no cover  (1 x 10^exp <= target always)


def _scale_bar_text(length: float) -> str:
    return f"{length:g} m"


def _draw_scale_bar(ax: Axes, lo: np.ndarray, size: float) -> float:
    """Scale bar below the lower-left corner of the slab's bounding box; returns the
    lowest y it uses (m), so the caller can leave room for it.

    Drawn as two blocks (black, then white with a black border) of half the bar
    length each, labelled with the length underneath.
    """
    length = scale_bar_length(size)
    height = 0.014 * size
    y0 = lo[1] - 0.085 * size
    x0 = lo[0]
    for k, face in enumerate(("black", "white")):
        ax.add_patch(Rectangle((x0 + k * length / 2, y0), length / 2, height, facecolor=face,
                               edgecolor="black", linewidth=0.7, zorder=6, gid=SCALE_BAR_GID,
                               label="_scale_bar", clip_on=False))
    ax.text(x0 + length / 2, y0 - 0.008 * size, _scale_bar_text(length), ha="center", va="top",
            fontsize=7, zorder=6, gid=SCALE_BAR_GID, clip_on=False)
    return y0 - 0.045 * size


def _closed(poly: np.ndarray) -> np.ndarray:
    poly = np.asarray(poly, dtype=float)
    return np.vstack([poly, poly[:1]])


def _edge_ticks(a: np.ndarray, b: np.ndarray, outward: np.ndarray, spacing: float,
                length: float, slant: float) -> list[np.ndarray]:
    """Short tick segments along edge a-b on the side `outward` (unit vector).

    slant: 0 for ticks normal to the edge; tan of the tick's lean otherwise.
    """
    d = b - a
    L = float(np.hypot(*d))
    if L <= 0:
        return []
    t = d / L
    n = max(int(L / spacing), 1)
    offsets = (np.arange(n) + 0.5) * (L / n)
    ticks = []
    for s in offsets:
        p = a + t * s
        q = p + outward * length + t * (slant * length)
        ticks.append(np.array([p, q]))
    return ticks


def _draw_outline(ax: Axes, outline: np.ndarray, edges: tuple[str, ...], size: float) -> None:
    outline = np.asarray(outline, dtype=float)
    n = len(outline)
    # outline is counter-clockwise: the outside of edge a->b is on its right
    simple_lines, cont_lines, free_lines = [], [], []
    simple_ticks, cont_ticks = [], []
    for k in range(n):
        a, b = outline[k], outline[(k + 1) % n]
        d = b - a
        L = float(np.hypot(*d))
        if L <= 0:
            continue
        outward = np.array([d[1], -d[0]]) / L
        kind = edges[k] if k < len(edges) else "free"
        seg = np.array([a, b])
        if kind == "simple":
            simple_lines.append(seg)
            simple_ticks += _edge_ticks(a, b, outward, 0.025 * size, 0.012 * size, 0.0)
        elif kind == "continuous":
            cont_lines.append(seg)
            cont_ticks += _edge_ticks(a, b, outward, 0.012 * size, 0.016 * size, 0.8)
        else:
            free_lines.append(seg)
    if simple_lines:
        ax.add_collection(LineCollection(simple_lines, colors=EDGE_COLOUR, linewidths=1.4,
                                         capstyle="round", zorder=4, label="_edge_simple"))
        ax.add_collection(LineCollection(simple_ticks, colors=EDGE_COLOUR, linewidths=0.9, zorder=4,
                                         label="_edge_simple_ticks"))
    if cont_lines:
        ax.add_collection(LineCollection(cont_lines, colors=EDGE_COLOUR, linewidths=3.0,
                                         capstyle="round", zorder=4, label="_edge_continuous"))
        ax.add_collection(LineCollection(cont_ticks, colors=EDGE_COLOUR, linewidths=0.7, zorder=4,
                                         label="_edge_continuous_ticks"))
    if free_lines:
        ax.add_collection(LineCollection(free_lines, colors=EDGE_COLOUR, linewidths=0.8,
                                         linestyles=(0, (4, 2.5)), zorder=4, label="_edge_free"))


def _draw_openings(ax: Axes, openings: tuple[np.ndarray, ...]) -> None:
    for poly in openings:
        poly = np.asarray(poly, dtype=float)
        ax.add_patch(Polygon(poly, closed=True, facecolor="white", edgecolor="0.55", hatch="xx",
                             linewidth=0.0, zorder=3, label="_opening"))
        ax.add_collection(LineCollection([_closed(poly)], colors=EDGE_COLOUR, linewidths=0.8,
                                         linestyles=(0, (4, 2.5)), zorder=4, label="_opening_edge"))


def _draw_supports(ax: Axes, model) -> None:
    """Columns and walls: solid dark footprints; monolithic ones with a white cross-hatch."""
    for sp in model.supports:
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            ax.add_patch(Polygon(np.asarray(part.exterior.coords), closed=True, facecolor="0.2",
                                 edgecolor=EDGE_COLOUR, hatch="++" if sp.connection == "monolithic" else None,
                                 linewidth=0.8, zorder=5, label="_support"))


def _draw_zones(ax: Axes, model) -> None:
    """Reinforcement zones: a thin dash-dot-dot outline with the zone's name."""
    for z in model.zones:
        ring = np.vstack([z.polygon, z.polygon[:1]])
        ax.plot(ring[:, 0], ring[:, 1], linestyle=(0, (6, 2, 1, 2, 1, 2)), linewidth=0.9, color="0.25",
                zorder=6, label="_zone")
        c = np.asarray(z.polygon, float).mean(axis=0)
        ax.text(c[0], c[1], z.name, fontsize=6, color="0.25", ha="center", va="center", zorder=6)


def _draw_loads(ax: Axes, model) -> None:
    """Load patches (dotted outline, light stipple), line loads (dotted with arrows' stems) and
    point loads (a downward triangle): where the loads act, read in black and white."""
    for ld in model.loads:
        if hasattr(ld, "at"):
            ax.plot([ld.at[0]], [ld.at[1]], marker="v", markersize=8, color=EDGE_COLOUR, zorder=7,
                    label="_point_load")
        elif hasattr(ld, "path"):
            path = np.asarray(ld.path, float)
            ax.plot(path[:, 0], path[:, 1], linestyle=":", linewidth=2.0, color=EDGE_COLOUR, zorder=7,
                    label="_line_load")
        elif ld.region is not None:
            ax.add_patch(Polygon(np.asarray(ld.region, float), closed=True, facecolor="none",
                                 edgecolor="0.35", hatch="..", linestyle=":", linewidth=0.8, zorder=2,
                                 label="_load_patch"))


def _line_widths(rotation: np.ndarray, r_max: float) -> np.ndarray:
    if r_max <= 0:
        return np.full(len(rotation), MIN_LINE_WIDTH)
    frac = np.clip(np.asarray(rotation, dtype=float) / r_max, 0.0, 1.0)
    return MIN_LINE_WIDTH + (MAX_LINE_WIDTH - MIN_LINE_WIDTH) * np.sqrt(frac)


def _draw_yield_lines(ax: Axes, result: Result) -> None:
    yl = result.yield_lines
    if len(yl) == 0:
        return
    start = np.asarray(yl.start, dtype=float).reshape(-1, 2)
    end = np.asarray(yl.end, dtype=float).reshape(-1, 2)
    rot = np.asarray(yl.rotation, dtype=float)
    sag = np.asarray(yl.sagging, dtype=bool)
    widths = _line_widths(rot, float(np.max(rot)) if rot.size else 0.0)
    segs = np.stack([start, end], axis=1)
    for mask, colour, style, label in (
        (sag, SAGGING_COLOUR, SAGGING_STYLE, "yield lines (sagging)"),
        (~sag, HOGGING_COLOUR, HOGGING_STYLE, "yield lines (hogging)"),
    ):
        if np.any(mask):
            ax.add_collection(LineCollection(
                list(segs[mask]), colors=colour, linewidths=widths[mask], linestyles=style,
                capstyle="butt", zorder=5, label=label, gid=label,
            ))


def _draw_deflection(ax: Axes, result: Result):
    mech = result.mechanism
    verts = np.asarray(mech.vertices, dtype=float)
    tris = np.asarray(mech.triangles, dtype=int)
    w = np.asarray(mech.w, dtype=float)
    if len(tris) == 0 or len(verts) == 0:
        return None
    tri = Triangulation(verts[:, 0], verts[:, 1], tris)
    w_lo = min(0.0, float(np.min(w)))
    w_hi = float(np.max(w))
    if w_hi <= w_lo:
        w_hi = w_lo + 1.0
    return ax.tripcolor(tri, w, shading="gouraud", cmap=DEFLECTION_CMAP, vmin=w_lo, vmax=w_hi,
                        zorder=1, rasterized=True)


def _legend_handles(result: Result) -> list:
    handles = []
    sag = np.asarray(result.yield_lines.sagging, dtype=bool)
    if np.any(sag):
        handles.append(Line2D([], [], color=SAGGING_COLOUR, linestyle=SAGGING_STYLE, linewidth=2.0,
                              label="sagging yield line (bottom bars yield)"))
    if np.any(~sag):
        handles.append(Line2D([], [], color=HOGGING_COLOUR, linestyle=HOGGING_STYLE, linewidth=2.0,
                              label="hogging yield line (top bars yield)"))
    handles += _plan_handles(result.model)
    handles.append(Line2D([], [], color="none", label="line weight grows with rotation"))
    return handles


def _plan_handles(model, loads: bool = True) -> list:
    """Legend entries of the plan's fixed items: edges, openings, loads (unless loads is
    False), zones, columns and walls."""
    edges = set(model.slab.edges)
    handles = []
    if "simple" in edges:
        handles.append(Line2D([], [], color=EDGE_COLOUR, linewidth=1.4, marker="|", markersize=7,
                              label="simply supported edge (ticks outside)"))
    if "continuous" in edges:
        handles.append(Line2D([], [], color=EDGE_COLOUR, linewidth=3.0, marker=(2, 2, 35), markersize=8,
                              label="continuous edge (hatched outside)"))
    if "free" in edges:
        handles.append(Line2D([], [], color=EDGE_COLOUR, linewidth=0.8, linestyle=(0, (4, 2.5)),
                              label="free edge"))
    if model.slab.openings:
        handles.append(Patch(facecolor="white", edgecolor="0.55", hatch="xx", label="opening (free edges)"))
    if loads:
        if any(getattr(ld, "region", None) is not None for ld in model.loads):
            handles.append(Patch(facecolor="none", edgecolor="0.35", hatch="..", linestyle=":", label="load patch"))
        if any(hasattr(ld, "path") for ld in model.loads):
            handles.append(Line2D([], [], linestyle=":", linewidth=2.0, color=EDGE_COLOUR, label="line load"))
        if any(hasattr(ld, "at") for ld in model.loads):
            handles.append(Line2D([], [], linestyle="none", marker="v", color=EDGE_COLOUR, label="point load"))
    if model.zones:
        handles.append(Line2D([], [], linestyle=(0, (6, 2, 1, 2, 1, 2)), linewidth=0.9, color="0.25",
                              label="reinforcement zone"))
    conns = {sp.connection for sp in model.supports}
    if "pinned" in conns:
        handles.append(Patch(facecolor="0.2", edgecolor=EDGE_COLOUR, label="column or wall, pinned"))
    if "monolithic" in conns:
        handles.append(Patch(facecolor="0.2", edgecolor=EDGE_COLOUR, hatch="++", label="column or wall, monolithic"))
    return handles


def _set_plan_limits(ax: Axes, lo: np.ndarray, hi: np.ndarray, size: float) -> None:
    """Limits (with room below for the scale bar), equal aspect, axis labels in m."""
    pad = 0.06 * size
    bottom = _draw_scale_bar(ax, lo, size)
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(min(lo[1] - pad, bottom), hi[1] + pad)
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel("x (m)")
    ax.set_ylabel("y (m)")
    ax.tick_params(labelsize=8)


def _plan_extent(result: Result) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    outline = np.asarray(result.model.slab.outline, dtype=float)
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    return outline, lo, hi, float(max(hi - lo)) or 1.0


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


def _title(result: Result, what: str) -> str:
    title = result.model.title.strip()
    lf = load_factor_text(result.load_factor, LOAD_FACTOR_DIGITS - 1)
    lf_text = f"{what}  (load factor = {lf})" if what else f"load factor = {lf}"
    return f"{title}\n{lf_text}" if title else lf_text


def plot_pattern(result: Result, ax: Axes | None = None) -> Axes:
    """Draw the plan of the slab with the governing yield-line pattern; return the Axes.

    result: a hingeline Result. ax: Axes to draw on; a new 7 x 5.5 in figure with
    an Agg canvas is made when None. Draws the outline with edge conditions, the
    openings, the mechanism's deflection w as grey shading with a colour bar
    ("normalised deflection"), the active yield lines (sagging solid dark red,
    hogging dash-dot dark blue, width growing with rotation), a legend in words,
    and the title with the model title and "load factor = X.XXX" (4 significant digits). Never shows.
    """
    if ax is None:
        ax = _new_axes()
    slab = result.model.slab
    outline = np.asarray(slab.outline, dtype=float)
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    size = float(max(hi - lo)) or 1.0

    mappable = _draw_deflection(ax, result)
    _draw_openings(ax, slab.openings)
    _draw_supports(ax, result.model)
    _draw_zones(ax, result.model)
    _draw_loads(ax, result.model)
    _draw_outline(ax, outline, tuple(slab.edges), size)
    _draw_yield_lines(ax, result)

    _set_plan_limits(ax, lo, hi, size)

    if mappable is not None:
        cbar = ax.figure.colorbar(mappable, ax=ax, shrink=0.8, pad=0.02)
        cbar.set_label(DEFLECTION_LABEL, fontsize=8)
        cbar.ax.tick_params(labelsize=7)

    ax.set_title(_title(result, ""), fontsize=10)
    ax.legend(handles=_legend_handles(result), loc="upper center", bbox_to_anchor=(0.5, -0.12),
              ncol=2, fontsize=7, frameon=False, handlelength=3.2)
    return ax


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
        ax = _new_axes()
    slab = result.model.slab
    outline, lo, hi, size = _plan_extent(result)
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
    _draw_openings(ax, slab.openings)
    _draw_supports(ax, result.model)
    _draw_outline(ax, outline, tuple(slab.edges), size)
    _set_plan_limits(ax, lo, hi, size)
    ax.set_title(_title(result, "deflected shape of the mechanism, w / w_max"), fontsize=10)
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
        ax = _new_axes(projection="3d")
    elif getattr(ax, "name", "") != "3d":
        raise ValueError("plot_deflection_3d needs a 3-D Axes (add_subplot(projection='3d'))")
    slab = result.model.slab
    outline, lo, hi, size = _plan_extent(result)
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
        ring = _closed(poly)
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
    ax.set_title(_title(result, "deflected shape of the mechanism"), fontsize=10)
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
    """'lower bound 1.4557 · upper bound 1.4877 · gap 2.2 %' (5 significant digits), or why there
    is no lower bound."""
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
        ax = _new_axes()
    slab = result.model.slab
    outline, lo, hi, size = _plan_extent(result)
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
                bbox=dict(facecolor="white", edgecolor="0.4", boxstyle="round,pad=0.5"))
    _draw_openings(ax, slab.openings)
    _draw_supports(ax, result.model)
    _draw_zones(ax, result.model)
    _draw_outline(ax, outline, tuple(slab.edges), size)
    _set_plan_limits(ax, lo, hi, size)
    head = result.model.title.strip()
    lines = [head] if head else []
    lines += ["utilisation of the lower-bound moment field", _bounds_text(result)]
    ax.set_title("\n".join(lines), fontsize=10)
    handles = _plan_handles(result.model, loads=False)
    if handles:
        ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.12), ncol=2, fontsize=7,
                  frameon=False, handlelength=3.2)
    return ax
