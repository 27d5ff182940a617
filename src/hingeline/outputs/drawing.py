"""What the drawings share: figure set-up, the edge colour, the title, the caution footer and
the stamp, the colour bar beside the plan and the legend under it.

`new_axes` gives the Axes a plot function draws on when it is given none; `file_figure`
and `add_caution_footer` set up a figure written to a file, with a strip along the bottom
for the caution line and the stamp (load case, mesh, hingeline version, date, model file
and the first 12 hex digits of its SHA-256). `colour_bar` puts a colour bar beside the
plan, as tall as the plan itself (a long slab's bar is not taller than its plot);
`legend_below` puts the legend a fixed distance under the plot, clear of the x-axis label.
Also the plan's extent and title taken from a Result.

Units: lengths m; figure sizes in inches; offsets in points; deflections normalised
(dimensionless).
May import: numpy, matplotlib (Figure and the Agg canvas only, never pyplot) and
`result`. Imported by `plan` and `contours`, never the other way round.
"""
from __future__ import annotations

from datetime import datetime, timezone

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure
from matplotlib.transforms import ScaledTranslation

from ..result import LOAD_FACTOR_DIGITS, Result, load_factor_text

EDGE_COLOUR = "black"

#: Default figure size, inches (fits an A4 page with margins).
FIGURE_SIZE = (7.0, 5.5)

#: The line along the bottom of every drawing of the mechanism written to a file.
CAUTION_FOOTER = ("Upper-bound yield-line result. Shear/punching, deflection, ductility and detailing "
                  "not checked; review by a qualified engineer under local codes.")

#: The lines along the bottom of the utilisation drawing: it shows the lower bound's field.
UTILISATION_FOOTER = ("Lower-bound moment field: one admissible field of many, so pale is not spare capacity.\n"
                      "Shear/punching, deflection, ductility and detailing not checked; review by a qualified "
                      "engineer under local codes.")

#: Height of the strip `file_figure` leaves along the bottom, as a fraction of the figure
#: (two lines of caution and the stamp).
FOOTER_STRIP = 0.07

#: Width of a colour bar and its gap from the plot, inches.
COLOUR_BAR_WIDTH = 0.16
COLOUR_BAR_PAD = 0.12

#: Distance from the bottom of the plot to the top of the legend, points (clears the
#: tick labels and the x-axis label).
LEGEND_DROP = 36.0


