"""`hingeline solve MODEL.toml -o OUTDIR`: solve a model file and write its outputs."""
from __future__ import annotations

import argparse
from pathlib import Path

from ..model import RESOLUTIONS, read_model
from . import report

HELP = "solve a model file; write OUTDIR/result.json and OUTDIR/pattern.png"


def _element_size(text: str) -> float:
    """argparse type for --mesh-size: a finite number > 0 (m)."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--mesh-size must be a number in m, got '{text}'") from None
    if not (value > 0 and value != float("inf")):
        raise argparse.ArgumentTypeError(f"--mesh-size must be > 0 m, got '{text}'")
    return value


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("-o", "--outdir", type=Path, required=True, metavar="OUTDIR",
                        help="folder for result.json and pattern.png (created if missing)")
    parser.add_argument("--resolution", choices=RESOLUTIONS, default=None,
                        help="mesh resolution; overrides [analysis] resolution of the model file")
    parser.add_argument("--mesh-size", type=_element_size, default=None, metavar="M",
                        help="explicit element size in m; overrides resolution")


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    from ..solve import solve  # imported late: reading the model needs no solver

    result = solve(model, resolution=args.resolution, mesh_size=args.mesh_size)
    paths = report.write(result, args.outdir)
    report.print_summary(result, paths)
    return 0
