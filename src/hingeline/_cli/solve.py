"""`hingeline solve MODEL.toml -o OUTDIR`: solve a model file and write its outputs."""
from __future__ import annotations

import argparse
from pathlib import Path

from ..errors import HeldLoadCollapse
from ..geometry.mesh import check_node_budget
from ..model import read_model
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


def whole_number(option: str, least: int):
    """argparse type: a whole number >= least for `option`."""
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{option} must be a whole number, got '{text}'") from None
        if value < least:
            raise argparse.ArgumentTypeError(f"{option} must be at least {least}, got '{text}'")
        return value
    return parse


def gap_fraction(text: str) -> float:
    """argparse type of --gap: a number between 0 and 1."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--gap must be a number, got '{text}'") from None
    if not 0 < value < 1:
        raise argparse.ArgumentTypeError(f"--gap is (upper - lower) / upper, a number between 0 and 1 "
                                         f"(e.g. 0.02), got '{text}'")
    return value


def add_mesh_args(parser: argparse.ArgumentParser, what: str = "the model") -> None:
    """The options that choose the mesh: --nodes or --mesh-size (one uniform mesh), else
    adaptive refinement to --gap within --time-limit."""
    group = parser.add_mutually_exclusive_group()
    group.add_argument("--nodes", type=whole_number("--nodes", 20), default=None, metavar="N",
                       help=f"one uniform mesh of about N nodes on the slab for {what}, no refinement; "
                            "overrides [analysis] nodes and mesh_size")
    group.add_argument("--mesh-size", type=positive_number("--mesh-size", "m"), default=None, metavar="M",
                       help="one uniform mesh of element size M in m, no refinement")
    parser.add_argument("--gap", type=gap_fraction, default=None, metavar="G",
                        help="refine the mesh until (upper - lower) / upper <= G (default: [analysis] target_gap, "
                             "0.03)")
    parser.add_argument("--time-limit", type=positive_number("--time-limit", "s"), default=None, metavar="S",
                        help="stop refining after S seconds (default: [analysis] time_limit, 120)")


def mesh_kwargs(args: argparse.Namespace) -> dict:
    """The mesh options of `args` as keyword arguments of hingeline.solve."""
    return {"nodes": args.nodes, "mesh_size": args.mesh_size, "gap": args.gap, "time_limit": args.time_limit}


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="model file (see docs/model-format.md)")
    parser.add_argument("-o", "--outdir", type=Path, required=True, metavar="OUTDIR",
                        help="folder for result.json and the plots (created if missing)")
    add_mesh_args(parser)
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
    from ..cases import solve_cases  # imported late: reading the model needs no solver

    try:
        result = solve_cases(model, lower_bound=not args.no_lower_bound, **mesh_kwargs(args))
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
