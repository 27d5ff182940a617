"""What the drawings share: figure set-up, the edge colour, the title and the caution footer.

`new_axes` gives the Axes a plot function draws on when it is given none; `file_figure`
and `add_caution_footer` set up a figure written to a file, with a strip along the bottom
for the caution line. Also the plan's extent and title taken from a Result.

Units: lengths m; figure sizes in inches; deflections normalised (dimensionless).
May import: numpy, matplotlib (Figure and the Agg canvas only, never pyplot) and
`result`. Imported by `plan` and `contours`, never the other way round.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure

from ..result import LOAD_FACTOR_DIGITS, Result, load_factor_text

EDGE_COLOUR = "black"

#: Default figure size, inches (fits an A4 page with margins).
FIGURE_SIZE = (7.0, 5.5)

#: The line along the bottom of every drawing written to a file.
CAUTION_FOOTER = ("Upper-bound yield-line result. Shear/punching, deflection, ductility and detailing "
                  "not checked; review by a qualified engineer under local codes.")


def _agg_figure(size: tuple[float, float]) -> Figure:
    """A constrained-layout Figure of `size` inches with its Agg canvas (no display)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig = Figure(figsize=size, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def new_axes(projection: str | None = None) -> Axes:
    """One Axes on a new FIGURE_SIZE figure with an Agg canvas (projection "3d" for a 3-D one)."""
    return _agg_figure(FIGURE_SIZE).add_subplot(projection=projection)


def file_figure(size: tuple[float, float] = FIGURE_SIZE) -> Figure:
    """A Figure of `size` inches for a file, its layout leaving a strip along the bottom for
    `add_caution_footer` (3 % of the height)."""
    fig = _agg_figure(size)
    fig.get_layout_engine().set(rect=(0.0, 0.03, 1.0, 0.97))
    return fig


def add_caution_footer(fig: Figure) -> None:
    """Write CAUTION_FOOTER in small grey type, centred along the bottom of `fig`."""
    fig.text(0.5, 0.005, CAUTION_FOOTER, ha="center", va="bottom", fontsize=6, color="0.3")


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
