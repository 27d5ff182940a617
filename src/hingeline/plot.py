"""Plan plot of a Result: slab, supports, yield lines and the mechanism's deflection.

Visual language (readable in black and white):
- simple edge: solid line with short square ticks on the outside of the slab;
- continuous edge: heavy line with slanted, hatch-like ticks on the outside;
- free edge (and every opening edge): thin dashed line; openings are shown hatched;
- sagging yield line: solid, dark red; hogging yield line: dash-dot, dark blue;
  line weight grows with the line's rotation;
- rigid regions shaded light-to-mid grey by the normalised deflection w of the
  mechanism, with a colour bar.

Only the Agg backend is used (no pyplot, no display). Axes are in m.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.collections import LineCollection
from matplotlib.colors import ListedColormap
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Polygon
from matplotlib.tri import Triangulation

from .result import Result

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


def _new_axes() -> Axes:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.0, 5.5), layout="constrained")
    FigureCanvasAgg(fig)
    return fig.add_subplot()


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
    edges = set(result.model.slab.edges)
    handles = []
    sag = np.asarray(result.yield_lines.sagging, dtype=bool)
    if np.any(sag):
        handles.append(Line2D([], [], color=SAGGING_COLOUR, linestyle=SAGGING_STYLE, linewidth=2.0,
                              label="sagging yield line (bottom bars yield)"))
    if np.any(~sag):
        handles.append(Line2D([], [], color=HOGGING_COLOUR, linestyle=HOGGING_STYLE, linewidth=2.0,
                              label="hogging yield line (top bars yield)"))
    if "simple" in edges:
        handles.append(Line2D([], [], color=EDGE_COLOUR, linewidth=1.4, marker="|", markersize=7,
                              label="simply supported edge (ticks outside)"))
    if "continuous" in edges:
        handles.append(Line2D([], [], color=EDGE_COLOUR, linewidth=3.0, marker=(2, 2, 35), markersize=8,
                              label="continuous edge (hatched outside)"))
    if "free" in edges:
        handles.append(Line2D([], [], color=EDGE_COLOUR, linewidth=0.8, linestyle=(0, (4, 2.5)),
                              label="free edge"))
    if result.model.slab.openings:
        handles.append(Patch(facecolor="white", edgecolor="0.55", hatch="xx", label="opening (free edges)"))
    handles.append(Line2D([], [], color="none", label="line weight grows with rotation"))
    return handles


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
        ax = _new_axes()
    slab = result.model.slab
    outline = np.asarray(slab.outline, dtype=float)
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    size = float(max(hi - lo)) or 1.0

    mappable = _draw_deflection(ax, result)
    _draw_openings(ax, slab.openings)
    _draw_outline(ax, outline, tuple(slab.edges), size)
    _draw_yield_lines(ax, result)

    pad = 0.06 * size
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(lo[1] - pad, hi[1] + pad)
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel("x (m)")
    ax.set_ylabel("y (m)")
    ax.tick_params(labelsize=8)

    if mappable is not None:
        cbar = ax.figure.colorbar(mappable, ax=ax, shrink=0.8, pad=0.02)
        cbar.set_label(DEFLECTION_LABEL, fontsize=8)
        cbar.ax.tick_params(labelsize=7)

    title = result.model.title.strip()
    lf_text = f"load factor = {result.load_factor:.3f}"
    ax.set_title(f"{title}\n{lf_text}" if title else lf_text, fontsize=10)
    ax.legend(handles=_legend_handles(result), loc="upper center", bbox_to_anchor=(0.5, -0.12),
              ncol=2, fontsize=7, frameon=False, handlelength=3.2)
    return ax
