"""Output stage: a Result as JSON-ready data, and the files written for the user.

`result_to_dict` turns a Result into plain lists, floats, ints, strings and bools
(floats unrounded, so `json` writes them with repr and they read back bit for bit;
this matters because the certificate is re-checked from the file).
`write_outputs` renders everything in memory first and only then writes
OUTDIR/result.json, OUTDIR/pattern.<fmt> (the clean, optimised pattern: numbered lines,
lettered regions), OUTDIR/mechanism.<fmt> (the raw mechanism's yield-line plan),
OUTDIR/deflection.<fmt> (contours of the mechanism's w / w_max) and, when the
mechanism reads as a clean pattern (hingeline.pattern), OUTDIR/hand-pattern.toml
(that pattern as a file `hingeline check` reads) and OUTDIR/pattern.dxf (its
drawing, outputs/dxf.py), so a failure while rendering leaves nothing behind. The fields of result.json are described
by the JSON Schema docs/result.schema.json.

Units follow result.py: lengths m, moments kNm/m, rotations rad, work kNm,
deflections w in m per kNm of scaled-load work (positive downward).
"""
from __future__ import annotations

import dataclasses
import io
import json
import logging
import math
import os
from importlib import metadata
from pathlib import Path
from typing import Any, Iterable

import numpy as np

from ..model import Model
from ..result import CAUTIONS, STOP_REASONS, Result
from ..upper.certificate import CERTIFICATE_RTOL
from ..upper.certificate import certificate_agrees as agrees

log = logging.getLogger(__name__)

#: File formats `write_outputs` can render the plots to.
PLOT_FORMATS = ("png", "pdf", "svg")

#: Plots `write_outputs` writes, as file stem -> plot function name in plots.py
#: (pattern: the clean pattern's plan, numbered lines and lettered regions, or the raw
#: plan when the mechanism reads as no clean pattern; mechanism: the raw mechanism's
#: yield-line plan; deflection: contour plan of w / w_max; utilisation: yield ratio of the
#: lower-bound moment field, written only when the result has that field).
PLOT_KINDS = {"pattern": "plot_clean_pattern", "mechanism": "plot_pattern", "deflection": "plot_deflection",
              "utilisation": "plot_utilisation"}

#: The clean pattern as a hand-pattern file (docs/hand-check.md) and as a DXF drawing (m).
HAND_PATTERN = "hand-pattern.toml"
PATTERN_DXF = "pattern.dxf"

#: Resolution of raster plot files, dots per inch.
PLOT_DPI = 150

#: Plot size in inches (fits an A4 page with margins).
PLOT_SIZE = (7.0, 5.5)


UNITS = {
    "length": "m",
    "moment": "kNm/m",
    "area_load": "kPa",
    "rotation": "rad",
    "work": "kNm",
    "w": "m per kNm of scaled-load work (mechanism normalised so the scaled loads do 1 kNm of work)",
    "load_factor": "dimensionless (multiplies the scaled loads; held loads stay at their value)",
}


def hingeline_version() -> str:
    """Version of the installed hingeline distribution ("unknown" when not installed)."""
    try:
        return metadata.version("hingeline")
    except metadata.PackageNotFoundError:
        return "unknown"


def _float(x: Any) -> float | None:
    """A plain Python float at full precision; None for NaN/inf (not valid JSON)."""
    v = float(x)
    return v if math.isfinite(v) else None


def _maybe(x: Any) -> float | None:
    """_float(x), or None for None."""
    return None if x is None else _float(x)


def _floats(a: Any) -> list:
    """Nested plain lists of floats from an array-like."""
    arr = np.asarray(a, dtype=float)
    if arr.ndim == 0:
        return _float(arr)  # type: ignore[return-value]
    return [_floats(x) for x in arr] if arr.ndim > 1 else [_float(x) for x in arr]


def _plain(value: Any) -> Any:
    """Convert a dataclass field value (numpy scalars included) to a JSON-ready value."""
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return _float(value)
    if isinstance(value, np.ndarray):
        return _floats(value)
    if value is None or isinstance(value, str):
        return value
    raise TypeError(f"cannot convert {type(value).__name__} to JSON")


