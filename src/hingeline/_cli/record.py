"""`hingeline report MODEL.toml -o OUTDIR`: write the calculation record OUTDIR/report.html.

(The module is named record.py because _cli/report.py already holds the printing
shared by the subcommands.)
"""
from __future__ import annotations

import argparse
from pathlib import Path

from ..model import read_model
from .report import OutputError, check_outdir
from .solve import add_mesh_args, mesh_kwargs

HELP = ("solve a model file, refining the mesh as for solve, and write the calculation record "
        "OUTDIR/report.html (one self-contained page, with the refinement history)")


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("-o", "--outdir", type=Path, required=True, metavar="OUTDIR",
                        help="folder for report.html (created if missing)")
    add_mesh_args(parser)


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    check_outdir(args.outdir)
    from ..outputs.record import write_report  # imported late: reading the model needs no solver

    try:
        path = write_report(model, args.outdir, **mesh_kwargs(args))
    except OSError as exc:
        reason = exc.strerror or str(exc)
        where = exc.filename or args.outdir
        raise OutputError(f"output folder '{args.outdir}': cannot write '{where}' ({reason}); "
                          "choose another folder with -o") from None
    print(f"calculation record written: {path}")
    print("caution: upper-bound method; shear/punching, deflection, ductility and detailing not checked; "
          "have a qualified engineer review it under local codes")
    return 0
