"""Calculation record: one self-contained HTML page a checking engineer can follow.

`build_report(model, results_by_resolution)` turns the solves of one model at
several mesh resolutions into the text of an HTML page: model summary, method
and assumptions, the load factor in words, the energy balance, resolution and
convergence, warnings and the certificate check, the lower bound and its
re-check, the cautions and the drawings.
Drawings are embedded (SVG as data URIs), CSS is inline; the page needs no
network and no JavaScript. `write_report(model, outdir, resolutions)` solves,
renders in memory and only then writes OUTDIR/report.html.

`report_data(...)` returns the numbers the page prints (energy balance,
convergence table, lower bound) as plain Python values, for tests and other callers.

Units: lengths m, moments kNm/m, area loads kPa, work kNm, time s.
"""
from __future__ import annotations

import base64
import dataclasses
import html
import io
import logging
import os
from datetime import datetime, timezone
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from ..lower import EQUILIBRIUM_RTOL
from ..model import RESOLUTIONS, Model
from ..result import CAUTIONS, LOAD_FACTOR_DIGITS, Result, load_factor_text
from ..upper.certificate import work_per_load
from .result_json import CERTIFICATE_RTOL, certificate_agrees, hingeline_version

log = logging.getLogger(__name__)

#: Resolutions every report is solved at (the requested one is added if different).
REPORT_RESOLUTIONS = ("coarse", "normal")

#: File name written by write_report.
REPORT_NAME = "report.html"

_CSS = """
body { font-family: "DejaVu Sans", Arial, Helvetica, sans-serif; font-size: 10.5pt; color: #111;
       max-width: 62em; margin: 1.5em auto; padding: 0 1em; line-height: 1.4; }
h1 { font-size: 17pt; margin-bottom: 0.1em; border-bottom: 3px solid #1b3f8b; padding-bottom: 0.2em; }
h2 { font-size: 12.5pt; margin-top: 1.6em; color: #1b3f8b; border-bottom: 1px solid #bbb; }
h3 { font-size: 11pt; margin-bottom: 0.3em; }
table { border-collapse: collapse; margin: 0.4em 0 0.8em 0; }
th, td { border: 1px solid #999; padding: 0.2em 0.55em; text-align: left; vertical-align: top; }
th { background: #e8ecf4; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr.total td { font-weight: bold; background: #f4f4f4; }
.headline { font-size: 14pt; border: 2px solid #1b3f8b; background: #f2f5fb; padding: 0.5em 0.8em; margin: 0.8em 0; }
.caution { border: 2px solid #8c1c13; background: #fbf1f0; padding: 0.4em 0.9em; margin: 0.8em 0; }
.warn { color: #8c1c13; font-weight: bold; }
.ok { color: #1d6b2f; font-weight: bold; }
.meta { color: #555; font-size: 9pt; }
figure { margin: 0.8em 0; page-break-inside: avoid; }
figure img { max-width: 100%; border: 1px solid #ccc; }
figcaption { font-size: 9pt; color: #333; }
code { font-size: 9.5pt; }
@media print { body { max-width: none; margin: 0; } h2 { page-break-after: avoid; } }
"""


def _e(text: object) -> str:
    return html.escape(str(text), quote=True)


def _num(value: float, fmt: str = ".6g") -> str:
    """A numeric table cell carrying the full-precision value in data-value."""
    return f'<td class="num" data-value="{float(value)!r}">{format(float(value), fmt)}</td>'


def _xy(p) -> str:
    return f"({float(p[0]):.3f}, {float(p[1]):.3f})"


def _ordered(labels) -> list[str]:
    """Resolution labels coarse -> fine, any other label (explicit mesh size) last."""
    rank = {r: i for i, r in enumerate(RESOLUTIONS)}
    return sorted(labels, key=lambda k: (rank.get(k, len(RESOLUTIONS)), k))


# --- numbers -------------------------------------------------------------------


