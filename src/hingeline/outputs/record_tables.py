"""Numbers of the calculation record and the tables that print them (sections 4 to 7).

`energy_balance`, `refinement_rows` and `lower_bound_summary` return the numbers as
plain Python values (for tests and other callers); `work_tables`, `refinement_table`,
`certificate_table`, `lower_bound_table` and `yield_line_table` turn them into the page data
the templates print (`status_words` puts the cone solver's status in words): dicts and lists of already-formatted strings, booleans for the template's
choices, and `cell`s for numbers that carry their full-precision value in data-value.
No HTML is written here.

Units: lengths m, moments kNm/m, area loads kPa, work kNm, time s.
May import: `model`, `result`, `lower`, `upper.certificate` and `outputs.result_json`,
`outputs.numbering` and `outputs.record_model`.
"""
from __future__ import annotations

import dataclasses
import numpy as np

from ..lower import EQUILIBRIUM_RTOL
from ..model import Model
from ..result import LOAD_FACTOR_DIGITS, STOP_REASONS, Result, load_factor_text
from ..upper.certificate import work_per_load
from .numbering import LABEL_SHARE, line_rows
from .record_model import load_unit, xy
from .result_json import CERTIFICATE_RTOL, certificate_agrees

# Number formats of the re-check's quantities (fieldcheck.FieldCheck); units and meanings
# are words of the page and live in the template.
_CHECK_FORMATS = {"yield_ratio": ".9f", "yield_ratio_points": ".9f"}
_CHECK_FORMAT = ".3e"

# The cone solver's (Clarabel's) status words, in words a checking engineer can act on. Every
# field is re-checked independently (lower/fieldcheck.py) whatever the status.
_RECHECK = " The field was re-checked independently, so the lower bound stands only if the re-check passes."
_STATUS_WORDS = {
    "Solved": "the solver met its tolerances on equilibrium, the yield criterion and optimality.",
    "AlmostSolved": "the solver met only loosened tolerances (it could not reach the full ones)." + _RECHECK,
    "MaxIterations": "the solver reached its iteration limit before meeting its tolerances." + _RECHECK,
    "MaxTime": "the solver reached its time limit before meeting its tolerances." + _RECHECK,
    "InsufficientProgress": "the solver stopped making progress before meeting its tolerances." + _RECHECK,
    "NumericalError": "the solver stopped on a numerical difficulty (an ill-conditioned system)." + _RECHECK,
    "PrimalInfeasible": "the solver found no field in equilibrium inside the yield criterion for any "
                        "load factor, so there is no field to re-check.",
    "AlmostPrimalInfeasible": "the solver found, to loosened tolerances, that no field in equilibrium inside "
                              "the yield criterion exists, so there is no field to re-check.",
    "DualInfeasible": "the solver found the load factor unbounded (no mechanism limits it), so there is no "
                      "field to re-check; the model is likely wrong.",
    "AlmostDualInfeasible": "the solver found, to loosened tolerances, the load factor unbounded, so there is "
                            "no field to re-check.",
}


def cell(value: float, fmt: str = ".6g") -> dict:
    """A number as the page prints it: value (repr, for data-value) and text (formatted)."""
    return {"value": repr(float(value)), "text": format(float(value), fmt)}