def model_to_dict(model: Model) -> dict:
    """The model as result.json stores it (key "model")."""
    slab, cap = model.slab, model.capacity
    return {
        "outline": _floats(slab.outline),
        "edges": list(slab.edges),
        "openings": [_floats(p) for p in slab.openings],
        "thickness": None if slab.thickness is None else _float(slab.thickness),
        "capacity": {
            "sagging": [_float(m) for m in cap.sagging],
            "hogging": [_float(m) for m in cap.hogging],
            "bar_angle": _float(cap.bar_angle),
            "layers": [
                {"name": lc.name, "area": _float(lc.area), "d": _float(lc.d), "x": _float(lc.x),
                 "xu_d": _float(lc.xu_d), "moment": _float(lc.moment)}
                for lc in cap.layers
            ],
        },
        "loads": [_load_to_dict(load) for load in model.loads],
        "zones": [
            {"name": z.name, "polygon": _floats(z.polygon), "sagging": [_float(m) for m in z.sagging],
             "hogging": [_float(m) for m in z.hogging]}
            for z in model.zones
        ],
        "supports": [
            {"name": sp.name, "connection": sp.connection,
             "polygons": [_floats(np.asarray(part.exterior.coords)[:-1])
                          for part in getattr(sp.polygon, "geoms", [sp.polygon])]}
            for sp in model.supports
        ],
        "analysis": {
            "nodes": model.analysis.nodes,
            "mesh_size": None if model.analysis.mesh_size is None else _float(model.analysis.mesh_size),
            "target_gap": _float(model.analysis.target_gap),
            "time_limit": _float(model.analysis.time_limit),
        },
    }


def _load_to_dict(load) -> dict:
    common = {"name": load.name, "value": _float(load.value), "factored": bool(load.factored),
              "gamma": _float(load.gamma)}
    if hasattr(load, "at"):
        return {"type": "point", **common, "at": [_float(c) for c in load.at]}
    if hasattr(load, "path"):
        return {"type": "line", **common, "path": _floats(load.path)}
    return {"type": "area", **common, "region": None if load.region is None else _floats(load.region)}


def _yield_lines_to_list(result: Result) -> list[dict]:
    yl = result.yield_lines
    start = np.asarray(yl.start, dtype=float).reshape(-1, 2)
    end = np.asarray(yl.end, dtype=float).reshape(-1, 2)
    return [
        {
            "start": [_float(start[i, 0]), _float(start[i, 1])],
            "end": [_float(end[i, 0]), _float(end[i, 1])],
            "rotation": _float(yl.rotation[i]),
            "sense": "sagging" if bool(yl.sagging[i]) else "hogging",
            "dissipation": _float(yl.dissipation[i]),
            "at_support": bool(yl.at_support[i]),
        }
        for i in range(len(yl))
    ]


def _fields(obj: Any) -> dict:
    from dataclasses import fields

    return {f.name: _plain(getattr(obj, f.name)) for f in fields(obj)}


def _ring_dict(rings) -> dict:
    return {"exterior": _floats(rings[0]), "holes": [_floats(h) for h in rings[1:]]}


def pattern_to_dict(cp) -> dict | None:
    """The clean pattern (hingeline.pattern.CleanPattern) as plain data; None stays None."""
    if cp is None:
        return None
    regions, rest = [], []
    for reg, name, rings in zip(cp.regions, cp.names, cp.rings):
        if reg.at_rest:
            rest.append(_ring_dict(rings))
            continue
        axis = None if reg.axis_point is None else {
            "point": _floats(reg.axis_point), "direction": _floats(reg.axis_direction),
            "slope": _float(reg.slope), "contact": reg.axis_contact}
        regions.append({"name": name, "polygon": _ring_dict(rings), "plane": _floats(reg.plane),
                        "axis": axis, "max_deflection": _float(reg.max_deflection)})
    return {
        "load_factor": _float(cp.load_factor),
        "raw_load_factor": _float(cp.raw_load_factor),
        "clean_load_factor": _float(cp.clean_load_factor),
        "optimised": bool(cp.optimised),
        "simplified": bool(cp.simplified),
        "above_raw": bool(cp.above_raw),
        "regions": regions,
        "at_rest": rest,
        "lines": [{"number": ln.number, "start": _floats(ln.start), "end": _floats(ln.end),
                   "length": _float(ln.length), "rotation": _float(ln.rotation), "sense": ln.sense,
                   "work": _float(ln.work), "share": _float(ln.share), "at_support": bool(ln.at_support)}
                  for ln in cp.lines],
        "fans": [{"apex": _floats(f.apex), "rays": [int(r) for r in f.rays], "angle": _float(f.angle),
                  "work": _float(f.work), "share": _float(f.share)} for f in cp.fans],
    }


#: The last few clean patterns found, as (weak reference to the Result, pattern): the
#: optimisation takes seconds, and result.json, the drawings, the record and the summary
#: all show the same pattern.
_PATTERNS: list[tuple[Any, Any]] = []


def clean_pattern_of(result: Result):
    """The clean (optimised) pattern of the result's mechanism (hingeline.pattern), or None;
    found once per Result."""
    import weakref

    from ..pattern import clean_pattern

    _PATTERNS[:] = [(ref, cp) for ref, cp in _PATTERNS if ref() is not None]
    for ref, cp in _PATTERNS:
        if ref() is result:
            return cp
    cp = clean_pattern(result.model, result.mechanism, result.load_factor)
    _PATTERNS.append((weakref.ref(result), cp))
    del _PATTERNS[:-4]
    return cp


