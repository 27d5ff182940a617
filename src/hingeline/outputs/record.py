"""Calculation record: one self-contained HTML page a checking engineer can follow.

`build_report(model, result)` turns the solve of one model (with its mesh refinement
history) into the text of an HTML page: the project (job, reference,
revision, prepared and checked by) and the model file's name and SHA-256 at the head,
model summary, method
and assumptions, the load factor in words, the energy balance, the mesh refinement
(both bounds against nodes), warnings and the certificate check, the lower bound and its
re-check, the numbered yield lines, the cautions, the drawings, and in an appendix the
model file's text as read (escaped).
The page is rendered by Jinja2 from templates/record.html.j2 (with autoescaping,
so user text such as titles and load names is escaped); this module and its two
helpers (record_model for section 1, record_tables for sections 4 to 7) only
prepare the data, as dicts and lists of already-formatted values.
Drawings are embedded (SVG as data URIs), CSS is inline; the page needs no
network and no JavaScript. `write_report(model, outdir, ...)` solves,
renders in memory and only then writes OUTDIR/report.html.

`report_data(...)` returns the numbers the page prints (energy balance,
refinement history, lower bound) as plain Python values, for tests and other callers.

Units: lengths m, moments kNm/m, area loads kPa, work kNm, time s.
May import: `model`, `result`, `solve`, `cases` and the other `outputs` modules (plots,
result_json, record_model, record_tables); jinja2 and matplotlib.
"""
from __future__ import annotations

import base64
import io
import logging
import os
from datetime import datetime, timezone
from pathlib import Path

import jinja2
import numpy as np

from ..model import Model
from ..result import CAUTIONS, Result, load_factor_text
from .record_model import method_items, model_tables
from .record_tables import (
    certificate_table,
    energy_balance,
    lower_bound_summary,
    lower_bound_table,
    refinement_rows,
    refinement_table,
    work_tables,
    yield_line_table,
)
from .result_json import hingeline_version

log = logging.getLogger(__name__)

__all__ = ["REPORT_NAME", "build_report", "energy_balance", "lower_bound_summary", "refinement_rows",
           "report_data", "write_report"]

#: File name written by write_report.
REPORT_NAME = "report.html"

#: Template of the page, in the package folder outputs/templates.
TEMPLATE = "record.html.j2"


def _environment() -> jinja2.Environment:
    """Jinja2 environment of the record's templates.

    Autoescaping is on for everything, so every value the data carries is escaped; the
    page's markup is in the templates. trim_blocks and lstrip_blocks let a template line
    that holds only a {% tag %} leave no trace, and the page keeps its final newline.
    """
    return jinja2.Environment(loader=jinja2.PackageLoader("hingeline.outputs", "templates"),
                              autoescape=True, trim_blocks=True, lstrip_blocks=True,
                              keep_trailing_newline=True, undefined=jinja2.StrictUndefined)


def report_data(model: Model, result: Result) -> dict:
    """The numbers the report prints: energy balance, refinement rows (one per mesh solved)
    and the lower bound (see lower_bound_summary)."""
    return {"balance": energy_balance(model, result), "refinement": refinement_rows(result),
            "lower_bound": lower_bound_summary(result)}


# --- drawings --------------------------------------------------------------------


def _figure_svg(draw, result: Result, footer: str | None = None) -> str:
    """Data URI of an SVG figure drawn by draw(result, ax=ax), with the caution `footer`
    (default drawing.CAUTION_FOOTER) and the stamp along its bottom, as in the files."""
    from .drawing import CAUTION_FOOTER, add_caution_footer, file_figure

    fig = file_figure((7.0, 5.5))
    ax = fig.add_subplot()
    draw(result, ax=ax)
    add_caution_footer(fig, result, hingeline_version(), footer or CAUTION_FOOTER)
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", dpi=150, metadata={"Creator": f"hingeline {hingeline_version()}",
                                                     "Date": None})
    return "data:image/svg+xml;base64," + base64.b64encode(buf.getvalue()).decode("ascii")


