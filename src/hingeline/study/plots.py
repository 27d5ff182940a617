"""The drawings of a study: the map of the load factor against the moving opening's
position, and line plots of the load factor against each swept value.

Map (one panel per size factor and combination of swept values): each grid cell coloured by
the load factor of the variant with the opening's centroid there, the contour where it equals
the study's target, the cells where it reaches the target hatched (the opening may go there,
as far as flexure goes), skipped positions marked x; the slab, its other openings and its
supports drawn over it, and the moving opening at its given position dashed.

Line plots: the load factor (solid) and the lower bound (dashed) against one swept value
(or the size factor); with a moving opening, the lowest over all positions (the governing
position) at each value; one line per combination of the other swept values (at most
MAX_LINES).

Units: m in plan; load factors dimensionless.
May import: numpy, matplotlib (Figure and Agg only), `hingeline.outputs` (drawing helpers).
"""
from __future__ import annotations

import io
import itertools
import math

import numpy as np
from matplotlib.collections import PatchCollection
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Rectangle
from matplotlib.patches import Polygon as MplPolygon

from ..outputs.drawing import add_caution_footer, closed_ring, file_figure
from ..outputs.plan import draw_openings, draw_outline, draw_supports
from ..outputs.result_json import hingeline_version
from .run import SOLVED, Row

MAX_PANELS = 12
MAX_LINES = 8
DPI = 150


def _png(fig) -> bytes:
    add_caution_footer(fig)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=DPI, metadata={"Creator": f"hingeline {hingeline_version()}"})
    return buf.getvalue()


def _same(a, b) -> bool:
    return a == b or (a is not None and b is not None and math.isclose(a, b, abs_tol=1e-12))


def panels(study, rows: list[Row]) -> list[tuple[float | None, tuple[float, ...]]]:
    """(scale, swept values) of each map panel, in study order."""
    scales = study.move.scale or (None,)
    combos = list(itertools.product(*(s.values for s in study.sweeps)))
    return [(sc, vals) for vals in combos for sc in scales]


def panel_label(study, scale, values) -> str:
    parts = [] if scale is None else [f"size x{scale:g}"]
    parts += [f"{s.key} = {v:g}" for s, v in zip(study.sweeps, values)]
    return ", ".join(parts)


def grid_values(xs: np.ndarray, ys: np.ndarray, rows: list[Row], scale, values) -> np.ndarray:
    """(len(ys), len(xs)) load factors of the solved rows of one panel; NaN elsewhere."""
    z = np.full((len(ys), len(xs)), np.nan)
    for r in rows:
        if r.status == SOLVED and _same(r.scale, scale) and r.values == tuple(values):
            z[int(np.argmin(np.abs(ys - r.y))), int(np.argmin(np.abs(xs - r.x)))] = r.load_factor
    return z


def _cell_edges(a: np.ndarray, step: float) -> np.ndarray:
    return np.concatenate([a - 0.5 * step, [a[-1] + 0.5 * step]])


def _draw_slab(ax, study) -> None:
    m = study.model
    outline = np.asarray(m.slab.outline)
    size = float(max(outline.max(axis=0) - outline.min(axis=0)))
    draw_outline(ax, outline, m.slab.edges, size)
    moving = study.move.opening
    draw_openings(ax, tuple(op for k, op in enumerate(m.slab.openings) if moving != k + 1))
    draw_supports(ax, m)
    ring = closed_ring(np.asarray(study.move.polygon))
    ax.plot(ring[:, 0], ring[:, 1], color="0.25", lw=1.0, ls=(0, (2, 2)), zorder=6)
    ax.set_aspect("equal")
    ax.set_xlabel("x (m)")
    ax.set_ylabel("y (m)")