def agg_figure(size: tuple[float, float]) -> Figure:
    """A constrained-layout Figure of `size` inches with its Agg canvas (no display)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig = Figure(figsize=size, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def new_axes(projection: str | None = None) -> Axes:
    """One Axes on a new FIGURE_SIZE figure with an Agg canvas (projection "3d" for a 3-D one)."""
    return agg_figure(FIGURE_SIZE).add_subplot(projection=projection)


def file_figure(size: tuple[float, float] = FIGURE_SIZE) -> Figure:
    """A Figure of `size` inches for a file, its layout leaving a strip along the bottom for
    `add_caution_footer` (FOOTER_STRIP of the height)."""
    fig = agg_figure(size)
    fig.get_layout_engine().set(rect=(0.0, FOOTER_STRIP, 1.0, 1.0 - FOOTER_STRIP))
    return fig


def stamp_text(result: Result, version: str, date: str | None = None) -> str:
    """The stamp of a drawing: load case (when the model has cases), mesh (nodes, element
    size in m), hingeline version, date (UTC, default today) and the model file's name and
    the first 12 hex digits of its SHA-256 (when the model was read from a file)."""
    s = result.stats
    parts = [f"case {result.case}"] if result.case else []
    parts.append(f"mesh {s.nodes} nodes, element {s.mesh_size:.3g} m")
    parts.append(f"hingeline {version}")
    parts.append(date or datetime.now(timezone.utc).strftime("%Y-%m-%d"))
    src = result.model.source
    if src is not None:
        parts.append(f"{src.name} (SHA-256 {src.sha256[:12]})")
    return " · ".join(parts)


def add_caution_footer(fig: Figure, result: Result | None = None, version: str = "unknown",
                       footer: str = CAUTION_FOOTER) -> None:
    """Write `footer` (the caution) in small grey type along the bottom of `fig`, and under it
    the stamp of `result` (stamp_text) when a result is given."""
    fig.text(0.5, 0.024, footer, ha="center", va="bottom", fontsize=5.5, color="0.3", linespacing=1.3)
    if result is not None:
        fig.text(0.5, 0.004, stamp_text(result, version), ha="center", va="bottom", fontsize=5.5,
                 color="0.3")


#: Gid of the hatching over the parts of the slab the mechanism lifts (w < 0).
UPLIFT_GID = "uplift"

#: Hatch of the uplift (readable in black and white, unlike any shade near white).
UPLIFT_HATCH = "////"

#: A rise below this fraction of the largest deflection is rounding, not uplift.
UPLIFT_TOL = 1e-6


def hatch_uplift(ax: Axes, tri, ratio: np.ndarray) -> bool:
    """Hatch where w / w_max (`ratio` at the vertices of the Triangulation `tri`) is below
    -UPLIFT_TOL: the slab rises there, which a shading from white at w = 0 would hide.
    Returns True when something was hatched (the caller adds uplift_handle() to its legend)."""
    ratio = np.asarray(ratio, float)
    if tri is None or not ratio.size or float(ratio.min()) >= -UPLIFT_TOL:
        return False
    cs = ax.tricontourf(tri, ratio, levels=[float(ratio.min()) - 1.0, -UPLIFT_TOL], colors="none",
                        hatches=[UPLIFT_HATCH], zorder=2)
    cs.set_edgecolor("0.15")
    cs.set_linewidth(0.0)
    cs.set_gid(UPLIFT_GID)
    return True


def uplift_handle():
    """Legend entry of the hatching drawn by hatch_uplift."""
    from matplotlib.patches import Patch

    return Patch(facecolor="white", edgecolor="0.15", hatch=UPLIFT_HATCH, label="uplift (w < 0): the slab rises")


def colour_bar(ax: Axes, mappable, label: str, ticks=None):
    """A colour bar COLOUR_BAR_WIDTH inches wide, COLOUR_BAR_PAD inches to the right of `ax`
    and exactly as tall as the plot: a child of the Axes placed at draw time, after an equal
    aspect has shrunk the plot's box, so a long slab's bar is never taller than its plot.
    Returns the Colorbar."""
    from matplotlib.transforms import Bbox

    fig = ax.figure

    def locate(_cax, _renderer):
        pos = ax.get_position(original=False)
        width = fig.get_figwidth()
        return Bbox.from_bounds(pos.x1 + COLOUR_BAR_PAD / width, pos.y0, COLOUR_BAR_WIDTH / width, pos.height)

    cax = ax.inset_axes((1.0, 0.0, 0.05, 1.0))
    cax.set_axes_locator(locate)
    cbar = fig.colorbar(mappable, cax=cax, ticks=ticks)
    cbar.set_label(label, fontsize=8)
    cbar.ax.tick_params(labelsize=7)
    return cbar


def legend_below(ax: Axes, handles: list) -> None:
    """The legend of `handles` in two columns, its top LEGEND_DROP points under the plot, so it
    never covers the tick labels or the x-axis label whatever the slab's proportions."""
    drop = ScaledTranslation(0.0, -LEGEND_DROP / 72.0, ax.figure.dpi_scale_trans)
    ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, 0.0), bbox_transform=ax.transAxes + drop,
              ncol=2, fontsize=7, frameon=False, handlelength=3.2)


def closed_ring(poly: np.ndarray) -> np.ndarray:
    """The (n, 2) polygon `poly` (m) with its first point repeated at the end."""
    poly = np.asarray(poly, dtype=float)
    return np.vstack([poly, poly[:1]])


def plan_extent(result: Result) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """(outline, lower-left corner, upper-right corner, larger plan dimension) of the slab, m."""
    outline = np.asarray(result.model.slab.outline, dtype=float)
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    return outline, lo, hi, float(max(hi - lo)) or 1.0


def plot_title(result: Result, what: str) -> str:
    """The model's title (if any) over `what` and the load factor to 3 decimals."""
    title = result.model.title.strip()
    lf = load_factor_text(result.load_factor, LOAD_FACTOR_DIGITS - 1)
    lf_text = f"{what}  (load factor = {lf})" if what else f"load factor = {lf}"
    return f"{title}\n{lf_text}" if title else lf_text
