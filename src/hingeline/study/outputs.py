"""The files of a study: study.csv, map.png, the line plots and study.html.

study.csv has one row per variant, then one per skipped position, with the columns
x, y (the moving opening's centroid, m; empty without [move_opening]), scale (only when the
study lists sizes), one column per swept key (its value, in the unit of the value it
replaces), load_factor (upper bound), lower_bound (empty when skipped or none was proven),
gap ((load_factor - lower_bound) / load_factor), seconds (wall time of the solve, also for a
variant read back from an earlier run), status ("solved", "skipped: <reason>" or
"failed: <message>") and variant (the folder under variants/, empty when skipped). Floats
are written at full precision.

study.html is one self-contained page (drawings embedded, no script) from the Jinja2 template
templates/study.html.j2: the study, the lowest and highest load factors and where, the count
of positions reaching the target, the skip reasons, the drawings and the standing cautions.

Everything is rendered in memory first and each file written under a temporary name and
then renamed; line plots of an earlier run that this one does not draw are removed.

Units: m, load factors dimensionless, seconds.
May import: csv, jinja2, `hingeline.result` (cautions), `hingeline.outputs`, the study modules.
"""
from __future__ import annotations

import base64
import collections
import csv
import io
from pathlib import Path

import jinja2

from ..outputs.result_json import hingeline_version
from ..result import CAUTIONS
from .plots import line_plots, map_png
from .run import SOLVED, Row, SolveOptions
from .store import write_atomic

CSV_NAME = "study.csv"
MAP_NAME = "map.png"
HTML_NAME = "study.html"
TEMPLATE = "study.html.j2"


def csv_text(study, rows: list[Row]) -> str:
    """The text of study.csv (see the module docstring)."""
    scaled = study.move is not None and bool(study.move.scale)
    head = ["x", "y", *(["scale"] if scaled else []), *(s.key for s in study.sweeps),
            "load_factor", "lower_bound", "gap", "seconds", "status", "variant"]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(head)

    def cell(v):
        return "" if v is None else repr(float(v))

    for r in rows:
        values = list(r.values) if r.values else [None] * len(study.sweeps)
        w.writerow([cell(r.x), cell(r.y), *([cell(r.scale)] if scaled else []), *map(cell, values),
                    cell(r.load_factor), cell(r.lower_bound), cell(r.gap), cell(r.seconds), r.status,
                    r.fingerprint])
    return buf.getvalue()


def _describe(study, r: Row) -> str:
    parts = [] if r.x is None else [f"opening centroid at ({r.x:g}, {r.y:g}) m"]
    parts += [] if r.scale is None else [f"size x{r.scale:g}"]
    parts += [f"{s.key} = {v:g}" for s, v in zip(study.sweeps, r.values)]
    return ", ".join(parts) or "the base model"


def _uri(png: bytes) -> str:
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def page_data(study, rows: list[Row], options: SolveOptions, images: dict[str, bytes]) -> dict:
    """The values study.html shows, formatted as text."""
    solved = [r for r in rows if r.status == SOLVED]
    skipped = [r for r in rows if r.status.startswith("skipped")]
    failed = [r for r in rows if r.status.startswith("failed")]
    low = min(solved, key=lambda r: r.load_factor, default=None)
    high = max(solved, key=lambda r: r.load_factor, default=None)
    reasons = collections.Counter(r.status.removeprefix("skipped: ") for r in skipped)
    lows = [r.lower_bound for r in solved if r.lower_bound is not None]
    return {
        "title": study.title or study.model.title or study.model_path.name,
        "version": hingeline_version(),
        "study": study.path.name, "model": study.model_path.name,
        "target": f"{study.target:g}",
        "solve": (("mesh of the model" if options.nodes is None and options.mesh_size is None else "one uniform mesh")
                  + ("" if options.nodes is None else f" of about {options.nodes} nodes")
                  + ("" if options.mesh_size is None else f", mesh size {options.mesh_size:g} m")
                  + ("" if options.gap is None else f", target gap {options.gap:g}")
                  + ("" if options.time_limit is None else f", time limit {options.time_limit:g} s")
                  + ("" if options.lower_bound else ", no lower bound")),
        "moving": None if study.move is None else {
            "what": (f"opening {study.move.opening} of the model" if study.move.opening else "a new opening"),
            "step": f"{study.move.step:g}", "scales": ", ".join(f"{s:g}" for s in study.move.scale)},
        "sweeps": [{"key": s.key, "values": ", ".join(f"{v:g}" for v in s.values)} for s in study.sweeps],
        "counts": {"variants": len(solved) + len(failed), "solved": len(solved), "failed": len(failed),
                   "skipped": len(skipped),
                   "reaching": sum(r.load_factor >= study.target for r in solved)},
        "low": None if low is None else {"value": f"{low.load_factor:.4f}", "where": _describe(study, low)},
        "high": None if high is None else {"value": f"{high.load_factor:.4f}", "where": _describe(study, high)},
        "lowest_lower": f"{min(lows):.4f}" if lows else None,
        "reasons": sorted(reasons.items(), key=lambda kv: -kv[1]),
        "failures": [{"where": _describe(study, r), "status": r.status} for r in failed],
        "images": [{"name": name, "uri": _uri(data)} for name, data in images.items()],
        "csv": CSV_NAME,
        "cautions": list(CAUTIONS),
    }


def html_text(data: dict) -> str:
    """study.html from the template and page_data()."""
    env = jinja2.Environment(loader=jinja2.PackageLoader("hingeline.study", "templates"), autoescape=True,
                             trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True,
                             undefined=jinja2.StrictUndefined)
    return env.get_template(TEMPLATE).render(**data)


def write_study_outputs(study, plan, rows: list[Row], options: SolveOptions, outdir) -> list[Path]:
    """Write study.csv, map.png (with a moving opening), the line plots and study.html to
    `outdir`; return their paths."""
    images: dict[str, bytes] = {}
    if study.move is not None:
        images[MAP_NAME] = map_png(study, plan, rows)
    images.update(line_plots(study, rows))
    blobs = {CSV_NAME: csv_text(study, rows).encode("utf-8"), **images,
             HTML_NAME: html_text(page_data(study, rows, options, images)).encode("utf-8")}
    out = Path(outdir)
    out.mkdir(parents=True, exist_ok=True)
    for old in [*out.glob("sweep-*.png"), out / "scale.png", out / MAP_NAME]:
        if old.name not in blobs and old.is_file():
            old.unlink()
    paths = []
    for name, data in blobs.items():
        write_atomic(out / name, data)
        paths.append(out / name)
    return paths