_UNSET = object()


def result_to_dict(result: Result, pattern: Any = _UNSET) -> dict:
    """The Result as a JSON-ready dict of plain lists, floats, ints, strings and bools.

    Keys: hingeline_version, title, project (the [project] table), source ({name, sha256}
    of the model file, None when not read from a file), load_factor, units, yield_lines (list of
    {start, end, rotation, sense, dissipation, at_support}), work {internal,
    factored, held}, mechanism {vertices, triangles, w}, stats (all SolveStats
    fields), certificate (all CertificateCheck fields), model (the model as solved:
    for a model with load cases, the governing case's loads), warnings, cautions,
    case (governing load case or None), cases (name and load factor of every case),
    lower_bound (None when not computed, else {load_factor, gap, solved, status, seconds,
    reason, check, field {nodes, triangles, moments}}), refinement ({stop, stop_reason,
    target_gap, steps: [{nodes, load_factor, lower_bound, gap, seconds}]}), pattern (the clean pattern, see
    pattern_to_dict; computed here unless given, None when it cannot be read). Floats keep
    full precision; non-finite floats become None.
    See docs/result-format.md.
    """
    mech = result.mechanism
    if pattern is _UNSET:
        pattern = clean_pattern_of(result)
    return {
        "hingeline_version": hingeline_version(),
        "title": result.model.title,
        "project": dataclasses.asdict(result.model.project),
        "source": None if result.model.source is None else {"name": result.model.source.name,
                                                             "sha256": result.model.source.sha256},
        "load_factor": _float(result.load_factor),
        "units": dict(UNITS),
        "yield_lines": _yield_lines_to_list(result),
        "work": _fields(result.work),
        "mechanism": {
            "vertices": _floats(mech.vertices),
            "triangles": [[int(i) for i in tri] for tri in np.asarray(mech.triangles)],
            "w": _floats(mech.w),
        },
        "stats": _fields(result.stats),
        "certificate": _fields(result.certificate),
        "model": model_to_dict(result.model),
        "warnings": [str(w) for w in result.warnings],
        "cautions": list(CAUTIONS),
        "case": result.case,
        "cases": [{"name": n, "load_factor": _float(lf),
                   "lower_bound": None if lb is None else _float(lb)}
                  for (n, lf), lb in zip(result.cases, result.case_lower_bounds or (None,) * len(result.cases))],
        "lower_bound": _lower_bound_to_dict(result),
        "refinement": {
            "stop": result.stop,
            "stop_reason": STOP_REASONS.get(result.stop, result.stop),
            "target_gap": _maybe(result.target_gap),
            "steps": [{"nodes": int(st.nodes), "load_factor": _float(st.load_factor),
                       "lower_bound": _maybe(st.lower_bound), "gap": _maybe(st.gap), "seconds": _float(st.seconds)}
                      for st in result.refinement],
        },
        "pattern": pattern_to_dict(pattern),
    }


def _lower_bound_to_dict(result: Result) -> dict | None:
    """The lower bound, its re-check and its moment field (nodes renumbered to those used)."""
    lb = result.lower_bound
    if lb is None:
        return None
    out = {
        "load_factor": None if lb.load_factor is None else _float(lb.load_factor),
        "gap": None if result.gap is None else _float(result.gap),
        "solved": None if lb.solved is None else _float(lb.solved),
        "status": lb.status,
        "seconds": _float(lb.seconds),
        "reason": lb.reason,
        "check": None if lb.check is None else _fields(lb.check),
        "field": None,
    }
    if lb.field is not None:
        used, tri = np.unique(np.asarray(lb.field.triangles), return_inverse=True)
        out["field"] = {
            "nodes": _floats(np.asarray(lb.field.nodes)[used]),
            "triangles": tri.reshape(-1, 3).tolist(),
            "moments": _floats(np.asarray(lb.field.moments)),
        }
    return out


def certificate_agrees(result: Result, rtol: float = CERTIFICATE_RTOL) -> bool:
    """True when the independent re-check matches the solve: the same test as the solver's
    warning (upper.certificate.certificate_agrees), on the result's load factor, certificate
    and mechanism."""
    w = np.asarray(result.mechanism.w, dtype=float)
    w_max = float(np.max(np.abs(w))) if w.size else 0.0
    return agrees(result.load_factor, result.certificate, w_max, rtol)