def map_png(study, plan, rows: list[Row]) -> bytes:
    """PNG bytes of the map (see the module docstring)."""
    xs, ys, step, target = plan.xs, plan.ys, study.move.step, study.target
    keys = panels(study, rows)[:MAX_PANELS]
    grids = [grid_values(xs, ys, rows, sc, vals) for sc, vals in keys]
    finite = np.concatenate([g[np.isfinite(g)] for g in grids]) if grids else np.empty(0)
    vmin, vmax = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    ncols = min(len(keys), 2)
    nrows = math.ceil(len(keys) / ncols)
    fig = file_figure((7.0 * ncols * 0.8 + 1.2, 5.0 * nrows * 0.8 + 0.8))
    axes = fig.subplots(nrows, ncols, squeeze=False).ravel()
    mesh = None
    for ax, (sc, vals), z in zip(axes, keys, grids):
        # Cells are a step wide; clip them to the slab so that none seems to lie beyond its edge.
        slab = MplPolygon(np.asarray(study.model.slab.outline), closed=True, transform=ax.transData)
        mesh = ax.pcolormesh(_cell_edges(xs, step), _cell_edges(ys, step), np.ma.masked_invalid(z),
                             cmap="viridis", vmin=vmin, vmax=vmax, zorder=1, clip_path=slab)
        ok = np.argwhere(z >= target)
        if len(ok):
            cells = [Rectangle((xs[j] - step / 2, ys[i] - step / 2), step, step) for i, j in ok]
            ax.add_collection(PatchCollection(cells, facecolor="none", edgecolor="white", hatch="//",
                                              linewidth=0.0, zorder=2, clip_path=slab))
        zm = np.ma.masked_invalid(z)
        if min(z.shape) >= 2 and zm.count() and zm.min() < target < zm.max():
            ax.contour(xs, ys, zm, levels=[target], colors="red", linewidths=2.0, zorder=3)
        gone = [(r.x, r.y) for r in rows if r.status != SOLVED and _same(r.scale, sc)
                and (not r.values or r.values == tuple(vals))]
        if gone:
            gx, gy = np.array(gone).T
            ax.plot(gx, gy, "x", color="0.35", ms=4, mew=0.8, zorder=7)
        _draw_slab(ax, study)
        ax.set_title(panel_label(study, sc, vals) or "load factor by opening position", fontsize=9)
    for ax in axes[len(keys):]:
        ax.set_axis_off()
    if mesh is not None:
        fig.colorbar(mesh, ax=list(axes[:len(keys)]), label="load factor (upper bound)", shrink=0.8)
    handles = [Line2D([], [], color="red", lw=2, label=f"load factor = {target:g} (target)"),
               Patch(facecolor="0.6", edgecolor="white", hatch="//", label=f"load factor ≥ {target:g}: opening may go here"),
               Line2D([], [], color="0.35", marker="x", ls="", label="position skipped or failed"),
               Line2D([], [], color="0.25", ls=(0, (2, 2)), label="opening as given")]
    fig.legend(handles=handles, loc="outside upper center", ncols=2, fontsize=8)
    if len(panels(study, rows)) > MAX_PANELS:
        fig.suptitle(f"first {MAX_PANELS} of {len(panels(study, rows))} panels; all values in study.csv",
                     fontsize=8)
    return _png(fig)


def _dimensions(study) -> list[tuple[str, tuple[float, ...], int | None]]:
    """(label, values, sweep index or None for the size factor) of each one-parameter line plot."""
    out = []
    if study.move is not None and len(study.move.scale) >= 2:
        out.append(("size factor of the moving opening", study.move.scale, None))
    out += [(s.key, s.values, i) for i, s in enumerate(study.sweeps) if len(s.values) >= 2]
    return out


def _governing(rows: list[Row], pick) -> tuple[float, float]:
    """(lowest load factor, lowest lower bound) over the solved rows that `pick` accepts."""
    sel = [r for r in rows if r.status == SOLVED and pick(r)]
    lf = min((r.load_factor for r in sel), default=math.nan)
    lb = min((r.lower_bound if r.lower_bound is not None else math.nan for r in sel), default=math.nan)
    return lf, lb


def line_plots(study, rows: list[Row]) -> dict[str, bytes]:
    """{file name: PNG bytes}: sweep-<k>.png per sweep with two or more values (k from 1, as in
    the study file) and scale.png for two or more size factors."""
    out = {}
    moving = study.move is not None
    for label, values, index in _dimensions(study):
        others = [(i, s.values) for i, s in enumerate(study.sweeps) if i != index]
        scales = (study.move.scale or (None,)) if (moving and index is not None) else (None,)
        combos = list(itertools.product(scales, *(v for _, v in others)))[:MAX_LINES]
        fig = file_figure((7.0, 4.5))
        ax = fig.add_subplot()
        for combo in combos:
            sc, fixed = combo[0], combo[1:]

            def pick(r, value, sc=sc, fixed=fixed):
                here = _same(r.scale, value) if index is None else (_same(r.values[index], value)
                                                                      and _same(r.scale, sc))
                return here and all(_same(r.values[i], f) for (i, _), f in zip(others, fixed))

            pts = np.array([_governing(rows, lambda r, v=v: pick(r, v)) for v in values])
            name = ", ".join([*([] if sc is None else [f"size x{sc:g}"]),
                              *(f"{study.sweeps[i].key} = {f:g}" for (i, _), f in zip(others, fixed))])
            line, = ax.plot(values, pts[:, 0], "o-", label=name or "load factor")
            if np.isfinite(pts[:, 1]).any():
                ax.plot(values, pts[:, 1], "s--", color=line.get_color(), mfc="none", lw=1.0)
        ax.axhline(study.target, color="red", lw=1.0, ls=":", label=f"target {study.target:g}")
        ax.set_xlabel(label)
        ax.set_ylabel("load factor" + (" (lowest over positions)" if moving else ""))
        ax.set_title("load factor (solid, upper bound) and lower bound (dashed)", fontsize=9)
        ax.grid(True, lw=0.3)
        ax.legend(fontsize=7)
        out["scale.png" if index is None else f"sweep-{index + 1}.png"] = _png(fig)
    return out
