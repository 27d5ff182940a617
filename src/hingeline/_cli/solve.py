"""`hingeline solve MODEL.toml -o OUTDIR`: solve a model file and write its outputs."""
from __future__ import annotations

import argparse
from pathlib import Path

from ..errors import HeldLoadCollapse
from ..geometry.mesh import check_node_budget
from ..model import RESOLUTIONS, read_model
from ..result import Result
from . import report

#: Plot formats the command line writes (each as pattern.<fmt>, mechanism.<fmt> and deflection.<fmt>).
CLI_FORMATS = ("png", "svg")

HELP = ("solve a model file; write OUTDIR/result.json, pattern.png/.svg (the clean pattern), "
        "mechanism.png/.svg (the raw mechanism's yield lines), "
        "deflection.png/.svg (deflected shape), hand-pattern.toml (the mechanism as rigid regions, "
        "for hingeline check) and pattern.dxf (the clean yield lines)")


def positive_number(option: str, unit: str = ""):
    """argparse type: a finite number > 0 for `option` (messages name the option and unit)."""
    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{option} must be a number{' in ' + unit if unit else ''}, "
                                             f"got '{text}'") from None
        if not (value > 0 and value != float("inf")):
            raise argparse.ArgumentTypeError(f"{option} must be > 0{' ' + unit if unit else ''}, got '{text}'")
        return value
    return parse


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("-o", "--outdir", type=Path, required=True, metavar="OUTDIR",
                        help="folder for result.json and the plots (created if missing)")
    parser.add_argument("--resolution", choices=RESOLUTIONS, default=None,
                        help="mesh resolution; overrides [analysis] resolution of the model file")
    parser.add_argument("--mesh-size", type=positive_number("--mesh-size", "m"), default=None, metavar="M",
                        help="explicit element size in m; overrides resolution")
    parser.add_argument("--no-lower-bound", action="store_true",
                        help="skip the lower bound (statically admissible moment field); saves its solve time")


def write_files(result: Result, outdir: Path) -> list[Path]:
    """write_outputs in CLI_FORMATS, with OSError turned into a message naming the folder."""
    from ..outputs.result_json import write_outputs

    try:
        return write_outputs(result, outdir, formats=CLI_FORMATS)
    except OSError as exc:
        reason = exc.strerror or str(exc)
        where = exc.filename or outdir
        raise report.OutputError(f"output folder '{outdir}': cannot write '{where}' ({reason}); "
                                 "choose another folder with -o") from None


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    if args.mesh_size is not None:
        # Checked here too, so that the message names the option the user typed.
        check_node_budget(model, args.mesh_size, "--mesh-size")
    report.check_outdir(args.outdir)
    from ..solve import solve_cases  # imported late: reading the model needs no solver

    try:
        result = solve_cases(model, resolution=args.resolution, mesh_size=args.mesh_size,
                             lower_bound=not args.no_lower_bound)
    except HeldLoadCollapse as err:
        # An engineer assessing an existing slab needs to see how it fails: draw and store it.
        if err.result is not None:
            paths = write_files(err.result, args.outdir)
            print(f"the slab collapses at {err.result.load_factor:.4g} times its held loads alone; that "
                  f"mechanism is written to: {', '.join(str(p) for p in paths)}")
        raise
    paths = write_files(result, args.outdir)
    report.print_summary(result, paths)
    return 0