def energy_balance(model: Model, result: Result) -> dict:
    """Work equation of `result`'s mechanism, kNm.

    Returns dict with: groups (list of (label, count, work)) for sagging lines,
    hogging lines and hinges at continuous edges; internal_sum (sum of the
    groups); internal (result.work.internal); loads (list of dicts name, value,
    factored, work); factored, held (sums of work_per_load); load_factor;
    external (held + load_factor * factored); residual (internal - external).
    """
    model = result.model  # with load cases: the governing case's own loads
    yl = result.yield_lines
    sag = np.asarray(yl.sagging, bool)
    sup = np.asarray(yl.at_support, bool)
    dis = np.asarray(yl.dissipation, float)
    groups = [
        ("sagging yield lines (bottom bars)", sag & ~sup),
        ("hogging yield lines (top bars)", ~sag & ~sup),
        ("hinges along continuous edges and monolithic supports (top bars)", sup),
    ]
    groups = [(label, int(m.sum()), float(dis[m].sum())) for label, m in groups]
    works = work_per_load(model, result.mechanism)
    loads = [{"name": ld.name, "value": float(ld.value), "factored": bool(ld.factored),
              "region": getattr(ld, "region", None) is not None, "work": float(w)}
             for ld, w in zip(model.loads, works)]
    factored = sum(d["work"] for d in loads if d["factored"])
    held = sum(d["work"] for d in loads if not d["factored"])
    lf = float(result.load_factor)
    external = held + lf * factored
    internal = float(result.work.internal)
    return {
        "groups": groups,
        "internal_sum": float(sum(g[2] for g in groups)),
        "internal": internal,
        "loads": loads,
        "factored": factored,
        "held": held,
        "load_factor": lf,
        "external": external,
        "residual": internal - external,
    }


def convergence_rows(results: Mapping[str, Result]) -> list[dict]:
    """One row per solve, coarse -> fine: label, load_factor, lower_bound (None when not
    computed or not found), nodes, slab_nodes, candidate_lines, lp_lines, active_lines,
    rounds, seconds."""
    rows = []
    for label in _ordered(results):
        r = results[label]
        s = r.stats
        lower = None if r.lower_bound is None else r.lower_bound.load_factor
        rows.append({"label": label, "load_factor": float(r.load_factor),
                     "lower_bound": None if lower is None else float(lower), "nodes": s.nodes,
                     "slab_nodes": s.slab_nodes, "candidate_lines": s.candidate_lines,
                     "lp_lines": s.lp_lines, "active_lines": len(r.yield_lines), "rounds": s.rounds,
                     "seconds": float(s.seconds), "mesh_size": float(s.mesh_size)})
    return rows


def _trend(rows: list[dict]) -> str:
    if len(rows) < 2:
        return ("Only one resolution was solved, so no trend can be stated; solve at a finer "
                "resolution to see how far the upper bound falls.")
    lfs = [r["load_factor"] for r in rows]
    steps = [b - a for a, b in zip(lfs, lfs[1:])]
    names = " → ".join(r["label"] for r in rows)
    change = (lfs[-1] - lfs[0]) / abs(lfs[0]) * 100 if lfs[0] else float("nan")
    if all(d <= 1e-9 * max(1.0, abs(a)) for d, a in zip(steps, lfs)):
        text = (f"The load factor falls (or stays) with each refinement ({names}: {change:+.2f} % overall), "
                "as expected of upper bounds: a finer mesh offers more candidate lines, so the mechanism "
                "found can only get closer to the true one from above.")
    else:
        text = (f"The load factor does not fall at every refinement ({names}: {change:+.2f} % overall). "
                "The meshes are not nested, so a finer mesh need not contain every line of a coarser one; "
                "each value is still an upper bound and the lowest of them is the best estimate.")
    return text


def lower_bound_summary(result: Result) -> dict:
    """The lower bound of `result` as printed: computed (bool), load_factor (None when
    there is none), upper (the load factor), gap ((upper - lower) / upper or None),
    solved (the solver's optimum), status, seconds, reason, and check (the re-check,
    fieldcheck.FieldCheck as a dict: equilibrium kPa, moment_jump kNm/m, shear_jump kN/m,
    corner kN, load_total kN, relative, yield_ratio, yield_ratio_points; or None)."""
    lb = result.lower_bound
    out = {"computed": lb is not None, "load_factor": None, "upper": float(result.load_factor), "gap": None,
           "solved": None, "status": "", "seconds": None, "reason": "", "check": None}
    if lb is None:
        return out
    chk = lb.check
    out.update(load_factor=None if lb.load_factor is None else float(lb.load_factor),
               gap=None if result.gap is None else float(result.gap),
               solved=None if lb.solved is None else float(lb.solved), status=str(lb.status),
               seconds=float(lb.seconds), reason=str(lb.reason or ""),
               check=None if chk is None else {f.name: float(getattr(chk, f.name)) for f in dataclasses.fields(chk)})
    return out


def report_data(model: Model, results: Mapping[str, Result], primary: str | None = None) -> dict:
    """The numbers the report prints: primary label, energy balance, convergence rows,
    and the lower bound of the primary solve (see lower_bound_summary)."""
    if not results:
        raise ValueError("report needs at least one result")
    primary = _primary(model, results, primary)
    return {"primary": primary, "balance": energy_balance(model, results[primary]),
            "convergence": convergence_rows(results), "lower_bound": lower_bound_summary(results[primary])}


