"""`hingeline design MODEL.toml [--target T]`: scale of the reinforcement for a target load factor."""
from __future__ import annotations

import argparse
import math
from pathlib import Path

from ..model import RESOLUTIONS, read_model
from .solve import positive_number

HELP = ("find the factor by which all moment capacities must be scaled for the load factor to "
        "reach the target (default 1); with a bar schedule, propose bar spacings per layer")


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("--target", type=positive_number("--target"), default=1.0, help="target load factor (default 1.0)")
    parser.add_argument("--resolution", choices=RESOLUTIONS, default=None,
                        help="mesh resolution; overrides [analysis] resolution of the model file")


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    from ..design import required_scale  # imported late: reading the model needs no solver

    d = required_scale(model, target=args.target, resolution=args.resolution)
    verdict = "adequate" if d.scale <= 1 else "NOT adequate"
    print(f"{model.title or args.model}")
    print(f"capacity scale for load factor {d.target:g} = {d.scale:.4f}  "
          f"(present reinforcement is {verdict}: {'spare' if d.scale <= 1 else 'short by'} "
          f"{abs(1 - d.scale) * 100:.1f} %)")
    cap = model.capacity
    print(f"  sagging needed  {cap.sagging[0] * d.scale:.2f} / {cap.sagging[1] * d.scale:.2f} kNm/m "
          f"(bar directions 1 / 2; present {cap.sagging[0]:.2f} / {cap.sagging[1]:.2f})")
    print(f"  hogging needed  {cap.hogging[0] * d.scale:.2f} / {cap.hogging[1] * d.scale:.2f} kNm/m "
          f"(present {cap.hogging[0]:.2f} / {cap.hogging[1]:.2f})")
    for p in d.proposals:
        if math.isnan(p.spacing):
            print(f"  {p.name:9s} needs {p.required:.2f} kNm/m: no bar of 32 mm or less at 50 mm or more fits")
        else:
            print(f"  {p.name:9s} needs {p.required:.2f} kNm/m: {p.diameter:g} mm bars at {p.spacing:g} mm "
                  f"give {p.moment:.2f} kNm/m (EN 1992-1-1)")
    for w in (*d.result.warnings,):
        print(f"  warning     {w}")
    print("  caution     upper-bound method: the true scale needed is at or ABOVE this value (a finer "
          "resolution usually raises it); shear, punching, deflection, ductility and detailing not "
          "checked; have a qualified engineer review it under local codes")
    return 0
