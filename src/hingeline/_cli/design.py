"""`hingeline design MODEL.toml [--target T]`: scale of the reinforcement for a target load factor."""
from __future__ import annotations

import argparse
import math
from pathlib import Path

from ..model import read_model
from .solve import add_mesh_args, mesh_kwargs, positive_number

HELP = ("find the factor by which all moment capacities must be scaled for the load factor to "
        "reach the target (default 1); with a bar schedule, propose bar spacings per layer")


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("--target", type=positive_number("--target"), default=1.0, help="target load factor (default 1.0)")
    parser.add_argument("--scale-bars", choices=("all", "bottom", "top"), default="all",
                        help="capacities the scale applies to: all (default), the bottom bars (sagging) only "
                             "or the top bars (hogging) only; zones alike")
    add_mesh_args(parser)


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    from ..design import required_scale  # imported late: reading the model needs no solver

    d = required_scale(model, target=args.target, scaled=args.scale_bars, **mesh_kwargs(args))
    if d.scale > 1:
        verdict = f"NOT adequate: short by {(d.scale - 1) * 100:.1f} % at least"
    elif d.safe_scale is not None and d.safe_scale <= 1:
        verdict = f"adequate, proven by the lower bound: spare {(1 - d.safe_scale) * 100:.1f} % at least"
    elif d.safe_scale is not None:
        verdict = ("not decided on this mesh: adequate against the mechanism found, not proven by "
                   "the lower bound; ask for a smaller --gap")
    else:
        verdict = f"adequate against the mechanism found (spare {(1 - d.scale) * 100:.1f} %), not proven"
    print(f"{model.title or args.model}")
    print(f"capacity scale for load factor {d.target:g} = {d.scale:.4f}  (present reinforcement is {verdict})")
    if d.safe_scale is not None:
        print(f"  proven enough   scale {d.safe_scale:.4f} (lower-bound theorem: a moment field in equilibrium "
              f"inside the scaled capacities exists); the scale truly needed lies between "
              f"{d.scale:.4f} and {d.safe_scale:.4f}")
    if d.case is not None:
        print(f"  load cases      the slab must reach the target under each; case '{d.case}' needs the most")
        for name, scale, safe in d.cases:
            proven = "none" if safe is None else f"{safe:.4f}"
            print(f"    {name:24s} scale {scale:.4f}, proven enough {proven}")
    cap = model.capacity
    scales = [("mechanism", d.scale)] + ([("proven", d.safe_scale)] if d.safe_scale is not None else [])
    applies = {"sagging": d.scaled in ("all", "bottom"), "hogging": d.scaled in ("all", "top")}
    if d.scaled != "all":
        print(f"  scaled          the {d.scaled} bars only ({'sagging' if d.scaled == 'bottom' else 'hogging'} "
              "capacities, zones alike); the others as given")
    for who, sag, hog in [("", cap.sagging, cap.hogging)] + [(f" zone '{z.name}'", z.sagging, z.hogging)
                                                              for z in model.zones]:
        for what, pair in (("sagging", sag), ("hogging", hog)):
            if not applies[what]:
                continue
            needed = "; ".join(f"{pair[0] * v:.2f} / {pair[1] * v:.2f} at the {label} scale" for label, v in scales)
            print(f"  {what} needed{who}  {needed} kNm/m (bar directions 1 / 2; present {pair[0]:.2f} / "
                  f"{pair[1]:.2f})")
    if d.proposals:
        which = "proven-enough" if d.safe_scale is not None else "mechanism's"
        print(f"  bar proposals for the {which} scale {d.proposal_scale:.4f}:")
    for p in d.proposals:
        if math.isnan(p.spacing):
            print(f"  {p.name:9s} needs {p.required:.2f} kNm/m: no bar of 32 mm or less at 50 mm or more fits")
        else:
            print(f"  {p.name:9s} needs {p.required:.2f} kNm/m: {p.diameter:g} mm bars at {p.spacing:g} mm "
                  f"give {p.moment:.2f} kNm/m (EN 1992-1-1)")
    for w in (*d.result.warnings,):
        print(f"  warning     {w}")
    print("  caution     the mechanism's scale is from an upper-bound method: the true scale needed is at "
          "or ABOVE it (a finer mesh usually raises it); shear, punching, deflection, ductility and detailing not "
          "checked; have a qualified engineer review it under local codes")
    return 0