def status_words(status: str, passed: bool | None = None) -> str:
    """The cone solver's status word and what it means for the lower bound, in a sentence;
    passed: the outcome of the field's re-check when known (it then replaces the general
    remark that the bound stands only if the re-check passes)."""
    meaning = _STATUS_WORDS.get(str(status))
    if meaning is None:
        meaning = "the solver stopped without meeting its tolerances." + _RECHECK
    if passed is not None and meaning.endswith(_RECHECK):
        meaning = meaning[: -len(_RECHECK)] + (
            " The field was re-checked independently and passed, so the lower bound stands." if passed else
            " The field was re-checked independently and did not pass, so it proves no lower bound.")
    return f"{status}: {meaning}"


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
    loads = [{"name": ld.name, "value": float(ld.value), "unit": load_unit(ld), "factored": bool(ld.factored),
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


def refinement_rows(result: Result) -> list[dict]:
    """One row per mesh solved, in order: step (1, 2, ...), nodes (on the slab), load_factor,
    lower_bound and gap (None when none was proven), seconds, and whether the step holds the
    reported upper bound (upper) and lower bound (lower)."""
    steps = result.refinement
    lower = None if result.lower_bound is None else result.lower_bound.load_factor
    rows = []
    for k, st in enumerate(steps, 1):
        rows.append({"step": k, "nodes": int(st.nodes), "load_factor": float(st.load_factor),
                     "lower_bound": None if st.lower_bound is None else float(st.lower_bound),
                     "gap": None if st.gap is None else float(st.gap), "seconds": float(st.seconds),
                     "upper": abs(st.load_factor - result.load_factor) <= 1e-12 * abs(result.load_factor),
                     "lower": lower is not None and st.lower_bound is not None
                     and abs(st.lower_bound - lower) <= 1e-12 * abs(lower)})
    return rows


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


def trend(rows: list[dict], result: Result) -> str:
    """Sentences on how the bracket moved with refinement and why it stopped, from refinement_rows."""
    stop = STOP_REASONS.get(result.stop, result.stop)
    if len(rows) < 2:
        return (f"One mesh was solved ({stop}), so no trend can be stated; leave out analysis.nodes and "
                "analysis.mesh_size to refine the mesh until the bounds are close enough.")
    first, last = rows[0], rows[-1]
    change = (last["load_factor"] - first["load_factor"]) / abs(first["load_factor"]) * 100
    gap = result.gap
    shown = "no lower bound" if gap is None else f"a gap of {100 * gap:.2f} %"
    target = "" if result.target_gap is None else f" (target {100 * result.target_gap:.2f} %)"
    return (f"{len(rows)} meshes, {first['nodes']} to {last['nodes']} nodes on the slab: the upper bound moved "
            f"{change:+.2f} % and the bracket ended at {shown}{target}. Refinement stopped because {stop}. "
            "The reported load factor is the lowest upper bound of all steps and the lower bound the highest "
            "proven one; each was re-checked on its own mesh.")


# --- page data -------------------------------------------------------------------


def work_tables(bal: dict) -> dict:
    """Section 4 (work equation) from energy_balance: internal and external work, balance."""
    mismatch = abs(bal["internal_sum"] - bal["internal"]) > 1e-9 * max(1.0, abs(bal["internal"]))
    return {
        "groups": [{"label": label, "count": count, "work": cell(work, ".9g")}
                   for label, count, work in bal["groups"]],
        "internal_sum": cell(bal["internal_sum"], ".9g"),
        "mismatch": {"sum": f"{bal['internal_sum']:.9g}", "internal": f"{bal['internal']:.9g}"} if mismatch else None,
        "loads": [{"name": d["name"], "value": f"{d['value']:.3f} {d['unit']}", "factored": d["factored"],
                   "work": cell(d["work"], ".9g")} for d in bal["loads"]],
        "factored": cell(bal["factored"], ".9g"),
        "held": cell(bal["held"], ".9g"),
        "equation": f"{bal['held']:.9g} + {bal['load_factor']:.9g} × {bal['factored']:.9g}",
        "external": cell(bal["external"], ".9g"),
        "internal": cell(bal["internal"], ".9g"),
        "residual": cell(bal["residual"], ".3e"),
    }


def refinement_table(rows: list[dict], result: Result) -> dict:
    """Section 5 (mesh refinement) from refinement_rows."""
    return {
        "rows": [{"step": r["step"], "nodes": r["nodes"],
                  "load_factor": cell(r["load_factor"], f"#.{LOAD_FACTOR_DIGITS}g"),
                  "lower_bound": None if r["lower_bound"] is None else cell(r["lower_bound"], f"#.{LOAD_FACTOR_DIGITS}g"),
                  "gap": "–" if r["gap"] is None else f"{100 * r['gap']:.2f} %",
                  "upper": r["upper"], "lower": r["lower"], "seconds": f"{r['seconds']:.2f}"} for r in rows],
        "trend": trend(rows, result),
        "stop": STOP_REASONS.get(result.stop, result.stop),
        "mesh_size": f"{result.stats.mesh_size:.3f}",
    }


def certificate_table(res: Result) -> dict:
    """Section 6 (warnings and the independent re-check of the mechanism)."""
    lf, chk = float(res.load_factor), res.certificate
    w_max = float(np.max(np.abs(res.mechanism.w))) if len(res.mechanism.w) else 0.0
    return {
        "warnings": list(res.warnings),
        "load_factor": cell(lf, ".9g"),
        "recomputed": cell(chk.load_factor, ".9g"),
        "difference": cell(abs(chk.load_factor - lf) / max(1.0, abs(lf)), ".2e"),
        "support_w": cell(chk.max_support_w, ".2e"),
        "w_max": cell(w_max, ".3e"),
        "agrees": certificate_agrees(res),
        "rtol": f"{CERTIFICATE_RTOL:g}",
    }


def lower_bound_table(res: Result) -> dict:
    """Section 7 (lower bound) from lower_bound_summary, without its drawing."""
    lb = lower_bound_summary(res)
    lower, gap, solved, chk = lb["load_factor"], lb["gap"], lb["solved"], lb["check"]
    out = {"computed": lb["computed"], "upper": load_factor_text(lb['upper']),
           "held": any(not ld.factored for ld in res.model.loads),
           "why_none": lb["reason"] or lb["status"], "lower": None, "check": None, "status_text": ""}
    if lower is not None:
        out["lower"] = {
            "value": repr(lower), "text": load_factor_text(lower), "gap": repr(gap), "gap_text": f"{100.0 * gap:.1f}",
            "above_upper": gap < 0,
            "solved": (load_factor_text(solved, 7) if solved is not None
                       and abs(solved - lower) > 1e-12 * max(1.0, abs(lower)) else None)}
    if chk is not None:
        verdict = None
        if lower is not None:
            # When the optimum was scaled down to the lower bound, so was the field: its ratio with it.
            ratio = chk["yield_ratio"] * (lower / solved if solved else 1.0)
            verdict = {"passes": chk["relative"] <= EQUILIBRIUM_RTOL and ratio <= 1.0 + 1e-12,
                       "relative": f"{chk['relative']:.1e}", "limit": f"{EQUILIBRIUM_RTOL:g}",
                       "ratio": f"{ratio:.9f}"}
        out["check"] = {
            "rows": [{"name": name, "cell": cell(value, _CHECK_FORMATS.get(name, _CHECK_FORMAT))}
                     for name, value in chk.items()],
            "verdict": verdict, "status": lb["status"],
            "status_text": status_words(lb["status"], None if verdict is None else verdict["passes"]),
            "seconds": f"{lb['seconds']:.2f}"}
    if lb["computed"] and lb["status"]:
        out["status_text"] = status_words(lb["status"])
    return out


def yield_line_table(res: Result) -> dict:
    """The yield lines by number (numbering.py; the plan labels the same numbers): from, to
    (m), length (m), rotation (rad), sense, work (kNm) and share of the internal work (%)."""
    rows = line_rows(res)
    return {"share": f"{100 * LABEL_SHARE:g}", "labelled": sum(r["labelled"] for r in rows),
            "rows": [{"number": r["number"], "start": xy(r["start"]), "end": xy(r["end"]),
                      "length": f"{r['length']:.3f}", "rotation": cell(r["rotation"], ".4e"),
                      "sense": r["sense"] + (", along a support" if r["at_support"] else ""),
                      "work": cell(r["work"], ".9g"), "share": cell(100 * r["share"], ".2f"),
                      "labelled": r["labelled"]} for r in rows]}
