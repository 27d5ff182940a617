"""Plan of the clean pattern (`plot_clean_pattern`): lettered regions, numbered lines, fans.

The clean pattern (hingeline.pattern.CleanPattern, optimised when that lowered its
certified load factor) is drawn as a reviewer would sketch it: each moving region shaded
by its largest deflection and lettered A, B, C, ... (largest deflection first, the order
of the record's region table), regions at rest left white with a light hatch, yield lines
in the plan's line styles (sagging solid dark red, hogging dash-dot dark blue, hinges along
supports dashed just inside them). Labels, most work first, at most MAX_LABELS: a fan is
one label "F1", "F2", ... at its apex (its rays carry none), every other line its number
at its mid-point. Lines beyond the labels are drawn, unnumbered; the record lists them all.

When the mechanism reads as no clean pattern, the raw plan (plan.plot_pattern) is drawn
instead, titled so.

Units: axes in m. May import: numpy, matplotlib (no pyplot), `result`, `drawing`, `plan`.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes
from matplotlib.collections import LineCollection
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, PathPatch
from matplotlib.path import Path as MplPath

from ..result import Result
from .drawing import legend_below, new_axes, plan_extent
from .plan import (
    DEFLECTION_CMAP,
    HOGGING_COLOUR,
    HOGGING_STYLE,
    SAGGING_COLOUR,
    SAGGING_STYLE,
    SUPPORT_HINGE_STYLE,
    _draw_loads,
    _inside,
    _line_widths,
    draw_openings,
    draw_outline,
    draw_supports,
    draw_zones,
    plan_handles,
    plot_pattern,
    set_plan_limits,
)

#: Most labels (line numbers and fans) on the plan.
MAX_LABELS = 20

#: Regions smaller than this share of the slab's area carry no letter on the plan (the
#: narrow regions of a fan); the record's table lists every region by its letter.
LETTER_MIN_AREA = 0.01

#: Gids of the labels.
LINE_LABEL_GID = "clean line number"
FAN_LABEL_GID = "fan label"
REGION_LABEL_GID = "region letter"


def region_letter(k: int) -> str:
    """"A", ..., "Z", "AA", "AB", ... for k = 0, 1, ..."""
    out = ""
    k += 1
    while k:
        k, r = divmod(k - 1, 26)
        out = chr(65 + r) + out
    return out


def region_letters(cp) -> list[str | None]:
    """Letter of each region of the pattern (moving ones, in order), None at rest."""
    out, k = [], 0
    for reg in cp.regions:
        if reg.at_rest:
            out.append(None)
        else:
            out.append(region_letter(k))
            k += 1
    return out


def labelled_items(cp, limit: int = MAX_LABELS) -> tuple[list[int], list[int]]:
    """(fans, lines): indices of the fans and line numbers labelled on the plan, most work
    first, at most `limit` in all; lines that are rays of a labelled fan carry no number."""
    items = [(f.work, "fan", i) for i, f in enumerate(cp.fans)]
    in_fan = {k for f in cp.fans for k in f.rays}
    items += [(ln.work, "line", ln.number) for ln in cp.lines if ln.number not in in_fan]
    items.sort(key=lambda it: -it[0])
    items = items[:limit]
    return [i for _, kind, i in items if kind == "fan"], [i for _, kind, i in items if kind == "line"]


def _ring_path(rings) -> MplPath:
    verts, codes = [], []
    for ring in rings:
        r = np.asarray(ring, float)
        verts += [*r, r[0]]
        codes += [MplPath.MOVETO] + [MplPath.LINETO] * (len(r) - 1) + [MplPath.CLOSEPOLY]
    return MplPath(np.array(verts), codes)


def _text(ax, xy, label, gid, size=6.0, bold=False):
    ax.text(xy[0], xy[1], label, fontsize=size, ha="center", va="center", zorder=8, gid=gid, clip_on=True,
            fontweight="bold" if bold else "normal",
            bbox={"boxstyle": "round,pad=0.12", "facecolor": "white", "edgecolor": "0.4",
                  "linewidth": 0.4, "alpha": 0.9})


def pattern_how(cp) -> str:
    """How the pattern shown came from the mechanism: "as read", "optimised", "simplified"
    (small regions merged) or "simplified and optimised"."""
    return {(False, False): "as read", (False, True): "optimised", (True, False): "simplified",
            (True, True): "simplified and optimised"}[(bool(cp.simplified), bool(cp.optimised))]


def plot_clean_pattern(result: Result, ax: Axes | None = None, pattern=None) -> Axes:
    """Draw the plan of the clean pattern `pattern` of `result` (see the module docstring);
    the raw plan when `pattern` is None. Returns the Axes; never shows."""
    if pattern is None:
        ax = plot_pattern(result, ax=ax)
        ax.set_title(ax.get_title() + "\n(raw mechanism: it reads as no clean pattern)", fontsize=10)
        return ax
    cp = pattern
    if ax is None:
        ax = new_axes()
    slab = result.model.slab
    outline, lo, hi, size = plan_extent(result)
    letters = region_letters(cp)
    wmax = max((reg.max_deflection for reg in cp.regions), default=0.0) or 1.0
    total_area = sum(reg.polygon.area for reg in cp.regions) or 1.0
    small = 0
    for reg, rings, letter in zip(cp.regions, cp.rings, letters):
        if reg.at_rest:
            ax.add_patch(PathPatch(_ring_path(rings), facecolor="white", edgecolor="0.6", hatch="//",
                                   linewidth=0.3, zorder=1))
            continue
        shade = DEFLECTION_CMAP(float(np.clip(reg.max_deflection / wmax, 0.0, 1.0)) * 0.6)
        ax.add_patch(PathPatch(_ring_path(rings), facecolor=shade, edgecolor="0.55", linewidth=0.3, zorder=1))
        if reg.polygon.area < LETTER_MIN_AREA * total_area:
            small += 1
            continue
        p = reg.polygon.representative_point()
        _text(ax, (p.x, p.y), letter, REGION_LABEL_GID, size=7.5, bold=True)
    draw_openings(ax, slab.openings)
    draw_supports(ax, result.model)
    draw_zones(ax, result.model)
    _draw_loads(ax, result.model)
    draw_outline(ax, outline, tuple(slab.edges), size)
    lines = list(cp.lines)
    if lines:
        segs = np.array([[ln.start, ln.end] for ln in lines], float)
        rot = np.array([ln.rotation for ln in lines])
        widths = _line_widths(rot, float(rot.max()))
        sag = np.array([ln.sense == "sagging" for ln in lines])
        hinge = ~sag & np.array([ln.at_support for ln in lines])
        if hinge.any():
            ax.add_collection(LineCollection(list(_inside(result, segs[hinge], size)), colors=HOGGING_COLOUR,
                                             linewidths=widths[hinge], linestyles=SUPPORT_HINGE_STYLE,
                                             capstyle="butt", zorder=5))
        for mask, colour, style in ((sag, SAGGING_COLOUR, SAGGING_STYLE), (~sag & ~hinge, HOGGING_COLOUR, HOGGING_STYLE)):
            if mask.any():
                ax.add_collection(LineCollection(list(segs[mask]), colors=colour, linewidths=widths[mask],
                                                 linestyles=style, capstyle="butt", zorder=5))
    fans, numbered = labelled_items(cp)
    for i in fans:
        _text(ax, cp.fans[i].apex, f"F{i + 1}", FAN_LABEL_GID, size=6.5, bold=True)
    by_number = {ln.number: ln for ln in lines}
    for n in numbered:
        ln = by_number[n]
        mid = 0.5 * (np.asarray(ln.start) + np.asarray(ln.end))
        _text(ax, mid, str(n), LINE_LABEL_GID)
    set_plan_limits(ax, lo, hi, size)
    raw = cp.raw_load_factor
    how = pattern_how(cp)
    # A simplified pattern above the raw mechanism is a readable upper bound, not the answer.
    lf = f"{cp.load_factor:.6g}" if cp.above_raw else f"{cp.load_factor:.4g}"
    title = (f"{result.model.title or 'Untitled model'}\nclean pattern ({how}): load factor = {lf}"
             f"{'' if cp.above_raw else f' (raw mechanism {raw:.4g})'}; {len(lines)} line{'s' if len(lines) != 1 else ''}, "
             f"{len(cp.fans)} fan{'s' if len(cp.fans) != 1 else ''}")
    if cp.above_raw:
        title += f"\nABOVE the raw mechanism's {raw:.6g}, which governs"
    ax.set_title(title, fontsize=9)
    handles = []
    if any(ln.sense == "sagging" for ln in lines):
        handles.append(Line2D([], [], color=SAGGING_COLOUR, linestyle=SAGGING_STYLE, linewidth=2.0,
                              label="sagging yield line (bottom bars yield)"))
    if any(ln.sense == "hogging" for ln in lines):
        handles.append(Line2D([], [], color=HOGGING_COLOUR, linestyle=HOGGING_STYLE, linewidth=2.0,
                              label="hogging yield line (top bars yield)"))
    handles += plan_handles(result.model)
    if any(reg.at_rest for reg in cp.regions):
        handles.append(Patch(facecolor="white", edgecolor="0.6", hatch="//", label="region at rest"))
    unlabelled = len(lines) - len(numbered) - sum(len(cp.fans[i].rays) for i in fans)
    handles.append(Line2D([], [], color="none", label="A, B, ...: rigid regions; F1, ...: fans"))
    handles.append(Line2D([], [], color="none", label="n: yield line number (most work first)"))
    if unlabelled > 0 or small > 0:
        handles.append(Line2D([], [], color="none",
                              label=f"unlabelled: {unlabelled} minor line(s), {small} small region(s) (see record)"))
    legend_below(ax, handles)
    return ax
