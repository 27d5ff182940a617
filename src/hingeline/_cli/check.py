"""`hingeline check MODEL.toml PATTERN.toml`: work equation of a hand-drawn yield-line pattern."""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from ..check import HandCheck, check_pattern, read_pattern
from ..model import model_for_case, read_model

HELP = ("load factor of a hand-drawn yield-line pattern (rigid regions, see docs/hand-check.md) "
        "by the work equation, compared with the optimised mechanism")


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("pattern", type=Path, metavar="PATTERN.toml", help="pattern file (see docs/hand-check.md)")
    parser.add_argument("--no-compare", action="store_true",
                        help="do not solve for the optimised mechanism (faster)")
    parser.add_argument("--fixed", action="store_true",
                        help="evaluate at the parameters' start values instead of optimising them")


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    pattern = read_pattern(args.pattern)
    # With load cases the pattern is checked under each; the lowest load factor governs.
    cases = [(c.name, model_for_case(model, c)) for c in model.cases] or [(None, model)]
    checks = [(name, check_pattern(m, pattern, optimise=not args.fixed)) for name, m in cases]
    case, hc = min(checks, key=lambda c: c[1].load_factor)
    solved = None
    if not args.no_compare:
        from ..cases import solve_cases

        # Only the mechanism is compared (the mesh as the model asks, without the lower bound), over
        # the same cases.
        solved = solve_cases(model, lower_bound=False).load_factor
    if case is not None:
        print(f"load cases: the pattern is checked under each, the lowest governs (case '{case}')")
        for name, c in checks:
            print(f"  {name:24s} load factor {c.load_factor:.6g}")
    print_check(hc, model.title + (f" (load case '{case}')" if case else ""), str(args.pattern), solved)
    return 0


def print_check(hc: HandCheck, title: str, pattern_name: str, solved: float | None, out=None) -> None:
    """Print the load factor, parameters, energy table and comparison."""
    out = out or sys.stdout
    p = lambda *a: print(*a, file=out)  # noqa: E731
    if title:
        p(title)
    p(f"hand-drawn pattern {pattern_name}")
    if hc.parameters:
        how = "optimised within their bounds" if hc.optimised else "as given (not optimised)"
        p(f"  parameters ({how}):")
        for name, value in hc.parameters.items():
            lo, hi = hc.bounds[name]
            edge = "  (at a bound)" if hc.optimised and min(value - lo, hi - value) <= 1e-6 * (hi - lo) else ""
            p(f"    {name} = {value:.6g}   bounds {lo:g} .. {hi:g}{edge}")
    p(f"load factor by the work equation = {hc.load_factor:.6g}")
    p("work balance (mechanism scaled so that the scaled loads do 1 kNm of work):")
    p("  internal work, kNm")
    p(f"    {'hinge':<52} {'length m':>9} {'rotation rad':>13} {'work kNm':>10}")
    for b in hc.boundaries:
        if b.kind == "simple":
            kind = "pin"        # a simply supported edge rotates freely
        else:
            kind = "sag" if b.rotation > 0 else "hog"
        p(f"    {b.between:<52} {b.length:9.4g} {b.rotation:10.4g} {kind} {b.work:10.5g}")
    p("    (rotation > 0 sagging, < 0 hogging; 'pin': free rotation on a simply supported edge)")
    p(f"    {'total':<52} {'':>9} {'':>13} {hc.internal:10.5g}")
    p("  external work per load, kNm")
    for name, wk in hc.work_per_load:
        p(f"    {name:<52} {wk:10.5g}")
    if hc.held:
        p(f"  load factor = (internal - held-load work) / scaled-load work = "
          f"({hc.internal:.6g} - {hc.held:.6g}) / 1")
    else:
        p(f"  load factor = internal work / scaled-load work = {hc.internal:.6g} / 1")
    if solved is not None:
        pct = 100.0 * (hc.load_factor - solved) / solved
        where = "above" if pct >= 0 else "below"
        p(f"optimised mechanism (hingeline solve, coarse mesh) load factor = {solved:.6g}")
        p(f"  the hand pattern is {abs(pct):.2f} % {where} it"
          + ("" if pct >= 0 else " (the hand pattern is the better upper bound; try a finer solve)"))
    p("  caution     upper-bound method: a hand pattern gives a load factor at or above the true one; "
      "have a qualified engineer review it under local codes")
