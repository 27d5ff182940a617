"""Plan of the yield-line pattern (`plot_pattern`) and the plan's fixed items the other drawings reuse.

Visual language (readable in black and white):
- simple edge: solid line with short square ticks on the outside of the slab;
- continuous edge: heavy line with slanted, hatch-like ticks on the outside;
- free edge (and every opening edge): thin dashed line; openings are shown hatched;
- sagging yield line: solid, dark red; hogging yield line: dash-dot, dark blue;
  line weight grows with the line's rotation; a hogging hinge along a continuous edge or
  round a monolithic support is drawn dashed just inside it, so that it does not merge
  with the heavy edge line (in black-and-white print too);
- the yield lines that make 95 % of the internal work numbered at their mid-points
  (numbering.py; the calculation record lists every line by the same numbers);
- rigid regions shaded light-to-mid grey by w / w_max of the mechanism, with a colour
  bar; where the slab rises (w < 0) it is hatched, not left white;
- a scale bar (alternating black and white blocks, length a round number of m)
  below the slab's lower-left corner.

The fixed items (outline with its edge conditions, openings, columns and walls, zones, the
scale bar and limits, their legend entries) are drawn by `draw_outline`, `draw_openings`,
`draw_supports`, `draw_zones`, `set_plan_limits` and `plan_handles`, which `contours` reuses.

Units: axes in m; the grey shading is w / w_max of the mechanism (dimensionless, only its
shape matters); line widths in points.
May import: numpy, shapely, matplotlib (Figure and the Agg canvas only, never pyplot),
`result`, `drawing` and `numbering`.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.collections import LineCollection
from matplotlib.colors import ListedColormap
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Polygon, Rectangle
from matplotlib.tri import Triangulation

from ..result import Result
from .drawing import (
    EDGE_COLOUR,
    closed_ring,
    colour_bar,
    hatch_uplift,
    legend_below,
    new_axes,
    plan_extent,
    plot_title,
    uplift_handle,
)
from .numbering import draw_numbers

SAGGING_COLOUR = "#8c1c13"
HOGGING_COLOUR = "#1b3f8b"
SAGGING_STYLE = "solid"
HOGGING_STYLE = (0, (7, 2, 1.5, 2))  # dash-dot
SUPPORT_HINGE_STYLE = (0, (3, 2.5))   # dashed with open gaps: the edge line must not show through
MIN_LINE_WIDTH = 0.8   # points, for the smallest rotation
MAX_LINE_WIDTH = 3.2   # points, for the largest rotation

#: Label of the colour bar: the shading is the deflection over its largest value.
DEFLECTION_LABEL = "w / w_max"

#: Gid of the hogging hinges along supports (drawn just inside the support's edge).
SUPPORT_HINGE_GID = "hinges along supports"

#: How far inside the slab a hinge along a support is drawn, as a fraction of the slab's size.
SUPPORT_HINGE_OFFSET = 0.012

# light grey scale: white for w = 0 to mid grey for the largest w
DEFLECTION_CMAP = ListedColormap(np.linspace(1.0, 0.55, 256)[:, None].repeat(3, axis=1), name="hingeline_w")

#: Gid and label prefix of the scale bar artists.
SCALE_BAR_GID = "scale bar"


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


def draw_outline(ax: Axes, outline: np.ndarray, edges: tuple[str, ...], size: float) -> None:
    """The slab's outline (m, counter-clockwise), each edge in the style of its condition
    (edges[k] for the edge from point k; "free" where missing); size (m) scales the ticks."""
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


def draw_openings(ax: Axes, openings: tuple[np.ndarray, ...]) -> None:
    """Openings (polygons, m): hatched, with dashed free edges."""
    for poly in openings:
        poly = np.asarray(poly, dtype=float)
        ax.add_patch(Polygon(poly, closed=True, facecolor="white", edgecolor="0.55", hatch="xx",
                             linewidth=0.0, zorder=3, label="_opening"))
        ax.add_collection(LineCollection([closed_ring(poly)], colors=EDGE_COLOUR, linewidths=0.8,
                                         linestyles=(0, (4, 2.5)), zorder=4, label="_opening_edge"))


def draw_supports(ax: Axes, model) -> None:
    """Columns and walls: solid dark footprints; monolithic ones with a white cross-hatch. A
    pinned column is slab over a bearing point: a dashed footprint outline and a dot at its
    centre, so that yield lines crossing the footprint stay visible. A pinned wall: a dashed
    footprint outline round the solid strip it holds (its bearing line)."""
    for sp in model.supports:
        if sp.bearing or sp.footprint is not None:
            for part in getattr(sp.physical, "geoms", [sp.physical]):
                ax.add_patch(Polygon(np.asarray(part.exterior.coords), closed=True, facecolor="none",
                                     edgecolor=EDGE_COLOUR, linestyle=(0, (2, 1.5)), linewidth=0.8, zorder=5,
                                     label="_support"))
        if sp.bearing:
            ax.plot([sp.centre[0]], [sp.centre[1]], marker="o", markersize=4, color=EDGE_COLOUR, zorder=7,
                    label="_bearing")
            continue
        for part in getattr(sp.polygon, "geoms", [sp.polygon]):
            ax.add_patch(Polygon(np.asarray(part.exterior.coords), closed=True, facecolor="0.2",
                                 edgecolor=EDGE_COLOUR, hatch="++" if sp.connection == "monolithic" else None,
                                 linewidth=0.8, zorder=5, label="_support"))


def draw_zones(ax: Axes, model) -> None:
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


def _inside(result: Result, segs: np.ndarray, size: float) -> np.ndarray:
    """The segments (k, 2, 2) moved SUPPORT_HINGE_OFFSET * size sideways, onto the side where
    the slab is (not a support, an opening or outside the outline)."""
    from shapely.geometry import Point, Polygon
    from shapely.ops import unary_union

    model = result.model
    slab = Polygon(model.slab.outline, [np.asarray(o) for o in model.slab.openings])
    if model.supports:
        slab = slab.difference(unary_union([sp.polygon for sp in model.supports]))
    out = []
    for a, b in segs:
        d = b - a
        L = float(np.hypot(*d)) or 1.0
        n = np.array([-d[1], d[0]]) / L * SUPPORT_HINGE_OFFSET * size
        mid = 0.5 * (a + b)
        side = n if slab.contains(Point(mid + n)) else -n
        out.append(np.array([a + side, b + side]))
    return np.array(out).reshape(-1, 2, 2)


def _draw_yield_lines(ax: Axes, result: Result, size: float) -> None:
    yl = result.yield_lines
    if len(yl) == 0:
        return
    start = np.asarray(yl.start, dtype=float).reshape(-1, 2)
    end = np.asarray(yl.end, dtype=float).reshape(-1, 2)
    rot = np.asarray(yl.rotation, dtype=float)
    sag = np.asarray(yl.sagging, dtype=bool)
    hinge = ~sag & np.asarray(yl.at_support, dtype=bool)
    widths = _line_widths(rot, float(np.max(rot)) if rot.size else 0.0)
    segs = np.stack([start, end], axis=1)
    if np.any(hinge):
        ax.add_collection(LineCollection(
            list(_inside(result, segs[hinge], size)), colors=HOGGING_COLOUR, linewidths=widths[hinge],
            linestyles=SUPPORT_HINGE_STYLE, capstyle="butt", zorder=5, label="yield lines (hogging, along supports)",
            gid=SUPPORT_HINGE_GID))
    for mask, colour, style, label in (
        (sag, SAGGING_COLOUR, SAGGING_STYLE, "yield lines (sagging)"),
        (~sag & ~hinge, HOGGING_COLOUR, HOGGING_STYLE, "yield lines (hogging)"),
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
    w_max = float(np.max(w))
    ratio = w / w_max if w_max > 0 else np.zeros_like(w)
    mesh = ax.tripcolor(tri, np.clip(ratio, 0.0, None), shading="gouraud", cmap=DEFLECTION_CMAP, vmin=0.0,
                        vmax=1.0, zorder=1, rasterized=True)
    return mesh, hatch_uplift(ax, tri, ratio)


def _legend_handles(result: Result, uplift: bool) -> list:
    handles = []
    sag = np.asarray(result.yield_lines.sagging, dtype=bool)
    hinge = ~sag & np.asarray(result.yield_lines.at_support, dtype=bool)
    if np.any(sag):
        handles.append(Line2D([], [], color=SAGGING_COLOUR, linestyle=SAGGING_STYLE, linewidth=2.0,
                              label="sagging yield line (bottom bars yield)"))
    if np.any(~sag & ~hinge):
        handles.append(Line2D([], [], color=HOGGING_COLOUR, linestyle=HOGGING_STYLE, linewidth=2.0,
                              label="hogging yield line (top bars yield)"))
    if np.any(hinge):
        handles.append(Line2D([], [], color=HOGGING_COLOUR, linestyle=SUPPORT_HINGE_STYLE, linewidth=2.0,
                              label="hogging hinge along a support (drawn just inside it)"))
    handles += plan_handles(result.model)
    if uplift:
        handles.append(uplift_handle())
    handles.append(Line2D([], [], color="none", label="line weight grows with rotation; n: line number"))
    return handles


def plan_handles(model, loads: bool = True) -> list:
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
    conns = {sp.connection for sp in model.supports if not sp.bearing}
    if any(sp.bearing for sp in model.supports):
        handles.append(Line2D([], [], linestyle="none", marker="o", markersize=4, color=EDGE_COLOUR,
                              label="column, pinned (bearing at its centre)"))
    if "pinned" in conns:
        handles.append(Patch(facecolor="0.2", edgecolor=EDGE_COLOUR, label="wall, pinned"))
    if "monolithic" in conns:
        handles.append(Patch(facecolor="0.2", edgecolor=EDGE_COLOUR, hatch="++", label="column or wall, monolithic"))
    return handles


def set_plan_limits(ax: Axes, lo: np.ndarray, hi: np.ndarray, size: float) -> None:
    """Limits (with room below for the scale bar), equal aspect, axis labels in m."""
    pad = 0.06 * size
    bottom = _draw_scale_bar(ax, lo, size)
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(min(lo[1] - pad, bottom), hi[1] + pad)
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel("x (m)")
    ax.set_ylabel("y (m)")
    ax.tick_params(labelsize=8)


def plot_pattern(result: Result, ax: Axes | None = None) -> Axes:
    """Draw the plan of the slab with the governing yield-line pattern; return the Axes.

    result: a hingeline Result. ax: Axes to draw on; a new 7 x 5.5 in figure with
    an Agg canvas is made when None. Draws the outline with edge conditions, the
    openings, the mechanism's deflection w as grey shading with a colour bar
    ("normalised deflection"), the active yield lines (sagging solid dark red,
    hogging dash-dot dark blue, width growing with rotation), a legend in words,
    and the title with the model title and "load factor = X.XXX". Never shows.
    """
    if ax is None:
        ax = new_axes()
    slab = result.model.slab
    outline, lo, hi, size = plan_extent(result)

    mappable, uplift = _draw_deflection(ax, result) or (None, False)
    draw_openings(ax, slab.openings)
    draw_supports(ax, result.model)
    draw_zones(ax, result.model)
    _draw_loads(ax, result.model)
    draw_outline(ax, outline, tuple(slab.edges), size)
    _draw_yield_lines(ax, result, size)
    draw_numbers(ax, result)

    set_plan_limits(ax, lo, hi, size)

    if mappable is not None:
        colour_bar(ax, mappable, DEFLECTION_LABEL, ticks=np.linspace(0.0, 1.0, 6))

    ax.set_title(plot_title(result, ""), fontsize=10)
    legend_below(ax, _legend_handles(result, uplift))
    return ax