def _render_plot(result: Result, fmt: str, kind: str = "pattern", pattern: Any = _UNSET) -> bytes:
    """The plot `kind` (a key of PLOT_KINDS) as the bytes of a `fmt` file (Agg, no display);
    `pattern`: the clean pattern for kind "pattern" (found here unless given)."""
    from . import plots as plot
    from .drawing import CAUTION_FOOTER, UTILISATION_FOOTER, add_caution_footer, file_figure

    fig = file_figure(PLOT_SIZE)
    ax = fig.add_subplot()
    if kind == "pattern":
        plot.plot_clean_pattern(result, ax=ax, pattern=clean_pattern_of(result) if pattern is _UNSET else pattern)
    else:
        getattr(plot, PLOT_KINDS[kind])(result, ax=ax)
    add_caution_footer(fig, result, hingeline_version(),
                       UTILISATION_FOOTER if kind == "utilisation" else CAUTION_FOOTER)
    buf = io.BytesIO()
    metadata_ = {"Creator": f"hingeline {hingeline_version()}"} if fmt in ("png", "pdf") else None
    fig.savefig(buf, format=fmt, dpi=PLOT_DPI, metadata=metadata_)
    return buf.getvalue()


def write_outputs(result: Result, outdir: str | os.PathLike, formats: Iterable[str] = ("png",)) -> list[Path]:
    """Write OUTDIR/result.json, and OUTDIR/pattern.<fmt>, OUTDIR/mechanism.<fmt>,
    OUTDIR/deflection.<fmt> and (with a
    lower-bound field) OUTDIR/utilisation.<fmt> for each format, and (when the mechanism reads
    as a clean pattern) OUTDIR/hand-pattern.toml and OUTDIR/pattern.dxf; return the paths
    (result.json first, then the plots format by format, then the two pattern files).

    formats: any of PLOT_FORMATS ("png", "pdf", "svg"); may be empty (JSON only).
    pattern: the clean pattern's plan (plots.plot_clean_pattern); mechanism: the raw
    mechanism's yield-line plan (plots.plot_pattern); deflection: the contour plan of
    the mechanism's w / w_max (plots.plot_deflection); utilisation: the yield ratio of the
    lower bound's field (plots.plot_utilisation).
    Everything is rendered in memory before the folder is created and each file is
    written to a temporary name and then renamed, so a failure leaves no half-written
    output. Existing files of the same names are replaced, and the files this function
    writes that the result does not produce this time (a utilisation drawing when the
    lower bound was skipped, a format not asked for) are removed, so the folder never
    holds drawings of an earlier run beside a new result.json.
    Raises ValueError for an unknown format, OSError when the folder cannot be written.
    """
    formats = tuple(formats)
    for fmt in formats:
        if fmt not in PLOT_FORMATS:
            raise ValueError(f"unknown plot format {fmt!r}; choose from {', '.join(PLOT_FORMATS)}")

    cp = clean_pattern_of(result)
    text = json.dumps(result_to_dict(result, cp), indent=1, allow_nan=False) + "\n"
    blobs: list[tuple[str, bytes]] = [("result.json", text.encode("utf-8"))]
    has_field = result.lower_bound is not None and result.lower_bound.field is not None
    for fmt in dict.fromkeys(formats):
        for kind in PLOT_KINDS:
            if kind == "utilisation" and not has_field:
                continue
            blobs.append((f"{kind}.{fmt}", _render_plot(result, fmt, kind, cp)))
    if cp is not None:
        from .dxf import pattern_dxf

        blobs.append((HAND_PATTERN, cp.hand_pattern.encode("utf-8")))
        blobs.append((PATTERN_DXF, pattern_dxf(result.model, cp)))

    out = Path(outdir)
    out.mkdir(parents=True, exist_ok=True)
    written: list[Path] = []
    tmp_paths: list[tuple[Path, Path]] = []
    try:
        for name, data in blobs:
            final = out / name
            tmp = out / f".{name}.tmp-{os.getpid()}"
            tmp.write_bytes(data)
            tmp_paths.append((tmp, final))
        for tmp, final in tmp_paths:
            os.replace(tmp, final)
            written.append(final)
    finally:
        for tmp, _ in tmp_paths:
            if tmp.exists():
                tmp.unlink()
    for stale in stale_outputs(out, {name for name, _ in blobs}):
        stale.unlink()
        log.info("removed %s (from an earlier run)", stale)
    log.info("wrote %s", ", ".join(str(p) for p in written))
    return written


def stale_outputs(outdir: Path, current: set[str]) -> list[Path]:
    """Files in `outdir` with a name write_outputs uses (result.json, KIND.FORMAT) that are
    not among `current`, the names just written."""
    names = {f"{kind}.{fmt}" for kind in PLOT_KINDS for fmt in PLOT_FORMATS} | {"result.json", HAND_PATTERN, PATTERN_DXF}
    return [outdir / n for n in sorted(names - current) if (outdir / n).is_file()]
