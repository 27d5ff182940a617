"""Numbers of the calculation record and the tables that print them (sections 4 to 7).

`energy_balance`, `convergence_rows` and `lower_bound_summary` return the numbers as
plain Python values (for tests and other callers); `work_tables`, `convergence_table`,
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
from typing import Mapping

import numpy as np

from ..lower import EQUILIBRIUM_RTOL
from ..model import RESOLUTIONS, Model
from ..result import LOAD_FACTOR_DIGITS, Result, load_factor_text
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


def ordered(labels) -> list[str]:
    """Resolution labels coarse -> fine, any other label (explicit mesh size) last."""
    rank = {r: i for i, r in enumerate(RESOLUTIONS)}
    return sorted(labels, key=lambda k: (rank.get(k, len(RESOLUTIONS)), k))


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


def convergence_rows(results: Mapping[str, Result]) -> list[dict]:
    """One row per solve, coarse -> fine: label, load_factor, lower_bound (None when not
    computed or not found), nodes, slab_nodes, candidate_lines, lp_lines, active_lines,
    rounds, seconds."""
    rows = []
    for label in ordered(results):
        r = results[label]
        s = r.stats
        lower = None if r.lower_bound is None else r.lower_bound.load_factor
        rows.append({"label": label, "load_factor": float(r.load_factor),
                     "lower_bound": None if lower is None else float(lower), "nodes": s.nodes,
                     "slab_nodes": s.slab_nodes, "candidate_lines": s.candidate_lines,
                     "lp_lines": s.lp_lines, "active_lines": len(r.yield_lines), "rounds": s.rounds,
                     "seconds": float(s.seconds), "mesh_size": float(s.mesh_size)})
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


def trend(rows: list[dict]) -> str:
    """One sentence on how the load factor moves with the mesh, from convergence_rows."""
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


def convergence_table(rows: list[dict], primary: str) -> dict:
    """Section 5 (resolution and convergence) from convergence_rows."""
    return {
        "rows": [{"label": r["label"], "reported": r["label"] == primary, "mesh_size": f"{r['mesh_size']:.3f}",
                  "load_factor": cell(r["load_factor"], f"#.{LOAD_FACTOR_DIGITS}g"),
                  "lower_bound": None if r["lower_bound"] is None else cell(r["lower_bound"], ".4f"),
                  "nodes": r["nodes"], "slab_nodes": r["slab_nodes"], "candidate_lines": r["candidate_lines"],
                  "lp_lines": r["lp_lines"], "active_lines": r["active_lines"], "rounds": r["rounds"],
                  "seconds": f"{r['seconds']:.2f}"} for r in rows],
        "trend": trend(rows),
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