def _drawings(result: Result) -> tuple[list[dict], dict | None]:
    """(figures, utilisation): the figures of section 3 (number, title, uri (data URI) and
    caption of each drawing available) and, when the lower bound has a moment field, the
    utilisation drawing of section 7 (number and uri; else None)."""
    from . import plots as plot
    from .result_json import clean_pattern_of

    cp = clean_pattern_of(result)
    out = []
    if cp is not None:
        out.append(("Clean yield-line pattern (plan)",
                    _figure_svg(lambda r, ax: plot.plot_clean_pattern(r, ax=ax, pattern=cp), result),
                    "The mechanism read as rigid regions (lettered A, B, ... as in the region table) and "
                    "straight yield lines (numbered as in the line table of the clean pattern)"
                    + (", its small regions merged into their neighbours" if cp.simplified else "")
                    + (", its junctions moved to lower the load factor" if cp.optimised else "")
                    + (" and the result certified by the work equation" if cp.optimised or cp.simplified
                       else "") + "."))
    out += [("Yield-line pattern of the raw mechanism (plan)", _figure_svg(plot.plot_pattern, result),
            "Sagging yield lines solid dark red, hogging dash-dot dark blue, hogging hinges along supports "
            "dashed just inside them; line weight grows with rotation. The lines that make 95 % of the "
            "internal work carry their numbers (table below). Grey shading: w / w_max of the mechanism; "
            "hatched where the slab rises (w < 0). Supports as in the legend.")]
    deflection = getattr(plot, "plot_deflection", None)
    if callable(deflection):
        out.append(("Deflection of the mechanism (contours)", _figure_svg(deflection, result),
                    "Deflected shape of the collapse mechanism, normalised so that the scaled loads "
                    "do 1 kNm of work; only its shape matters, not its size."))
    figures = [{"number": k + 1, "title": title, "uri": uri, "caption": caption}
               for k, (title, uri, caption) in enumerate(out)]
    lb = result.lower_bound
    utilisation = None
    if lb is not None and lb.load_factor is not None and lb.field is not None:
        from .drawing import UTILISATION_FOOTER

        utilisation = {"number": len(figures) + 1,
                       "uri": _figure_svg(plot.plot_utilisation, result, UTILISATION_FOOTER)}
    return figures, utilisation


# --- clean pattern ---------------------------------------------------------------------


def pattern_tables(model: Model, result: Result) -> dict | None:
    """The clean pattern as a hand calculation: region rows (letter, area, axis, deflection,
    slope, dissipation, external work), totals, load factors (raw, clean, optimised) and its
    lines by number; None when the mechanism reads as no clean pattern."""
    from ..pattern.table import region_rows
    from .pattern_plan import labelled_items, pattern_how, region_letters
    from .result_json import clean_pattern_of

    cp = clean_pattern_of(result)
    if cp is None:
        return None
    rows, total = region_rows(model, cp)
    letters = region_letters(cp)
    fans, numbered = labelled_items(cp)

    scale = max(abs(total["dissipation"]), abs(total["scaled"]), 1e-300)

    def f(x, digits=4):
        return "0" if abs(x) <= 1e-9 * scale else f"{x:.{digits}g}"

    # Above the raw mechanism by at most 0.1 %: four digits would show the two as equal.
    digits = 6 if cp.above_raw else 4
    steps = [text for text, done in (("small regions merged into their neighbours", cp.simplified),
                                     ("junctions moved to lower the load factor", cp.optimised)) if done]
    return {
        "raw": load_factor_text(cp.raw_load_factor, digits), "clean": load_factor_text(cp.clean_load_factor, digits),
        "load_factor": load_factor_text(cp.load_factor, digits), "optimised": cp.optimised or cp.simplified,
        "how": pattern_how(cp), "steps": ", then ".join(steps), "above_raw": cp.above_raw,
        "regions": [{"letter": letters[r.index] or "rest", "area": f"{r.area:.3f}", "axis": r.axis,
                     "deflection": f"{r.deflection:.3f}", "slope": f(r.slope),
                     "dissipation": f(r.dissipation), "scaled": f(r.scaled_work), "held": f(r.held_work)}
                    for r in rows if not (cp.regions[r.index].at_rest and r.dissipation == 0)],
        "total": {"dissipation": f(total["dissipation"]), "scaled": f(total["scaled"]),
                  "held": f(total["held"]), "load_factor": load_factor_text(total["load_factor"], 4)},
        "lines": [{"number": ln.number, "start": f"({ln.start[0]:.3f}, {ln.start[1]:.3f})",
                   "end": f"({ln.end[0]:.3f}, {ln.end[1]:.3f})", "length": f"{ln.length:.3f}",
                   "sense": ln.sense + (" (support)" if ln.at_support else ""),
                   "share": f"{100 * ln.share:.1f}", "labelled": ln.number in numbered}
                  for ln in cp.lines],
        "fans": [{"label": f"F{i + 1}", "apex": f"({fan.apex[0]:.3f}, {fan.apex[1]:.3f})",
                  "rays": ", ".join(map(str, fan.rays)), "angle": f"{fan.angle:.0f}",
                  "share": f"{100 * fan.share:.1f}"} for i, fan in enumerate(cp.fans)],
    }