def _primary(model: Model, results: Mapping[str, Result], primary: str | None) -> str:
    if primary is not None:
        if primary not in results:
            raise ValueError(f"primary resolution {primary!r} is not among the results {list(results)}")
        return primary
    if model.analysis.resolution in results and model.analysis.mesh_size is None:
        return model.analysis.resolution
    return _ordered(results)[-1]


# --- drawings --------------------------------------------------------------------


def _figure_svg(draw, result: Result) -> str:
    """Data URI of an SVG figure drawn by draw(result, ax=ax)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.0, 5.5), layout="constrained")
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    draw(result, ax=ax)
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", dpi=150, metadata={"Creator": f"hingeline {hingeline_version()}",
                                                     "Date": None})
    return "data:image/svg+xml;base64," + base64.b64encode(buf.getvalue()).decode("ascii")


def _drawings(result: Result) -> list[tuple[str, str, str]]:
    """(title, data URI, caption) for each drawing available."""
    from . import plots as plot

    out = [("Yield-line pattern (plan)", _figure_svg(plot.plot_pattern, result),
            "Sagging yield lines solid dark red, hogging dash-dot dark blue; line weight grows with "
            "rotation. Grey shading: deflection of the mechanism (normalised). Supports as in the legend.")]
    deflection = getattr(plot, "plot_deflection", None)
    if callable(deflection):
        out.append(("Deflection of the mechanism (contours)", _figure_svg(deflection, result),
                    "Deflected shape of the collapse mechanism, normalised so that the factored loads "
                    "do 1 kNm of work; only its shape matters, not its size."))
    return out


# --- page ----------------------------------------------------------------------------


def _model_section(model: Model) -> str:
    s, c = model.slab, model.capacity
    out = ["<h2>1. Model</h2>", "<table>"]
    out.append(f"<tr><th>Title</th><td>{_e(model.title or '(untitled)')}</td></tr>")
    out.append(f"<tr><th>Thickness</th><td>{'%.3f m' % s.thickness if s.thickness else 'not given'}</td></tr>")
    area = _poly_area(s.outline) - sum(_poly_area(o) for o in s.openings)
    out.append(f"<tr><th>Slab area (openings deducted)</th><td>{area:.3f} m²</td></tr>")
    out.append("</table>")

    out.append("<h3>Outline and edge conditions</h3><table><tr><th>edge</th><th>from (x, y) m</th>"
               "<th>to (x, y) m</th><th>length m</th><th>condition</th></tr>")
    n = len(s.outline)
    for k in range(n):
        a, b = s.outline[k], s.outline[(k + 1) % n]
        out.append(f"<tr><td>{k + 1}</td><td>{_xy(a)}</td><td>{_xy(b)}</td>"
                   f"<td class=\"num\">{float(np.hypot(*(b - a))):.3f}</td><td>{_e(s.edges[k])}</td></tr>")
    out.append("</table>")
    if s.openings:
        out.append("<h3>Openings (all edges free)</h3><table><tr><th>opening</th><th>vertices (x, y) m</th>"
                   "<th>area m²</th></tr>")
        for k, o in enumerate(s.openings):
            out.append(f"<tr><td>{k + 1}</td><td>{', '.join(_xy(p) for p in o)}</td>"
                       f"<td class=\"num\">{_poly_area(o):.3f}</td></tr>")
        out.append("</table>")
    else:
        out.append("<p>No openings.</p>")

    out.append("<h3>Moment capacities (kNm/m)</h3><table><tr><th></th><th>bar direction 1</th>"
               "<th>bar direction 2</th></tr>")
    out.append(f"<tr><th>sagging (bottom bars)</th><td class=\"num\">{c.sagging[0]:.3f}</td>"
               f"<td class=\"num\">{c.sagging[1]:.3f}</td></tr>")
    out.append(f"<tr><th>hogging (top bars)</th><td class=\"num\">{c.hogging[0]:.3f}</td>"
               f"<td class=\"num\">{c.hogging[1]:.3f}</td></tr></table>")
    if c.layers:
        out.append("<p>Capacities from the bar schedule, each layer a singly reinforced section 1 m wide "
                   "(EN 1992-1-1, rectangular stress block):</p><table><tr><th>layer</th><th>A_s mm²/m</th>"
                   "<th>d mm</th><th>x mm</th><th>x_u/d</th><th>M_Rd kNm/m</th></tr>")
        for lc in c.layers:
            out.append(f"<tr><td>{_e(lc.name)}</td><td class=\"num\">{lc.area:.0f}</td><td class=\"num\">{lc.d:.1f}</td>"
                       f"<td class=\"num\">{lc.x:.1f}</td><td class=\"num\">{lc.xu_d:.3f}</td>"
                       f"<td class=\"num\">{lc.moment:.2f}</td></tr>")
        out.append("</table>")
    out.append(f"<p>Bar direction 1 is at {c.bar_angle:.2f}° from the x axis; direction 2 is 90° further. "
               "Capacity normal to a line follows Johansen's stepped criterion.</p>")

    out.append("<h3>Loads</h3><table><tr><th>name</th><th>value</th><th>acts on</th><th>treatment</th></tr>")
    for ld in model.loads:
        if hasattr(ld, "at"):
            where, unit = "point " + _xy(ld.at), "kN"
        elif hasattr(ld, "path"):
            where, unit = "line " + ", ".join(_xy(p) for p in ld.path), "kN/m"
        else:
            where = "whole slab" if ld.region is None else "region " + ", ".join(_xy(p) for p in ld.region)
            unit = "kPa"
        kind = "factored (multiplied by the load factor)" if ld.factored else "held (present at this value)"
        out.append(f"<tr><td>{_e(ld.name)}</td><td class=\"num\">{ld.value:.3f} {unit}</td><td>{_e(where)}</td>"
                   f"<td>{kind}</td></tr>")
    out.append("</table>")
    if model.supports:
        out.append("<h3>Columns and walls</h3><table><tr><th>name</th><th>connection</th><th>footprint</th></tr>")
        for sp in model.supports:
            ring = np.asarray(sp.polygon.exterior.coords)[:-1] if hasattr(sp.polygon, "exterior") else []
            out.append(f"<tr><td>{_e(sp.name)}</td><td>{_e(sp.connection)}</td>"
                       f"<td>{_e(', '.join(_xy(p) for p in ring))}</td></tr>")
        out.append("</table>")
    if model.zones:
        out.append("<h3>Reinforcement zones</h3><table><tr><th>name</th><th>sagging kNm/m</th>"
                   "<th>hogging kNm/m</th><th>polygon</th></tr>")
        for z in model.zones:
            out.append(f"<tr><td>{_e(z.name)}</td><td class=\"num\">{z.sagging[0]:.3f} / {z.sagging[1]:.3f}</td>"
                       f"<td class=\"num\">{z.hogging[0]:.3f} / {z.hogging[1]:.3f}</td>"
                       f"<td>{_e(', '.join(_xy(p) for p in z.polygon))}</td></tr>")
        out.append("</table>")
    return "\n".join(out)


def _poly_area(p) -> float:
    p = np.asarray(p, float)
    x, y = p[:, 0], p[:, 1]
    return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


_METHOD = """
<h2>2. Method and assumptions</h2>
<ul>
<li><b>Theory.</b> Johansen's yield-line theory with the upper-bound (kinematic) theorem of plasticity:
every admissible collapse mechanism gives a load factor at or above the true collapse factor.
The capacity normal to a yield line follows Johansen's stepped criterion,
m<sub>n</sub> = m<sub>1</sub>(n·e<sub>1</sub>)² + m<sub>2</sub>(n·e<sub>2</sub>)², for bottom and top bars separately.</li>
<li><b>Search.</b> Discontinuity layout optimisation (DLO) after Gilbert, He, Smith and Le, "Automatic
yield-line analysis of slabs using discontinuity layout optimization", Proc. R. Soc. A 470 (2014) 20140071:
the slab is covered with nodes, every straight node-to-node line is a candidate yield line, and a linear
program (HiGHS) picks the rotations giving the lowest load factor.</li>
<li><b>Slab behaviour.</b> Rigid-plastic, hinges of unlimited rotation capacity, no membrane action,
no shear failure.</li>
<li><b>Supports.</b> Supported edges hold the slab down as well as up (two-sided). A simply supported edge
rotates freely. A continuous edge develops the hogging capacity normal to it when the slab falls away
from it; rotation the other way (uplift next to the support) is taken as free, which can only lower the
load factor (safe side).</li>
<li><b>Openings and free edges</b> carry no moment. They are modelled by filling the openings, and a strip
beyond each free edge, with a material of no strength and no load, so the slab beside them moves freely.</li>
<li><b>Loads</b> are uniform over the slab or over polygonal patches, uniform along polylines (line loads)
or concentrated (point loads); factored loads are scaled by the load factor, held loads stay at their
given value.</li>
<li><b>Columns and walls</b> are rigid ground over their footprints. Hinges round a monolithic support
develop the hogging capacity; the slab rotates freely about a pinned one.</li>
<li><b>Reinforcement zones</b> replace the slab's capacities inside them; a yield line along a zone
boundary takes the weaker side.</li>
<li><b>Check.</b> The mechanism found is re-checked independently of the linear program: internal and
external work are recomputed from the deflected shape alone (section 6).</li>
</ul>
"""


# Units, number formats and meanings of the re-check's quantities (fieldcheck.FieldCheck), in table order.
_CHECK_ROWS = {
    "equilibrium": ("kPa", ".3e", "largest residual of m<sub>x,xx</sub> + 2 m<sub>xy,xy</sub> + m<sub>y,yy</sub> + p "
                           "in a triangle"),
    "moment_jump": ("kNm/m", ".3e", "largest jump of the normal moment m<sub>n</sub> across a side, or breach of an "
                             "edge condition on m<sub>n</sub> (free, simple, continuous)"),
    "shear_jump": ("kN/m", ".3e", "largest imbalance of the Kirchhoff shear V<sub>n</sub> across a side, or on a "
                           "free edge"),
    "corner": ("kN", ".3e", "largest unbalanced corner force at a node off the supports"),
    "load_total": ("kN", ".3e", "total area load on the triangles less that on the slab itself"),
    "relative": ("–", ".3e", "largest of the above, each divided by its scale (load, capacity, total load)"),
    "yield_ratio": ("–", ".9f", "largest yield ratio at the control values, which bound the field (≤ 1: inside "
                         "the yield criterion everywhere)"),
    "yield_ratio_points": ("–", ".9f", "largest yield ratio at 10 grid points of each triangle (corners included)"),
}

_LOWER_METHOD = (
    "<p>The lower bound comes from equilibrium finite elements on the triangles of the same mesh: in each "
    "triangle m<sub>x</sub>, m<sub>y</sub> and m<sub>xy</sub> are quadratic and in equilibrium with the load; "
    "the normal moment and the Kirchhoff shear are continuous across every side, corner forces balance at the "
    "nodes off the supports, and the edges carry what their conditions allow. Nielsen's yield criterion (in the "
    "bar axes) is imposed at the Bernstein control values of each triangle, which bound the quadratic field, so "
    "the field is inside the criterion everywhere; a cone program finds the largest load factor for which such "
    "a field exists. By the lower-bound theorem of plasticity the slab then carries that load factor. The field "
    "is re-checked afterwards from the field and the model alone (table below). Sources: Krabbenhoft and "
    "Damkilde, Computers &amp; Structures 80 (2002), for the elements; Nielsen and Hoang, <i>Limit Analysis "
    "and Concrete Plasticity</i>, for the yield criterion.</p>")


def _lower_bound_section(res: Result, number: int, figure: int) -> str:
    """HTML of the lower-bound section, numbered `number`; its drawing is Figure `figure`."""
    from . import plots as plot

    lb = lower_bound_summary(res)
    lf = lb["upper"]
    out = [f"<h2>{number}. Lower bound</h2>"]
    if not lb["computed"]:
        out.append("<p id=\"lower-bound-none\">Lower bound: <b>not computed</b> for this result (the solve "
                   "was asked for the upper bound only). The true collapse factor is at or below the load "
                   f"factor {load_factor_text(lf)}; how far below is not known from this record.</p>")
        return "\n".join(out)
    held = (", with the held loads present at their given values"
            if any(not ld.factored for ld in res.model.loads) else "")
    lower = lb["load_factor"]
    if lower is None:
        out.append(f"<p id=\"lower-bound-none\" class=\"warn\">No lower bound: {_e(lb['reason'] or lb['status'])}.</p>"
                   f"<p>The true collapse factor is at or below the load factor {load_factor_text(lf)}; how far below is not "
                   "known from this record.</p>")
    else:
        gap = lb["gap"]
        out.append(
            f"<div class=\"headline\">Lower bound <b id=\"lower-bound\" data-value=\"{lower!r}\">{load_factor_text(lower)}</b>"
            f" · gap <b id=\"gap\" data-value=\"{gap!r}\">{100.0 * gap:.1f} %</b></div>")
        out.append(
            f"<p>The slab carries at least <b>λ<sub>lower</sub> = {load_factor_text(lower)}</b> times the factored loads{held} "
            f"(lower-bound theorem); the mechanism found fails at <b>{load_factor_text(lf)}</b> (upper bound). The true collapse "
            f"factor lies between the two; the gap, (upper − lower) / upper, is <b>{100.0 * gap:.1f} %</b>.</p>")
        if gap < 0:
            out.append("<p class=\"warn\">The lower bound is above the upper bound: one of the two is wrong. "
                       "Do not use this result (see the warnings, section 6).</p>")
        if lb["solved"] is not None and abs(lb["solved"] - lower) > 1e-12 * max(1.0, abs(lower)):
            out.append(f"<p>The solver's optimum, {load_factor_text(lb['solved'], 7)}, was scaled down by the largest yield ratio "
                       "found on re-check, so that the field lies inside the exact criterion.</p>")
    out.append(_LOWER_METHOD)
    chk = lb["check"]
    if chk is not None:
        out.append("<h3>Re-check of the moment field</h3><table id=\"lower-bound-check\"><tr><th>quantity</th>"
                   "<th>value</th><th>unit</th><th>meaning</th></tr>")
        for name, value in chk.items():
            unit, fmt, meaning = _CHECK_ROWS.get(name, ("", ".3e", ""))
            out.append(f"<tr><td><code>{_e(name)}</code></td>{_num(value, fmt)}<td>{unit}</td>"
                       f"<td>{meaning}</td></tr>")
        out.append("</table>")
        if lower is not None:
            # When the optimum was scaled down to the lower bound, so was the field: its ratio with it.
            ratio = chk["yield_ratio"] * (lower / lb["solved"] if lb["solved"] else 1.0)
            if chk["relative"] <= EQUILIBRIUM_RTOL and ratio <= 1.0 + 1e-12:
                out.append(f"<p class=\"ok\">The re-check passes: the field is in equilibrium to "
                           f"{chk['relative']:.1e} relative (limit {EQUILIBRIUM_RTOL:g}) and, at the lower bound, "
                           f"inside the yield criterion (largest ratio {ratio:.9f}).</p>")
            else:
                out.append("<p class=\"warn\">The re-check DOES NOT PASS: do not use this lower bound.</p>")
        out.append(f"<p class=\"meta\">Solver status {_e(lb['status'])}, {lb['seconds']:.2f} s.</p>")
    if lower is not None and res.lower_bound.field is not None:
        uri = _figure_svg(plot.plot_utilisation, res)
        out.append(f"<figure><img alt=\"Utilisation of the lower-bound moment field\" src=\"{uri}\">"
                   f"<figcaption>Figure {figure}. Utilisation of the lower-bound moment field. Yield ratio of the "
                   "moments at the corners and side mid-points of each triangle (0: no moment, 1: at the "
                   "capacity), shaded linearly between them; where it is 1 the field is at yield.</figcaption>"
                   "</figure>")
    return "\n".join(out)


def build_report(model: Model, results_by_resolution: Mapping[str, Result], primary: str | None = None,
                 generated: str | None = None) -> str:
    """HTML text of the calculation record.

    results_by_resolution: label ("coarse", "normal", "fine" or another label) ->
    Result of solving `model` there. primary: the label whose mechanism the record
    reports in full (default: the model's resolution if solved, else the finest).
    generated: timestamp text for the header (default: now, UTC).
    All user text is HTML-escaped; the page has inline CSS and embedded drawings only.
    """
    data = report_data(model, results_by_resolution, primary)
    primary = data["primary"]
    res = results_by_resolution[primary]
    bal, rows = data["balance"], data["convergence"]
    lf = float(res.load_factor)
    title = model.title or "Untitled slab"
    generated = generated or datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    has_held = any(not ld.factored for ld in model.loads)

    p: list[str] = []
    p.append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">")
    p.append(f"<title>Calculation record: {_e(title)}</title><style>{_CSS}</style></head><body>")
    p.append(f"<h1>Yield-line calculation record: {_e(title)}</h1>")
    p.append(f"<p class=\"meta\">hingeline {_e(hingeline_version())} · generated {_e(generated)} · "
             f"reported mesh: {_e(primary)} ({res.stats.slab_nodes} nodes on the slab)</p>")
    p.append("<div class=\"caution\"><b>Cautions.</b><ul>" + "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS)
             + "</ul></div>")

    held_words = ", with the held loads present at their given values" if has_held else ""
    p.append(f"<div class=\"headline\">Load factor <b id=\"load-factor\" data-value=\"{lf!r}\">{load_factor_text(lf, 4)}</b></div>")
    p.append(f"<p>The factored loads can be multiplied by <b>{load_factor_text(lf, 4)}</b> before the slab collapses by the "
             f"mechanism shown{held_words}. This is an <b>upper bound</b>: the true collapse factor is at or "
             f"below this value. "
             + ("A value below 1 means the slab cannot carry the factored loads by this mechanism."
                if lf < 1 else "A value of 1 or more means the factored loads are carried, with that margin, "
                "as far as flexure is concerned, if no mechanism with a lower factor exists.")
             + "</p>")
    if res.case:
        p.append(f"<p>Load cases solved (the lowest governs; the record below is for "
                 f"<b>{_e(res.case)}</b>):</p><table><tr><th>case</th><th>load factor</th><th>lower bound</th></tr>"
                 + "".join(f"<tr><td>{_e(n)}</td><td class=\"num\">{load_factor_text(v)}</td>"
                           + (f"<td class=\"num\">{load_factor_text(lb)}</td>" if lb is not None else "<td>–</td>") + "</tr>"
                           for (n, v), lb in zip(res.cases, res.case_lower_bounds or (None,) * len(res.cases)))
                 + "</table>")
    better = [r for r in rows if r["load_factor"] < lf * (1 - 1e-9) and r["label"] != primary]
    if better:
        b = min(better, key=lambda r: r["load_factor"])
        p.append(f"<p class=\"warn\">A lower upper bound, {load_factor_text(b['load_factor'], 4)}, was found at the "
                 f"{_e(b['label'])} resolution (section 5). The lowest upper bound found governs.</p>")

    p.append(_model_section(model))
    p.append(_METHOD)

    # 3. drawings
    p.append("<h2>3. Collapse mechanism</h2>")
    yl = res.yield_lines
    n_sag = int(np.sum(np.asarray(yl.sagging, bool)))
    p.append(f"<p>{len(yl)} active yield lines: {n_sag} sagging, {len(yl) - n_sag} hogging "
             f"({int(np.sum(np.asarray(yl.at_support, bool)))} of them along supported edges).</p>")
    drawings = _drawings(res)
    for k, (name, uri, caption) in enumerate(drawings):
        p.append(f"<figure><img alt=\"{_e(name)}\" src=\"{uri}\"><figcaption>Figure {k + 1}. {_e(name)}. "
                 f"{_e(caption)}</figcaption></figure>")

    # 4. energy balance
    p.append("<h2>4. Work equation</h2>")
    p.append("<p>The mechanism is scaled so that the factored loads do 1 kNm of work. Internal work "
             "(dissipated in the yield lines) equals external work: "
             "<i>internal = held + λ × factored</i>.</p>")
    p.append("<h3>Internal work</h3><table id=\"internal-work\"><tr><th>group</th><th>lines</th>"
             "<th>work kNm</th></tr>")
    for label, count, work in bal["groups"]:
        p.append(f"<tr><td>{_e(label)}</td><td class=\"num\">{count}</td>{_num(work, '.9g')}</tr>")
    p.append(f"<tr class=\"total\"><td>sum (internal work)</td><td></td>{_num(bal['internal_sum'], '.9g')}</tr>")
    p.append("</table>")
    if abs(bal["internal_sum"] - bal["internal"]) > 1e-9 * max(1.0, abs(bal["internal"])):
        p.append(f"<p class=\"warn\">The line groups sum to {bal['internal_sum']:.9g} kNm but the solve "
                 f"reports {bal['internal']:.9g} kNm.</p>")
    p.append("<h3>External work</h3><table id=\"external-work\"><tr><th>load</th><th>kPa</th><th>treatment</th>"
             "<th>work on the mechanism kNm</th></tr>")
    for d in bal["loads"]:
        p.append(f"<tr><td>{_e(d['name'])}</td><td class=\"num\">{d['value']:.3f}</td>"
                 f"<td>{'factored' if d['factored'] else 'held'}</td>{_num(d['work'], '.9g')}</tr>")
    p.append(f"<tr class=\"total\"><td>sum of factored loads</td><td></td><td></td>{_num(bal['factored'], '.9g')}</tr>")
    p.append(f"<tr class=\"total\"><td>sum of held loads</td><td></td><td></td>{_num(bal['held'], '.9g')}</tr>")
    p.append("</table>")
    p.append("<h3>Balance</h3><table id=\"balance\">")
    p.append(f"<tr><td>held + λ × factored = {bal['held']:.9g} + {lf:.9g} × {bal['factored']:.9g}</td>"
             f"{_num(bal['external'], '.9g')}<td>kNm</td></tr>")
    p.append(f"<tr><td>internal work</td>{_num(bal['internal'], '.9g')}<td>kNm</td></tr>")
    p.append(f"<tr class=\"total\"><td>difference</td>{_num(bal['residual'], '.3e')}<td>kNm</td></tr></table>")

    # 5. convergence
    p.append("<h2>5. Resolution and convergence</h2>")
    p.append("<p>The same model solved on meshes of increasing fineness. Nodes include the fill beyond "
             "free edges and in openings; lines are candidates / in the final linear program / active.</p>")
    p.append("<p>Each solve also gives a lower bound (section 7) on the same mesh: the true collapse "
             "factor lies between the two columns; the bracket usually narrows as the mesh is refined.</p>")
    p.append("<table id=\"convergence\"><tr><th>resolution</th><th>element size m</th><th>load factor</th>"
             "<th>lower bound</th><th>nodes (on slab)</th><th>lines cand. / LP / active</th><th>LP rounds</th>"
             "<th>time s</th></tr>")
    for r in rows:
        mark = " (reported)" if r["label"] == primary else ""
        p.append(f"<tr><td>{_e(r['label'])}{mark}</td><td class=\"num\">{r['mesh_size']:.3f}</td>"
                 f"{_num(r['load_factor'], f'#.{LOAD_FACTOR_DIGITS}g')}"
                 + (_num(r["lower_bound"], ".4f") if r["lower_bound"] is not None else "<td>–</td>")
                 + f"<td class=\"num\">{r['nodes']} ({r['slab_nodes']})</td>"
                 f"<td class=\"num\">{r['candidate_lines']} / {r['lp_lines']} / {r['active_lines']}</td>"
                 f"<td class=\"num\">{r['rounds']}</td><td class=\"num\">{r['seconds']:.2f}</td></tr>")
    p.append("</table>")
    p.append(f"<p>{_e(_trend(rows))}</p>")

    # 6. warnings and certificate
    p.append("<h2>6. Warnings and independent check</h2>")
    if res.warnings:
        p.append("<ul>" + "".join(f"<li class=\"warn\">{_e(w)}</li>" for w in res.warnings) + "</ul>")
    else:
        p.append("<p>The solve raised no warnings.</p>")
    chk = res.certificate
    w_max = float(np.max(np.abs(res.mechanism.w))) if len(res.mechanism.w) else 0.0
    agrees = certificate_agrees(res)
    p.append("<table id=\"certificate\">")
    p.append(f"<tr><td>load factor from the linear program</td>{_num(lf, '.9g')}</tr>")
    p.append(f"<tr><td>load factor recomputed from the deflected shape alone</td>{_num(chk.load_factor, '.9g')}</tr>")
    p.append(f"<tr><td>relative difference</td>{_num(abs(chk.load_factor - lf) / max(1.0, abs(lf)), '.2e')}</tr>")
    p.append(f"<tr><td>largest |w| on supported edges (m per kNm)</td>{_num(chk.max_support_w, '.2e')}</tr>")
    p.append(f"<tr><td>largest |w| anywhere (m per kNm)</td>{_num(w_max, '.3e')}</tr></table>")
    verdict = (f"<p class=\"ok\">The check agrees (within {CERTIFICATE_RTOL:g} relative; supports do not move).</p>"
               if agrees else "<p class=\"warn\">The check DOES NOT AGREE: do not use this result.</p>")
    p.append(verdict)

    # 7. lower bound
    p.append(_lower_bound_section(res, 7, len(drawings) + 1))

    # 8. cautions again, at the end
    p.append("<h2>8. Cautions</h2><ul>" + "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS) + "</ul>")
    p.append("<p>Shear, punching shear, deflection, ductility and detailing are not checked by this record "
             "and must be checked separately.</p>")
    p.append("</body></html>\n")
    return "\n".join(p)


def solve_resolutions(model: Model, resolutions: Sequence[str] | None = None,
                      primary: str | None = None) -> tuple[dict[str, Result], str]:
    """Solve `model` at each resolution; return (results by label, primary label).

    resolutions: default REPORT_RESOLUTIONS plus the primary. primary: resolution
    reported in full (default: the model's; when the model sets analysis.mesh_size
    and no primary is given, that mesh size is solved too and is primary).
    """
    from ..solve import solve_cases

    plan: dict[str, tuple[str | None, float | None]] = {}
    if primary is None and model.analysis.mesh_size is not None:
        primary = f"mesh size {model.analysis.mesh_size:g} m"
        plan[primary] = (None, model.analysis.mesh_size)
    primary = primary or model.analysis.resolution
    names = list(resolutions) if resolutions is not None else list(REPORT_RESOLUTIONS)
    if primary in RESOLUTIONS and primary not in names:
        names.append(primary)
    for r in names:
        if r not in RESOLUTIONS:
            raise ValueError(f"resolution must be one of {RESOLUTIONS}, not {r!r}")
        plan.setdefault(r, (r, None))
    results = {}
    for label in _ordered(plan):
        res, size = plan[label]
        log.info("report: solving at %s", label)
        results[label] = solve_cases(model, resolution=res, mesh_size=size)
    return results, primary


def write_report(model: Model, outdir: str | os.PathLike, resolutions: Sequence[str] | None = None,
                 primary: str | None = None) -> Path:
    """Solve `model` (see solve_resolutions), write OUTDIR/report.html; return its path.

    The page is built in memory first and written to a temporary name that is then
    renamed, so a failure leaves no half-written report. Raises OSError when the
    folder cannot be written, and what `solve` raises.
    """
    results, primary = solve_resolutions(model, resolutions, primary)
    text = build_report(model, results, primary)
    out = Path(outdir)
    out.mkdir(parents=True, exist_ok=True)
    final = out / REPORT_NAME
    tmp = out / f".{REPORT_NAME}.tmp-{os.getpid()}"
    try:
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, final)
    finally:
        if tmp.exists():
            tmp.unlink()
    log.info("wrote %s", final)
    return final
