"""The public face of the drawings: the plot functions and their names, gathered from where they live.

`plan` draws the raw mechanism's yield-line plan (`plot_pattern`); `pattern_plan` the clean
pattern (`plot_clean_pattern`, lettered regions and numbered lines); `contours` the mechanism's deflected
shape (`plot_deflection`, `plot_deflection_3d`) and the lower bound's utilisation
(`plot_utilisation`); `drawing` holds what they share. Callers import from here, so the
drawings can be rearranged without touching them. Each plot function takes a Result and
ax= (a new Agg figure when None) and returns the Axes; axes in m, deflection normalised.
May import: `plan`, `pattern_plan`, `contours` and `drawing` only.
"""
from __future__ import annotations

from .contours import (
    CONTOUR_CMAP,
    CONTOUR_LEVELS,
    NO_LOWER_BOUND_TEXT,
    SURFACE_COLOUR,
    UTILISATION_CMAP,
    UTILISATION_LABEL,
    W_RATIO_LABEL,
    plot_deflection,
    plot_deflection_3d,
    plot_utilisation,
    utilisation_points,
)
from .drawing import CAUTION_FOOTER, EDGE_COLOUR, FIGURE_SIZE
from .pattern_plan import MAX_LABELS, plot_clean_pattern, region_letters
from .plan import (
    DEFLECTION_CMAP,
    DEFLECTION_LABEL,
    HOGGING_COLOUR,
    HOGGING_STYLE,
    MAX_LINE_WIDTH,
    MIN_LINE_WIDTH,
    SAGGING_COLOUR,
    SAGGING_STYLE,
    SCALE_BAR_GID,
    plot_pattern,
    scale_bar_length,
)

__all__ = [
    "CAUTION_FOOTER", "CONTOUR_CMAP", "CONTOUR_LEVELS", "DEFLECTION_CMAP", "DEFLECTION_LABEL", "EDGE_COLOUR",
    "FIGURE_SIZE", "HOGGING_COLOUR", "MAX_LABELS", "HOGGING_STYLE", "MAX_LINE_WIDTH", "MIN_LINE_WIDTH", "NO_LOWER_BOUND_TEXT",
    "SAGGING_COLOUR", "SAGGING_STYLE", "SCALE_BAR_GID", "SURFACE_COLOUR", "UTILISATION_CMAP",
    "UTILISATION_LABEL", "W_RATIO_LABEL", "plot_clean_pattern", "plot_deflection", "plot_deflection_3d",
    "plot_pattern", "region_letters",
    "plot_utilisation", "scale_bar_length", "utilisation_points",
]