def _refinement_svg(result: Result) -> str | None:
    """Data URI of a small SVG plot of the upper and lower bound of each refinement step
    against its nodes on the slab; None for a single mesh."""
    steps = result.refinement
    if len(steps) < 2:
        return None
    from .drawing import agg_figure

    fig = agg_figure((5.0, 3.0))
    ax = fig.add_subplot()
    n = [st.nodes for st in steps]
    ax.plot(n, [st.load_factor for st in steps], "o-", color="#8b1a1a", label="upper bound (mechanism)")
    low = [(k, st.lower_bound) for k, st in zip(n, steps) if st.lower_bound is not None]
    if low:
        ax.plot(*zip(*low), "s--", color="#1f3f7a", label="lower bound (moment field)")
    ax.set_xlabel("nodes on the slab")
    ax.set_ylabel("load factor")
    ax.grid(True, color="#dddddd", linewidth=0.5)
    ax.legend(fontsize=8)
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", metadata={"Creator": f"hingeline {hingeline_version()}", "Date": None})
    return "data:image/svg+xml;base64," + base64.b64encode(buf.getvalue()).decode("ascii")


# --- page ----------------------------------------------------------------------------


_PROJECT_LABELS = (("job", "Job"), ("reference", "Reference"), ("revision", "Revision"),
                   ("prepared_by", "Prepared by"), ("checked_by", "Checked by"))


def _head(model: Model) -> dict:
    """The project's fields given (label, text), and the model file (name, sha256, text) or None."""
    project = [(label, getattr(model.project, key)) for key, label in _PROJECT_LABELS
               if getattr(model.project, key)]
    src = model.source
    source = None if src is None else {"name": src.name, "sha256": src.sha256, "text": src.text}
    return {"project": project, "source": source}


def page_data(model: Model, res: Result, generated: str | None = None) -> dict:
    """Everything the template prints, as already-formatted values (see build_report)."""
    data = report_data(model, res)
    lf = float(res.load_factor)
    cases = None
    if res.case:
        lowers = res.case_lower_bounds or (None,) * len(res.cases)
        cases = {"governing": res.case,
                 "rows": [{"name": n, "load_factor": load_factor_text(v),
                           "lower_bound": None if lb is None else load_factor_text(lb)}
                          for (n, v), lb in zip(res.cases, lowers)]}
    yl = res.yield_lines
    n_sag = int(np.sum(np.asarray(yl.sagging, bool)))
    figures, utilisation = _drawings(res)
    return _head(model) | {
        "title": model.title or "Untitled slab",
        "version": hingeline_version(),
        "generated": generated or datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
        "slab_nodes": res.stats.slab_nodes,
        "meshes": len(res.refinement),
        "cautions": list(CAUTIONS),
        "load_factor": {"value": repr(lf), "text": load_factor_text(lf, 4)},
        "held": any(not ld.factored for ld in model.loads),
        "below_one": lf < 1,
        "cases": cases,
        "model": model_tables(model),
        "method": method_items(model),
        "yield_lines": yield_line_table(res),
        "mechanism": {"lines": len(yl), "sagging": n_sag, "hogging": len(yl) - n_sag,
                      "at_support": int(np.sum(np.asarray(yl.at_support, bool)))},
        "figures": figures,
        "work": work_tables(data["balance"]),
        "refinement": refinement_table(data["refinement"], res) | {"plot": _refinement_svg(res)},
        "certificate": certificate_table(res),
        "lower_bound": lower_bound_table(res) | {"utilisation": utilisation},
        "pattern": pattern_tables(model, res),
    }


def build_report(model: Model, result: Result, generated: str | None = None) -> str:
    """HTML text of the calculation record of `result` (a solve of `model`).

    generated: timestamp text for the header (default: now, UTC).
    All user text is HTML-escaped; the page has inline CSS and embedded drawings only.
    """
    page = page_data(model, result, generated)
    return _environment().get_template(TEMPLATE).render(page)


def write_report(model: Model, outdir: str | os.PathLike, nodes: int | None = None, mesh_size: float | None = None,
                 gap: float | None = None, time_limit: float | None = None) -> Path:
    """Solve `model` (hingeline.solve_cases with these mesh options: by default refined to
    the model's target gap), write OUTDIR/report.html; return its path.

    The page is built in memory first and written to a temporary name that is then
    renamed, so a failure leaves no half-written report. Raises OSError when the
    folder cannot be written, and what `solve` raises.
    """
    from ..cases import solve_cases

    result = solve_cases(model, nodes, mesh_size, gap=gap, time_limit=time_limit)
    text = build_report(model, result)
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
