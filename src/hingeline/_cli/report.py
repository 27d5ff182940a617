"""Printing shared by the subcommands (stdout only; the library never prints)."""
from __future__ import annotations

import os
import sys
from pathlib import Path

from ..errors import HingelineError
from ..outputs.result_json import certificate_agrees
from ..result import STOP_REASONS, Result, load_factor_text


class OutputError(HingelineError):
    """The output folder cannot be written (exit code 2)."""


def check_outdir(outdir: Path) -> None:
    """Refuse, before any solve, an output folder that cannot be written: a path naming an
    existing file, or a folder (or its nearest existing parent) without write permission."""
    path = Path(outdir)
    if path.exists() and not path.is_dir():
        raise OutputError(f"output folder '{outdir}' is an existing file, not a folder; "
                          "choose another folder with -o")
    probe = path.absolute()
    while not probe.exists():
        probe = probe.parent
    if not probe.is_dir():
        raise OutputError(f"output folder '{outdir}': '{probe}' is a file, so the folder cannot be "
                          "created; choose another folder with -o")
    if not os.access(probe, os.W_OK | os.X_OK):
        raise OutputError(f"output folder '{outdir}': no permission to write in '{probe}'; "
                          "choose another folder with -o")


def pattern_line(result: Result) -> str:
    """The clean pattern in one line: its lines and fans and its certified load factor."""
    from ..outputs.pattern_plan import pattern_how
    from ..outputs.result_json import clean_pattern_of

    cp = clean_pattern_of(result)
    if cp is None:
        return "the mechanism reads as no clean pattern; see mechanism.png"
    how = (f"{pattern_how(cp)} from {load_factor_text(cp.clean_load_factor)}" if cp.optimised or cp.simplified
           else "as read")
    fans = f", {len(cp.fans)} fan{'s' if len(cp.fans) != 1 else ''}" if cp.fans else ""
    above = (f"; above the raw mechanism's {load_factor_text(cp.raw_load_factor)}, which governs"
             if cp.above_raw else "")
    return (f"clean pattern: {len(cp.lines)} yield lines{fans}, {sum(not r.at_rest for r in cp.regions)} moving "
            f"regions; load factor {load_factor_text(cp.load_factor)} ({how}; certified by the work equation{above})")


def print_summary(result: Result, paths: list[Path], out=None) -> None:
    """Print the load factor and a short summary of the solve."""
    out = out or sys.stdout
    s, chk = result.stats, result.certificate
    yl = result.yield_lines
    n_sag = int(sum(bool(x) for x in yl.sagging))
    p = lambda *a: print(*a, file=out)  # noqa: E731
    if result.model.title:
        p(result.model.title)
    lowers = result.case_lower_bounds or (None,) * len(result.cases)
    for (name, lf), lb in zip(result.cases, lowers):
        lb_text = f"  lower bound {load_factor_text(lb)}" if lb is not None else ""
        if name == result.case:
            mark = "  <- governs"
        elif lb is not None and lb > result.load_factor:
            mark = "  (cannot govern: lower bound above the governing load factor)"
        else:
            mark = ""
        p(f"  case {name!r:30s} load factor {load_factor_text(lf)}{lb_text}{mark}")
    governing = f" (load case {result.case!r})" if result.case else ""
    p(f"load factor = {load_factor_text(result.load_factor)}{governing}  (upper bound: collapse factor of the mechanism found)")
    lb = result.lower_bound
    if lb is not None and lb.load_factor is not None:
        p(f"lower bound = {load_factor_text(lb.load_factor)}  (lower-bound theorem: a moment field in equilibrium and "
          f"inside the capacities); gap {100 * result.gap:.2f} % of the load factor")
        p(f"  lower bound field re-checked: equilibrium residual {lb.check.relative:.1e} (relative), "
          f"largest yield ratio {lb.check.yield_ratio:.8f} (<= 1 inside the capacities); {lb.seconds:.2f} s")
    elif lb is not None:
        p(f"lower bound: none ({lb.reason})")
    if lb is not None and lb.status and lb.status != "Solved":
        from ..outputs.record_tables import status_words

        p(f"  cone solver {status_words(lb.status, lb.load_factor is not None)}")
    steps = result.refinement
    if len(steps) > 1 or result.target_gap is not None:
        bracket = (f"bracket {load_factor_text(lb.load_factor)} .. {load_factor_text(result.load_factor)}"
                   if lb is not None and lb.load_factor is not None else f"upper bound {load_factor_text(result.load_factor)}")
        target = "" if result.target_gap is None else f", target gap {100 * result.target_gap:.2f} %"
        p(f"  refinement  {len(steps)} mesh{'es' if len(steps) != 1 else ''}, {bracket}{target}; "
          f"stopped: {STOP_REASONS.get(result.stop, result.stop)}")
        for k, st in enumerate(steps, 1):
            low = "-" if st.lower_bound is None else load_factor_text(st.lower_bound)
            gap = "-" if st.gap is None else f"{100 * st.gap:.2f} %"
            p(f"    step {k}: {st.nodes:6d} nodes  upper {load_factor_text(st.load_factor)}  lower {low}  "
              f"gap {gap}  {st.seconds:.1f} s")
    p(f"  mesh        {s.nodes} nodes ({s.slab_nodes} on the slab) for the load factor, first element size "
      f"{s.mesh_size:.3g} m")
    p(f"  lines       {s.candidate_lines} candidates, {s.lp_lines} in the final LP; "
      f"{len(yl)} active ({n_sag} sagging, {len(yl) - n_sag} hogging)")
    p(f"  LP          {s.rounds} round{'s' if s.rounds != 1 else ''}, {s.seconds:.2f} s")
    verdict = "agrees" if certificate_agrees(result) else "DOES NOT AGREE - do not use this result"
    p(f"  certificate load factor re-checked from the mechanism = {chk.load_factor:.6g} ({verdict}); "
      f"largest |w| on supports {chk.max_support_w:.1e}")
    p("  pattern     " + pattern_line(result))
    for lc in result.model.capacity.layers:
        p(f"  bars        {lc.name}: {lc.area:.0f} mm2/m, d = {lc.d:.0f} mm, x_u/d = {lc.xu_d:.3f}, "
          f"M_Rd = {lc.moment:.2f} kNm/m (EN 1992-1-1)")
    for w in result.warnings:
        p(f"  warning     {w}")
    p("  caution     upper-bound method; shear/punching, deflection, ductility and detailing not checked; "
      "have a qualified engineer review it under local codes")
    p("written: " + ", ".join(str(x) for x in paths))
